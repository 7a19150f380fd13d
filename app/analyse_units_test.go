package main

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// tableCell reads cell (row, col) of a table made by textTable.
func tableCell(t *testing.T, tbl *widget.Table, row, col int) string {
	t.Helper()
	var text string
	onUI(func() {
		o := tbl.CreateCell()
		tbl.UpdateCell(widget.TableCellID{Row: row, Col: col}, o)
		text = o.(*widget.Label).Text
	})
	return text
}

// The Steady state window shows the model's display units: the invented
// decay model in uM and s (made at k0 = 0.5 uM/s, cleared at k1 = 0.1/s,
// A ⇄ B at kf = 0.02/s, kr = 0.03/s) shown in h and nM has X = k0/k1 =
// 5 uM = 5000 nM, fluxes k0 = 0.5 uM/s = 1.8e6 nM/h, eigenvalues −0.05/s
// = −180/h and −0.1/s = −360/h and a slowest time scale of 20 s =
// 0.005556 h (first-order kinetics and the SI factors 1 h = 3600 s, 1 uM
// = 1000 nM, common practice). Without display units the headers name no
// unit, as before.
func TestSteadyWindowInDisplayUnits(t *testing.T) {
	for _, shown := range []bool{true, false} {
		m, err := network.Load("batch/testdata/units/decay.json")
		if err != nil {
			t.Fatal(err)
		}
		if shown {
			m.Simulation.Display = network.Display{Time: "h", Concentration: "nM"}
		}
		s, err := newSteadyWindow(newStudyApp(t), m, "test", false)
		if err != nil {
			t.Fatal(err)
		}
		s.ctl.deliver = onUI
		s.win.Show()
		onUI(s.start)
		waitFor(t, "the steady state", func() bool { return !s.ctl.running })
		table := func(tab int) *widget.Table { return s.tabs.Items[tab].Content.(*widget.Table) }
		want := []struct {
			tab, row, col int
			text          string
		}{
			{0, 0, 1, "concentration (nM)"}, {0, 1, 1, "5000"},
			{1, 0, 1, "flux (nM/h)"}, {1, 1, 1, "1.8e+06"},
			{2, 0, 1, "value (nM)"}, {2, 1, 1, "4000"},
			{3, 0, 1, "real part (1/h)"}, {3, 1, 1, "-180"}, {3, 2, 1, "-360"},
		}
		verdict := "Slowest time scale: 0.005556 h."
		if !shown {
			want = []struct {
				tab, row, col int
				text          string
			}{
				{0, 0, 1, "concentration"}, {0, 1, 1, "5"},
				{1, 0, 1, "flux"}, {1, 1, 1, "0.5"},
				{2, 0, 1, "value"}, {2, 1, 1, "4"},
				{3, 0, 1, "real part"}, {3, 1, 1, "-0.05"}, {3, 2, 1, "-0.1"},
			}
			verdict = "Slowest time scale: 20."
		}
		for _, w := range want {
			if got := tableCell(t, table(w.tab), w.row, w.col); got != w.text {
				t.Errorf("shown %v: tab %q cell (%d, %d) = %q, want %q", shown, s.tabs.Items[w.tab].Text, w.row, w.col, got, w.text)
			}
		}
		if !strings.Contains(s.verdict.Text, verdict) {
			t.Errorf("shown %v: verdict %q lacks %q", shown, s.verdict.Text, verdict)
		}
		if shown {
			saveShot(t, s.win, shotDir(t), "kinetarium-steady-units.png")
		}
		onUI(s.win.Close)
	}
}

// The Continuation window in display units: the Brusselator in uM and s
// shown in min and nM has its Hopf point at b = 1 + a² = 2 (1/s, the
// knob's own unit) with X = a = 1 uM = 1000 nM and period 2π s = 0.10472
// min (analytic-checks.md; 1 min = 60 s, 1 uM = 1000 nM, common
// practice).
func TestContinuationWindowInDisplayUnits(t *testing.T) {
	m, err := network.Load("batch/testdata/units/brusselator.json")
	if err != nil {
		t.Fatal(err)
	}
	m.Simulation.Display = network.Display{Time: "min", Concentration: "nM"}
	c, err := newContinuationWindow(newStudyApp(t), m, "test")
	if err != nil {
		t.Fatal(err)
	}
	c.ctl.deliver = onUI
	c.win.Show()
	onUI(func() {
		c.quantity.SetSelected(c.qs[1].label) // b
		c.from.SetText("0.5")
		c.to.SetText("4")
	})
	runAndWait(t, c.ctl)
	if c.d == nil || c.d.Knob != "b" || len(c.d.Specials) != 1 {
		t.Fatalf("diagram %+v, status %q", c.d, c.ctl.status.Text)
	}
	text := c.points.Objects[0].(*widget.Label).Text
	if want := "Hopf point at b = 2 1/s, X = 1000 nM, Y = 2000 nM: oscillations begin with period 0.10472 min"; text != want {
		t.Errorf("special point %q, want %q", text, want)
	}
	if got := c.diagram.plot.X.Label.Text + " | " + c.diagram.plot.Y.Label.Text; got != "b (1/s) | steady-state concentration (nM)" {
		t.Errorf("axes %q", got)
	}
	saveShot(t, c.win, shotDir(t), "kinetarium-continuation-units.png")
	onUI(c.win.Close)
}
