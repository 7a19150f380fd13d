package main

// The Analyse menu: steady state, control coefficients, continuation
// (with dose–response) and global sensitivity, each in its own window.
// Every computation runs off the UI goroutine with progress and Cancel.

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot"

	"kinetarium/app/analyse"
	"kinetarium/app/study"
	"kinetarium/network"
	"kinetarium/plotting"
	"kinetarium/solve/explore"
)

// analyseMenu is the Analyse menu of the main window.
func (w *mainWindow) analyseMenu() *fyne.Menu {
	return fyne.NewMenu("Analyse",
		fyne.NewMenuItem("Steady state", func() { w.openSteady(false) }),
		fyne.NewMenuItem("Control coefficients", func() { w.openSteady(true) }),
		fyne.NewMenuItemSeparator(),
		fyne.NewMenuItem("Continuation…", w.openContinuation),
		fyne.NewMenuItem("Global sensitivity…", w.openSensitivity),
		fyne.NewMenuItem("Sensitivity over time…", w.openTimeSensitivity))
}

// textTable is a read-only table of strings with a header row.
func textTable(rows [][]string) *widget.Table {
	t := widget.NewTable(
		func() (int, int) {
			if len(rows) == 0 {
				return 0, 0
			}
			return len(rows), len(rows[0])
		},
		func() fyne.CanvasObject { return widget.NewLabel("0.000000000e+000") },
		func(id widget.TableCellID, o fyne.CanvasObject) {
			l := o.(*widget.Label)
			l.SetText(rows[id.Row][id.Col])
			l.TextStyle.Bold = id.Row == 0 || id.Col == 0
		})
	for c := range rows[0] {
		t.SetColumnWidth(c, 150)
	}
	return t
}

func cell(v float64) string {
	if math.IsNaN(v) {
		return "—"
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

// steadyWindow shows a steady state, or its control coefficients.
type steadyWindow struct {
	win     fyne.Window
	model   *analyse.Model
	shown   *analyse.Shown // display units, nil for none
	control bool
	ctl     *runControls
	verdict *widget.Label
	tabs    *container.AppTabs
}

// openSteady opens the Steady state (or Control coefficients) window and
// starts the computation.
func (w *mainWindow) openSteady(control bool) {
	m, name, ok := w.studyModel()
	if !ok {
		return
	}
	s, err := newSteadyWindow(w.app, m, name, control)
	if err != nil {
		w.showError(err)
		return
	}
	s.win.Show()
	s.start()
}

func newSteadyWindow(a fyne.App, m *network.Model, name string, control bool) (*steadyWindow, error) {
	am, err := analyse.Prepare(m)
	if err != nil {
		return nil, err
	}
	sh, err := am.Show()
	if err != nil {
		return nil, err
	}
	title := "Steady state — "
	if control {
		title = "Control coefficients — "
	}
	s := &steadyWindow{win: a.NewWindow(title + name), model: am, shown: sh, control: control}
	s.ctl = newRunControls(s.start)
	s.ctl.run.SetText("Compute again")
	s.verdict = widget.NewLabel("")
	s.verdict.Wrapping = fyne.TextWrapWord
	s.tabs = container.NewAppTabs(container.NewTabItem("…", widget.NewLabel("Computing the steady state…")))
	split := container.NewVSplit(container.NewVScroll(container.NewPadded(s.verdict)), s.tabs)
	split.Offset = 0.25
	s.win.SetContent(container.NewBorder(s.ctl.content, nil, nil, nil, split))
	s.win.Resize(fyne.NewSize(820, 600))
	return s, nil
}

type steadyOutcome struct {
	st  *analyse.Steady
	ctl *analyse.ControlTables
}

func (s *steadyWindow) start() {
	runAsync(s.ctl, func(ctx context.Context, _ func(float64)) (steadyOutcome, error) {
		st, err := s.model.FindSteady(ctx)
		if err != nil || !s.control {
			return steadyOutcome{st: st.In(s.shown)}, err
		}
		c, err := s.model.Control(st) // scaled: pure numbers
		return steadyOutcome{st: st.In(s.shown), ctl: c}, err
	}, s.show)
}

func (s *steadyWindow) show(o steadyOutcome, err error) {
	if err != nil {
		s.ctl.status.SetText(plainError(err))
		if o.st == nil {
			s.verdict.SetText("No steady state found.")
			return
		}
	} else {
		s.ctl.status.SetText(fmt.Sprintf("Found in %s (%d Newton iterations).", roundDuration(o.st.Wall), o.st.Iterations))
	}
	st := o.st
	s.verdict.SetText(st.Summary() + "\n" + strings.Join(st.Notes, "\n"))
	var items []*container.TabItem
	if !s.control {
		sh := st.Shown
		var conc, flux, total, eig string
		if sh != nil {
			conc, flux, total, eig = sh.Columns.AmountUnit, sh.RateUnit, sh.TotalUnit, sh.PerTimeUnit
		}
		rows := [][]string{{"species", sh.Header("concentration", conc), "held"}}
		for i, n := range st.Species {
			held := ""
			if st.Fixed[i] {
				held = "held"
			}
			rows = append(rows, []string{n, cell(st.Y[i]), held})
		}
		items = append(items, container.NewTabItem("Species", textTable(rows)))
		rows = [][]string{{"reaction", sh.Header("flux", flux)}}
		for j, n := range st.Reactions {
			rows = append(rows, []string{n, cell(st.Fluxes[j])})
		}
		items = append(items, container.NewTabItem("Fluxes", textTable(rows)))
		rows = [][]string{{"conserved total", sh.Header("value", total)}}
		for _, t := range st.Totals {
			rows = append(rows, []string{t.Law, cell(t.Value)})
		}
		items = append(items, container.NewTabItem("Totals", textTable(rows)))
		rows = [][]string{{"eigenvalue", sh.Header("real part", eig), sh.Header("imaginary part", eig)}}
		for k, v := range st.Eigenvalues {
			rows = append(rows, []string{strconv.Itoa(k + 1), cell(real(v)), cell(imag(v))})
		}
		items = append(items, container.NewTabItem("Eigenvalues", textTable(rows)))
	}
	if c := o.ctl; c != nil {
		matrix := func(rowNames []string, rowIdx []int, colNames []string, at func(i, j int) float64) *widget.Table {
			rows := [][]string{append([]string{""}, colNames...)}
			for k, i := range rowIdx {
				r := []string{rowNames[k]}
				for j := range colNames {
					r = append(r, cell(at(i, j)))
				}
				rows = append(rows, r)
			}
			return textTable(rows)
		}
		all := func(n int) []int {
			x := make([]int, n)
			for i := range x {
				x[i] = i
			}
			return x
		}
		var free []string
		for _, i := range c.Free {
			free = append(free, c.Species[i])
		}
		items = append(items,
			container.NewTabItem("Flux control", matrix(c.Reactions, all(len(c.Reactions)), c.Reactions, c.FluxControl.At)),
			container.NewTabItem("Concentration control", matrix(free, c.Free, c.Reactions, c.ConcControl.At)),
			container.NewTabItem("Elasticities", matrix(c.Reactions, all(len(c.Reactions)), c.Species, c.Elasticities.At)))
		if c.ParamVariables != nil {
			items = append(items,
				container.NewTabItem("Parameters → species", matrix(free, c.Free, c.Parameters, c.ParamVariables.At)),
				container.NewTabItem("Parameters → fluxes", matrix(c.Reactions, all(len(c.Reactions)), c.Parameters, c.ParamFluxes.At)))
		}
	}
	s.tabs.SetItems(items)
}

// continuationWindow follows a steady state as one quantity changes.
type continuationWindow struct {
	win      fyne.Window
	model    *analyse.Model
	shown    *analyse.Shown // display units, nil for none
	prep     *study.Prepared
	qs       []quantity
	quantity *widget.Select
	from, to *widget.Entry
	maxPts   *widget.Entry
	ctl      *runControls

	d        *analyse.Diagram
	named    *analyse.Diagram // d for people: see forPeople
	diagram  *studyFigure
	points   *fyne.Container
	response *widget.Select
	hill     *widget.Label
	dose     *studyFigure
	tabs     *container.AppTabs
}

func (w *mainWindow) openContinuation() {
	m, name, ok := w.studyModel()
	if !ok {
		return
	}
	c, err := newContinuationWindow(w.app, m, name)
	if err != nil {
		w.showError(err)
		return
	}
	c.win.Show()
}

// continuable are the quantities continuation can vary: parameters and
// initial concentrations.
func continuable(m *network.Model) []quantity {
	var out []quantity
	for _, q := range quantities(m) {
		if !strings.HasPrefix(q.knob, "volume:") && !strings.HasPrefix(q.knob, "event:") {
			out = append(out, q)
		}
	}
	return out
}

func newContinuationWindow(a fyne.App, m *network.Model, name string) (*continuationWindow, error) {
	am, err := analyse.Prepare(m)
	if err != nil {
		return nil, err
	}
	prep, err := study.Prepare(m)
	if err != nil {
		return nil, err
	}
	sh, err := am.Show()
	if err != nil {
		return nil, err
	}
	c := &continuationWindow{win: a.NewWindow("Continuation — " + name), model: am, shown: sh, prep: prep, qs: continuable(m),
		from: widget.NewEntry(), to: widget.NewEntry(), maxPts: widget.NewEntry()}
	c.maxPts.SetText("500")
	c.quantity = widget.NewSelect(quantityLabels(c.qs), func(label string) {
		q, ok := findQuantity(c.qs, label)
		if !ok {
			return
		}
		if q.value > 0 {
			c.from.SetText(short(q.value / 10))
			c.to.SetText(short(q.value * 10))
		} else {
			c.from.SetText("0")
			c.to.SetText("1")
		}
	})
	c.quantity.PlaceHolder = "Choose a quantity…"
	if len(c.qs) > 0 {
		c.quantity.SetSelected(c.qs[0].label)
	}
	c.ctl = newRunControls(c.start)
	form := widget.NewForm(
		widget.NewFormItem("Quantity", c.quantity),
		widget.NewFormItem("From", c.from),
		widget.NewFormItem("To", c.to),
		widget.NewFormItem("At most points", c.maxPts))
	help := widget.NewLabel("The branch starts at the steady state reached from the model's initial state at “From” and follows it towards “To”, around turning points. Stable parts are solid, unstable parts dashed; folds are triangles, Hopf points (where oscillations begin) squares. “From” and “To” are in the quantity's own unit in the model; results follow the display units of Run settings.")
	help.Wrapping = fyne.TextWrapWord
	left := container.NewVScroll(container.NewPadded(container.NewVBox(sectionTitle("What varies"), form, help,
		widget.NewSeparator(), c.ctl.content)))
	c.diagram = newStudyFigure("Press Run to follow the steady state.")
	c.points = container.NewVBox(widget.NewLabel("Special points appear here."))
	c.response = widget.NewSelect(nil, func(string) { c.fitHill() })
	c.hill = widget.NewLabel("")
	c.hill.Wrapping = fyne.TextWrapWord
	c.dose = newStudyFigure("Press Run, then choose the response to fit a Hill curve to (EC50 or IC50 and the Hill coefficient).")
	exportFig := widget.NewButtonWithIcon("Figure…", theme.DocumentSaveIcon(), func() {
		if c.d == nil {
			c.ctl.status.SetText("Nothing to export yet: press Run first.")
			return
		}
		exportFigureAs(c.win, "diagram", "continuation", c.prep, false, c.figure, func(p string) { c.ctl.status.SetText("Figure saved to " + p) })
	})
	exportBranch := widget.NewButtonWithIcon("Branch (CSV)…", theme.DocumentSaveIcon(), func() {
		c.ctl.exportTable(c.win, c.d != nil, "branch.csv", func(p string) error { return saveTable(p, analyse.BranchRows(c.d), "continuation", c.prep, false) })
	})
	exportPoints := widget.NewButtonWithIcon("Points (CSV)…", theme.DocumentSaveIcon(), func() {
		c.ctl.exportTable(c.win, c.d != nil, "points.csv", func(p string) error { return saveTable(p, analyse.PointRows(c.d), "continuation", c.prep, false) })
	})
	c.tabs = container.NewAppTabs(
		container.NewTabItem("Diagram", c.diagram),
		container.NewTabItem("Special points", container.NewVScroll(c.points)),
		container.NewTabItem("Dose–response", container.NewBorder(container.NewVBox(
			container.NewHBox(widget.NewLabel("Response"), c.response), c.hill), nil, nil, nil, c.dose)))
	top := container.NewHBox(widget.NewLabel("Export:"), exportFig, exportBranch, exportPoints)
	right := container.NewBorder(container.NewBorder(nil, nil, nil, top), nil, nil, nil, c.tabs)
	split := container.NewHSplit(left, container.NewPadded(right))
	split.Offset = 0.32
	c.win.SetContent(split)
	c.win.Resize(fyne.NewSize(1180, 720))
	return c, nil
}

func (c *continuationWindow) options() (analyse.ContinueOptions, error) {
	q, ok := findQuantity(c.qs, c.quantity.Selected)
	if !ok {
		return analyse.ContinueOptions{}, errors.New("choose the quantity to vary")
	}
	from, err := number(c.from.Text, "from")
	if err != nil {
		return analyse.ContinueOptions{}, err
	}
	to, err := number(c.to.Text, "to")
	if err != nil {
		return analyse.ContinueOptions{}, err
	}
	n, err := count(c.maxPts.Text, "the largest number of points", 2, 100000)
	if err != nil {
		return analyse.ContinueOptions{}, err
	}
	return analyse.ContinueOptions{Knob: q.knob, From: from, To: to, MaxPoints: n}, nil
}

func (c *continuationWindow) start() {
	o, err := c.options()
	if err != nil {
		c.ctl.status.SetText(err.Error())
		return
	}
	runAsync(c.ctl, func(ctx context.Context, progress func(float64)) (*analyse.Diagram, error) {
		o.Progress = progress
		d, err := c.model.Continue(ctx, o)
		if d != nil {
			d = d.In(c.shown)
		}
		return d, err
	}, c.show)
}

func (c *continuationWindow) figure() (*plot.Plot, error) {
	d := c.named
	xu, yu := d.AxisUnits()
	return plotting.BifurcationPlot(analyse.PlotBranch(d), plotting.Options{
		Title: "Steady states against " + d.Knob, XLabel: d.Knob, XUnit: xu, YLabel: "steady-state concentration", YUnit: yu, LogX: d.Log})
}

// forPeople returns d with the quantity varied named in words ("X
// initial", as the form offers it) rather than as the file's reference
// ("init:X"), for the window's figures and sentences, and its stop
// reason naming it rather than "p"; tables keep the reference, in the
// batch command's layout.
func forPeople(d *analyse.Diagram) *analyse.Diagram {
	named := *d
	named.Knob = study.KnobLabel(d.Knob)
	named.Stop = strings.Replace(d.Stop, "p = ", named.Knob+" = ", 1)
	return &named
}

func (c *continuationWindow) show(d *analyse.Diagram, err error) {
	if err != nil {
		c.ctl.status.SetText(plainError(err))
		if d == nil {
			return
		}
	}
	c.d, c.named = d, forPeople(d)
	c.ctl.status.SetText(fmt.Sprintf("%d points, %d special %s; %s (%s).", len(d.Points), len(d.Specials), plural(len(d.Specials), "point", "points"), c.named.Stop, roundDuration(d.Wall)))
	p, perr := c.figure()
	if perr != nil {
		c.ctl.status.SetText(perr.Error())
	}
	c.diagram.set(p, "")
	c.points.RemoveAll()
	if len(d.Specials) == 0 {
		c.points.Add(widget.NewLabel("No folds or Hopf points in this range."))
	}
	for k := range d.Specials {
		l := widget.NewLabel(analyse.DescribeSpecial(c.named, k))
		l.Wrapping = fyne.TextWrapWord
		c.points.Add(l)
	}
	c.response.Options = d.Quantities
	c.response.Refresh()
	if len(d.Quantities) > 0 {
		c.response.SetSelected(d.Quantities[0])
	}
}

func (c *continuationWindow) fitHill() {
	if c.d == nil {
		return
	}
	q := c.response.SelectedIndex()
	if q < 0 {
		return
	}
	x, r := analyse.Response(c.d, q)
	name := c.d.Quantities[q]
	h, err := c.d.Hill(q)
	var fit func(float64) float64
	if err != nil {
		c.hill.SetText("No Hill curve: " + plainError(err))
	} else {
		fit = h.At
		c.hill.SetText(analyse.DescribeHill(c.named, q, h))
	}
	xu, _ := c.d.AxisUnits()
	p, _ := plotting.DoseResponsePlot(x, r, fit, "Hill fit", plotting.Options{
		Title: name + " at steady state", XLabel: c.named.Knob, XUnit: xu, YLabel: name, YUnit: c.d.QuantityUnit(q), LogX: c.d.Log})
	c.dose.set(p, "")
}

// sensitivityWindow estimates global sensitivity indices.
type sensitivityWindow struct {
	win     fyne.Window
	prep    *study.Prepared
	vary    *populationWindow // hosts the varied-quantity rows of the Population window
	method  *widget.RadioGroup
	samples *widget.Entry
	seed    *widget.Entry
	ro      *readoutEditor
	ctl     *runControls

	res        *analyse.Sensitivity
	readoutSel *widget.Select
	bars       *studyFigure
	table      *fyne.Container
}

// The methods as the window offers them.
const (
	methodSobol  = "Variance-based (first-order and total indices)"
	methodMorris = "Screening (elementary effects)"
)

func (w *mainWindow) openSensitivity() {
	m, name, ok := w.studyModel()
	if !ok {
		return
	}
	s, err := newSensitivityWindow(w.app, m, name)
	if err != nil {
		w.showError(err)
		return
	}
	s.win.Show()
}

func newSensitivityWindow(a fyne.App, m *network.Model, name string) (*sensitivityWindow, error) {
	prep, err := study.Prepare(m)
	if err != nil {
		return nil, err
	}
	win := a.NewWindow("Global sensitivity — " + name)
	s := &sensitivityWindow{win: win, prep: prep, samples: widget.NewEntry(), seed: widget.NewEntry(),
		vary: &populationWindow{win: win, model: m, prep: prep, qs: quantities(m), list: container.NewVBox()}}
	s.samples.SetText("512")
	s.seed.SetText("1")
	s.method = widget.NewRadioGroup([]string{methodSobol, methodMorris}, func(v string) {
		if v == methodMorris {
			s.samples.SetText("20")
		} else {
			s.samples.SetText("512")
		}
	})
	s.method.Required = true
	s.method.SetSelected(methodSobol)
	for i := 0; i < 3 && i < len(s.vary.qs); i++ {
		s.vary.addRow(s.vary.qs[i].label)
	}
	s.ro = newReadoutEditor(prep.Quantities())
	s.ro.add(explore.Max, "", 0)
	s.ro.add(explore.AUC, "", 0)
	s.ctl = newRunControls(s.start)
	add := widget.NewButtonWithIcon("Add quantity", theme.ContentAddIcon(), func() { s.vary.addRow("") })
	add.Importance = widget.LowImportance
	form := widget.NewForm(
		widget.NewFormItem("Method", s.method),
		widget.NewFormItem("Samples (N, or paths)", s.samples),
		widget.NewFormItem("Random seed", s.seed))
	help := widget.NewLabel("Variance-based: N·(quantities + 2) runs; each index comes with a 95 % bootstrap interval. Screening: paths·(quantities + 1) runs; μ* ranks the quantities, σ flags non-linear or interacting ones.")
	help.Wrapping = fyne.TextWrapWord
	setup := container.NewVBox(sectionTitle("Uncertain quantities"), s.vary.list, container.NewHBox(add),
		widget.NewSeparator(), form, help,
		widget.NewSeparator(), sectionTitle("Readouts"), s.ro.content,
		widget.NewSeparator(), s.ctl.content)
	left := container.NewVScroll(container.NewPadded(setup))
	s.bars = newStudyFigure("Press Run; the indices of the chosen readout are drawn here as bars with their intervals.")
	s.readoutSel = widget.NewSelect(nil, func(string) { s.draw() })
	s.table = container.NewVBox()
	export := widget.NewButtonWithIcon("Indices (CSV)…", theme.DocumentSaveIcon(), func() {
		s.ctl.exportTable(s.win, s.res != nil, "indices.csv", func(p string) error {
			rows := analyse.IndexRows(s.res)
			if s.res.Method == analyse.Morris {
				rows = analyse.EffectRows(s.res)
			}
			return saveTable(p, rows, "sensitivity", s.prep, false)
		})
	})
	bar := container.NewHBox(widget.NewLabel("Readout"), container.NewGridWrap(fyne.NewSize(220, s.readoutSel.MinSize().Height), s.readoutSel), export)
	right := container.NewBorder(bar, container.NewVScroll(s.table), nil, nil, s.bars)
	split := container.NewHSplit(left, container.NewPadded(right))
	split.Offset = 0.38
	win.SetContent(split)
	win.Resize(fyne.NewSize(1200, 760))
	return s, nil
}

func (s *sensitivityWindow) options() (analyse.SensitivityOptions, error) {
	var o analyse.SensitivityOptions
	for i, r := range s.vary.rows {
		q, ok := findQuantity(s.vary.qs, r.quantity.Selected)
		if !ok {
			return o, fmt.Errorf("quantity %d: choose the quantity to vary", i+1)
		}
		d, err := r.distribution(i + 1)
		if err != nil {
			return o, err
		}
		o.Vary = append(o.Vary, study.Vary{Knob: q.knob, Dist: d})
	}
	if len(o.Vary) == 0 {
		return o, errors.New("add a quantity to vary under “Uncertain quantities”")
	}
	n, err := count(s.samples.Text, "the number of samples", 2, 1_000_000)
	if err != nil {
		return o, err
	}
	seed, err := strconv.ParseUint(strings.TrimSpace(s.seed.Text), 10, 64)
	if err != nil {
		return o, fmt.Errorf("the random seed %q is not usable; expected a whole number ≥ 0", s.seed.Text)
	}
	ro, err := s.ro.specs()
	if err != nil {
		return o, err
	}
	o.Samples, o.Seed, o.Readouts = n, seed, ro
	o.Method = analyse.Sobol
	if s.method.Selected == methodMorris {
		o.Method = analyse.Morris
	}
	return o, nil
}

func (s *sensitivityWindow) start() {
	o, err := s.options()
	if err != nil {
		s.ctl.status.SetText(plainError(err))
		return
	}
	runAsync(s.ctl, func(ctx context.Context, progress func(float64)) (*analyse.Sensitivity, error) {
		o.Progress = progress
		return analyse.GlobalSensitivity(ctx, s.prep, o)
	}, func(res *analyse.Sensitivity, err error) {
		if err != nil {
			s.ctl.status.SetText(plainError(err))
			if res == nil || (res.Indices == nil && res.Effects == nil) {
				return
			}
		} else {
			s.ctl.status.SetText(strings.Join(append([]string{fmt.Sprintf("%d runs, %d failed, in %s.", res.Runs, res.Failed, roundDuration(res.Wall))}, res.Notes...), "\n"))
		}
		s.res = res
		s.readoutSel.Options = res.Readouts
		s.readoutSel.Refresh()
		if len(res.Readouts) > 0 {
			s.readoutSel.SetSelected(res.Readouts[0])
		}
	})
}

func (s *sensitivityWindow) draw() {
	if s.res == nil {
		return
	}
	r := s.readoutSel.SelectedIndex()
	if r < 0 {
		return
	}
	s.table.RemoveAll()
	name := s.res.Readouts[r]
	if s.res.Method == analyse.Morris {
		u := s.res.ReadoutUnit(r)
		head := func(h string) string {
			if u == "" {
				return h
			}
			return h + " (" + u + ")"
		}
		rows := [][]string{{"quantity", head("μ*"), head("μ"), head("σ")}}
		mu := make([]plotting.Interval, len(s.res.Knobs))
		sd := make([]plotting.Interval, len(s.res.Knobs))
		for k, e := range s.res.Effects[r] {
			rows = append(rows, []string{s.res.Knobs[k], cell(e.MuStar), cell(e.Mu), cell(e.Sigma)})
			mu[k] = plotting.Interval{Value: e.MuStar, Low: math.NaN(), High: math.NaN()}
			sd[k] = plotting.Interval{Value: e.Sigma, Low: math.NaN(), High: math.NaN()}
		}
		p, _ := plotting.IndexBars(s.res.Knobs, mu, sd, plotting.Options{Title: "Elementary effects on " + name + " (left μ*, right σ)", YLabel: "effect", YUnit: u})
		s.bars.set(p, "")
		s.table.Add(container.NewGridWrap(fyne.NewSize(700, 200), textTable(rows)))
		return
	}
	first, total := analyse.IndexIntervals(s.res, r)
	p, _ := plotting.IndexBars(s.res.Knobs, first, total, plotting.Options{Title: fmt.Sprintf("Sensitivity of %s (%.0f %% intervals)", name, 100*s.res.Level)})
	s.bars.set(p, "")
	rows := [][]string{{"quantity", "first order", "interval", "total", "interval"}}
	for k, x := range s.res.Indices[r] {
		rows = append(rows, []string{s.res.Knobs[k], cell(x.First), cell(x.FirstLow) + " – " + cell(x.FirstHigh), cell(x.Total), cell(x.TotalLow) + " – " + cell(x.TotalHigh)})
	}
	s.table.Add(container.NewGridWrap(fyne.NewSize(760, 200), textTable(rows)))
}
