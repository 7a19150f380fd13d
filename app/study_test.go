package main

import (
	"context"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"

	"kinetarium/app/run"
	"kinetarium/app/study"
	"kinetarium/examples"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/solve"
	"kinetarium/solve/explore"
)

// newStudyApp is a test app with the program's theme.
func newStudyApp(t *testing.T) fyne.App {
	t.Helper()
	a := test.NewTempApp(t)
	a.Settings().SetTheme(newTheme())
	return a
}

// openSweep opens a Sweep window on m whose runs report through onUI.
func openSweep(t *testing.T, m *network.Model) *sweepWindow {
	t.Helper()
	s, err := newSweepWindow(newStudyApp(t), m, "test")
	if err != nil {
		t.Fatal(err)
	}
	s.ctl.deliver = onUI
	s.win.Show()
	t.Cleanup(func() {
		onUI(s.ctl.stopRun)
		waitFor(t, "the run to stop", func() bool { return !s.ctl.running })
		s.win.Close()
	})
	return s
}

// openPopulation opens a Population window on m whose runs report through
// onUI.
func openPopulation(t *testing.T, m *network.Model) *populationWindow {
	t.Helper()
	p, err := newPopulationWindow(newStudyApp(t), m, "test")
	if err != nil {
		t.Fatal(err)
	}
	p.ctl.deliver = onUI
	p.win.Show()
	t.Cleanup(func() {
		onUI(p.ctl.stopRun)
		waitFor(t, "the run to stop", func() bool { return !p.ctl.running })
		p.win.Close()
	})
	return p
}

// runAndWait presses Run and waits for the run to end.
func runAndWait(t *testing.T, c *runControls) {
	t.Helper()
	onUI(func() { c.run.OnTapped() })
	waitFor(t, "the run to end", func() bool { return !c.running })
}

// A sweep of k over first-order decay A -> B gives final values
// A(T) = A0·exp(−k T) (closed form, common practice), and the saved table
// has the batch command's runs.csv layout: index, knob, readouts.
func TestSweepDecayClosedForm(t *testing.T) {
	s := openSweep(t, tuneDecayModel())
	onUI(func() {
		s.first.quantity.SetSelected("k (parameter)")
		s.first.from.SetText("0.1")
		s.first.to.SetText("2")
		s.first.points.SetText("6")
		s.first.spacing.SetSelected(spacingLog)
		s.ro.rows = nil
		s.ro.list.RemoveAll()
		s.ro.add(explore.Final, "A", 0)
	})
	runAndWait(t, s.ctl)
	if s.res == nil || len(s.res.Samples) != 6 || s.res.Failed != 0 {
		t.Fatalf("result %+v, status %q", s.res, s.ctl.status.Text)
	}
	ks, _ := study.AxisValues(0.1, 2, 6, true)
	const a0, tEnd = 2.0, 5.0
	for i, smp := range s.res.Samples {
		if smp.X[0] != ks[i] {
			t.Errorf("run %d has k = %v, want %v", i, smp.X[0], ks[i])
		}
		want := a0 * math.Exp(-ks[i]*tEnd)
		if got := smp.Readouts[0]; math.Abs(got-want) > 1e-6*a0 {
			t.Errorf("k = %g: final A = %.10g, want %.10g", ks[i], got, want)
		}
	}
	if s.curves.plot == nil || s.readouts.plot == nil {
		t.Error("the curves or the readout figure was not drawn")
	}
	if !s.failures.export.Disabled() || s.failures.save(filepath.Join(t.TempDir(), "failures.csv")) == nil {
		t.Error("Failures (CSV)… is usable although no run failed")
	}
	path := filepath.Join(t.TempDir(), "runs.csv")
	if err := s.saveRuns(path); err != nil {
		t.Fatal(err)
	}
	rows := readCSV(t, path)
	if len(rows) != 7 || strings.Join(rows[0], ",") != "index,k,final_A" {
		t.Fatalf("runs.csv starts %v with %d rows", rows[0], len(rows))
	}
	for i, row := range rows[1:] {
		k, _ := strconv.ParseFloat(row[1], 64)
		v, _ := strconv.ParseFloat(row[2], 64)
		if row[0] != strconv.Itoa(i) || k != ks[i] || math.Abs(v-a0*math.Exp(-k*tEnd)) > 1e-6*a0 {
			t.Errorf("runs.csv row %d = %v", i+1, row)
		}
	}
}

// A grid of two quantities draws a heat map and one family per value of
// the second.
func TestSweepGrid(t *testing.T) {
	s := openSweep(t, tuneDecayModel())
	onUI(func() {
		s.first.quantity.SetSelected("k (parameter)")
		s.first.points.SetText("4")
		s.useTwo.SetChecked(true)
		s.second.quantity.SetSelected("A (initial concentration)")
		s.second.points.SetText("3")
	})
	runAndWait(t, s.ctl)
	if s.res == nil || s.res.Size != 12 || s.res.Failed != 0 {
		t.Fatalf("result %+v, status %q", s.res, s.ctl.status.Text)
	}
	if len(s.secondAt.Options) != 3 || s.readouts.plot == nil || s.curves.plot == nil {
		t.Errorf("grid results not shown: options %v", s.secondAt.Options)
	}
}

// Bad input is named in the status line, and nothing runs.
func TestSweepBadInput(t *testing.T) {
	s := openSweep(t, tuneDecayModel())
	onUI(func() {
		s.first.from.SetText("ten")
		s.ctl.run.OnTapped()
	})
	if s.ctl.running || !strings.Contains(s.ctl.status.Text, `First quantity: from "ten" is not a number`) {
		t.Errorf("status %q", s.ctl.status.Text)
	}
	onUI(func() {
		s.first.from.SetText("-1")
		s.first.spacing.SetSelected(spacingLog)
		s.ctl.run.OnTapped()
	})
	if !strings.Contains(s.ctl.status.Text, "log spacing needs positive from and to") {
		t.Errorf("status %q", s.ctl.status.Text)
	}
}

// A population with zero spread (CV 0) reproduces the single run exactly:
// every readout and every band equals the plain simulation of the model,
// which itself follows A0·exp(−k t) (closed form, common practice).
func TestPopulationZeroSpread(t *testing.T) {
	m := tuneDecayModel()
	p := openPopulation(t, m)
	onUI(func() {
		p.rows[0].quantity.SetSelected("k (parameter)")
		p.rows[0].b.SetText("0")
		p.rows[1].quantity.SetSelected("A (initial concentration)")
		p.rows[1].b.SetText("0")
		p.size.SetText("40")
		p.ro.rows = nil
		p.ro.list.RemoveAll()
		p.ro.add(explore.Final, "A", 0)
		p.ro.add(explore.AUC, "B", 0)
	})
	runAndWait(t, p.ctl)
	if p.res == nil || p.res.Points-p.res.Failed != 40 || !p.res.Spilled() {
		t.Fatalf("result %+v, status %q", p.res, p.ctl.status.Text)
	}
	// The single run, solved directly.
	prep, err := study.Prepare(m)
	if err != nil {
		t.Fatal(err)
	}
	single, err := solve.NewSolver(prep.Sys, prep.Settings).Solve(context.Background(), 0, prep.Sim.TEnd, prep.Sys.Initial())
	if err != nil {
		t.Fatal(err)
	}
	tr := explore.Trajectory{T: single.T, Y: single.Y}
	want := []float64{
		explore.Readout{Kind: explore.Final, Component: 0}.Eval(tr),
		explore.Readout{Kind: explore.AUC, Component: 1}.Eval(tr),
	}
	if math.Abs(want[0]-2*math.Exp(-0.7*5)) > 1e-6 {
		t.Fatalf("the single run ends at A = %v, not at the closed form", want[0])
	}
	n := 0
	if err := p.res.EachSample(func(smp *explore.Sample) error {
		n++
		for r := range want {
			if smp.Readouts[r] != want[r] {
				t.Fatalf("sample %d readout %d = %v, the single run gives %v", smp.Index, r, smp.Readouts[r], want[r])
			}
		}
		return nil
	}); err != nil || n != 40 {
		t.Fatalf("read %d samples back from the spill file (%v), want 40", n, err)
	}
	for c := 0; c < 2; c++ {
		q := study.BandCurves(p.res.Bands, c)
		for i := range tr.T {
			for k := range q {
				if q[k][i] != tr.Y[i][c] {
					t.Fatalf("band %d of species %d at t = %v is %v, the single run gives %v", k, c, tr.T[i], q[k][i], tr.Y[i][c])
				}
			}
		}
	}
	if p.bands.plot == nil || p.hist.plot == nil {
		t.Error("the bands or the histogram were not drawn")
	}
}

// Cancel stops a run early: fewer points are done than asked for and the
// status line says so.
func TestStudyCancel(t *testing.T) {
	p := openPopulation(t, tuneDecayModel())
	onUI(func() {
		p.size.SetText("1000000")
		p.ctl.run.OnTapped()
	})
	waitFor(t, "some progress", func() bool { return p.ctl.progress.Value > 0 })
	onUI(func() { p.ctl.cancel.OnTapped() })
	waitFor(t, "the run to stop", func() bool { return !p.ctl.running })
	if p.res == nil || p.res.Points >= p.res.Size || !strings.HasPrefix(p.ctl.status.Text, "Cancelled:") {
		t.Fatalf("after Cancel: result %+v, status %q", p.res, p.ctl.status.Text)
	}
	if p.ctl.cancel.Disabled() == false || p.ctl.run.Disabled() {
		t.Error("Run and Cancel were not put back")
	}
}

// runFailingPopulation runs 60 samples with the initial concentration of
// A drawn uniformly from [−1, 3], so that some draws are negative and fail
// (a concentration below zero is not physical: common practice). It
// returns the window and the number of negative draws, counted from the
// same draws made directly.
func runFailingPopulation(t *testing.T) (*populationWindow, int) {
	t.Helper()
	p := openPopulation(t, tuneDecayModel())
	onUI(func() {
		p.rows[0].quantity.SetSelected("A (initial concentration)")
		p.rows[0].dist.SetSelected(study.Distributions[2].Title)
		p.rows[0].a.SetText("-1")
		p.rows[0].b.SetText("3")
		p.removeRow(p.rows[1])
		p.size.SetText("60")
		p.seed.SetText("5")
	})
	if !p.failures.export.Disabled() {
		t.Error("Failures (CSV)… is enabled before any run")
	}
	runAndWait(t, p.ctl)
	pts, err := explore.Population{Vary: []explore.Distribution{explore.Uniform{Low: -1, High: 3}}, Size: 60, Seed: 5, Sampling: explore.LatinHypercube}.Sample()
	if err != nil {
		t.Fatal(err)
	}
	negative := 0
	for _, x := range pts {
		if x[0] < 0 {
			negative++
		}
	}
	if negative == 0 || p.res == nil || p.res.Failed != negative || p.res.Points != 60 {
		t.Fatalf("%d negative draws; result %+v", negative, p.res)
	}
	return p, negative
}

// Samples that fail (here: a negative initial concentration drawn from a
// uniform distribution) are counted and listed with their values and the
// reason, never dropped.
func TestPopulationFailuresListed(t *testing.T) {
	p, negative := runFailingPopulation(t)
	if len(p.failures.lines) != negative || !strings.Contains(p.failures.lines[0], "an initial concentration must be ≥ 0") ||
		!strings.Contains(p.failures.lines[0], "A initial = -") {
		t.Errorf("failure list %q", p.failures.lines)
	}
	if d := os.Getenv("KINETARIUM_SHOTS"); d != "" {
		onUI(func() { p.tabs.SelectIndex(2) })
		saveShot(t, p.win, d, "kinetarium-population-failures.png")
	}
	if !strings.Contains(p.ctl.status.Text, strconv.Itoa(negative)+" samples failed") ||
		!strings.HasPrefix(p.failures.summary.Text, strconv.Itoa(negative)+" of 60 samples failed") {
		t.Errorf("status %q, summary %q", p.ctl.status.Text, p.failures.summary.Text)
	}
}

// readCSV reads a whole CSV file.
func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	rows, err := atomicfile.ReadCSV(path)
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

// The failed samples export in the batch command's failures.csv layout
// (index, knob, error), one row per failure, each a negative draw; the
// on-screen list numbers them with the same index.
func TestPopulationFailuresExport(t *testing.T) {
	p, negative := runFailingPopulation(t)
	if p.failures.export.Disabled() {
		t.Fatal("Failures (CSV)… is disabled although samples failed")
	}
	path := filepath.Join(t.TempDir(), "failures.csv")
	if err := p.failures.save(path); err != nil {
		t.Fatal(err)
	}
	rows := readCSV(t, path)
	if len(rows) != negative+1 || strings.Join(rows[0], ",") != "index,init:A,error" {
		t.Fatalf("failures.csv has header %v and %d rows, want index,init:A,error and %d", rows[0], len(rows)-1, negative)
	}
	for i, row := range rows[1:] {
		a, err := strconv.ParseFloat(row[1], 64)
		if err != nil || a >= 0 || !strings.Contains(row[2], "initial concentration must be ≥ 0") {
			t.Errorf("failures.csv row %d = %v", i+1, row)
		}
		if want := "Sample " + row[0] + ":"; !strings.HasPrefix(p.failures.lines[i], want) {
			t.Errorf("list line %d = %q, want it to start %q as the CSV row %v", i, p.failures.lines[i], want, row)
		}
	}
	// The temporary files of the atomic writes are gone: the table and
	// its provenance are left.
	if ents, _ := os.ReadDir(filepath.Dir(path)); len(ents) != 2 {
		t.Errorf("the folder holds %d files after saving, want 2 (the table and its provenance)", len(ents))
	}
	data, err := os.ReadFile(run.ProvenancePath(path))
	if err != nil {
		t.Fatal(err)
	}
	if prov, err := run.ReadProvenance(data); err != nil || prov.What != "population" || prov.ModelTitle != p.model.Title {
		t.Errorf("failures.provenance.json reads as %+v, %v; want a population of %q", prov, err, p.model.Title)
	}
}

// A sweep of A₀ over −2…2 fails at −2 and −1 (a negative concentration is
// not physical: common practice): the list and failures.csv number those
// runs 0 and 1, the positions in the sweep.
func TestSweepFailuresExport(t *testing.T) {
	s := openSweep(t, tuneDecayModel())
	onUI(func() {
		s.first.quantity.SetSelected("A (initial concentration)")
		s.first.from.SetText("-2")
		s.first.to.SetText("2")
		s.first.points.SetText("5")
		s.first.spacing.SetSelected(spacingLinear)
	})
	runAndWait(t, s.ctl)
	if s.res == nil || s.res.Failed != 2 || s.failures.export.Disabled() {
		t.Fatalf("result %+v, status %q", s.res, s.ctl.status.Text)
	}
	if len(s.failures.lines) != 2 || !strings.HasPrefix(s.failures.lines[0], "Run 0: A initial = -2 — ") ||
		!strings.HasPrefix(s.failures.lines[1], "Run 1: A initial = -1 — ") {
		t.Errorf("failure list %q", s.failures.lines)
	}
	path := filepath.Join(t.TempDir(), "failures.csv")
	if err := s.failures.save(path); err != nil {
		t.Fatal(err)
	}
	rows := readCSV(t, path)
	if len(rows) != 3 || strings.Join(rows[0], ",") != "index,init:A,error" ||
		rows[1][0] != "0" || rows[1][1] != "-2" || rows[2][0] != "1" || rows[2][1] != "-1" {
		t.Errorf("failures.csv = %v", rows)
	}
}

// exampleModel reads an example model.
func exampleModel(t *testing.T, name string) *network.Model {
	t.Helper()
	data, err := examples.Open(name)
	if err != nil {
		t.Fatal(err)
	}
	m, err := network.Read(strings.NewReader(string(data)), name)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// shotDir is where screenshots go: $KINETARIUM_SHOTS when set, else a
// temporary folder.
func shotDir(t *testing.T) string {
	if d := os.Getenv("KINETARIUM_SHOTS"); d != "" {
		return d
	}
	return t.TempDir()
}

// saveShot captures win to dir/name.
func saveShot(t *testing.T, win fyne.Window, dir, name string) {
	t.Helper()
	var err error
	onUI(func() {
		img := win.Canvas().Capture()
		var f *os.File
		if f, err = os.Create(filepath.Join(dir, name)); err == nil {
			err = png.Encode(f, img)
			f.Close()
		}
	})
	if err != nil {
		t.Fatal(err)
	}
}

// The windows with results on the examples, captured for review.
func TestStudyScreenshots(t *testing.T) {
	dir := shotDir(t)
	s := openSweep(t, exampleModel(t, "protease-inhibitor.json"))
	onUI(func() {
		s.first.quantity.SetSelected("I (initial concentration)")
		s.first.from.SetText("0.001")
		s.first.to.SetText("0.1")
		s.first.spacing.SetSelected(spacingLog)
		s.species.SetSelected("P")
		s.ro.rows = nil
		s.ro.list.RemoveAll()
		s.ro.add(explore.Final, "P", 0)
		s.ro.add(explore.CrossUp, "P", 10)
	})
	runAndWait(t, s.ctl)
	if s.res == nil || s.res.Failed != 0 {
		t.Fatalf("sweep: %q", s.ctl.status.Text)
	}
	saveShot(t, s.win, dir, "kinetarium-sweep-curves.png")
	onUI(func() { s.tabs.SelectIndex(1) })
	saveShot(t, s.win, dir, "kinetarium-sweep-readouts.png")

	p := openPopulation(t, exampleModel(t, "two-compartment-drug.json"))
	onUI(func() {
		p.size.SetText("300")
		p.species.SetSelected("D_plasma")
		p.ro.rows = nil
		p.ro.list.RemoveAll()
		p.ro.add(explore.Max, "D_plasma", 0)
		p.ro.add(explore.AUC, "D_plasma", 0)
	})
	runAndWait(t, p.ctl)
	if p.res == nil {
		t.Fatalf("population: %q", p.ctl.status.Text)
	}
	saveShot(t, p.win, dir, "kinetarium-population-bands.png")
	onUI(func() { p.tabs.SelectIndex(1) })
	saveShot(t, p.win, dir, "kinetarium-population-readouts.png")
	onUI(func() { p.tabs.SelectIndex(2) })
	saveShot(t, p.win, dir, "kinetarium-population-failed.png")
}

// A sweep in the window of a model that shows results in min and nM
// (seconds and uM in the model) saves runs.csv with units in the header
// and its readouts converted: final A = A0·exp(−k T) (closed form of
// first-order decay, common practice) × 1000 nM per uM, and the time A
// falls past 1 uM, ln 2/k s, ÷ 60 s per min (SI prefixes and the
// minute, common practice). The figures say the units shown.
func TestSweepInDisplayUnits(t *testing.T) {
	m := tuneDecayModel()
	m.Units = network.Units{Time: "s", Amount: "uM"}
	m.Simulation.Output.Points = 501
	m.Simulation.Display = network.Display{Time: "min", Concentration: "nM"}
	s := openSweep(t, m)
	onUI(func() {
		s.first.quantity.SetSelected("k (parameter)")
		s.first.from.SetText("0.5")
		s.first.to.SetText("2")
		s.first.points.SetText("4")
		s.ro.rows = nil
		s.ro.list.RemoveAll()
		s.ro.add(explore.Final, "A", 0)
		s.ro.add(explore.CrossDown, "A", 1)
	})
	runAndWait(t, s.ctl)
	if s.res == nil || s.res.Failed != 0 {
		t.Fatalf("sweep: %q", s.ctl.status.Text)
	}
	path := filepath.Join(t.TempDir(), "runs.csv")
	if err := s.saveRuns(path); err != nil {
		t.Fatal(err)
	}
	rows := readCSV(t, path)
	if got := strings.Join(rows[0], ","); got != "index,k (1/s),final_A (nM),cross_down_A@1 (min)" {
		t.Fatalf("runs.csv header %q", got)
	}
	const a0, tEnd = 2.0, 5.0
	for i, row := range rows[1:] {
		k, _ := strconv.ParseFloat(row[1], 64)
		v, _ := strconv.ParseFloat(row[2], 64)
		c, _ := strconv.ParseFloat(row[3], 64)
		if math.Abs(v-1000*a0*math.Exp(-k*tEnd)) > 1e-5*1000*a0 {
			t.Errorf("row %d: final A %v nM, want %v", i+1, v, 1000*a0*math.Exp(-k*tEnd))
		}
		// Crossing interpolated on the 0.01 s grid: within 0.01 s.
		if want := math.Ln2 / k / 60; math.Abs(c-want) > 0.01/60 {
			t.Errorf("row %d: crossing at %v min, want %v", i+1, c, want)
		}
	}
	if s.curves.plot == nil || !strings.Contains(s.curves.plot.X.Label.Text, "(min)") || !strings.Contains(s.curves.plot.Y.Label.Text, "(nM)") {
		t.Errorf("curve axes do not say the units shown")
	}
	saveShot(t, s.win, shotDir(t), "kinetarium-sweep-display-units.png")
	onUI(func() { s.tabs.SelectIndex(1) })
	saveShot(t, s.win, shotDir(t), "kinetarium-sweep-display-units-readouts.png")
}

// A population in the window of a model shown in min and nM draws its
// bands and histogram in those units and saves samples.csv and bands.csv
// with them: every sample's final A, shown in nM, is 1000 × its value in
// uM (SI prefixes, common practice), A0·exp(−k T) for its k (closed form).
func TestPopulationInDisplayUnits(t *testing.T) {
	m := tuneDecayModel()
	m.Units = network.Units{Time: "s", Amount: "uM"}
	m.Simulation.Display = network.Display{Time: "min", Concentration: "nM"}
	p := openPopulation(t, m)
	onUI(func() {
		p.size.SetText("40")
		p.species.SetSelected("A")
		p.ro.rows = nil
		p.ro.list.RemoveAll()
		p.ro.add(explore.Final, "A", 0)
	})
	runAndWait(t, p.ctl)
	if p.res == nil || p.res.Failed != 0 {
		t.Fatalf("population: %q", p.ctl.status.Text)
	}
	if p.bands.plot == nil || !strings.Contains(p.bands.plot.X.Label.Text, "(min)") || !strings.Contains(p.bands.plot.Y.Label.Text, "(nM)") {
		t.Error("band axes do not say the units shown")
	}
	path := filepath.Join(t.TempDir(), "samples.csv")
	if err := p.saveSamples(path); err != nil {
		t.Fatal(err)
	}
	rows := readCSV(t, path)
	if rows[0][len(rows[0])-1] != "final_A (nM)" {
		t.Fatalf("samples header %q", rows[0])
	}
	// The samples are read back from the population's spill file, with
	// the readouts converted as they are read.
	if len(rows) != 41 || !p.res.Spilled() {
		t.Fatalf("samples.csv has %d rows (spilled %v), want a header and 40", len(rows), p.res.Spilled())
	}
	k := slicesIndex(rows[0], "k (1/s)")
	if k < 0 {
		t.Fatalf("no k column in %q", rows[0])
	}
	a0col := slicesIndex(rows[0], "init:A (uM)") // varied too when the window varies it
	for _, row := range rows[1:] {
		kv, _ := strconv.ParseFloat(row[k], 64)
		v, _ := strconv.ParseFloat(row[len(row)-1], 64)
		a0 := 2.0
		if a0col >= 0 {
			a0, _ = strconv.ParseFloat(row[a0col], 64)
		}
		if want := 1000 * a0 * math.Exp(-kv*5); math.Abs(v-want) > 1e-5*want {
			t.Errorf("k = %v: final A %v nM, want %v", kv, v, want)
		}
	}
	bp := filepath.Join(t.TempDir(), "bands.csv")
	if err := p.saveBands(bp); err != nil {
		t.Fatal(err)
	}
	if b := readCSV(t, bp); strings.Join(b[0][:3], ",") != "species,unit,time (min)" {
		t.Errorf("bands header %q", b[0])
	}
	saveShot(t, p.win, shotDir(t), "kinetarium-population-display-units.png")
}

func slicesIndex(s []string, v string) int {
	for i, x := range s {
		if x == v {
			return i
		}
	}
	return -1
}
