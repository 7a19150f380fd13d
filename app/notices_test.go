package main

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"

	"kinetarium/app/run"
	"kinetarium/network"
)

// The recovery file's notice does not replace a problem in the status
// line; it shows when the status line tells of none.
func TestRecoveryNoticeKeepsProblems(t *testing.T) {
	t.Setenv("XDG_CONFIG_HOME", t.TempDir())
	t.Setenv("HOME", t.TempDir())
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.autoRerun = false
	onUI(func() {
		w.setModel(tuneDecayModel(), "")
		w.doc.Apply("break the equation", func(m *network.Model) { m.Reactions[0].Equation = "A -> +" })
		w.simulate()
		problem := w.status.Text
		if !strings.HasPrefix(problem, "Cannot simulate yet") {
			t.Fatalf("status line %q", problem)
		}
		w.autosave()
		if w.status.Text != problem {
			t.Errorf("the recovery notice %q replaced the problem %q", w.status.Text, problem)
		}
		w.setStatus("Saved somewhere", false)
		w.autosave()
		if !strings.HasPrefix(w.status.Text, "Unsaved changes kept in") {
			t.Errorf("status line %q, want the recovery notice", w.status.Text)
		}
	})
}

// The sliders' information line does not outlive what it tells of: the
// note that Undo takes written values back goes when another model is
// opened, and the note about mistakes goes when they are corrected.
func TestSliderHintsDoNotGoStale(t *testing.T) {
	w := openTuneWindow(t, tuneDecayModel())
	onUI(func() {
		p := w.tune
		p.rows[knobIndex(t, p, "k")].slider.SetValue(800)
		p.writeBack()
		if !strings.Contains(p.info.Text, "Undo") || !p.info.Visible() {
			t.Fatalf("after writing the values the sliders say %q", p.info.Text)
		}
		w.setModel(tuneDecayModel(), "")
		if p.info.Visible() {
			t.Errorf("after opening a model the sliders still say %q", p.info.Text)
		}

		w.doc.Apply("break the equation", func(m *network.Model) { m.Reactions[0].Equation = "A -> +" })
		p.rows[knobIndex(t, p, "k")].slider.SetValue(700)
		if !strings.Contains(p.info.Text, "mistakes") || !p.info.Visible() {
			t.Fatalf("moving a slider of a broken model: the sliders say %q", p.info.Text)
		}
		w.doc.Apply("mend the equation", func(m *network.Model) { m.Reactions[0].Equation = "A -> B" })
		if p.info.Visible() {
			t.Errorf("after the mistake was corrected the sliders still say %q", p.info.Text)
		}
	})
}

// After a slider moves, Show previous run draws the run at the model's
// values beneath the slider's run.
func TestPreviousRunAfterSliderMoves(t *testing.T) {
	w := openTuneWindow(t, tuneDecayModel())
	var first *run.Outcome
	onUI(func() {
		first = w.current
		p := w.tune
		p.rows[knobIndex(t, p, "k")].slider.SetValue(800)
	})
	waitFor(t, "the slider's run", func() bool { return w.current != first && !w.ctrl.Running() })
	onUI(func() {
		p := w.tune
		p.rows[knobIndex(t, p, "k")].slider.SetValue(900)
	})
	waitFor(t, "the second slider run", func() bool { _, shown := w.tune.runner.Counts(); return shown == 2 })
	onUI(func() {
		if !w.overlayChk.Checked {
			t.Fatal("Show previous run is off")
		}
		if w.plot.view.Previous != first {
			t.Errorf("the overlay is %p, want the run at the model's values %p", w.plot.view.Previous, first)
		}
	})
}

// Data exported while the figure shows slider values that the model does
// not have is offered under a name that gives them.
func TestDataFileNameGivesSliderValues(t *testing.T) {
	w := openTuneWindow(t, tuneDecayModel())
	var first *run.Outcome
	onUI(func() {
		if got := w.dataFileName(); got != "results.csv" {
			t.Errorf("with the model's values the name is %q, want results.csv", got)
		}
		first = w.current
		w.tune.rows[knobIndex(t, w.tune, "k")].slider.SetValue(800)
	})
	waitFor(t, "the slider's run", func() bool { return w.current != first && w.tune.tuned })
	onUI(func() {
		// 0.07·100^0.8 = 2.787 (the slider's log scale, as in TestTuneSliderResimulates).
		if got, want := w.dataFileName(), "results-sliders-k=2.787.csv"; got != want {
			t.Errorf("with k moved the name is %q, want %q", got, want)
		}
	})
}
