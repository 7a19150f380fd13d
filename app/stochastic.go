package main

// The Stochastic window: many runs of the model in molecule counts, with
// the bands, the mean, the ODE solution for comparison and a few single
// runs, the spread of counts at a chosen time, and exports in the layout
// of the headless command.

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot"

	"kinetarium/app/ensemble"
	"kinetarium/app/run"
	"kinetarium/app/study"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/plotting"
	"kinetarium/solve/stochastic"
)

// Method titles of the Stochastic window.
var stochasticMethodTitles = map[stochastic.Method]string{
	stochastic.Direct:       "Exact: direct method",
	stochastic.NextReaction: "Exact: next-reaction method",
	stochastic.TauLeap:      "Approximate: tau-leaping (many molecules)",
}

// stochasticWindow is the Stochastic window of one model (as it was when
// the window was opened).
type stochasticWindow struct {
	win     fyne.Window
	model   *network.Model
	prep    *study.Prepared // for the provenance of exports
	runs    *widget.Entry
	seed    *widget.Entry
	method  *widget.Select
	perAmt  *widget.Entry // molecules per amount, when the model's units do not give it
	histAt  *widget.Entry
	notes   *widget.Label
	ctl     *runControls
	tabs    *container.AppTabs
	species *widget.Select
	logTime *widget.Check
	showODE *widget.Check
	fig     *studyFigure
	hist    *studyFigure

	job *ensemble.Job
	// shown shows times in the model's display unit (nil: none chosen).
	shown *ensemble.Shown
	res   *stochastic.Ensemble
	ode   [][]float64
	// partial: res is of a run stopped by Cancel.
	partial bool
}

// newStochasticWindow makes the Stochastic window for m in a.
func newStochasticWindow(a fyne.App, m *network.Model, name string) (*stochasticWindow, error) {
	prep, err := study.Prepare(m)
	if err != nil {
		return nil, err
	}
	s := &stochasticWindow{win: a.NewWindow("Stochastic — " + name), model: m, prep: prep}
	if sh, err := ensemble.Show(m); err == nil {
		s.shown = sh // Check refuses display units that do not convert
	}
	s.runs = widget.NewEntry()
	s.runs.SetText("1000")
	s.seed = widget.NewEntry()
	s.seed.SetText("1")
	var titles []string
	for _, meth := range stochastic.Methods {
		titles = append(titles, stochasticMethodTitles[meth])
	}
	s.method = widget.NewSelect(titles, nil)
	s.method.SetSelected(titles[0])
	s.perAmt = widget.NewEntry()
	s.perAmt.SetPlaceHolder("e.g. 602.2")
	sim := m.Simulation.WithDefaults()
	s.histAt = widget.NewEntry()
	s.histAt.SetText(short(sim.TEnd))
	s.notes = widget.NewLabel("")
	s.notes.Wrapping = fyne.TextWrapWord
	s.ctl = newRunControls(s.start)

	items := []*widget.FormItem{
		widget.NewFormItem("Runs", s.runs),
		widget.NewFormItem("Random seed", s.seed),
		widget.NewFormItem("Method", s.method),
		widget.NewFormItem(plotting.AxisLabel("Counts at time", m.Units.Time), s.histAt), // in the model's unit, as Spec.HistTimes
	}
	perAmtText := "Molecules per amount"
	if _, how, err := network.MoleculesPerAmount(m); err != nil {
		items = append(items, widget.NewFormItem(perAmtText, s.perAmt))
		s.notes.SetText(fmt.Sprintf("The amount unit %q does not say how many molecules one amount is. Give the molecules in one amount unit × one volume unit (Ω = volume × this number); it is used for this window only. To keep it, write it in the model file as \"units\": {\"molecules_per_amount\": N}.", m.Units.Amount))
	} else {
		s.notes.SetText("Counts from concentrations: " + how + ".")
	}
	form := widget.NewForm(items...)
	caution := widget.NewLabel("Non-elementary rate laws (Michaelis–Menten, expressions) are approximated by rate × volume × molecules per amount.")
	caution.Wrapping = fyne.TextWrapWord
	setup := container.NewVBox(sectionTitle("Stochastic runs in molecule counts"), form,
		widget.NewSeparator(), s.ctl.content, widget.NewSeparator(), s.notes, caution)
	left := container.NewVScroll(container.NewPadded(setup))

	s.fig = newStudyFigure("Press Run: the mean, the 25–75 % and 5–95 % bands of the runs, the ODE solution and 10 single runs are drawn here.")
	s.hist = newStudyFigure("Press Run: the counts of the chosen species at the chosen time are tallied here.")
	species := m.Species
	var names []string
	for _, sp := range species {
		names = append(names, sp.Name)
	}
	s.species = widget.NewSelect(names, func(string) { s.draw() })
	if len(names) > 0 {
		s.species.SetSelected(names[0])
	}
	s.logTime = widget.NewCheck("Log time", func(bool) { s.draw() })
	s.logTime.SetChecked(sim.Output.Spacing == "log")
	s.showODE = widget.NewCheck("ODE solution", func(bool) { s.draw() })
	s.showODE.SetChecked(true)
	bar := container.NewHBox(widget.NewLabel("Species"), s.species, s.logTime, s.showODE)
	s.tabs = container.NewAppTabs(
		container.NewTabItem("Runs", s.fig),
		container.NewTabItem("Counts at a time", s.hist),
	)
	exportFig := widget.NewButtonWithIcon("Figure…", theme.DocumentSaveIcon(), s.exportFigure)
	exportMean := widget.NewButtonWithIcon("Mean (CSV)…", theme.DocumentSaveIcon(), func() { s.exportTable("mean.csv", ensemble.MeanRows) })
	exportSD := widget.NewButtonWithIcon("SD (CSV)…", theme.DocumentSaveIcon(), func() { s.exportTable("sd.csv", ensemble.SDRows) })
	exportBands := widget.NewButtonWithIcon("Bands (CSV)…", theme.DocumentSaveIcon(), func() { s.exportTable("bands.csv", ensemble.BandRows) })
	exportRuns := widget.NewButtonWithIcon("Runs (CSV)…", theme.DocumentSaveIcon(), func() { s.exportTable("runs.csv", ensemble.RunRows) })
	top := container.NewHBox(widget.NewLabel("Export:"), exportFig, exportMean, exportSD, exportBands, exportRuns)
	right := container.NewBorder(container.NewVBox(top, bar), nil, nil, nil, s.tabs)
	split := container.NewHSplit(left, container.NewPadded(right))
	split.Offset = 0.3
	s.win.SetContent(split)
	s.win.Resize(fyne.NewSize(1240, 780))
	return s, nil
}

// prepare reads the form into a job.
func (s *stochasticWindow) prepare() (*ensemble.Job, error) {
	n, err := count(s.runs.Text, "the number of runs", 1, 10_000_000)
	if err != nil {
		return nil, err
	}
	seed, err := strconv.ParseUint(strings.TrimSpace(s.seed.Text), 10, 64)
	if err != nil {
		return nil, fmt.Errorf("the random seed %q is not usable; expected a whole number ≥ 0", s.seed.Text)
	}
	var meth stochastic.Method
	for k, v := range stochasticMethodTitles {
		if v == s.method.Selected {
			meth = k
		}
	}
	m := s.model
	if strings.TrimSpace(s.perAmt.Text) != "" {
		v, err := number(s.perAmt.Text, "the molecules per amount")
		if err != nil {
			return nil, err
		}
		if v <= 0 {
			return nil, fmt.Errorf("the molecules per amount must be positive, not %v", v)
		}
		m = m.Clone()
		m.Units.MoleculesPerAmount = v
	}
	at, err := number(s.histAt.Text, "the time of the counts")
	if err != nil {
		return nil, err
	}
	return ensemble.Prepare(m, ensemble.Spec{Runs: n, Seed: seed, Method: meth, HistTimes: []float64{at}})
}

// start reads the form and runs the ensemble on every core, off the UI
// goroutine; the ODE solution is solved alongside.
func (s *stochasticWindow) start() {
	if s.ctl.running {
		return
	}
	job, err := s.prepare()
	if err != nil {
		s.ctl.status.SetText(countsError(err))
		return
	}
	type outcome struct {
		e   *stochastic.Ensemble
		ode [][]float64
	}
	runAsync(s.ctl, func(ctx context.Context, progress func(float64)) (outcome, error) {
		e, err := job.Run(ctx, progress)
		var ode [][]float64
		if e != nil && ctx.Err() == nil {
			ode, _ = job.ODE(ctx) // the figure leaves it out when it fails
		}
		return outcome{e, ode}, err
	}, func(o outcome, err error) { s.finished(job, o.e, o.ode, err) })
}

// countsError writes err in a sentence; a problem of the conversion to
// counts (a coefficient that is not whole, a missing number of molecules
// per amount) is given in full, since the Messages list does not show it.
func countsError(err error) string {
	var pe network.ErrorList
	if errors.As(err, &pe) && strings.Contains(err.Error(), "molecule counts") {
		var lines []string
		for _, p := range pe {
			lines = append(lines, p.Message)
		}
		return "Cannot run in molecule counts: " + strings.Join(lines, "; ")
	}
	return plainError(err)
}

// finished shows the outcome of a run.
func (s *stochasticWindow) finished(job *ensemble.Job, e *stochastic.Ensemble, ode [][]float64, err error) {
	if e == nil {
		s.ctl.status.SetText(plainError(err))
		return
	}
	s.job, s.res, s.ode = job, e, ode
	s.partial = err != nil
	line := fmt.Sprintf("%d of %d runs done in %s (%d firings).", e.Done, e.Runs, roundDuration(e.Wall), e.Stats.Firings)
	if errors.Is(err, context.Canceled) {
		line = fmt.Sprintf("Cancelled: %d of %d runs done; the results show those (partial).", e.Done, e.Runs) + partialNote
	} else if err != nil {
		line = plainError(err)
	}
	if len(e.Failures) > 0 {
		line += fmt.Sprintf(" %d runs failed; the first: run %d, %s", len(e.Failures), e.Failures[0].Run, e.Failures[0].Err)
	}
	s.ctl.status.SetText(line)
	s.notes.SetText(strings.Join(job.Notes(), "\n"))
	s.draw()
}

// speciesIndex returns the index of the chosen species.
func (s *stochasticWindow) speciesIndex() int {
	for i, sp := range s.res.Species {
		if sp == s.species.Selected {
			return i
		}
	}
	return -1
}

// runsFigure draws the chosen species' runs.
func (s *stochasticWindow) runsFigure() (*plot.Plot, error) {
	if s.res == nil {
		return nil, errors.New("no runs to draw yet")
	}
	i := s.speciesIndex()
	if i < 0 {
		return nil, errors.New("choose a species")
	}
	ode := s.ode
	if !s.showODE.Checked {
		ode = nil
	}
	return ensemble.Figure(s.res, i, ode, s.model.Units.Time, s.logTime.Checked, s.shown)
}

// histFigure draws the chosen species' counts at the chosen time.
func (s *stochasticWindow) histFigure() (*plot.Plot, error) {
	if s.res == nil || len(s.res.HistTimes) == 0 {
		return nil, errors.New("no runs to draw yet")
	}
	i := s.speciesIndex()
	if i < 0 {
		return nil, errors.New("choose a species")
	}
	return ensemble.HistogramFigure(s.res, 0, i, s.shown)
}

func (s *stochasticWindow) draw() {
	if s.fig == nil || s.res == nil {
		return
	}
	for _, f := range []struct {
		w   *studyFigure
		fig func() (*plot.Plot, error)
	}{{s.fig, s.runsFigure}, {s.hist, s.histFigure}} {
		p, err := f.fig()
		hint := ""
		if err != nil {
			hint = plainError(err)
		}
		f.w.set(p, hint)
	}
}

// provenance describes the ensemble shown, for exports.
func (s *stochasticWindow) provenance() (*run.Provenance, error) {
	prov, err := run.NewProvenance("stochastic", s.model, s.model.Simulation, nil)
	if err != nil {
		return nil, err
	}
	prov.Stochastic = &run.Stochastic{Method: string(s.res.Method), Runs: s.res.Runs, Seed: s.res.Seed, MoleculesPerAmount: s.job.Counts.PerAmount}
	prov.Partial = s.partial
	return prov, nil
}

// exportFigure saves the figure of the tab shown.
func (s *stochasticWindow) exportFigure() {
	if s.res == nil {
		s.ctl.status.SetText("Nothing to export yet: press Run first.")
		return
	}
	fig, base := s.runsFigure, "stochastic_"+fileSafe(s.species.Selected)
	if s.tabs.Selected() != nil && s.tabs.Selected().Text == "Counts at a time" {
		fig, base = s.histFigure, "hist_"+fileSafe(s.species.Selected)
	}
	exportFigureAs(s.win, base, "stochastic", s.prep, s.partial, fig, func(path string) { s.ctl.status.SetText("Figure saved to " + path) })
}

// exportTable asks for a CSV file and writes the table made by rows.
func (s *stochasticWindow) exportTable(name string, rows func(*stochastic.Ensemble, *ensemble.Shown) [][]string) {
	s.ctl.exportTable(s.win, s.res != nil, name, func(path string) error {
		prov, err := s.provenance()
		if err != nil {
			return err
		}
		if err := atomicfile.WriteCSV(path, rows(s.res, s.shown)); err != nil {
			return err
		}
		return run.SaveProvenance(path, prov)
	})
}

// openStochastic opens a Stochastic window on the model as it is now.
func (w *mainWindow) openStochastic() {
	m, name, ok := w.studyModel()
	if !ok {
		return
	}
	s, err := newStochasticWindow(w.app, m, name)
	if err != nil {
		w.showError(err)
		return
	}
	s.win.Show()
}
