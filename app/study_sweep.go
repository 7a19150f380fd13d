package main

// The Sweep window: run the model for a range of values of one quantity,
// or a grid of two, and show the curves and readouts.

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot"

	"kinetarium/app/study"
	"kinetarium/network"
	"kinetarium/solve/explore"
)

// Spacing choices of a swept range.
const (
	spacingLinear = "Linear"
	spacingLog    = "Logarithmic"
)

// axisForm is the widgets of one swept quantity.
type axisForm struct {
	qs       []quantity
	quantity *widget.Select
	from, to *widget.Entry
	points   *widget.Entry
	spacing  *widget.RadioGroup
	form     *widget.Form
}

func newAxisForm(qs []quantity, points int) *axisForm {
	a := &axisForm{qs: qs, from: widget.NewEntry(), to: widget.NewEntry(), points: widget.NewEntry()}
	a.spacing = widget.NewRadioGroup([]string{spacingLinear, spacingLog}, nil)
	a.spacing.Horizontal = true
	a.spacing.Required = true
	a.points.SetText(strconv.Itoa(points))
	a.quantity = widget.NewSelect(quantityLabels(qs), a.chosen)
	a.quantity.PlaceHolder = "Choose a quantity…"
	a.form = widget.NewForm(
		widget.NewFormItem("Quantity", a.quantity),
		widget.NewFormItem("From", a.from),
		widget.NewFormItem("To", a.to),
		widget.NewFormItem("Points", a.points),
		widget.NewFormItem("Spacing", a.spacing),
	)
	return a
}

// chosen fills in a range around the model's value: a tenth to ten times
// it on a log scale, or 0 to 1 when the value is 0.
func (a *axisForm) chosen(label string) {
	q, ok := findQuantity(a.qs, label)
	if !ok {
		return
	}
	if q.value > 0 {
		a.from.SetText(short(q.value / 10))
		a.to.SetText(short(q.value * 10))
		a.spacing.SetSelected(spacingLog)
		return
	}
	a.from.SetText("0")
	a.to.SetText("1")
	a.spacing.SetSelected(spacingLinear)
}

// axis reads the form; what names the form in errors.
func (a *axisForm) axis(what string) (study.Axis, error) {
	q, ok := findQuantity(a.qs, a.quantity.Selected)
	if !ok {
		return study.Axis{}, fmt.Errorf("%s: choose the quantity to vary", what)
	}
	from, err := number(a.from.Text, what+": from")
	if err != nil {
		return study.Axis{}, err
	}
	to, err := number(a.to.Text, what+": to")
	if err != nil {
		return study.Axis{}, err
	}
	n, err := count(a.points.Text, what+": the number of points", 1, 1000)
	if err != nil {
		return study.Axis{}, err
	}
	return study.Axis{Knob: q.knob, From: from, To: to, Points: n, Log: a.spacing.Selected == spacingLog}, nil
}

// sweepWindow is the Sweep window of one model (as it was when the window
// was opened).
type sweepWindow struct {
	win    fyne.Window
	model  *network.Model
	prep   *study.Prepared
	qs     []quantity
	first  *axisForm
	second *axisForm
	useTwo *widget.Check
	ro     *readoutEditor
	ctl    *runControls

	job     *study.Job
	res     *explore.Result
	partial bool // res is of a run stopped by Cancel

	tabs       *container.AppTabs
	species    *widget.Select
	secondAt   *widget.Select
	logTime    *widget.Check
	curves     *studyFigure
	readoutSel *widget.Select
	readouts   *studyFigure
	failures   *failureList
}

// newSweepWindow makes the Sweep window for m in a.
func newSweepWindow(a fyne.App, m *network.Model, name string) (*sweepWindow, error) {
	prep, err := study.Prepare(m)
	if err != nil {
		return nil, err
	}
	s := &sweepWindow{win: a.NewWindow("Sweep — " + name), model: m, prep: prep, qs: quantities(m)}
	s.first = newAxisForm(s.qs, 9)
	s.second = newAxisForm(s.qs, 7)
	s.second.form.Hide()
	s.useTwo = widget.NewCheck("Vary a second quantity (a grid of runs)", func(on bool) {
		if on {
			s.second.form.Show()
		} else {
			s.second.form.Hide()
		}
	})
	species := prep.Quantities()
	s.ro = newReadoutEditor(species)
	s.ro.noteUnits(m)
	s.ctl = newRunControls(s.start)
	if len(s.qs) > 0 {
		s.first.quantity.SetSelected(s.qs[0].label)
	}
	s.ro.add(explore.Final, "", 0)
	s.ro.add(explore.Max, "", 0)

	setup := container.NewVBox(
		sectionTitle("What varies"), s.first.form, s.useTwo, s.second.form,
		widget.NewSeparator(), sectionTitle("Readouts"), s.ro.content,
		widget.NewSeparator(), s.ctl.content)
	left := container.NewVScroll(container.NewPadded(setup))

	s.curves = newStudyFigure("Press Run to simulate the model for every value.")
	s.readouts = newStudyFigure("Press Run; each readout is then drawn against the varied quantity.")
	s.species = widget.NewSelect(species, func(string) { s.drawCurves() })
	if len(species) > 0 {
		s.species.SetSelected(species[0])
	}
	s.secondAt = widget.NewSelect(nil, func(string) { s.drawCurves() })
	s.secondAt.Hide()
	s.logTime = widget.NewCheck("Log time", func(bool) { s.drawCurves() })
	s.logTime.SetChecked(prep.Sim.Output.Spacing == "log")
	s.readoutSel = widget.NewSelect(nil, func(string) { s.drawReadout() })
	s.failures = newFailureList("run", func() {
		s.failures.exportAs(s.win, func(path string) { s.ctl.status.SetText("Failures saved to " + path) })
	})
	s.failures.kind, s.failures.prep = "sweep", prep

	curveBar := container.NewHBox(widget.NewLabel("Species"), s.species, s.secondAt, s.logTime)
	readoutBar := container.NewHBox(widget.NewLabel("Readout"), container.NewGridWrap(fyne.NewSize(220, s.readoutSel.MinSize().Height), s.readoutSel))
	s.tabs = container.NewAppTabs(
		container.NewTabItem("Curves", container.NewBorder(curveBar, nil, nil, nil, s.curves)),
		container.NewTabItem("Readouts", container.NewBorder(readoutBar, nil, nil, nil, s.readouts)),
		container.NewTabItem("Failed runs", s.failures.content),
	)
	exportFig := widget.NewButtonWithIcon("Figure…", theme.DocumentSaveIcon(), s.exportFigure)
	exportCSV := widget.NewButtonWithIcon("Table (CSV)…", theme.DocumentSaveIcon(), s.exportTable)
	top := container.NewHBox(widget.NewLabel("Export:"), exportFig, exportCSV, s.failures.export)
	right := container.NewBorder(container.NewBorder(nil, nil, nil, top), nil, nil, nil, s.tabs)

	split := container.NewHSplit(left, container.NewPadded(right))
	split.Offset = 0.34
	s.win.SetContent(split)
	s.win.Resize(fyne.NewSize(1180, 740))
	return s, nil
}

// start reads the form and runs the sweep off the UI goroutine.
func (s *sweepWindow) start() { s.ctl.runJob(s.prepare, s.finished) }

// prepare reads the form into a job.
func (s *sweepWindow) prepare() (*study.Job, error) {
	a1, err := s.first.axis("First quantity")
	if err != nil {
		return nil, err
	}
	axes := []study.Axis{a1}
	if s.useTwo.Checked {
		a2, err := s.second.axis("Second quantity")
		if err != nil {
			return nil, err
		}
		axes = append(axes, a2)
	}
	specs, err := s.ro.specs()
	if err != nil {
		return nil, err
	}
	return s.prep.Sweep(axes, specs)
}

// finished shows the outcome of a run.
func (s *sweepWindow) finished(job *study.Job, res *explore.Result, err error) {
	if res == nil {
		s.ctl.status.SetText(plainError(err))
		return
	}
	s.job, s.res = job, res
	s.partial = err != nil
	line := fmt.Sprintf("%d of %d runs done in %s.", res.Points-res.Failed, res.Size, roundDuration(res.Wall))
	if errors.Is(err, context.Canceled) {
		line = fmt.Sprintf("Cancelled: %d of %d runs done; the results show those (partial).", res.Points, res.Size) + partialNote
	} else if err != nil {
		line = plainError(err)
	}
	s.ctl.status.SetText(line + failureText(res, "run"))
	s.failures.fig = job.Figures()
	s.failures.set(res, s.partial)
	if len(job.Axes) == 2 {
		var opts []string
		for _, v := range job.Axes[1] {
			opts = append(opts, knobLabel(res.Knobs[1])+" = "+short(v))
		}
		s.secondAt.SetOptions(opts)
		s.secondAt.SetSelected(opts[0])
		s.secondAt.Show()
	} else {
		s.secondAt.Hide()
	}
	s.readoutSel.SetOptions(res.Readouts)
	if len(res.Readouts) > 0 {
		s.readoutSel.SetSelected(res.Readouts[0])
	}
	s.drawCurves()
	s.drawReadout()
}

// knobLabel writes a knob name for people: "init:A" is "A initial".
func knobLabel(ref string) string { return study.KnobLabel(ref) }

// curveFigure is the family of curves of the chosen species.
func (s *sweepWindow) curveFigure() (*plot.Plot, error) {
	if s.res == nil || len(s.res.Samples) == 0 {
		return nil, errors.New("no runs to draw yet")
	}
	if !slices.Contains(s.prep.Quantities(), s.species.Selected) {
		return nil, errors.New("choose a species")
	}
	return s.job.Figures().Family(s.res, s.species.Selected, max(slices.Index(s.secondAt.Options, s.secondAt.Selected), 0), s.logTime.Checked)
}

// readoutFigure is the chosen readout against the varied quantity, or a
// heat map over a grid of two.
func (s *sweepWindow) readoutFigure() (*plot.Plot, error) {
	if s.res == nil {
		return nil, errors.New("no runs to draw yet")
	}
	return s.job.Figures().Readout(s.res, slices.Index(s.res.Readouts, s.readoutSel.Selected))
}

func (s *sweepWindow) drawCurves() {
	if s.curves == nil || s.res == nil {
		return
	}
	p, err := s.curveFigure()
	hint := ""
	if err != nil {
		hint = plainError(err)
	}
	s.curves.set(p, hint)
}

func (s *sweepWindow) drawReadout() {
	if s.readouts == nil || s.res == nil {
		return
	}
	p, err := s.readoutFigure()
	hint := ""
	if err != nil {
		hint = plainError(err)
	}
	s.readouts.set(p, hint)
}

// exportFigure saves the figure of the tab shown.
func (s *sweepWindow) exportFigure() {
	if s.res == nil {
		s.ctl.status.SetText("Nothing to export yet: press Run first.")
		return
	}
	fig, base := s.curveFigure, "family_"+fileSafe(s.species.Selected)
	if s.tabs.Selected() != nil && s.tabs.Selected().Text == "Readouts" {
		fig, base = s.readoutFigure, "readout_"+fileSafe(s.readoutSel.Selected)
	}
	exportFigureAs(s.win, base, "sweep", s.prep, s.partial, fig, func(path string) { s.ctl.status.SetText("Figure saved to " + path) })
}

// exportTable saves every run's values and readouts as CSV.
func (s *sweepWindow) exportTable() {
	s.ctl.exportTable(s.win, s.res != nil, "runs.csv", s.saveRuns)
}

// saveRuns writes the runs table (the batch command's runs.csv layout).
func (s *sweepWindow) saveRuns(path string) error {
	if s.res == nil {
		return errors.New("nothing to save yet: press Run first")
	}
	rows, err := s.job.Figures().RunRows(s.res)
	if err != nil {
		return err
	}
	return saveTable(path, rows, "sweep", s.prep, s.partial)
}

// fileSafe makes s usable in a file name.
func fileSafe(s string) string {
	out := []rune(s)
	for i, r := range out {
		if !(r == '-' || r == '_' || r == '.' || r >= '0' && r <= '9' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z') {
			out[i] = '_'
		}
	}
	return string(out)
}

// failureList lists the failed points of a result with their values and
// reasons, and holds the button that exports them. Points are numbered
// from 0, as in the index column of the exported tables.
type failureList struct {
	what    string
	kind    string          // of the study: "sweep" or "population"
	prep    *study.Prepared // the study's model, for the provenance
	res     *explore.Result
	partial bool          // res is of a run stopped by Cancel
	fig     study.Figures // the study's tables in its display units
	summary *widget.Label
	lines   []string
	list    *widget.List
	export  *widget.Button
	content fyne.CanvasObject
}

// newFailureList makes the list of failed points called what ("run",
// "sample"); its export button, disabled until a result has failures,
// calls export.
func newFailureList(what string, export func()) *failureList {
	f := &failureList{what: what, summary: widget.NewLabel("No results yet.")}
	f.summary.Wrapping = fyne.TextWrapWord
	f.list = widget.NewList(func() int { return len(f.lines) },
		func() fyne.CanvasObject {
			l := widget.NewLabel("")
			l.Truncation = fyne.TextTruncateEllipsis
			return l
		},
		func(id widget.ListItemID, o fyne.CanvasObject) { o.(*widget.Label).SetText(f.lines[id]) })
	f.export = widget.NewButtonWithIcon("Failures (CSV)…", theme.DocumentSaveIcon(), export)
	f.export.Disable()
	f.content = container.NewBorder(f.summary, nil, nil, nil, f.list)
	return f
}

// set lists the failures of res (partial: of a run stopped by Cancel) and
// enables the export when there are any. The list shows at most
// maxListedFailures; the export has them all.
func (f *failureList) set(res *explore.Result, partial bool) {
	f.res, f.partial = res, partial
	f.lines = f.lines[:0]
	first, err := res.FirstFailures(maxListedFailures)
	if err != nil {
		f.lines = append(f.lines, plainError(err))
	}
	for _, fl := range first {
		line := fmt.Sprintf("%s %d:", strings.ToUpper(f.what[:1])+f.what[1:], fl.Index)
		for k, v := range fl.X {
			line += fmt.Sprintf(" %s = %s", knobLabel(res.Knobs[k]), short(v))
			if k+1 < len(fl.X) {
				line += ","
			}
		}
		f.lines = append(f.lines, line+" — "+failureReason(fl.Err))
	}
	switch res.Failed {
	case 0:
		f.summary.SetText(fmt.Sprintf("None of the %d %ss failed.", res.Points, f.what))
	default:
		f.summary.SetText(fmt.Sprintf("%d of %d %ss failed. They are left out of the figures and tables and listed here "+
			"with their values and the reason, numbered from 0 as in the index column of the exported tables.",
			res.Failed, res.Points, f.what))
	}
	if res.Failed > 0 {
		f.export.Enable()
	} else {
		f.export.Disable()
	}
	f.list.Refresh()
}

// save writes the failed points (the batch command's failures.csv layout:
// index, knob values, error).
func (f *failureList) save(path string) error {
	if f.res == nil {
		return errors.New("nothing to save yet: press Run first")
	}
	if f.res.Failed == 0 {
		return fmt.Errorf("no %s failed; there is nothing to save", f.what)
	}
	rows, err := f.fig.FailureRows(f.res)
	if err != nil {
		return err
	}
	return saveTable(path, rows, f.kind, f.prep, f.partial)
}

// exportAs asks for a file in win and saves the failed points there;
// saved reports the path.
func (f *failureList) exportAs(win fyne.Window, saved func(path string)) {
	saveAs(win, "failures.csv", ".csv", f.save, saved)
}

// maxListedFailures bounds the failures listed in a window (the export
// has them all).
const maxListedFailures = 10_000

// failureReason drops from a failure's message the knob number and value
// that the list already shows.
func failureReason(msg string) string {
	if !strings.HasPrefix(msg, "knob ") {
		return msg
	}
	_, rest, _ := strings.Cut(msg, ": ")
	if k := strings.Index(rest, ": "); k > 0 && strings.Contains(rest[:k], " = ") {
		rest = rest[k+2:]
	}
	return rest
}
