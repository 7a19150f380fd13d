package main

import (
	"context"
	"image/png"
	"math"
	"os"
	"reflect"
	"strings"
	"sync"
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"

	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/network"
)

// tuneDecayModel is A -> B with mass-action rate k·A.
func tuneDecayModel() *network.Model {
	return &network.Model{
		Title:        "decay",
		Compartments: []network.Compartment{{Name: "cell", Volume: 1}},
		Species:      []network.Species{{Name: "A", Initial: 2, Compartment: "cell"}, {Name: "B", Compartment: "cell"}},
		Parameters:   []network.Parameter{{Name: "k", Value: 0.7, Unit: "1/s"}},
		Reactions: []network.Reaction{{Name: "r", Equation: "A -> B",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: 5, Output: network.Output{Points: 51}, RTol: 1e-8, ATol: 1e-12},
	}
}

// checkTunedDecay compares o with the closed form of first-order decay,
// A(t) = A0·exp(−k t) (closed form, common practice).
func checkTunedDecay(t *testing.T, o *run.Outcome, k, a0 float64) {
	t.Helper()
	if o == nil || len(o.T) != 51 {
		t.Fatalf("outcome %v has the wrong number of times", o)
	}
	for i, tt := range o.T {
		want := a0 * math.Exp(-k*tt)
		if got := o.Y[i][0]; math.Abs(got-want) > 1e-6*a0 {
			t.Fatalf("A(%g) = %.10g, want %.10g (k = %g)", tt, got, want, k)
		}
	}
}

// openTuneWindow opens a window on m, simulates it and opens the sliders,
// which start with the model's parameters.
func openTuneWindow(t *testing.T, m *network.Model) *mainWindow {
	t.Helper()
	a := test.NewTempApp(t)
	a.Settings().SetTheme(newTheme())
	w := newMainWindow(a, true)
	t.Cleanup(func() {
		// Stop runs and pending re-runs: they would touch this window's
		// widgets during the next test.
		onUI(w.ctrl.Cancel)
		waitFor(t, "the runs to stop", func() bool { return !w.ctrl.Running() })
		onUI(func() {})
		w.tune.runner.Close()
		w.win.Close()
	})
	w.ctrl.Deliver = onUI
	w.tune.runner.Deliver = onUI
	w.win.Resize(fyne.NewSize(1280, 800))
	onUI(func() {
		w.setModel(m, "")
		w.simulate()
	})
	waitFor(t, "the first run", func() bool { return w.current != nil && !w.ctrl.Running() })
	onUI(func() { w.tune.setOpen(true) })
	return w
}

// knobIndex returns the index of the knob with the label, failing the test
// when there is none.
func knobIndex(t *testing.T, p *tunePanel, label string) int {
	t.Helper()
	for i, k := range p.knobs {
		if k.Label() == label {
			return i
		}
	}
	t.Fatalf("no slider for %s", label)
	return -1
}

// Moving the slider of k re-simulates: the figure shows a new outcome
// that matches the closed form for the slider's value of k, without any
// change to the model.
func TestTuneSliderResimulates(t *testing.T) {
	w := openTuneWindow(t, tuneDecayModel())
	var first *run.Outcome
	var k float64
	onUI(func() {
		first = w.current
		p := w.tune
		i := knobIndex(t, p, "k")
		if got := p.knobs[i]; math.Abs(got.Min-0.07) > 1e-15 || got.Max != 7 || !got.Log() {
			t.Errorf("k's slider runs from %g to %g (log %v), want 0.07 to 7 on a log scale", got.Min, got.Max, got.Log())
		}
		p.rows[i].slider.SetValue(800)
		k = p.knobs[i].Value
	})
	// 0.07·100^0.8 (log scale).
	if want := 0.7 / 10 * math.Pow(100, 0.8); math.Abs(k-want) > 1e-12*want {
		t.Fatalf("slider at 0.8 gives k = %g, want %g", k, want)
	}
	waitFor(t, "the re-run after moving the slider", func() bool { return w.current != first })
	onUI(func() {
		checkTunedDecay(t, w.current, k, 2)
		if w.plot.outcome != w.current {
			t.Error("the figure does not show the new outcome")
		}
		if got := w.doc.Model().Parameters[0].Value; got != 0.7 {
			t.Errorf("moving a slider changed the model's k to %g", got)
		}
		if w.doc.Dirty() {
			t.Error("moving a slider marked the model unsaved")
		}
	})

	// A dragged slider does the same.
	onUI(func() {
		i := knobIndex(t, w.tune, "k")
		first = w.current
		s := w.tune.rows[i].slider
		s.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: fyne.NewPos(s.Size().Width*0.1, s.Size().Height/2)}})
		s.DragEnd()
		k = w.tune.knobs[i].Value
	})
	if !(k < 0.7) {
		t.Fatalf("dragging to the left end gave k = %g", k)
	}
	waitFor(t, "the re-run after dragging", func() bool { return w.current != first })
	onUI(func() { checkTunedDecay(t, w.current, k, 2) })
}

// Typing a value outside the range widens it.
func TestTuneTypedValueWidensRange(t *testing.T) {
	w := openTuneWindow(t, tuneDecayModel())
	var first *run.Outcome
	onUI(func() {
		first = w.current
		i := knobIndex(t, w.tune, "k")
		w.tune.rows[i].value.SetText("50")
		w.tune.rows[i].value.OnSubmitted("50")
		if k := w.tune.knobs[i]; k.Value != 50 || k.Max != 50 || math.Abs(k.Min-0.07) > 1e-15 {
			t.Errorf("after typing 50: value %g, range %g to %g", k.Value, k.Min, k.Max)
		}
		if got := w.tune.rows[i].slider.Value; got != sliderSteps {
			t.Errorf("slider at %g, want the upper end %d", got, sliderSteps)
		}
		w.tune.rows[i].value.OnSubmitted("fast")
		if w.tune.knobs[i].Value != 50 || w.tune.info.Text == "" {
			t.Errorf("a word typed as a value: value %g, message %q", w.tune.knobs[i].Value, w.tune.info.Text)
		}
	})
	waitFor(t, "the re-run after typing", func() bool { return w.current != first })
	onUI(func() { checkTunedDecay(t, w.current, 50, 2) })
}

// With a slow solve and several slider moves while it runs, only the
// newest value's result is shown; the values in between are never solved
// and the first one's result is dropped.
func TestTuneDropsStaleResults(t *testing.T) {
	w := openTuneWindow(t, tuneDecayModel())
	release := make(chan struct{})
	started := make(chan float64, 16)
	var mu sync.Mutex
	var shown []float64
	var sess *sliders.Session
	calls := 0 // used by the runner's goroutine only
	w.tune.runner.Solve = func(ctx context.Context, req sliders.Request) (*run.Outcome, error) {
		v := req.Knobs[0].Value
		started <- v
		calls++
		if calls == 1 {
			select {
			case <-release: // a slow solve
			case <-ctx.Done():
				<-release
			}
		}
		if sess == nil || sess.Model() != req.Model {
			var err error
			if sess, err = sliders.NewSession(req.Model); err != nil {
				return nil, err
			}
		}
		if err := sess.Set(req.Knobs); err != nil {
			return nil, err
		}
		return sess.Run(context.Background())
	}
	result := w.tune.result
	w.tune.runner.OnResult = func(gen int, req sliders.Request, o *run.Outcome, err error) {
		mu.Lock()
		shown = append(shown, req.Knobs[0].Value)
		mu.Unlock()
		result(gen, req, o, err)
	}
	var values []float64
	move := func(pos float64) {
		onUI(func() {
			i := knobIndex(t, w.tune, "k")
			w.tune.rows[i].slider.SetValue(pos)
			values = append(values, w.tune.knobs[i].Value)
		})
	}
	move(100)
	first := <-started
	for _, pos := range []float64{300, 500, 700, 900} {
		move(pos)
	}
	close(release)
	newest := values[len(values)-1]
	waitFor(t, "the newest value's result", func() bool {
		mu.Lock()
		defer mu.Unlock()
		return len(shown) > 0
	})
	if first != values[0] {
		t.Errorf("first solve of %g, want %g", first, values[0])
	}
	if second := <-started; second != newest {
		t.Errorf("second solve of %g, want the newest value %g", second, newest)
	}
	onUI(func() {
		mu.Lock()
		defer mu.Unlock()
		if len(shown) != 1 || shown[0] != newest {
			t.Errorf("results shown for k = %v, want only the newest %g (moves: %v)", shown, newest, values)
		}
		if len(started) != 0 {
			t.Errorf("%d more solves started", len(started))
		}
		checkTunedDecay(t, w.current, newest, 2)
	})
}

// Writing the sliders' values into the model is one undoable edit, after
// which Undo restores the earlier values exactly; Reset puts the sliders
// back at the model's values.
func TestTuneWriteBackAndReset(t *testing.T) {
	m := tuneDecayModel()
	w := openTuneWindow(t, m)
	var before *network.Model
	var k, a0 float64
	var tuned *run.Outcome
	onUI(func() {
		p := w.tune
		p.addChosen("A (initial concentration)")
		p.addChosen("cell (volume)")
		if len(p.knobs) != 3 {
			t.Fatalf("sliders: %v", p.knobs)
		}
		before = w.doc.Snapshot()
		if _, ok := w.doc.CanUndo(); ok {
			t.Fatal("a fresh document can undo")
		}
		p.rows[knobIndex(t, p, "k")].slider.SetValue(620)
		p.rows[knobIndex(t, p, "A initial")].slider.SetValue(250)
		k, a0 = p.knobs[knobIndex(t, p, "k")].Value, p.knobs[knobIndex(t, p, "A initial")].Value
	})
	waitFor(t, "the tuned run", func() bool { return w.current != nil && w.current.Y[0][0] == a0 })
	onUI(func() {
		checkTunedDecay(t, w.current, k, a0)
		tuned = w.current
		test.Tap(w.tune.write)
		got := w.doc.Model()
		if got.Parameters[0].Value != k || got.Species[0].Initial != a0 || got.Compartments[0].Volume != 1 {
			t.Errorf("model after writing: k %g, A %g, volume %g; want %g, %g, 1", got.Parameters[0].Value, got.Species[0].Initial, got.Compartments[0].Volume, k, a0)
		}
		desc, ok := w.doc.CanUndo()
		if !ok || desc != "set 2 values from sliders" {
			t.Errorf("undo step %q, %v", desc, ok)
		}
		if w.tune.differs() {
			t.Error("the sliders differ from the model just written")
		}
		// Pin the tuned run; it is drawn beneath what follows.
		test.Tap(w.tune.pin)
		if w.tune.reference() != tuned || w.plot.view.Previous != tuned {
			t.Error("the pinned run is not the overlay")
		}
		if w.tune.pin.Text != "Unpin reference" {
			t.Errorf("pin button reads %q", w.tune.pin.Text)
		}

		if !w.doc.Undo() {
			t.Fatal("nothing to undo")
		}
		if _, ok := w.doc.CanUndo(); ok {
			t.Error("writing the values took more than one undo step")
		}
		if !reflect.DeepEqual(w.doc.Model(), before) {
			t.Errorf("undo did not restore the model exactly:\n got %+v\nwant %+v", w.doc.Model(), before)
		}
		if i := knobIndex(t, w.tune, "k"); w.tune.knobs[i].Value != 0.7 || w.tune.knobs[i].Model != 0.7 {
			t.Errorf("after undo k's slider is at %g (model %g), want 0.7", w.tune.knobs[i].Value, w.tune.knobs[i].Model)
		}

		// Move again, then reset.
		w.tune.rows[knobIndex(t, w.tune, "k")].slider.SetValue(100)
		test.Tap(w.tune.reset)
		for _, kn := range w.tune.knobs {
			if kn.Value != kn.Model {
				t.Errorf("after reset %s is %g, model %g", kn.Label(), kn.Value, kn.Model)
			}
		}
		if got := w.tune.rows[knobIndex(t, w.tune, "k")].slider.Value; got != 500 {
			t.Errorf("k's slider at %g after reset, want the middle, 500", got)
		}
	})
	// The reset run (and the re-run after undo) show the model's values.
	waitFor(t, "the run at the model's values", func() bool {
		return w.current != nil && w.current != tuned && w.current.Y[0][0] == 2 && !w.tune.tuned && !w.ctrl.Running()
	})
	onUI(func() { checkTunedDecay(t, w.current, 0.7, 2) })
}

// TestTuneScreenshot saves a picture of the window with sliders open on
// the default example to the file named by $TUNE_SHOT, drawn by Fyne's
// software painter. It is skipped when TUNE_SHOT is not set.
func TestTuneScreenshot(t *testing.T) {
	path := os.Getenv("TUNE_SHOT")
	if path == "" {
		t.Skip("set TUNE_SHOT=file.png to save a picture")
	}
	a := test.NewTempApp(t)
	a.Settings().SetTheme(newTheme())
	w := newMainWindow(a, true)
	defer w.win.Close()
	defer w.tune.runner.Close()
	w.ctrl.Deliver = onUI
	w.tune.runner.Deliver = onUI
	w.win.Resize(fyne.NewSize(1280, 800))
	onUI(func() {
		if err := w.openStart(""); err != nil {
			t.Fatal(err)
		}
	})
	waitFor(t, "the first run", func() bool { return w.current != nil && !w.ctrl.Running() })
	var first *run.Outcome
	onUI(func() {
		w.tune.setOpen(true)
		w.tune.addChosen("I (initial concentration)")
		test.Tap(w.tune.pin)
		first = w.current
		w.tune.rows[knobIndex(t, w.tune, "kcat")].slider.SetValue(260)
	})
	waitFor(t, "the tuned run", func() bool { return w.current != first })
	var err error
	onUI(func() {
		img := w.win.Canvas().Capture()
		f, e := os.Create(path)
		if e != nil {
			err = e
			return
		}
		defer f.Close()
		err = png.Encode(f, img)
	})
	if err != nil {
		t.Fatal(err)
	}
}

// A slider solve still running when the model is edited belongs to the old
// model: its result must not replace the figure.
func TestTuneDropsResultOfEditedModel(t *testing.T) {
	w := openTuneWindow(t, tuneDecayModel())
	release := make(chan struct{})
	started := make(chan struct{}, 1)
	var stale *run.Outcome // written by the runner's goroutine before delivery
	w.tune.runner.Solve = func(ctx context.Context, req sliders.Request) (*run.Outcome, error) {
		started <- struct{}{}
		<-release
		s, err := sliders.NewSession(req.Model)
		if err != nil {
			return nil, err
		}
		if err := s.Set(req.Knobs); err != nil {
			return nil, err
		}
		o, err := s.Run(context.Background())
		stale = o
		return o, err
	}
	var before *run.Outcome
	onUI(func() {
		w.autoRerun = false // only the slider's solve delivers
		before = w.current
		w.tune.rows[knobIndex(t, w.tune, "k")].slider.SetValue(900)
	})
	<-started
	onUI(func() {
		if !w.doc.Apply("set A's initial value", func(m *network.Model) { m.Species[0].Initial = 5 }) {
			t.Fatal("the edit did nothing")
		}
	})
	close(release)
	waitFor(t, "the slider's result", func() bool { _, shown := w.tune.runner.Counts(); return shown == 1 })
	onUI(func() {
		if stale == nil || w.current == stale {
			t.Error("the figure shows a slider run of the model as it was before the edit")
		}
		if w.current != before {
			t.Error("the figure changed without a run of the edited model")
		}
	})
}

// Saving is not an edit: a slider moved away from the model keeps its
// value, the figure keeps the tuned run (no re-run), and the status line
// says the model was saved.
func TestSaveKeepsSliderValues(t *testing.T) {
	w := openTuneWindow(t, tuneDecayModel())
	var k float64
	var tuned *run.Outcome
	onUI(func() {
		p := w.tune
		p.rows[knobIndex(t, p, "k")].slider.SetValue(800)
		k = p.knobs[knobIndex(t, p, "k")].Value
	})
	waitFor(t, "the tuned run", func() bool { return w.tune.tuned && !w.ctrl.Running() })
	path := t.TempDir() + "/decay.json"
	onUI(func() {
		tuned = w.current
		w.saveTo(path)
	})
	// Give a re-run, if saving started one, time to start and arrive:
	// longer than the controller's default pause before re-running.
	time.Sleep(600 * time.Millisecond)
	waitFor(t, "runs to settle", func() bool { return !w.ctrl.Running() })
	onUI(func() {
		p := w.tune
		if got := p.knobs[knobIndex(t, p, "k")].Value; got != k {
			t.Errorf("after saving k's slider is at %g, want %g as moved", got, k)
		}
		if w.current != tuned {
			t.Error("saving re-ran the model")
		}
		if !strings.HasPrefix(w.status.Text, "Saved ") {
			t.Errorf("status line %q, want the saved confirmation", w.status.Text)
		}
		if w.doc.Dirty() {
			t.Error("the saved document is marked unsaved")
		}
		if !strings.HasPrefix(w.win.Title(), "decay.json") {
			t.Errorf("window title %q, want the file's name without the unsaved mark", w.win.Title())
		}
		if got := w.doc.Model().Parameters[0].Value; got != 0.7 {
			t.Errorf("saving wrote the slider value %g into the model", got)
		}
	})
}

// Each slider names the unit of its value: a parameter's own, the
// concentration unit for an initial value, the compartment's for a volume.
func TestTuneRowsNameUnits(t *testing.T) {
	w := openTuneWindow(t, exampleModel(t, "twice-daily-oral-dose.json"))
	onUI(func() {
		p := w.tune
		p.addChosen("dose (parameter)")
		p.addChosen("D_gut (initial concentration)")
		p.addChosen("plasma (volume)")
		want := map[string]string{"dose": "mg", "D_gut initial": "mg/L", "plasma volume": "L"}
		for label, unit := range want {
			if got := p.rows[knobIndex(t, p, label)].unit.Text; got != unit {
				t.Errorf("the %s slider names the unit %q, want %q", label, got, unit)
			}
		}
	})
}
