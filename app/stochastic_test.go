package main

import (
	"strings"
	"testing"

	"kinetarium/app/ensemble"
	"kinetarium/network"
)

// openStochastic opens a Stochastic window on m whose runs report through
// onUI.
func openStochastic(t *testing.T, m *network.Model) *stochasticWindow {
	t.Helper()
	s, err := newStochasticWindow(newStudyApp(t), m, "test")
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

// The example's ensemble runs from the window: 300 runs, the mean close
// to the ODE solution (the protein's mean at the end within 10 % of the
// ODE, which the large-volume test and the moment tests check more
// sharply), the figures drawn, and a picture kept for review.
func TestStochasticWindow(t *testing.T) {
	s := openStochastic(t, exampleModel(t, "bursty-reporter.json"))
	onUI(func() {
		s.runs.SetText("300")
		s.species.SetSelected("protein")
	})
	runAndWait(t, s.ctl)
	var done, end int
	var mean, ode float64
	onUI(func() {
		if s.res != nil {
			done, end = s.res.Done, len(s.res.Times)-1
			mean = s.res.Mean(end, 3)
			if s.ode != nil {
				ode = s.ode[end][3]
			}
		}
	})
	if done != 300 {
		t.Fatalf("%d runs done; status %q", done, s.ctl.status.Text)
	}
	if ode == 0 || mean < 0.9*ode || mean > 1.1*ode {
		t.Errorf("protein at the end: mean %v, ODE %v", mean, ode)
	}
	if s.fig.plot == nil || s.hist.plot == nil {
		t.Error("figures not drawn")
	}
	// The time of the counts is asked for in the model's unit, named.
	found := false
	for _, text := range shownTexts(s.win.Content()) {
		found = found || text == "Counts at time (min)"
	}
	if !found {
		t.Error("the form does not ask for the time of the counts in min")
	}
	saveShot(t, s.win, shotDir(t), "stochastic-window.png")
}

// A model whose units give no molecules per amount asks for it.
func TestStochasticWindowAsks(t *testing.T) {
	m := exampleModel(t, "toggle-repressors.json")
	m.Units = network.Units{Time: "h", Amount: "AU"}
	s := openStochastic(t, m)
	if !strings.Contains(s.notes.Text, "molecules_per_amount") {
		t.Errorf("notes %q do not ask for the molecules per amount", s.notes.Text)
	}
	runAndWait(t, s.ctl)
	if s.res != nil || !strings.Contains(s.ctl.status.Text, "molecules") {
		t.Errorf("ran without molecules per amount; status %q", s.ctl.status.Text)
	}
	onUI(func() {
		s.perAmt.SetText("50")
		s.runs.SetText("20")
	})
	runAndWait(t, s.ctl)
	if s.res == nil || s.res.Done != 20 {
		t.Errorf("with 50 molecules per amount: status %q", s.ctl.status.Text)
	}
}

// With display units (the bursty reporter is in min; shown in h) the
// Stochastic window's figure has its time axis in h and its last time at
// t_end / 60 (1 h = 60 min, common practice), counts stay molecules, and
// the exported mean table says both in its header.
func TestStochasticWindowInDisplayUnits(t *testing.T) {
	m := exampleModel(t, "bursty-reporter.json")
	m.Simulation.Display = network.Display{Time: "h"}
	s := openStochastic(t, m)
	onUI(func() {
		s.runs.SetText("20")
		s.species.SetSelected("protein")
	})
	runAndWait(t, s.ctl)
	if s.res == nil || s.fig.plot == nil {
		t.Fatalf("no result or figure; status %q", s.ctl.status.Text)
	}
	if x, y := s.fig.plot.X.Label.Text, s.fig.plot.Y.Label.Text; x != "time (h)" || y != "molecules" {
		t.Errorf("axes %q and %q, want time (h) and molecules", x, y)
	}
	tEnd := m.Simulation.WithDefaults().TEnd
	if got := s.fig.plot.X.Max; got > tEnd/60*1.0001 || got < tEnd/60*0.9 {
		t.Errorf("time axis ends at %v h, want about %v min / 60 = %v", got, tEnd, tEnd/60)
	}
	rows := ensembleMeanRows(s)
	if !strings.HasPrefix(strings.Join(rows[0], ","), "time (h),gene_off (molecules)") {
		t.Errorf("mean table header %v", rows[0])
	}
}

// ensembleMeanRows is the mean table the window exports.
func ensembleMeanRows(s *stochasticWindow) [][]string {
	var rows [][]string
	onUI(func() { rows = ensemble.MeanRows(s.res, s.shown) })
	return rows
}
