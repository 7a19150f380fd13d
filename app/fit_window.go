package main

// Data ▸ Fit to measurements…: a window that estimates model quantities
// from measured time courses with app/calibrate, shows the fitted curves
// over the data, the estimates with their uncertainty, the residuals, the
// correlations and the starts, and writes the estimates back into the
// model as one undoable edit.

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot"

	"kinetarium/app/calibrate"
	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/plotting"
)

// fitCaution is the caution the fit window repeats above its results.
const fitCaution = "Fitted values and their intervals are research aids, not clinical or dosing advice. " +
	"Check them against independent data; decisions about treatment or dosing rest with qualified professionals and must follow local rules."

// noiseChoices are the noise models in plain words, with their names in
// fit plans.
var noiseChoices = []struct{ label, model string }{
	{"Standard deviations from the file (sd_ columns)", calibrate.NoiseSD},
	{"One unknown σ for every value (estimated)", calibrate.NoiseConstant},
	{"σ proportional to the value (estimated)", calibrate.NoiseProportional},
	{"Constant plus proportional σ (estimated)", calibrate.NoiseCombined},
}

func noiseLabels() []string {
	var out []string
	for _, c := range noiseChoices {
		out = append(out, c.label)
	}
	return out
}

func noiseModelOf(label string) string {
	for _, c := range noiseChoices {
		if c.label == label {
			return c.model
		}
	}
	return ""
}

func noiseLabelOf(model string) string {
	for _, c := range noiseChoices {
		if c.model == model {
			return c.label
		}
	}
	return noiseChoices[0].label
}

// fitExperiment is one experiment offered in the window.
type fitExperiment struct {
	exp  calibrate.Experiment // Data is an absolute path
	use  *widget.Check
	note string
}

// estimateRow is one quantity the window can estimate.
type estimateRow struct {
	knob                sliders.Knob
	use                 *widget.Check
	lower, upper, start *widget.Entry
	log                 *widget.Check
	perExp              *widget.Check
}

// fitOutcome is what a run of the window computes.
type fitOutcome struct {
	prob   *calibrate.Problem
	rep    *calibrate.Report
	curves []*calibrate.Result // per experiment, on a fine grid
}

// fitWindow is the Fit to measurements window.
type fitWindow struct {
	win   fyne.Window
	model *network.Model // the snapshot fitted
	name  string
	slots map[string]int
	// writeBack stores knobs in the editor's model as one undoable edit
	// and says what it did.
	writeBack func(knobs []sliders.Knob) string

	plan    *fyne.Container // the left column's form
	exps    []*fitExperiment
	expList *fyne.Container
	rows    []*estimateRow
	noise   *widget.Select
	starts  *widget.Entry
	seed    *widget.Entry
	profile *widget.Check
	rtol    float64 // from a loaded plan
	atol    float64
	method  string
	ctl     *runControls

	traceMu   sync.Mutex
	trace     [][]float64 // per start, the objective after each accepted step
	traceDrew time.Time
	traceFig  *studyFigure

	out       *fitOutcome
	tabs      *container.AppTabs
	curveExp  *widget.Select
	curves    *studyFigure
	table     *fyne.Container
	notes     *widget.Label
	residExp  *widget.Select
	residuals *studyFigure
	corr      *studyFigure
	startsFig *studyFigure
	startsTxt *widget.Label
	profName  *widget.Select
	profiles  *studyFigure
	writeBtn  *widget.Button
	afterRun  func() // called when a run has ended and its results are shown
}

// openFit opens the fit window on the model as it is now, with the
// loaded measurements as its first experiment.
func (w *mainWindow) openFit() {
	if f := w.fitWindow(); f != nil {
		f.win.Show()
	}
}

// fitWindow makes the fit window on the model as it is now, or says on
// the status line why it cannot.
func (w *mainWindow) fitWindow() *fitWindow {
	m, name, ok := w.studyModel()
	if !ok {
		return nil
	}
	f := newFitWindow(w.app, m, name, w.doc.Slots(), w.writeEstimates)
	if w.meas.data != nil {
		f.addExperiment(calibrate.Experiment{Name: "measurements", Data: w.meas.path}, measuredSummary(w.meas.data), true)
	}
	return f
}

// writeEstimates stores fitted values in the editor's model as one
// undoable edit.
func (w *mainWindow) writeEstimates(knobs []sliders.Knob) string {
	var n int
	w.doc.Apply("write fitted estimates", func(m *network.Model) { n = sliders.WriteBack(m, knobs) })
	return fmt.Sprintf("Wrote %d fitted %s into the model (Edit ▸ Undo takes them back).", n, plural(n, "value", "values"))
}

func newFitWindow(a fyne.App, m *network.Model, name string, slots map[string]int, writeBack func([]sliders.Knob) string) *fitWindow {
	f := &fitWindow{win: a.NewWindow("Fit to measurements — " + name), model: m, name: name, slots: slots, writeBack: writeBack}
	f.build()
	f.win.Resize(fyne.NewSize(1280, 820))
	return f
}

// build lays the window out: the plan on the left (experiments,
// quantities, noise, starts, Run), the results on the right.
func (f *fitWindow) build() {
	caution := widget.NewLabel(fitCaution)
	caution.Wrapping = fyne.TextWrapWord
	caution.Importance = widget.WarningImportance

	f.expList = container.NewVBox()
	loadData := widget.NewButtonWithIcon("Add measurements…", theme.FolderOpenIcon(), f.addDataDialog)
	loadPlan := widget.NewButtonWithIcon("Load fit plan…", theme.FolderOpenIcon(), f.loadPlanDialog)

	head := func(s string) fyne.CanvasObject {
		l := widget.NewLabel(s)
		l.Importance = widget.LowImportance
		return l
	}
	grid := container.New(newColumnsLayout(0.34, 0.15, 0.15, 0.15, 0.1, 0.11),
		head("Estimate"), head("Lower"), head("Upper"), head("Start"), head("Log"), head("Per exp."))
	for _, k := range sliders.Candidates(f.model) {
		r := f.newRow(k)
		grid.Add(r.use)
		grid.Add(r.lower)
		grid.Add(r.upper)
		grid.Add(r.start)
		grid.Add(r.log)
		grid.Add(r.perExp)
	}
	f.noise = widget.NewSelect(noiseLabels(), nil)
	f.noise.SetSelected(noiseChoices[0].label)
	f.starts = widget.NewEntry()
	f.starts.SetText("10")
	f.seed = widget.NewEntry()
	f.seed.SetText("1")
	f.profile = widget.NewCheck("Profile-likelihood intervals (a re-fit per point; slower)", nil)
	settings := widget.NewForm(
		widget.NewFormItem("Noise", f.noise),
		widget.NewFormItem("Starts", f.starts),
		widget.NewFormItem("Seed", f.seed))
	f.ctl = newRunControls(f.start)
	f.ctl.caution.Hide() // the window's own caution, above, says it for fits
	f.traceFig = newStudyFigure("The objective of every accepted step appears here while the fit runs.")

	f.plan = container.NewVBox(caution,
		sectionTitle("Experiments"), f.expList, container.NewHBox(loadData, loadPlan),
		sectionTitle("Quantities to estimate"), grid,
		sectionTitle("Settings"), settings, f.profile, f.ctl.content)
	left := container.NewVSplit(container.NewVScroll(f.plan), f.traceFig)
	left.Offset = 0.72

	f.curveExp = widget.NewSelect(nil, func(string) { f.drawCurves() })
	f.curves = newStudyFigure("Run the fit to see the fitted curves over the measurements.")
	f.table = container.NewStack()
	f.notes = widget.NewLabel("")
	f.notes.Wrapping = fyne.TextWrapWord
	f.residExp = widget.NewSelect(nil, func(string) { f.drawResiduals() })
	f.residuals = newStudyFigure("Residuals appear after a fit.")
	f.corr = newStudyFigure("The correlations of the estimates appear after a fit of two or more quantities.")
	f.startsFig = newStudyFigure("The final objective of every start, sorted, appears after a fit.")
	f.startsTxt = widget.NewLabel("")
	f.startsTxt.Wrapping = fyne.TextWrapWord
	f.profName = widget.NewSelect(nil, func(string) { f.drawProfile() })
	f.profiles = newStudyFigure("Tick “Profile-likelihood intervals” before Run to see the profiles.")
	estimates := container.NewVSplit(f.table, container.NewVScroll(f.notes))
	estimates.Offset = 0.55
	f.tabs = container.NewAppTabs(
		container.NewTabItem("Fitted curves", container.NewBorder(f.curveExp, nil, nil, nil, f.curves)),
		container.NewTabItem("Estimates", estimates),
		container.NewTabItem("Residuals", container.NewBorder(f.residExp, nil, nil, nil, f.residuals)),
		container.NewTabItem("Correlations", f.corr),
		container.NewTabItem("Starts", container.NewBorder(nil, f.startsTxt, nil, nil, f.startsFig)),
		container.NewTabItem("Profiles", container.NewBorder(f.profName, nil, nil, nil, f.profiles)))
	f.writeBtn = widget.NewButtonWithIcon("Write estimates into model", theme.DocumentSaveIcon(), f.write)
	f.writeBtn.Disable()
	exportTable := widget.NewButtonWithIcon("Table…", theme.DocumentSaveIcon(), f.exportTable)
	exportFig := widget.NewButtonWithIcon("Figure…", theme.DocumentSaveIcon(), f.exportFigure)
	bar := container.NewHBox(f.writeBtn, widget.NewSeparator(), widget.NewLabel("Export:"), exportTable, exportFig)
	right := container.NewBorder(nil, bar, nil, nil, f.tabs)
	split := container.NewHSplit(left, right)
	split.Offset = 0.42
	f.win.SetContent(split)
}

// columnsLayout places objects in rows of len(fractions) columns, each
// column taking its fraction of the width.
type columnsLayout struct{ fractions []float32 }

func newColumnsLayout(fr ...float32) *columnsLayout { return &columnsLayout{fractions: fr} }

func (l *columnsLayout) rowHeights(objs []fyne.CanvasObject) []float32 {
	n := len(l.fractions)
	var hs []float32
	for i := 0; i < len(objs); i += n {
		var h float32
		for j := i; j < i+n && j < len(objs); j++ {
			h = max(h, objs[j].MinSize().Height)
		}
		hs = append(hs, h)
	}
	return hs
}

// Layout implements fyne.Layout.
func (l *columnsLayout) Layout(objs []fyne.CanvasObject, size fyne.Size) {
	n := len(l.fractions)
	pad := theme.Padding()
	y := float32(0)
	for r, h := range l.rowHeights(objs) {
		x := float32(0)
		for c := 0; c < n && r*n+c < len(objs); c++ {
			w := l.fractions[c]*size.Width - pad
			objs[r*n+c].Move(fyne.NewPos(x, y))
			objs[r*n+c].Resize(fyne.NewSize(w, h))
			x += l.fractions[c] * size.Width
		}
		y += h + pad
	}
}

// MinSize implements fyne.Layout.
func (l *columnsLayout) MinSize(objs []fyne.CanvasObject) fyne.Size {
	var h float32
	for _, rh := range l.rowHeights(objs) {
		h += rh + theme.Padding()
	}
	return fyne.NewSize(420, h)
}

// newRow makes the row of knob k: not estimated, bounds a hundredfold
// either side of a positive value on a log scale, otherwise the slider's
// default range on a linear one.
func (f *fitWindow) newRow(k sliders.Knob) *estimateRow {
	label := k.Label()
	if u := f.unitOf(k); u != "" {
		label += " (" + u + ")"
	}
	r := &estimateRow{knob: k, use: widget.NewCheck(label, nil), lower: widget.NewEntry(), upper: widget.NewEntry(),
		start: widget.NewEntry(), log: widget.NewCheck("", nil), perExp: widget.NewCheck("", nil)}
	lo, hi := sliders.DefaultRange(k.Model, 0)
	if k.Model > 0 {
		lo, hi = k.Model/100, k.Model*100
		r.log.SetChecked(true)
	}
	r.lower.SetText(short(lo))
	r.upper.SetText(short(hi))
	r.start.SetText(strconv.FormatFloat(k.Model, 'g', -1, 64))
	f.rows = append(f.rows, r)
	return r
}

// unitOf returns the unit of a knob's value in the model, where known.
func (f *fitWindow) unitOf(k sliders.Knob) string {
	switch k.Kind {
	case sliders.Parameter:
		for _, p := range f.model.Parameters {
			if p.Name == k.Name {
				return p.Unit
			}
		}
	case sliders.Initial:
		return f.model.Units.Amount
	}
	return ""
}

// targetUnit returns the unit of the knob named ref.
func (f *fitWindow) targetUnit(ref string) string { return f.unitOf(sliders.ParseRef(ref)) }

// row returns the row of the knob named ref ("kon", "init:S").
func (f *fitWindow) row(ref string) *estimateRow {
	for _, r := range f.rows {
		if r.knob.Ref() == ref {
			return r
		}
	}
	return nil
}

// addExperiment lists an experiment, ticked when use.
func (f *fitWindow) addExperiment(e calibrate.Experiment, note string, use bool) {
	x := &fitExperiment{exp: e, note: note}
	text := e.Name + ": " + filepath.Base(e.Data)
	if note != "" {
		text += " — " + note
	}
	var cond []string
	for _, k := range sortedKeys(e.Initial) {
		cond = append(cond, fmt.Sprintf("%s starts at %s", k, short(e.Initial[k])))
	}
	for _, k := range sortedKeys(e.Parameters) {
		cond = append(cond, fmt.Sprintf("%s = %s", k, short(e.Parameters[k])))
	}
	if len(cond) > 0 {
		text += " (" + strings.Join(cond, ", ") + ")"
	}
	x.use = widget.NewCheck(text, nil)
	x.use.SetChecked(use)
	f.exps = append(f.exps, x)
	f.expList.Add(x.use)
	if f.plan != nil {
		f.plan.Refresh()
	}
}

func sortedKeys(m map[string]float64) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// addDataDialog asks for a measurements file to add as an experiment
// under the model's own conditions.
func (f *fitWindow) addDataDialog() {
	askOpen(f.win, []string{".csv", ".tsv", ".txt"}, nil, f.showError, f.addData)
}

// addData reads a measurements file (to report its problems now, with
// their places) and lists it as an experiment.
func (f *fitWindow) addData(path string) {
	d, err := calibrate.LoadData(path, calibrate.MeasurableNames(f.model))
	if err != nil {
		f.ctl.status.SetText(plainError(err))
		return
	}
	name := strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
	f.addExperiment(calibrate.Experiment{Name: name, Data: path}, measuredSummary(d), true)
}

// loadPlanDialog asks for a fit plan ("kinetarium.fit/1") and loads it.
func (f *fitWindow) loadPlanDialog() {
	askOpen(f.win, []string{".json"}, nil, f.showError, func(path string) {
		if err := f.loadPlan(path); err != nil {
			f.showError(err)
		}
	})
}

// showError shows err in a dialog over the fit window.
func (f *fitWindow) showError(err error) { dialog.ShowError(err, f.win) }

// loadPlan reads a fit plan: its experiments are added (ticked), and its
// quantities, bounds, noise model, starts and seed replace the form's.
// The plan's own model file is not used: the window fits the model it
// was opened on.
func (f *fitWindow) loadPlan(path string) error {
	if abs, err := filepath.Abs(path); err == nil {
		path = abs // the experiments' files are then found from anywhere
	}
	spec, err := calibrate.LoadSpec(path)
	if err != nil {
		return err
	}
	for _, e := range spec.Estimate {
		if f.row(e.Target) == nil {
			return fmt.Errorf("%s: the plan estimates %q, which the model in this window does not have", path, e.Target)
		}
	}
	for _, x := range f.exps {
		x.use.SetChecked(false)
	}
	for _, e := range spec.Experiments {
		if !filepath.IsAbs(e.Data) {
			e.Data = filepath.Join(spec.Dir, e.Data)
		}
		f.addExperiment(e, "", true)
	}
	for _, r := range f.rows {
		r.use.SetChecked(false)
	}
	for _, e := range spec.Estimate {
		r := f.row(e.Target)
		r.use.SetChecked(true)
		r.lower.SetText(strconv.FormatFloat(e.Lower, 'g', -1, 64))
		r.upper.SetText(strconv.FormatFloat(e.Upper, 'g', -1, 64))
		if !math.IsNaN(e.Start) {
			r.start.SetText(strconv.FormatFloat(e.Start, 'g', -1, 64))
		}
		r.log.SetChecked(e.Log)
		r.perExp.SetChecked(e.PerExp)
	}
	f.noise.SetSelected(noiseLabelOf(spec.Noise.Model))
	f.starts.SetText(strconv.Itoa(spec.Starts))
	f.seed.SetText(strconv.FormatUint(spec.Seed, 10))
	f.rtol, f.atol, f.method = spec.RTol, spec.ATol, spec.Method
	f.ctl.status.SetText(fmt.Sprintf("Loaded the plan %s: %d experiments, %d quantities. It is fitted to the model in this window, not to the plan's model file.",
		filepath.Base(path), len(spec.Experiments), len(spec.Estimate)))
	return nil
}

// spec reads the form into a fit plan; an error names the field at fault
// and what is expected.
func (f *fitWindow) spec() (*calibrate.Spec, error) {
	s := &calibrate.Spec{Noise: calibrate.Noise{Model: noiseModelOf(f.noise.Selected)}, RTol: f.rtol, ATol: f.atol, Method: f.method}
	for _, x := range f.exps {
		if x.use.Checked {
			s.Experiments = append(s.Experiments, x.exp)
		}
	}
	if len(s.Experiments) == 0 {
		return nil, fmt.Errorf("no experiment is ticked: load measurements (Data ▸ Load measurements… in the main window, or Add measurements… here) and tick them")
	}
	for _, r := range f.rows {
		if !r.use.Checked {
			continue
		}
		what := r.knob.Label()
		lo, err := number(r.lower.Text, what+": the lower bound")
		if err != nil {
			return nil, err
		}
		hi, err := number(r.upper.Text, what+": the upper bound")
		if err != nil {
			return nil, err
		}
		st, err := number(r.start.Text, what+": the start")
		if err != nil {
			return nil, err
		}
		switch {
		case !(lo < hi):
			return nil, fmt.Errorf("%s: the lower bound %s must be below the upper bound %s", what, short(lo), short(hi))
		case r.log.Checked && lo <= 0:
			return nil, fmt.Errorf("%s: a log scale needs a lower bound above 0, not %s; untick Log or raise the bound", what, short(lo))
		case st < lo || st > hi:
			return nil, fmt.Errorf("%s: the start %s lies outside the bounds %s to %s", what, short(st), short(lo), short(hi))
		}
		s.Estimate = append(s.Estimate, calibrate.Estimate{Target: r.knob.Ref(), Lower: lo, Upper: hi, Start: st, Log: r.log.Checked, PerExp: r.perExp.Checked})
	}
	if len(s.Estimate) == 0 {
		return nil, fmt.Errorf("no quantity is ticked for estimation: tick at least one under “Quantities to estimate”")
	}
	n, err := count(f.starts.Text, "Starts", 1, 10000)
	if err != nil {
		return nil, err
	}
	seed, err := count(f.seed.Text, "Seed", 0, math.MaxInt32)
	if err != nil {
		return nil, err
	}
	s.Starts, s.Seed = n, uint64(seed)
	return s, nil
}

// start reads the form and runs the fit off the UI goroutine.
func (f *fitWindow) start() {
	spec, err := f.spec()
	if err != nil {
		f.ctl.status.SetText("Cannot run yet: " + err.Error()) // names first, as written
		return
	}
	profiles := f.profile.Checked
	f.traceMu.Lock()
	f.trace = nil
	f.traceMu.Unlock()
	f.traceFig.set(nil, "Starting…")
	runAsync(f.ctl, func(ctx context.Context, progress func(float64)) (*fitOutcome, error) {
		prob, err := calibrate.NewProblemModel(spec, f.model)
		if err != nil {
			return nil, err
		}
		set := calibrate.Settings{Progress: progress, Profiles: profiles, Trace: f.traced}
		rep, err := prob.Run(ctx, set)
		out := &fitOutcome{prob: prob, rep: rep}
		if err != nil {
			return out, err
		}
		x := make([]float64, len(rep.Estimates))
		for j, e := range rep.Estimates {
			x[j] = e.Value
		}
		for i := range prob.Exps {
			c, err := prob.Curves(ctx, i, x, 300)
			if err != nil {
				return out, fmt.Errorf("experiment %q: drawing the fit: %w", prob.Exps[i].Name, err)
			}
			out.curves = append(out.curves, c)
		}
		return out, nil
	}, f.done)
}

// traced keeps the objective of an accepted step and, a few times a
// second, draws the trace. It is called from the fit's workers.
func (f *fitWindow) traced(start int, _ int, cost float64) {
	f.traceMu.Lock()
	for len(f.trace) <= start {
		f.trace = append(f.trace, nil)
	}
	f.trace[start] = append(f.trace[start], cost)
	draw := time.Since(f.traceDrew) > 250*time.Millisecond
	if draw {
		f.traceDrew = time.Now()
	}
	f.traceMu.Unlock()
	if draw {
		f.ctl.deliver(f.drawTrace)
	}
}

// drawTrace draws the objective of every accepted step so far.
func (f *fitWindow) drawTrace() {
	f.traceMu.Lock()
	runs := make([][]float64, len(f.trace))
	for i, r := range f.trace {
		runs[i] = slices.Clone(r)
	}
	f.traceMu.Unlock()
	if len(runs) == 0 {
		return
	}
	p, err := plotting.TracePlot(runs, plotting.Options{Title: "Objective after each accepted step of each start",
		XLabel: "accepted step", YLabel: "½ weighted sum of squares", LogY: true})
	if err == nil {
		f.traceFig.set(p, "")
	}
}

// done shows a finished (or stopped) fit.
func (f *fitWindow) done(out *fitOutcome, err error) {
	if f.afterRun != nil {
		defer f.afterRun()
	}
	f.drawTrace()
	if err != nil {
		f.ctl.status.SetText("The fit did not finish: " + plainError(err))
		if out == nil || out.rep == nil || len(out.rep.Estimates) == 0 {
			return
		}
	}
	f.out = out
	rep := out.rep
	line := fmt.Sprintf("%d of %d starts converged; best objective %s (−log-likelihood) in %s.",
		rep.Converged, len(rep.Starts), cell(rep.Objective), roundDuration(time.Duration(rep.Seconds*float64(time.Second))))
	if n := undetermined(rep); n > 0 {
		line += fmt.Sprintf(" %d %s not determined by the data; see Estimates.", n, plural(n, "quantity is", "quantities are"))
	}
	if err == nil {
		f.ctl.status.SetText(line)
	}
	var names []string
	for _, e := range out.prob.Exps {
		names = append(names, e.Name)
	}
	f.curveExp.Options, f.residExp.Options = names, names
	f.curveExp.SetSelected(names[0])
	f.residExp.SetSelected(names[0])
	var est []string
	for _, e := range rep.Estimates {
		est = append(est, e.Name)
	}
	f.profName.Options = nil
	if len(rep.Profiles) > 0 {
		f.profName.Options = est
		f.profName.SetSelected(est[0])
	} else {
		f.profiles.set(nil, "No profiles were computed: tick “Profile-likelihood intervals” and run again.")
	}
	f.profName.Refresh()
	f.showEstimates()
	f.drawCorrelation()
	f.drawStarts()
	f.writeBtn.Enable()
}

// undetermined counts the estimates the data do not determine.
func undetermined(rep *calibrate.Report) int {
	n := 0
	for _, e := range rep.Estimates {
		if !e.Determined && e.AtBound == 0 {
			n++
		}
	}
	return n
}

// inWords says how well an estimate is determined.
func inWords(e calibrate.Estimated) string {
	switch {
	case e.AtBound < 0:
		return "on its lower bound: no interval"
	case e.AtBound > 0:
		return "on its upper bound: no interval"
	case !e.Determined:
		return "not determined by the data"
	case math.IsInf(e.ProfileLow, 0) || math.IsInf(e.ProfileHigh, 0):
		return "not bounded by the data on one side (open profile)"
	case e.Value != 0 && e.SE > 10*math.Abs(e.Value):
		return "poorly determined (SE above ten times the value)"
	}
	return "determined"
}

// estimateRows lays out the estimate table: calibrate.EstimateRows (the
// batch command's estimates.csv) with the unit (from the estimate, else
// from unitOf when not nil) and the verdict in words added at the end.
func estimateRows(rep *calibrate.Report, unitOf func(target string) string) [][]string {
	rows := calibrate.EstimateRows(rep)
	rows[0] = append(rows[0], "unit", "in_words")
	for i, e := range rep.All() {
		unit := e.Unit
		if unit == "" && unitOf != nil {
			unit = unitOf(e.Target)
		}
		rows[i+1] = append(rows[i+1], unit, inWords(e))
	}
	return rows
}

// showEstimates fills the Estimates tab: the verdict in words beside the
// value, then the intervals.
func (f *fitWindow) showEstimates() {
	rep := f.out.rep
	rows := estimateRows(rep, f.targetUnit)
	// Columns of estimateRows shown, in order.
	order := []int{0, 1, 7, 8, 2, 3, 4, 5, 6}
	shown := [][]string{{"Estimate", "Value", "Unit", "In words", "Std. error", "95 % low", "95 % high", "Profile low", "Profile high"}}
	for _, r := range rows[1:] {
		var row []string
		for _, c := range order {
			v := r[c]
			switch {
			case c == 0 || c >= 7:
			case v == "":
				v = "—"
			case v == "inf":
				v = "∞"
			case v == "-inf":
				v = "−∞"
			default:
				if x, err := strconv.ParseFloat(v, 64); err == nil {
					v = cell(x)
				}
			}
			row = append(row, v)
		}
		shown = append(shown, row)
	}
	t := textTable(shown)
	for c, w := range []float32{110, 80, 60, 250, 90, 80, 80, 90, 90} {
		t.SetColumnWidth(c, w)
	}
	f.table.Objects = []fyne.CanvasObject{t}
	f.table.Refresh()
	var b strings.Builder
	fmt.Fprintf(&b, "Objective (−log-likelihood, Gaussian errors) %s; weighted sum of squares %s; sum of squares %s.\n",
		cell(rep.Objective), cell(rep.WSSR), cell(rep.SSR))
	fmt.Fprintf(&b, "%d measured values, %d estimated (σ counted where estimated), %d degrees of freedom; AIC %s, AICc %s, BIC %s.\n",
		rep.NData, rep.NParams, rep.DOF, cell(rep.AIC), cell(rep.AICc), cell(rep.BIC))
	if !math.IsNaN(rep.Sigma) {
		fmt.Fprintf(&b, "Estimated σ of the measurements: %s.\n", cell(rep.Sigma))
	}
	fmt.Fprintf(&b, "Intervals are 95 %% intervals from the Fisher information (on the log scale for quantities fitted on one); profile intervals where asked for.\n")
	for _, n := range rep.Notes {
		b.WriteString("\n• " + n)
	}
	b.WriteString("\n\n" + fitCaution)
	f.notes.SetText(b.String())
}

// expIndex returns the index of the experiment named name.
func (f *fitWindow) expIndex(name string) int {
	if f.out == nil {
		return -1
	}
	for i, e := range f.out.prob.Exps {
		if e.Name == name {
			return i
		}
	}
	return -1
}

// logTime reports whether the model's output grid is log-spaced, which
// puts the fit's figures on a log time axis.
func (f *fitWindow) logTime() bool {
	return f.model.Simulation.WithDefaults().Output.Spacing == "log"
}

// curvesFigure draws the fitted curves of experiment i over its
// measurements, each species in its colour in the main window.
func (f *fitWindow) curvesFigure(i int) (*plot.Plot, error) {
	res := f.out.curves[i]
	name := f.out.prob.Exps[i].Name
	tr := plotting.Trajectories{Times: res.T, Names: res.Names, Values: res.Y}
	var pts []plotting.Measured
	for _, r := range f.out.rep.Residuals {
		if r.Experiment == name {
			pts = append(pts, plotting.Measured{T: r.Time, Y: r.Observed, SD: r.SD, Name: r.Name})
		}
	}
	o := plotting.Options{Title: "Fit to " + name, XLabel: "time", XUnit: f.model.Units.Time, YLabel: "concentration",
		YUnit: f.model.Units.Amount, LogX: f.logTime(), ColourIndex: make([]int, len(res.Names))}
	for j, n := range res.Names {
		o.ColourIndex[j] = run.View{Slots: f.slots}.Slot(n, j)
	}
	return plotting.MeasuredPlot(tr, pts, o)
}

// residualFigure draws observed − fitted of experiment i with the SD bars.
func (f *fitWindow) residualFigure(i int) (*plot.Plot, error) {
	name := f.out.prob.Exps[i].Name
	res := f.out.curves[i]
	var pts []plotting.Measured
	for _, r := range f.out.rep.Residuals {
		if r.Experiment == name {
			pts = append(pts, plotting.Measured{T: r.Time, Y: r.Residual, SD: r.SD, Name: r.Name})
		}
	}
	first := 0.0
	if f.logTime() && len(res.T) > 1 {
		first = res.T[1]
	}
	// A zero line per measured quantity, in its colour: the model's
	// curve, where every residual would lie for a perfect fit.
	zero := plotting.Trajectories{Times: []float64{first, res.T[len(res.T)-1]}, Names: res.Names,
		Values: [][]float64{make([]float64, len(res.Names)), make([]float64, len(res.Names))}}
	o := plotting.Options{Title: "Residuals, " + name + " (observed − fitted)", XLabel: "time", XUnit: f.model.Units.Time,
		YLabel: "residual", YUnit: f.model.Units.Amount, LogX: f.logTime(), ColourIndex: make([]int, len(res.Names))}
	for j, n := range res.Names {
		o.ColourIndex[j] = run.View{Slots: f.slots}.Slot(n, j)
	}
	return plotting.MeasuredPlot(zero, pts, o)
}

func (f *fitWindow) drawCurves() {
	if i := f.expIndex(f.curveExp.Selected); i >= 0 {
		p, err := f.curvesFigure(i)
		f.showFigure(f.curves, p, err)
	}
}

func (f *fitWindow) drawResiduals() {
	if i := f.expIndex(f.residExp.Selected); i >= 0 {
		p, err := f.residualFigure(i)
		f.showFigure(f.residuals, p, err)
	}
}

func (f *fitWindow) showFigure(fig *studyFigure, p *plot.Plot, err error) {
	if err != nil {
		fig.set(nil, "The figure cannot be drawn: "+err.Error())
		return
	}
	fig.set(p, "")
}

// correlationFigure is the heat map of the estimates' correlations.
func (f *fitWindow) correlationFigure() (*plot.Plot, error) {
	rep := f.out.rep
	n := len(rep.Estimates)
	if n < 2 || rep.Corr == nil {
		return nil, fmt.Errorf("correlations need two or more estimates")
	}
	idx := make([]float64, n)
	names := make([]string, n)
	z := make([][]float64, n)
	for a := range z {
		idx[a], names[a] = float64(a), rep.Estimates[a].Name
		z[a] = make([]float64, n)
		for b := range z[a] {
			z[a][b] = rep.Corr.At(a, b)
		}
	}
	p, err := plotting.HeatMap(idx, idx, z, plotting.Options{Title: "Correlation of the estimates", Signed: true}, "correlation")
	if err != nil {
		return nil, err
	}
	plotting.NameAxis(&p.X, names)
	plotting.NameAxis(&p.Y, names)
	return p, nil
}

func (f *fitWindow) drawCorrelation() {
	if len(f.out.rep.Estimates) < 2 {
		f.corr.set(nil, "One quantity was estimated: there are no correlations to show.")
		return
	}
	p, err := f.correlationFigure()
	f.showFigure(f.corr, p, err)
}

// startsFigure draws the final objectives of the converged starts, sorted:
// a best found repeatedly shows as a flat run at the left.
func (f *fitWindow) startsFigure() (*plot.Plot, error) {
	objs := sortedObjectives(f.out.rep)
	rank := make([]float64, len(objs))
	for i := range rank {
		rank[i] = float64(i + 1)
	}
	return plotting.XYPlot(rank, objs, plotting.Options{Title: "Final objective of each converged start, sorted",
		XLabel: "start (sorted)", YLabel: "objective (−log-likelihood)"})
}

// sortedObjectives are the final objectives of the converged starts,
// ascending.
func sortedObjectives(rep *calibrate.Report) []float64 {
	var objs []float64
	for _, s := range rep.Starts {
		if s.Converged && !math.IsNaN(s.Objective) {
			objs = append(objs, s.Objective)
		}
	}
	sort.Float64s(objs)
	return objs
}

func (f *fitWindow) drawStarts() {
	p, err := f.startsFigure()
	f.showFigure(f.startsFig, p, err)
	objs := sortedObjectives(f.out.rep)
	if len(objs) == 0 {
		f.startsTxt.SetText("No start converged.")
		return
	}
	same := 0
	for _, o := range objs {
		if o-objs[0] <= 1e-6*math.Max(1, math.Abs(objs[0])) {
			same++
		}
	}
	f.startsTxt.SetText(fmt.Sprintf("The best objective was reached by %d of %d converged starts (%d started). "+
		"When only one start reaches it, run more starts before trusting the estimates.", same, len(objs), len(f.out.rep.Starts)))
}

// profileFigure draws the profile of estimate j.
func (f *fitWindow) profileFigure(j int) (*plot.Plot, error) {
	e := f.out.rep.Estimates[j]
	pr := f.out.rep.Profiles[j]
	return plotting.XYPlot(pr.Values, pr.Objectives, plotting.Options{
		Title:  fmt.Sprintf("Profile of %s (the 95%% interval is where it stays within 1.92 of the best)", e.Name),
		XLabel: e.Name, XUnit: e.Unit, YLabel: "objective (−log-likelihood)", LogX: e.Log})
}

func (f *fitWindow) drawProfile() {
	if f.out == nil {
		return
	}
	for j, e := range f.out.rep.Estimates {
		if e.Name == f.profName.Selected && j < len(f.out.rep.Profiles) {
			p, err := f.profileFigure(j)
			f.showFigure(f.profiles, p, err)
		}
	}
}

// write stores the shared estimates in the editor's model as one
// undoable edit; per-experiment estimates stay in the window.
func (f *fitWindow) write() {
	if f.out == nil {
		return
	}
	var knobs []sliders.Knob
	var skipped, loose []string
	for _, e := range f.out.rep.Estimates {
		if e.Exp >= 0 {
			skipped = append(skipped, e.Name)
			continue
		}
		k := sliders.ParseRef(e.Target)
		k.Value = e.Value
		knobs = append(knobs, k)
		if !e.Determined {
			loose = append(loose, e.Name)
		}
	}
	line := f.writeBack(knobs)
	if len(skipped) > 0 {
		line += " Per-experiment estimates were not written: " + strings.Join(skipped, ", ") + "."
	}
	if len(loose) > 0 {
		line += " Not determined by the data (one of many values that fit equally well): " + strings.Join(loose, ", ") + "."
	}
	f.ctl.status.SetText(line)
}

// fitTables are the tables the window exports, by name.
var fitTables = []string{"Estimates", "Measured and fitted values", "Correlations", "Starts"}

// tableRows returns the rows of the named table, in the batch command's
// layouts (estimates with the unit and the verdict in words added).
func (f *fitWindow) tableRows(name string) [][]string {
	rep := f.out.rep
	switch name {
	case "Measured and fitted values":
		return calibrate.FittedRows(rep)
	case "Correlations":
		return calibrate.CorrelationRows(rep)
	case "Starts":
		return calibrate.StartRows(rep)
	}
	return estimateRows(rep, f.targetUnit)
}

// provenance describes the fit's exports.
func (f *fitWindow) provenance() (*run.Provenance, error) {
	return run.NewProvenance("fit", f.model, f.model.Simulation, nil)
}

// saveTable writes the named table to path with its provenance beside.
func (f *fitWindow) saveTable(name, path string) error {
	prov, err := f.provenance()
	if err != nil {
		return err
	}
	if err := atomicfile.WriteCSV(path, f.tableRows(name)); err != nil {
		return err
	}
	return run.SaveProvenance(path, prov)
}

func (f *fitWindow) exportTable() {
	if f.out == nil {
		f.ctl.status.SetText("Nothing to export yet: press Run first.")
		return
	}
	which := widget.NewSelect(fitTables, nil)
	which.SetSelected(fitTables[0])
	dialog.ShowForm("Export table", "Choose file…", "Cancel", []*widget.FormItem{widget.NewFormItem("Table", which)}, func(ok bool) {
		if !ok {
			return
		}
		name := which.Selected
		base := strings.ToLower(strings.ReplaceAll(name, " ", "-")) + ".csv"
		saveAs(f.win, base, ".csv", func(path string) error { return f.saveTable(name, path) },
			func(path string) { f.ctl.status.SetText("Table saved to " + path) })
	}, f.win)
}

// shownFigure returns the figure of the tab shown, with a file name.
func (f *fitWindow) shownFigure() (func() (*plot.Plot, error), string) {
	switch f.tabs.SelectedIndex() {
	case 0:
		i := f.expIndex(f.curveExp.Selected)
		return func() (*plot.Plot, error) { return f.curvesFigure(i) }, "fit-" + fileName(f.curveExp.Selected)
	case 2:
		i := f.expIndex(f.residExp.Selected)
		return func() (*plot.Plot, error) { return f.residualFigure(i) }, "residuals-" + fileName(f.residExp.Selected)
	case 3:
		return f.correlationFigure, "correlation"
	case 4:
		return f.startsFigure, "starts"
	case 5:
		for j, e := range f.out.rep.Estimates {
			if e.Name == f.profName.Selected && j < len(f.out.rep.Profiles) {
				return func() (*plot.Plot, error) { return f.profileFigure(j) }, "profile-" + fileName(e.Name)
			}
		}
	}
	return nil, ""
}

// fileName turns a name into a part of a file name.
func fileName(s string) string {
	return strings.Map(func(r rune) rune {
		if strings.ContainsRune(`/\:*?"<>|[] `, r) {
			return '_'
		}
		return r
	}, s)
}

func (f *fitWindow) exportFigure() {
	if f.out == nil {
		f.ctl.status.SetText("Nothing to export yet: press Run first.")
		return
	}
	fig, base := f.shownFigure()
	if fig == nil {
		f.ctl.status.SetText("The Estimates tab is a table: export it with Table…; choose a tab with a figure to export a figure.")
		return
	}
	exportPlot(f.win, base, f.provenance, fig, func(path string) { f.ctl.status.SetText("Figure saved to " + path) })
}
