package main

import (
	"errors"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// ui serialises the callbacks of runs with the test's own use of the
// window, as the real driver's fyne.Do does (the test driver's does not).
var ui sync.Mutex

func onUI(f func()) {
	ui.Lock()
	defer ui.Unlock()
	f()
}

// waitFor polls cond for up to 2 minutes (a guard against hangs, not a speed target).
func waitFor(t *testing.T, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(2 * time.Minute)
	for time.Now().Before(deadline) {
		done := false
		onUI(func() { done = cond() })
		if done {
			return
		}
		time.Sleep(20 * time.Millisecond)
	}
	t.Fatalf("timed out waiting for %s", what)
}

// The window opens the default example, simulates it, and re-simulates
// after an edit, keeping the earlier run for the overlay.
func TestWindowRunsAndRerunsOnEdit(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.ctrl.Deliver = onUI
	var err error
	onUI(func() { err = w.openStart("") })
	if err != nil {
		t.Fatal(err)
	}
	waitFor(t, "the first run", func() bool { return w.current != nil && !w.ctrl.Running() })
	ui.Lock()
	first := w.current
	if !w.logX.Checked {
		t.Error("the default view is not log-time")
	}
	if len(w.shownSpecies) != len(first.Names) {
		t.Errorf("species checklist has %d rows, want %d", len(w.shownSpecies), len(first.Names))
	}

	// Doubling every initial concentration must show in the first output
	// row of the re-run that the edit triggers.
	w.doc.Apply("scale initial", func(m *network.Model) {
		for i := range m.Species {
			m.Species[i].Initial *= 2
		}
	})
	ui.Unlock()
	waitFor(t, "the re-run after an edit", func() bool { return w.current != first })
	ui.Lock()
	defer ui.Unlock()
	if w.previous != first {
		t.Error("the earlier run is not kept for the overlay")
	}
	for j, name := range w.current.Names {
		if got, want := w.current.Y[0][j], 2*first.Y[0][j]; got != want {
			t.Errorf("initial %s = %g, want %g", name, got, want)
		}
	}
	if !w.doc.Dirty() {
		t.Error("edited document not marked unsaved")
	}
}

// plainError starts the sentence with a capital letter, leaves a message
// that starts with a symbol of more than one byte whole, and does not fail
// on an empty message.
func TestPlainError(t *testing.T) {
	for _, c := range []struct{ err, want string }{
		{"step size too small", "Step size too small"},
		{"μ is negative", "μ is negative"},
		{"", "The run failed."},
	} {
		if got := plainError(errors.New(c.err)); got != c.want {
			t.Errorf("plainError(%q) = %q, want %q", c.err, got, c.want)
		}
	}
}

// A run that stops early shows the part computed; the status line says
// where it stopped, and About the last run gives the reason in full,
// first.
func TestStoppedRunGivesFullReason(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.ctrl.Deliver = onUI
	// 2A -> 3A at rate k·A² with A0 = 1, k = 1: A(t) = 1/(1 − t) grows
	// without bound at t = 1 (closed form of y' = y², common practice).
	m := &network.Model{
		Title:      "runaway",
		Species:    []network.Species{{Name: "A", Initial: 1}},
		Parameters: []network.Parameter{{Name: "k", Value: 1}},
		Reactions: []network.Reaction{{Name: "grow", Equation: "2 A -> 3 A",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: 10, Output: network.Output{Points: 101}},
	}
	onUI(func() {
		w.setModel(m, "")
		w.simulate()
	})
	waitFor(t, "the run", func() bool { return w.current != nil && !w.ctrl.Running() })
	onUI(func() {
		o := w.current
		if o.Err == nil || len(o.T) < 2 {
			t.Fatalf("outcome with %d times and error %v, want the part before t = 1 and the reason", len(o.T), o.Err)
		}
		if !strings.HasPrefix(w.status.Text, "The run stopped at t = 1 of 10;") {
			t.Errorf("status line %q", w.status.Text)
		}
		text := runInfoText(o)
		first := strings.SplitN(text, "\n\n", 2)[0]
		if !strings.Contains(first, plainError(o.Err)) || !strings.HasPrefix(first, "The run stopped at t = 1 of 10") {
			t.Errorf("About the last run begins %q; want where the run stopped and the full reason %q", first, plainError(o.Err))
		}
		if w.plot.outcome != o {
			t.Error("the figure does not show the part computed")
		}
	})
}

// A status line saying the model cannot be simulated gives way once the
// mistake it names is fixed (here with re-run on edit off, and after an
// Undo), rather than telling of a mistake that is gone.
func TestBlockedStatusClearsWhenFixed(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.autoRerun = false
	onUI(func() {
		w.setModel(tuneDecayModel(), "")
		w.doc.Apply("break", func(m *network.Model) {
			m.Reactions[0].Rate = network.NewRate(network.MassAction, "k", network.Named("kk"))
		})
		w.simulate()
		if !strings.HasPrefix(w.status.Text, "Cannot simulate yet") || !strings.Contains(w.status.Text, `"kk"`) {
			t.Fatalf("status %q, want the mistake named", w.status.Text)
		}
		w.doc.Undo()
		if strings.Contains(w.status.Text, "Cannot simulate") || w.statusProblem {
			t.Errorf("after the fix the status still says %q", w.status.Text)
		}
	})
}

// The window fits a screen 1024 points wide (1280 pixels at 125 %), with
// sliders open and on either view: its bars scroll sideways rather than
// hold the window wider (they held it at 1243 points). At its opening
// size the bar above the plot is whole.
func TestWindowFitsSmallScreens(t *testing.T) {
	a := newStudyApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.autoRerun = false
	onUI(func() {
		w.setModel(exampleModel(t, "twice-daily-oral-dose.json"), "")
		w.tune.setOpen(true)
		w.tune.addChosen("dose (parameter)")
		w.tune.addChosen("tau (parameter)")
		for _, view := range []string{viewDiagram, viewTimeCourse} {
			w.showView(view)
			if got := w.win.Content().MinSize().Width; got > 1000 {
				t.Errorf("%s: the window is at least %.0f points wide", view, got)
			}
		}
		w.win.Resize(fyne.NewSize(1280, 800))
		data := findButton(w.win.Content(), "Data…")
		if data == nil {
			t.Fatal("no Data… button")
		}
		pos := a.Driver().AbsolutePositionForObject(data)
		if right := pos.X + data.Size().Width; right > 1280-theme.Padding() {
			t.Errorf("at 1280 points the bar's last button ends at %.0f, cut off", right)
		}
	})
}

// findEntry returns the first entry showing text among o and what it
// holds.
func findEntry(o fyne.CanvasObject, text string) *widget.Entry {
	var found *widget.Entry
	walkObjects(o, false, func(c fyne.CanvasObject) {
		if e, ok := c.(*widget.Entry); ok && e.Text == text && found == nil {
			found = e
		}
	})
	return found
}

// A value typed with a decimal comma ("1,5") is not taken; saving says
// that the file has the earlier value, and closing asks first rather than
// lose the typed text without a word.
func TestSaveAndCloseTellOfUntakenText(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.autoRerun = false
	path := filepath.Join(t.TempDir(), "m.json")
	onUI(func() {
		w.setModel(tuneDecayModel(), "")
		w.ed.SelectTab("Parameters")
		w.ed.SelectRow("parameters", 0)
		k := findEntry(w.ed.Tabs(), "0.7")
		if k == nil {
			t.Fatal("no entry shows k = 0.7")
		}
		k.SetText("1,5")
		w.saveTo(path)
		if !strings.Contains(w.status.Text, "could not be taken") || !w.statusProblem {
			t.Errorf("after saving, the status says %q", w.status.Text)
		}
		quit := false
		w.confirmDiscard("closing", func() { quit = true })
		if quit {
			t.Error("closing with untaken text does not ask first")
		}
	})
}
