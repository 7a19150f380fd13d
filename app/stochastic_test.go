package main

import (
	"strings"
	"testing"

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
