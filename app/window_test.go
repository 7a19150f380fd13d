package main

import (
	"errors"
	"sync"
	"testing"
	"time"

	"fyne.io/fyne/v2/test"

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

// waitFor polls cond for up to 20 s.
func waitFor(t *testing.T, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(20 * time.Second)
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
