package main

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"

	"kinetarium/network"
	"kinetarium/plotting"
	"kinetarium/solve/explore"
)

// batchRun runs the headless command (go run kinetarium/app/batch) on a
// spec and returns the folder of its outputs.
func batchRun(t *testing.T, command, spec string) string {
	t.Helper()
	if testing.Short() {
		t.Skip("builds and runs the batch command")
	}
	out := t.TempDir()
	cmd := exec.Command("go", "run", "kinetarium/app/batch", command, spec, "--out", out, "--quiet", "--workers", "1")
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("batch %s %s: %v\n%s", command, spec, err, stderr.String())
	}
	return out
}

// sameFile fails unless the window's file and the batch command's file of
// that name are equal byte for byte.
func sameFile(t *testing.T, window, batchDir, name string) {
	t.Helper()
	a, err := os.ReadFile(window)
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(batchDir, name))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a, b) {
		t.Errorf("%s differs between the window and the batch command:\nwindow:\n%s\nbatch:\n%s", name, a, b)
	}
}

// The Sweep window, filled in as testdata/same/sweep.json says, exports
// runs.csv and failures.csv identical to the batch command's for that
// spec: the same column names (readouts named by the spec's defaults) and
// the same numbers. Initial amounts below 0 fail in both.
func TestSweepWindowWritesTheBatchFiles(t *testing.T) {
	// The same export time in both (the reproducible-builds.org
	// convention), so that whole files compare.
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	batchDir := batchRun(t, "sweep", "testdata/same/sweep.json")
	m, err := network.Load("testdata/same/conversion.json")
	if err != nil {
		t.Fatal(err)
	}
	s := openSweep(t, m)
	onUI(func() {
		s.first.quantity.SetSelected("A (initial concentration)")
		s.first.from.SetText("-2")
		s.first.to.SetText("8")
		s.first.points.SetText("6")
		s.first.spacing.SetSelected(spacingLinear)
		s.ro.rows = nil
		s.ro.list.RemoveAll()
		s.ro.add(explore.Final, "B", 0)
		s.ro.add(explore.TimeOfMax, "A", 0)
		s.ro.add(explore.ValueAt, "A", 2.5)
		s.ro.add(explore.CrossUp, "B", 1)
	})
	runAndWait(t, s.ctl)
	if s.res == nil || s.res.Failed != 1 {
		t.Fatalf("result %+v, status %q; want one failed run (A = -2)", s.res, s.ctl.status.Text)
	}
	dir := t.TempDir()
	if err := s.saveRuns(filepath.Join(dir, "runs.csv")); err != nil {
		t.Fatal(err)
	}
	if err := s.failures.save(filepath.Join(dir, "failures.csv")); err != nil {
		t.Fatal(err)
	}
	sameFile(t, filepath.Join(dir, "runs.csv"), batchDir, "runs.csv")
	sameFile(t, filepath.Join(dir, "failures.csv"), batchDir, "failures.csv")
	sameFile(t, filepath.Join(dir, "runs.provenance.json"), batchDir, "runs.provenance.json")

	// The figures: a family of curves and each readout against A₀.
	onUI(func() { s.species.SetSelected("B") })
	if err := saveStudyFigure(filepath.Join(dir, "family_B.png"), "sweep", s.prep, false, s.curveFigure); err != nil {
		t.Fatal(err)
	}
	sameFigure(t, filepath.Join(dir, "family_B.png"), batchDir, "family_B.png")
	for _, name := range s.res.Readouts {
		onUI(func() { s.readoutSel.SetSelected(name) })
		file := "readout_" + fileSafe(name) + ".png"
		if err := saveStudyFigure(filepath.Join(dir, file), "sweep", s.prep, false, s.readoutFigure); err != nil {
			t.Fatal(err)
		}
		sameFigure(t, filepath.Join(dir, file), batchDir, file)
	}
}

// sameFigure fails unless the window's figure and the batch command's
// figure of that name are equal byte for byte.
func sameFigure(t *testing.T, window, batchDir, name string) {
	t.Helper()
	a, err := os.ReadFile(window)
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(batchDir, name))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a, b) {
		t.Errorf("figure %s differs between the window (%d bytes) and the batch command (%d bytes)", name, len(a), len(b))
	}
}

// The Population window, filled in as testdata/same/population.json says,
// exports samples.csv and bands.csv identical to the batch command's.
func TestPopulationWindowWritesTheBatchFiles(t *testing.T) {
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	batchDir := batchRun(t, "population", "testdata/same/population.json")
	m, err := network.Load("testdata/same/conversion.json")
	if err != nil {
		t.Fatal(err)
	}
	p := openPopulation(t, m)
	onUI(func() {
		p.rows[0].quantity.SetSelected("k (parameter)")
		p.rows[0].dist.SetSelected("Log-normal")
		p.rows[0].a.SetText("0.5")
		p.rows[0].b.SetText("30")
		p.rows[1].quantity.SetSelected("A (initial concentration)")
		p.rows[1].dist.SetSelected("Uniform")
		p.rows[1].a.SetText("8")
		p.rows[1].b.SetText("12")
		p.size.SetText("60")
		p.seed.SetText("3")
		p.sampling.SetSelected(samplingLHS)
		p.ro.rows = nil
		p.ro.list.RemoveAll()
		p.ro.add(explore.AUC, "A", 0)
		p.ro.add(explore.TimeOfMax, "B", 0)
		p.ro.add(explore.CrossUp, "B", 5)
	})
	runAndWait(t, p.ctl)
	if p.res == nil || p.res.Points-p.res.Failed != 60 || !p.res.Spilled() {
		t.Fatalf("result %+v, status %q", p.res, p.ctl.status.Text)
	}
	dir := t.TempDir()
	if err := p.saveSamples(filepath.Join(dir, "samples.csv")); err != nil {
		t.Fatal(err)
	}
	if err := p.saveBands(filepath.Join(dir, "bands.csv")); err != nil {
		t.Fatal(err)
	}
	sameFile(t, filepath.Join(dir, "samples.csv"), batchDir, "samples.csv")
	sameFile(t, filepath.Join(dir, "bands.csv"), batchDir, "bands.csv")
	sameFile(t, filepath.Join(dir, "bands.provenance.json"), batchDir, "bands.provenance.json")

	// The figures: bands of each species and each readout's histogram.
	for _, sp := range []string{"A", "B"} {
		onUI(func() { p.species.SetSelected(sp) })
		file := "bands_" + sp + ".png"
		if err := saveStudyFigure(filepath.Join(dir, file), "population", p.prep, false, p.bandFigure); err != nil {
			t.Fatal(err)
		}
		sameFigure(t, filepath.Join(dir, file), batchDir, file)
	}
	for _, name := range p.res.Readouts {
		onUI(func() { p.readoutSel.SetSelected(name) })
		file := "hist_" + fileSafe(name) + ".png"
		if err := saveStudyFigure(filepath.Join(dir, file), "population", p.prep, false, p.histogramFigure); err != nil {
			t.Fatal(err)
		}
		sameFigure(t, filepath.Join(dir, file), batchDir, file)
	}
}

// The window's Figure… export of a run and the batch command's --figure of
// the same model are the same file, apart from nothing: with the export
// time fixed (SOURCE_DATE_EPOCH) they are equal byte for byte, for PNG,
// SVG and PDF. The model has doses (jumps and event marks) and assignments.
func TestFigureWindowEqualsBatch(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the batch command")
	}
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	const model = "../examples/twice-daily-oral-dose.json"
	m, err := network.Load(model)
	if err != nil {
		t.Fatal(err)
	}
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	onUI(func() { w.setModel(m, model) })
	onUI(w.simulate)
	waitFor(t, "the run", func() bool { return w.current != nil && !w.ctrl.Running() })
	onUI(func() {
		w.plot.view.LogX, w.plot.view.LogY, w.plot.view.Previous = false, true, nil
	})
	dir := t.TempDir()
	for _, ext := range []string{".png", ".svg", ".pdf"} {
		win := filepath.Join(dir, "window"+ext)
		var err error
		onUI(func() { err = w.saveFigure(win, 16, 10, float64(plotting.DefaultDPI)) })
		if err != nil {
			t.Fatal(err)
		}
		cmd := exec.Command("go", "run", "kinetarium/app/batch", "simulate", model, "--log-y",
			"--figure", filepath.Join(dir, "batch"+ext), "--out", filepath.Join(dir, "batch.csv"))
		var stderr bytes.Buffer
		cmd.Stderr = &stderr
		if err := cmd.Run(); err != nil {
			t.Fatalf("batch simulate: %v\n%s", err, stderr.String())
		}
		x, _ := os.ReadFile(win)
		y, _ := os.ReadFile(filepath.Join(dir, "batch"+ext))
		if len(x) == 0 || !bytes.Equal(x, y) {
			t.Errorf("%s: the window's figure (%d bytes) differs from the batch command's (%d bytes)", ext, len(x), len(y))
		}
	}
}

// With display units the window's CSV export and the batch command's table
// are the same file, byte for byte, and so are their provenance files:
// the model asks for days and ug/mL (it is in h and mg/L), and the
// header reads "time (day)", "D_gut (ug/mL)", with body_amount left in
// mg. The batch command's --time-unit and --concentration-unit on the
// model without display units give the same table.
func TestDataWindowEqualsBatchInDisplayUnits(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the batch command")
	}
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	const example = "../examples/twice-daily-oral-dose.json"
	m, err := network.Load(example)
	if err != nil {
		t.Fatal(err)
	}
	m.Simulation.Display = network.Display{Time: "day", Concentration: "ug/mL"}
	dir := t.TempDir()
	model := filepath.Join(dir, "shown.json")
	if err := m.Save(model); err != nil {
		t.Fatal(err)
	}
	if m, err = network.Load(model); err != nil {
		t.Fatal(err)
	}
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	onUI(func() { w.setModel(m, model) })
	onUI(w.simulate)
	waitFor(t, "the run", func() bool { return w.current != nil && !w.ctrl.Running() })
	var saveErr error
	onUI(func() { saveErr = w.saveData(filepath.Join(dir, "window.csv"), w.current) })
	if saveErr != nil {
		t.Fatal(saveErr)
	}
	batch := func(out string, args ...string) {
		t.Helper()
		cmd := exec.Command("go", append([]string{"run", "kinetarium/app/batch", "simulate"}, append(args, "--out", out)...)...)
		var stderr bytes.Buffer
		cmd.Stderr = &stderr
		if err := cmd.Run(); err != nil {
			t.Fatalf("batch simulate %v: %v\n%s", args, err, stderr.String())
		}
	}
	batch(filepath.Join(dir, "batch.csv"), model)
	sameFile(t, filepath.Join(dir, "window.csv"), dir, "batch.csv")
	sameFile(t, filepath.Join(dir, "window.provenance.json"), dir, "batch.provenance.json")
	batch(filepath.Join(dir, "flags.csv"), example, "--time-unit", "day", "--concentration-unit", "ug/mL")
	sameFile(t, filepath.Join(dir, "window.csv"), dir, "flags.csv")

	data, _ := os.ReadFile(filepath.Join(dir, "window.csv"))
	head, _, _ := bytes.Cut(data, []byte("\n"))
	if !bytes.HasPrefix(head, []byte("time (day),D_gut (ug/mL),")) || !bytes.HasSuffix(head, []byte(",body_amount (mg)")) {
		t.Errorf("header %q, want time (day), D_gut (ug/mL), … body_amount (mg)", head)
	}
	if len(w.current.Notes) != 1 || !strings.Contains(runInfoText(w.current), "body_amount is in mg") {
		t.Errorf("notes %q; About the last run should say body_amount stays in mg", w.current.Notes)
	}
}
