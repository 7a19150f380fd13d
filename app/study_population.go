package main

// The Population window: simulate many virtual individuals whose values
// are drawn from distributions, and show percentile bands, readout
// histograms and the samples that failed.

import (
	"context"
	"errors"
	"fmt"
	"math"
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

// Sampling choices.
const (
	samplingRandom = "Random"
	samplingLHS    = "Latin hypercube"
)

// varyRow is the widgets of one varied quantity.
type varyRow struct {
	quantity *widget.Select
	dist     *widget.Select
	aLabel   *widget.Label
	bLabel   *widget.Label
	a, b     *widget.Entry
	object   fyne.CanvasObject
}

// distribution reads the row; n names it in errors.
func (r *varyRow) distribution(n int) (explore.Distribution, error) {
	what := fmt.Sprintf("quantity %d", n)
	a, err := number(r.a.Text, what+": the "+r.aLabel.Text)
	if err != nil {
		return nil, err
	}
	b, err := number(r.b.Text, what+": the "+r.bLabel.Text)
	if err != nil {
		return nil, err
	}
	for _, d := range study.Distributions {
		if d.Title == r.dist.Selected {
			x, err := d.Make(a, b)
			if err != nil {
				return nil, fmt.Errorf("%s: %w", what, err)
			}
			return x, nil
		}
	}
	return nil, fmt.Errorf("%s: choose a distribution", what)
}

// populationWindow is the Population window of one model (as it was when
// the window was opened).
type populationWindow struct {
	win      fyne.Window
	model    *network.Model
	prep     *study.Prepared
	qs       []quantity
	rows     []*varyRow
	list     *fyne.Container
	size     *widget.Entry
	seed     *widget.Entry
	sampling *widget.Select
	ro       *readoutEditor
	ctl      *runControls

	job     *study.Job
	res     *explore.Result
	partial bool           // res is of a run stopped by Cancel
	spill   *explore.Spill // holds res's samples
	closed  bool           // the window was closed

	tabs       *container.AppTabs
	species    *widget.Select
	logTime    *widget.Check
	logY       *widget.Check
	bands      *studyFigure
	readoutSel *widget.Select
	summary    *widget.Label
	hist       *studyFigure
	failures   *failureList
}

// newPopulationWindow makes the Population window for m in a.
func newPopulationWindow(a fyne.App, m *network.Model, name string) (*populationWindow, error) {
	prep, err := study.Prepare(m)
	if err != nil {
		return nil, err
	}
	p := &populationWindow{win: a.NewWindow("Population — " + name), model: m, prep: prep, qs: quantities(m), list: container.NewVBox()}
	p.size = widget.NewEntry()
	p.size.SetText("500")
	p.seed = widget.NewEntry()
	p.seed.SetText("1")
	p.sampling = widget.NewSelect([]string{samplingRandom, samplingLHS}, nil)
	p.sampling.SetSelected(samplingLHS)
	species := prep.Quantities()
	p.ro = newReadoutEditor(species)
	p.ro.noteUnits(m)
	p.ctl = newRunControls(p.start)
	for i := 0; i < 2 && i < len(p.qs); i++ {
		p.addRow(p.qs[i].label)
	}
	p.ro.add(explore.Max, "", 0)
	p.ro.add(explore.AUC, "", 0)

	add := widget.NewButtonWithIcon("Add quantity", theme.ContentAddIcon(), func() { p.addRow("") })
	add.Importance = widget.LowImportance
	form := widget.NewForm(
		widget.NewFormItem("Sample size", p.size),
		widget.NewFormItem("Random seed", p.seed),
		widget.NewFormItem("Sampling", p.sampling),
	)
	setup := container.NewVBox(
		sectionTitle("Varied quantities"), p.list, container.NewHBox(add),
		widget.NewSeparator(), form,
		widget.NewSeparator(), sectionTitle("Readouts"), p.ro.content,
		widget.NewSeparator(), p.ctl.content)
	left := container.NewVScroll(container.NewPadded(setup))

	p.bands = newStudyFigure("Press Run to simulate the population; the median and the 25–75 % and 5–95 % bands are drawn here.")
	p.hist = newStudyFigure("Press Run; each readout's spread over the population is drawn here.")
	p.species = widget.NewSelect(species, func(string) { p.drawBands() })
	if len(species) > 0 {
		p.species.SetSelected(species[0])
	}
	p.logTime = widget.NewCheck("Log time", func(bool) { p.drawBands() })
	p.logTime.SetChecked(prep.Sim.Output.Spacing == "log")
	p.logY = widget.NewCheck("Log concentration", func(bool) { p.drawBands() })
	p.readoutSel = widget.NewSelect(nil, func(string) { p.drawHistogram() })
	p.summary = widget.NewLabel("")
	p.summary.Wrapping = fyne.TextWrapWord
	p.failures = newFailureList("sample", func() {
		p.failures.exportAs(p.win, func(path string) { p.ctl.status.SetText("Failures saved to " + path) })
	})
	p.failures.kind, p.failures.prep = "population", prep

	bandBar := container.NewHBox(widget.NewLabel("Species"), p.species, p.logTime, p.logY)
	histBar := container.NewVBox(container.NewHBox(widget.NewLabel("Readout"),
		container.NewGridWrap(fyne.NewSize(220, p.readoutSel.MinSize().Height), p.readoutSel)), p.summary)
	p.tabs = container.NewAppTabs(
		container.NewTabItem("Bands", container.NewBorder(bandBar, nil, nil, nil, p.bands)),
		container.NewTabItem("Readouts", container.NewBorder(histBar, nil, nil, nil, p.hist)),
		container.NewTabItem("Failed samples", p.failures.content),
	)
	exportFig := widget.NewButtonWithIcon("Figure…", theme.DocumentSaveIcon(), p.exportFigure)
	exportSamples := widget.NewButtonWithIcon("Samples (CSV)…", theme.DocumentSaveIcon(), func() { p.exportTable("samples.csv", p.saveSamples) })
	exportBands := widget.NewButtonWithIcon("Bands (CSV)…", theme.DocumentSaveIcon(), func() { p.exportTable("bands.csv", p.saveBands) })
	top := container.NewHBox(widget.NewLabel("Export:"), exportFig, exportSamples, exportBands, p.failures.export)
	right := container.NewBorder(container.NewBorder(nil, nil, nil, top), nil, nil, nil, p.tabs)

	split := container.NewHSplit(left, container.NewPadded(right))
	split.Offset = 0.38
	p.win.SetContent(split)
	p.win.SetOnClosed(func() {
		// A run in progress is stopped; finished drops its spill file.
		p.closed = true
		p.ctl.stopRun()
		p.spill.Close()
	})
	p.win.Resize(fyne.NewSize(1240, 780))
	return p, nil
}

// addRow adds a varied quantity, log-normal around the model's value with
// a CV of 30 %.
func (p *populationWindow) addRow(label string) *varyRow {
	r := &varyRow{
		quantity: widget.NewSelect(quantityLabels(p.qs), nil),
		dist:     widget.NewSelect(nil, nil),
		aLabel:   widget.NewLabel(""),
		bLabel:   widget.NewLabel(""),
		a:        widget.NewEntry(),
		b:        widget.NewEntry(),
	}
	for _, d := range study.Distributions {
		r.dist.Options = append(r.dist.Options, d.Title)
	}
	r.quantity.PlaceHolder = "Choose a quantity…"
	r.dist.OnChanged = func(s string) {
		for _, d := range study.Distributions {
			if d.Title == s {
				r.aLabel.SetText(d.ALabel)
				r.bLabel.SetText(d.BLabel)
			}
		}
	}
	r.quantity.OnChanged = func(s string) {
		q, ok := findQuantity(p.qs, s)
		if !ok {
			return
		}
		if q.value > 0 {
			r.dist.SetSelected(study.Distributions[0].Title)
			r.a.SetText(short(q.value))
			r.b.SetText("30")
			return
		}
		r.dist.SetSelected(study.Distributions[2].Title)
		r.a.SetText("0")
		r.b.SetText("1")
	}
	r.dist.SetSelected(study.Distributions[0].Title)
	if label != "" {
		r.quantity.SetSelected(label)
	}
	remove := widget.NewButtonWithIcon("", theme.DeleteIcon(), func() { p.removeRow(r) })
	remove.Importance = widget.LowImportance
	entry := func(l *widget.Label, e *widget.Entry) fyne.CanvasObject {
		return container.NewBorder(nil, nil, l, nil, e)
	}
	line1 := container.NewGridWithColumns(2, r.quantity, r.dist)
	line2 := container.NewGridWithColumns(2, entry(r.aLabel, r.a), entry(r.bLabel, r.b))
	r.object = container.NewBorder(nil, widget.NewSeparator(), nil, remove, container.NewVBox(line1, line2))
	p.rows = append(p.rows, r)
	p.list.Add(r.object)
	return r
}

// removeRow removes a varied quantity.
func (p *populationWindow) removeRow(r *varyRow) {
	if i := slices.Index(p.rows, r); i >= 0 {
		p.rows = slices.Delete(p.rows, i, i+1)
		p.list.Remove(r.object)
		p.win.Content().Refresh()
	}
}

// prepare reads the form into a job with bands on every species.
func (p *populationWindow) prepare() (*study.Job, error) {
	var vary []study.Vary
	for i, r := range p.rows {
		q, ok := findQuantity(p.qs, r.quantity.Selected)
		if !ok {
			return nil, fmt.Errorf("quantity %d: choose the quantity to vary", i+1)
		}
		d, err := r.distribution(i + 1)
		if err != nil {
			return nil, err
		}
		vary = append(vary, study.Vary{Knob: q.knob, Dist: d})
	}
	if len(vary) == 0 {
		return nil, errors.New("add a quantity to vary under “Varied quantities”")
	}
	n, err := count(p.size.Text, "the sample size", 1, 1_000_000)
	if err != nil {
		return nil, err
	}
	seed, err := strconv.ParseUint(strings.TrimSpace(p.seed.Text), 10, 64)
	if err != nil {
		return nil, fmt.Errorf("the random seed %q is not usable; expected a whole number ≥ 0", p.seed.Text)
	}
	sampling := explore.Random
	if p.sampling.Selected == samplingLHS {
		sampling = explore.LatinHypercube
	}
	specs, err := p.ro.specs()
	if err != nil {
		return nil, err
	}
	job, err := p.prep.Population(vary, n, seed, sampling, specs, p.prep.Quantities())
	if err != nil {
		return nil, err
	}
	// The samples go to a spill file as they finish, so that memory does
	// not grow with the population; finished keeps it with the result.
	if job.Settings.Spill, err = explore.NewSpill(""); err != nil {
		return nil, err
	}
	return job, nil
}

// start reads the form and runs the population on every core, off the UI
// goroutine.
func (p *populationWindow) start() { p.ctl.runJob(p.prepare, p.finished) }

// finished shows the outcome of a run.
func (p *populationWindow) finished(job *study.Job, res *explore.Result, err error) {
	if res == nil || p.closed {
		job.Settings.Spill.Close()
		p.ctl.status.SetText(plainError(err))
		return
	}
	if p.spill != job.Settings.Spill {
		p.spill.Close() // the previous result's samples
	}
	p.job, p.res, p.spill = job, res, job.Settings.Spill
	p.partial = err != nil
	line := fmt.Sprintf("%d of %d samples done in %s.", res.Points-res.Failed, res.Size, roundDuration(res.Wall))
	if errors.Is(err, context.Canceled) {
		line = fmt.Sprintf("Cancelled: %d of %d samples done; the results show those (partial).", res.Points, res.Size) + partialNote
	} else if err != nil {
		line = plainError(err)
	}
	p.ctl.status.SetText(line + failureText(res, "sample"))
	p.failures.fig = job.Figures()
	p.failures.set(res, p.partial)
	p.readoutSel.SetOptions(res.Readouts)
	if len(res.Readouts) > 0 {
		p.readoutSel.SetSelected(res.Readouts[0])
	}
	p.drawBands()
	p.drawHistogram()
}

// bandFigure draws the bands of the chosen species.
func (p *populationWindow) bandFigure() (*plot.Plot, error) {
	if p.res == nil || p.res.Bands == nil {
		return nil, errors.New("no population to draw yet")
	}
	if !slices.Contains(p.prep.Quantities(), p.species.Selected) {
		return nil, errors.New("choose a species")
	}
	return p.job.Figures().Bands(p.res, p.species.Selected, p.logTime.Checked, p.logY.Checked)
}

// histogramFigure draws the distribution of the chosen readout.
func (p *populationWindow) histogramFigure() (*plot.Plot, error) {
	if p.res == nil {
		return nil, errors.New("no population to draw yet")
	}
	return p.job.Figures().Histogram(p.res, slices.Index(p.res.Readouts, p.readoutSel.Selected))
}

func (p *populationWindow) drawBands() {
	if p.bands == nil || p.res == nil {
		return
	}
	fig, err := p.bandFigure()
	hint := ""
	if err != nil {
		hint = plainError(err)
	}
	p.bands.set(fig, hint)
}

func (p *populationWindow) drawHistogram() {
	if p.hist == nil || p.res == nil {
		return
	}
	p.summary.SetText(p.readoutSummary())
	fig, err := p.histogramFigure()
	hint := ""
	if err != nil {
		hint = plainError(err)
	}
	p.hist.set(fig, hint)
}

// readoutSummary gives the chosen readout's percentiles in one line.
func (p *populationWindow) readoutSummary() string {
	r := slices.Index(p.res.Readouts, p.readoutSel.Selected)
	if r < 0 {
		return ""
	}
	fig := p.job.Figures()
	vals, undefined, err := fig.ReadoutValues(p.res, r)
	if err != nil {
		return plainError(err)
	}
	if len(vals) == 0 {
		return fmt.Sprintf("No sample has a value (%d undefined).", undefined)
	}
	var parts []string
	for _, q := range study.Percentiles {
		parts = append(parts, fmt.Sprintf("%g %%: %s", math.Round(q*100), short(study.EmpiricalQuantile(vals, q))))
	}
	line := fmt.Sprintf("n = %d · ", len(vals)) + strings.Join(parts, " · ")
	if u := fig.ReadoutUnit(r); u != "" {
		line += " (" + u + ")"
	}
	if undefined > 0 {
		line += fmt.Sprintf(" · undefined in %d %s", undefined, plural(undefined, "sample", "samples"))
	}
	return line
}

// exportFigure saves the figure of the tab shown.
func (p *populationWindow) exportFigure() {
	if p.res == nil {
		p.ctl.status.SetText("Nothing to export yet: press Run first.")
		return
	}
	fig, base := p.bandFigure, "bands_"+fileSafe(p.species.Selected)
	if p.tabs.Selected() != nil && p.tabs.Selected().Text == "Readouts" {
		fig, base = p.histogramFigure, "hist_"+fileSafe(p.readoutSel.Selected)
	}
	exportFigureAs(p.win, base, "population", p.prep, p.partial, fig, func(path string) { p.ctl.status.SetText("Figure saved to " + path) })
}

// exportTable asks for a file and saves a table there.
func (p *populationWindow) exportTable(name string, save func(string) error) {
	p.ctl.exportTable(p.win, p.res != nil, name, save)
}

// saveSamples writes every sample's values and readouts (the batch
// command's samples.csv layout).
func (p *populationWindow) saveSamples(path string) error {
	if p.res == nil {
		return errors.New("nothing to save yet: press Run first")
	}
	rows, err := p.job.Figures().RunRows(p.res)
	if err != nil {
		return err
	}
	return saveTable(path, rows, "population", p.prep, p.partial)
}

// saveBands writes the percentile bands of every species (the batch
// command's bands.csv layout).
func (p *populationWindow) saveBands(path string) error {
	if p.res == nil || p.res.Bands == nil {
		return errors.New("nothing to save yet: press Run first")
	}
	return saveTable(path, p.job.Figures().BandRows(p.res.Bands, p.prep.Quantities()), "population", p.prep, p.partial)
}
