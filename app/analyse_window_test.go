package main

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// toggleModel is the toggle example, whose steady state is known from the
// batch command's tests of app/analyse.
func toggleModel(t *testing.T) *network.Model { return exampleModel(t, "toggle-repressors.json") }

// The Steady state window computes off the UI goroutine and shows the
// verdict and the tables; the Control coefficients window shows the
// coefficient tables, whose flux control rows sum to 1 (summation
// theorem, Kacser & Burns 1973).
func TestSteadyWindows(t *testing.T) {
	dir := shotDir(t)
	for _, control := range []bool{false, true} {
		s, err := newSteadyWindow(newStudyApp(t), toggleModel(t), "test", control)
		if err != nil {
			t.Fatal(err)
		}
		s.ctl.deliver = onUI
		s.win.Show()
		onUI(s.start)
		waitFor(t, "the steady state", func() bool { return !s.ctl.running })
		if !strings.Contains(s.verdict.Text, "stable node") {
			t.Errorf("verdict %q", s.verdict.Text)
		}
		if v := s.ctl.progress.Value; v != 1 {
			t.Errorf("finished, the progress bar shows %.0f %%", 100*v)
		}
		want := 4
		if control {
			want = 5
		}
		if n := len(s.tabs.Items); n != want {
			t.Errorf("control %v: %d tabs, want %d", control, n, want)
		}
		name := "kinetarium-steady.png"
		if control {
			name = "kinetarium-control.png"
			onUI(func() { s.tabs.SelectIndex(0) })
		}
		saveShot(t, s.win, dir, name)
		onUI(s.win.Close)
	}
}

// The Continuation window on the toggle example in its inducer finds the
// fold the batch command finds (examples/studies/toggle-continuation.json)
// and fits no Hill curve across it.
func TestContinuationWindow(t *testing.T) {
	c, err := newContinuationWindow(newStudyApp(t), toggleModel(t), "test")
	if err != nil {
		t.Fatal(err)
	}
	c.ctl.deliver = onUI
	c.win.Show()
	onUI(func() {
		c.quantity.SetSelected("X (initial concentration)")
		c.from.SetText("0")
		c.to.SetText("200")
	})
	runAndWait(t, c.ctl)
	if c.d == nil || len(c.d.Specials) != 1 || c.d.Specials[0].Kind != "fold" {
		t.Fatalf("diagram %+v, status %q", c.d, c.ctl.status.Text)
	}
	if c.diagram.plot == nil || !strings.Contains(c.hill.Text, "No Hill curve") {
		t.Errorf("figure %v, Hill %q", c.diagram.plot != nil, c.hill.Text)
	}
	// The quantity varied is named as the form offers it, not as the
	// file's reference init:X, in the figure, the special points and the
	// status line (not "p").
	text := c.ctl.status.Text + "\n" + c.diagram.plot.Title.Text + "\n" + c.diagram.plot.X.Label.Text
	for _, o := range c.points.Objects {
		text += "\n" + o.(*widget.Label).Text
	}
	if strings.Contains(text, "init:") || strings.Contains(text, "p = ") || !strings.Contains(text, "fold at X initial = ") ||
		!strings.Contains(text, "1 special point;") {
		t.Errorf("the window reads:\n%s", text)
	}
	saveShot(t, c.win, shotDir(t), "kinetarium-continuation.png")
	onUI(c.win.Close)
}

// The Global sensitivity window runs a small variance-based analysis and
// draws the bars; a form without quantities says what is missing.
func TestSensitivityWindow(t *testing.T) {
	s, err := newSensitivityWindow(newStudyApp(t), exampleModel(t, "protease-inhibitor.json"), "test")
	if err != nil {
		t.Fatal(err)
	}
	s.ctl.deliver = onUI
	s.win.Show()
	onUI(func() { s.samples.SetText("64") })
	runAndWait(t, s.ctl)
	if s.res == nil || len(s.res.Indices) != 2 || s.bars.plot == nil {
		t.Fatalf("result %+v, status %q", s.res, s.ctl.status.Text)
	}
	saveShot(t, s.win, shotDir(t), "kinetarium-sensitivity.png")
	onUI(func() {
		for len(s.vary.rows) > 0 {
			s.vary.removeRow(s.vary.rows[0])
		}
	})
	onUI(func() { s.ctl.run.OnTapped() })
	if !strings.Contains(strings.ToLower(s.ctl.status.Text), "add a quantity") {
		t.Errorf("status %q", s.ctl.status.Text)
	}
	onUI(s.win.Close)
}
