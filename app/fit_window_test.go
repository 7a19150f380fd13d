package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"

	"kinetarium/app/calibrate"
	"kinetarium/app/sliders"
	"kinetarium/network"
)

// conversionModel is an invented first-order conversion A -> B whose k
// (0.3 per minute) the tests recover from measurements of B.
func conversionModel(k float64) *network.Model {
	return &network.Model{
		Title:      "Invented conversion A to B",
		Units:      network.Units{Time: "min", Amount: "mM"},
		Species:    []network.Species{{Name: "A", Initial: 5}, {Name: "B", Initial: 0}},
		Parameters: []network.Parameter{{Name: "k", Value: k, Unit: "1/min"}},
		Reactions: []network.Reaction{{Name: "convert", Equation: "A -> B",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: 10, Output: network.Output{Points: 41}},
	}
}

// conversionData writes measurements of B for k = 0.3, A0 = 5 from the
// closed form B(t) = A0·(1 − e^(−kt)) (first-order kinetics, common
// practice), two replicates per time offset by ±SD/2 so that the fit's
// answer is known to lie near the truth, each with SD 0.05.
func conversionData(t *testing.T, dir string) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("time,B,sd_B\n")
	for i := 1; i <= 20; i++ {
		tt := 0.5 * float64(i)
		v := 5 * (1 - math.Exp(-0.3*tt))
		fmt.Fprintf(&b, "%g,%.6f,0.05\n%g,%.6f,0.05\n", tt, v+0.025, tt, v-0.025)
	}
	path := filepath.Join(dir, "conversion.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// openedWindow is a main window that has opened the model file at path
// and run it.
func openedWindow(t *testing.T, path string) *mainWindow {
	t.Helper()
	a := test.NewTempApp(t)
	a.Settings().SetTheme(newTheme())
	w := newMainWindow(a, true)
	t.Cleanup(w.win.Close)
	w.ctrl.Deliver = onUI
	var err error
	onUI(func() { err = w.loadFile(path) })
	if err != nil {
		t.Fatal(err)
	}
	onUI(w.simulate)
	waitFor(t, "the run", func() bool { return w.current != nil && !w.ctrl.Running() })
	return w
}

// Data ▸ Load measurements… draws the points over the curves (in the
// units shown), writes the companion file beside the model, and opening
// the model again shows them again; Clear removes the companion.
func TestMeasurementsOverlayAndCompanion(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "conversion.json")
	m := conversionModel(0.3)
	// Shown in µM: 1 mM = 1000 µM (SI prefixes, common practice).
	m.Simulation.Display = network.Display{Concentration: "uM"}
	if err := m.Save(model); err != nil {
		t.Fatal(err)
	}
	data := conversionData(t, dir)
	w := openedWindow(t, model)
	var ok bool
	onUI(func() { ok = w.loadMeasurements(data) })
	if !ok {
		t.Fatalf("loading failed: %s", w.lastDataProblems)
	}
	onUI(func() {
		pts := w.plot.view.Measured
		if len(pts) != 40 {
			t.Fatalf("%d measurements drawn, want 40", len(pts))
		}
		first, _ := strconv.ParseFloat(fmt.Sprintf("%.6f", 5*(1-math.Exp(-0.3*0.5))+0.025), 64)
		want := first * 1000
		if pts[0].Name != "B" || pts[0].T != 0.5 || math.Abs(pts[0].Y-want) > 1e-9*want || math.Abs(pts[0].SD-50) > 1e-9 {
			t.Errorf("first point drawn as %+v; want B at t 0.5 = %g µM, SD 50 µM", pts[0], want)
		}
	})
	c, err := calibrate.LoadCompanion(model)
	if err != nil || c == nil || c.MeasurementsPath(model) != data {
		t.Fatalf("companion %+v, %v; want it to name %s", c, err, data)
	}

	again := openedWindow(t, model)
	onUI(func() {
		if again.meas.data == nil || len(again.meas.data.Points) != 40 || len(again.plot.view.Measured) != 40 {
			t.Errorf("reopening the model did not show its measurements again")
		}
		again.clearMeasurements()
		if len(again.plot.view.Measured) != 0 {
			t.Errorf("cleared measurements still drawn")
		}
	})
	if c, err := calibrate.LoadCompanion(model); c != nil || err != nil {
		t.Errorf("after Clear the companion is %+v, %v; want none", c, err)
	}
	if _, err := os.Stat(data); err != nil {
		t.Errorf("Clear touched the measurements file: %v", err)
	}
}

// A measurements file with mistakes gives a message naming each line and
// column, and what was shown stays.
func TestBadMeasurementsAreLocated(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "conversion.json")
	if err := conversionModel(0.3).Save(model); err != nil {
		t.Fatal(err)
	}
	w := openedWindow(t, model)
	good := conversionData(t, dir)
	bad := filepath.Join(dir, "bad.csv")
	os.WriteFile(bad, []byte("time,B,C\n1,0.5,1\n2,abc,1\n-1,0.2,1\n"), 0o644)
	onUI(func() {
		if !w.loadMeasurements(good) {
			t.Fatal("the good file did not load")
		}
		if w.loadMeasurements(bad) {
			t.Fatal("a bad file loaded")
		}
		if !strings.Contains(w.lastDataProblems, "bad.csv, line 1, column 3 (C): is neither a species nor an assignment") {
			t.Errorf("message %q does not locate the unknown column", w.lastDataProblems)
		}
		if len(w.plot.view.Measured) != 40 {
			t.Errorf("the measurements shown before were dropped")
		}
	})
	os.WriteFile(bad, []byte("time,B\n1,0.5\n2,abc\n-1,0.2\n"), 0o644)
	onUI(func() { w.loadMeasurements(bad) })
	for _, want := range []string{`line 3, column 2 (B): "abc" is not a number`, "line 4, column 1 (time): time -1 is before 0"} {
		if !strings.Contains(w.lastDataProblems, want) {
			t.Errorf("message %q lacks %q", w.lastDataProblems, want)
		}
	}
}

// The fit window recovers k and A0 of the invented conversion from its
// measurements: both within 1 % of the truth (k = 0.3, A0 = 5; the data
// are the closed form with replicates placed symmetrically about it, so
// the least-squares answer is the truth up to the solver's tolerance) and
// inside their 95 % intervals; "Write estimates into model" is one
// undoable edit.
func TestFitWindowRecoversAndWritesBack(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "conversion.json")
	if err := conversionModel(1).Save(model); err != nil {
		t.Fatal(err)
	}
	w := openedWindow(t, model)
	data := conversionData(t, dir)
	var f *fitWindow
	onUI(func() {
		w.loadMeasurements(data)
		f = w.fitWindow()
	})
	if f == nil {
		t.Fatal("no fit window")
	}
	f.ctl.deliver = onUI
	onUI(func() {
		f.win.Show()
		f.row("k").use.SetChecked(true)
		f.row("init:A").use.SetChecked(true)
		f.starts.SetText("3")
	})
	runAndWait(t, f.ctl)
	if f.out == nil || len(f.out.rep.Estimates) != 2 {
		t.Fatalf("no estimates; status %q", f.ctl.status.Text)
	}
	for i, want := range []float64{0.3, 5} {
		e := f.out.rep.Estimates[i]
		if math.Abs(e.Value-want) > 0.01*want || !(e.Low < want && want < e.High) || !e.Determined {
			t.Errorf("%s = %g [%g, %g], want %g inside and within 1 %%", e.Name, e.Value, e.Low, e.High, want)
		}
	}
	if f.curves.plot == nil || f.corr.plot == nil || f.startsFig.plot == nil || f.residuals.plot == nil || f.traceFig.plot == nil {
		t.Errorf("figures missing: curves %v, correlation %v, starts %v, residuals %v, trace %v",
			f.curves.plot != nil, f.corr.plot != nil, f.startsFig.plot != nil, f.residuals.plot != nil, f.traceFig.plot != nil)
	}
	shots := shotDir(t)
	saveShot(t, f.win, shots, "kinetarium-fit.png")
	for i, name := range []string{"estimates", "residuals", "correlations", "starts"} {
		onUI(func() { f.tabs.SelectIndex(i + 1) })
		saveShot(t, f.win, shots, "kinetarium-fit-"+name+".png")
	}
	for _, name := range fitTables {
		path := filepath.Join(dir, fileName(name)+".csv")
		if err := f.saveTable(name, path); err != nil {
			t.Errorf("exporting %s: %v", name, err)
		}
	}
	onUI(func() {
		w.autoRerun = false // no re-run outliving the test
		f.writeBtn.OnTapped()
		got := w.doc.Model().Parameters[0].Value
		if math.Abs(got-f.out.rep.Estimates[0].Value) != 0 {
			t.Errorf("k in the model is %g after writing, want the estimate %g", got, f.out.rep.Estimates[0].Value)
		}
		if a := w.doc.Model().Species[0].Initial; a != f.out.rep.Estimates[1].Value {
			t.Errorf("A's initial is %g after writing, want %g", a, f.out.rep.Estimates[1].Value)
		}
		if d, _ := w.doc.CanUndo(); d != "write fitted estimates" {
			t.Errorf("the undo step is %q", d)
		}
		w.doc.Undo()
		if k, a := w.doc.Model().Parameters[0].Value, w.doc.Model().Species[0].Initial; k != 1 || a != 5 {
			t.Errorf("one Undo left k = %g, A0 = %g; want 1 and 5", k, a)
		}
	})
	onUI(f.win.Close)
}

// The form says what is wrong before anything runs: no experiment, no
// quantity, a log scale from 0, a start outside its bounds.
func TestFitWindowFormErrors(t *testing.T) {
	dir := t.TempDir()
	a := newStudyApp(t)
	var f *fitWindow
	onUI(func() {
		f = newFitWindow(a, conversionModel(1), "test", nil, func([]sliders.Knob) string { return "" })
	})
	f.ctl.deliver = onUI
	check := func(want string) {
		t.Helper()
		onUI(func() { f.ctl.run.OnTapped() })
		if !strings.Contains(f.ctl.status.Text, want) {
			t.Errorf("status %q, want it to contain %q", f.ctl.status.Text, want)
		}
	}
	check("Cannot run yet: no experiment is ticked")
	onUI(func() { f.addData(conversionData(t, dir)) })
	check("Cannot run yet: no quantity is ticked")
	r := f.row("k")
	onUI(func() {
		r.use.SetChecked(true)
		r.lower.SetText("0")
	})
	check("k: a log scale needs a lower bound above 0")
	onUI(func() {
		r.lower.SetText("0.01")
		r.start.SetText("500")
	})
	check("k: the start 500 lies outside the bounds 0.01 to 100")
	onUI(func() { f.win.Close() })
}

// A fit where the data determine only the product ka·kb (the invented
// conversion at rate ka·kb·A of app/calibrate's tests: a structurally
// non-identifiable pair, common practice) says so in words in the
// estimate table and on the status line, rather than giving an interval.
func TestFitWindowSaysNotDetermined(t *testing.T) {
	dir := t.TempDir()
	b, err := os.ReadFile("calibrate/testdata/product-model.json")
	if err != nil {
		t.Fatal(err)
	}
	model := filepath.Join(dir, "product.json")
	os.WriteFile(model, b, 0o644)
	var csv strings.Builder
	csv.WriteString("time,B,sd_B\n")
	for i, tt := range []float64{0.5, 1, 2, 3, 4, 5, 6, 8} {
		fmt.Fprintf(&csv, "%g,%.8g,0.01\n", tt, 1-math.Exp(-0.5*tt)+0.005*float64(1-2*(i%2)))
	}
	data := filepath.Join(dir, "b.csv")
	os.WriteFile(data, []byte(csv.String()), 0o644)
	w := openedWindow(t, model)
	var f *fitWindow
	onUI(func() {
		w.loadMeasurements(data)
		f = w.fitWindow()
		f.ctl.deliver = onUI
		f.row("ka").use.SetChecked(true)
		f.row("kb").use.SetChecked(true)
		f.starts.SetText("1")
		f.profile.SetChecked(true)
	})
	runAndWait(t, f.ctl)
	if f.out == nil {
		t.Fatalf("no result; status %q", f.ctl.status.Text)
	}
	rows := f.tableRows("Estimates")
	for _, r := range rows[1:] {
		if r[len(r)-1] != "not determined by the data" || r[3] != "-inf" || r[4] != "inf" {
			t.Errorf("row %v: want “not determined by the data” and an unbounded interval", r)
		}
	}
	if !strings.Contains(f.ctl.status.Text, "2 quantities are not determined by the data") {
		t.Errorf("status %q does not say so", f.ctl.status.Text)
	}
	// Asked for, the profiles are drawn, and open on at least one side.
	if f.profiles.plot == nil || len(f.profName.Options) != 2 {
		t.Errorf("profiles not drawn (%v, options %v)", f.profiles.plot != nil, f.profName.Options)
	}
	for _, r := range rows[1:] {
		if r[5] != "-inf" && r[6] != "inf" {
			t.Errorf("row %v: the profile interval is closed on both sides", r)
		}
	}
	onUI(f.win.Close)
}

// inWords gives each verdict its words, the bound first.
func TestInWords(t *testing.T) {
	inf := math.Inf(1)
	for _, c := range []struct {
		e    calibrate.Estimated
		want string
	}{
		{calibrate.Estimated{Value: 1, SE: 0.1, Determined: true, ProfileLow: math.NaN(), ProfileHigh: math.NaN()}, "determined"},
		{calibrate.Estimated{Value: 1, AtBound: -1}, "on its lower bound: no interval"},
		{calibrate.Estimated{Value: 1, AtBound: 1}, "on its upper bound: no interval"},
		{calibrate.Estimated{Value: 1, SE: inf}, "not determined by the data"},
		{calibrate.Estimated{Value: 1, SE: 0.1, Determined: true, ProfileLow: 0.5, ProfileHigh: inf}, "not bounded by the data on one side (open profile)"},
		{calibrate.Estimated{Value: 1, SE: 20, Determined: true, ProfileLow: math.NaN(), ProfileHigh: math.NaN()}, "poorly determined (SE above ten times the value)"},
	} {
		if got := inWords(c.e); got != c.want {
			t.Errorf("%+v: %q, want %q", c.e, got, c.want)
		}
	}
}

// The Sensitivity over time window draws the heat map of the chosen
// quantity and exports the batch command's table.
func TestTimeSensitivityWindow(t *testing.T) {
	a := newStudyApp(t)
	var s *timeSensWindow
	var err error
	onUI(func() { s, err = newTimeSensWindow(a, conversionModel(0.3), "test") })
	if err != nil {
		t.Fatal(err)
	}
	s.ctl.deliver = onUI
	onUI(s.win.Show)
	runAndWait(t, s.ctl)
	if s.out == nil || s.fig.plot == nil {
		t.Fatalf("no heat map; status %q", s.ctl.status.Text)
	}
	onUI(func() { s.output.SetSelected("B") })
	if title := s.fig.plot.Title.Text; !strings.Contains(title, "Scaled sensitivity of B") {
		t.Errorf("after choosing B the figure is %q", title)
	}
	saveShot(t, s.win, shotDir(t), "kinetarium-sensitivity-over-time.png")
	onUI(s.win.Close)
}

// Load fit plan… takes the example plan's experiments (ticked, with their
// conditions), quantities, bounds and starts; Cancel stops the run it
// starts, and the window says the fit did not finish.
func TestFitWindowPlanAndCancel(t *testing.T) {
	a := newStudyApp(t)
	var f *fitWindow
	var err error
	onUI(func() {
		f = newFitWindow(a, exampleModel(t, "protease-inhibitor.json"), "test", nil, func([]sliders.Knob) string { return "" })
		err = f.loadPlan("../examples/fits/protease-fit.json")
	})
	if err != nil {
		t.Fatal(err)
	}
	f.ctl.deliver = onUI
	var ticked []string
	for _, r := range f.rows {
		if r.use.Checked {
			ticked = append(ticked, r.knob.Ref())
		}
	}
	if strings.Join(ticked, ",") != "kon,kcat,kon_i,koff_i,klock" || len(f.exps) != 3 || f.starts.Text != "20" {
		t.Fatalf("plan read as quantities %v, %d experiments, %s starts", ticked, len(f.exps), f.starts.Text)
	}
	if e := f.exps[2].exp; e.Initial["I"] != 0.05 || !filepath.IsAbs(e.Data) {
		t.Errorf("third experiment %+v; want I starting at 0.05 and an absolute data path", e)
	}
	if r := f.row("kcat"); r.lower.Text != "0.5" || r.upper.Text != "100" || r.start.Text != "3" || !r.log.Checked {
		t.Errorf("kcat's row: %s to %s from %s, log %v", r.lower.Text, r.upper.Text, r.start.Text, r.log.Checked)
	}
	onUI(func() { f.ctl.run.OnTapped() })
	onUI(f.ctl.stopRun)
	waitFor(t, "the run to stop", func() bool { return !f.ctl.running })
	if !strings.Contains(f.ctl.status.Text, "did not finish") {
		t.Errorf("after Cancel the status is %q", f.ctl.status.Text)
	}
	if err := f.loadPlan("../examples/fits/no-such-plan.json"); err == nil {
		t.Error("a missing plan was accepted")
	}
	onUI(f.win.Close)
}
