package main

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/sliders"
)

// walkObjects calls visit for o and everything it holds, containers' and
// widgets' parts alike; with shownOnly it skips what is hidden.
func walkObjects(o fyne.CanvasObject, shownOnly bool, visit func(fyne.CanvasObject)) {
	if shownOnly && !o.Visible() {
		return
	}
	visit(o)
	switch x := o.(type) {
	case *fyne.Container:
		for _, c := range x.Objects {
			walkObjects(c, shownOnly, visit)
		}
	case fyne.Widget:
		for _, c := range test.WidgetRenderer(x).Objects() {
			walkObjects(c, shownOnly, visit)
		}
	}
}

// shownLabels returns the visible labels among o and what it holds.
func shownLabels(o fyne.CanvasObject) []*widget.Label {
	var out []*widget.Label
	walkObjects(o, true, func(c fyne.CanvasObject) {
		if l, ok := c.(*widget.Label); ok {
			out = append(out, l)
		}
	})
	return out
}

// shownTexts returns the texts drawn among o and what it holds, such as
// the labels of forms.
func shownTexts(o fyne.CanvasObject) []string {
	var out []string
	walkObjects(o, true, func(c fyne.CanvasObject) {
		if t, ok := c.(*canvas.Text); ok {
			out = append(out, t.Text)
		}
	})
	return out
}

// Every window that shows results states the whole caution: research
// aids, not clinical or dosing advice, and that decisions rest with
// qualified professionals under local rules; the sweep, population and
// sensitivity-over-time windows, where doses can be varied, among them.
// It is not in the faint grey of low importance.
func TestResultWindowsCarryTheCaution(t *testing.T) {
	a := newStudyApp(t)
	drug := exampleModel(t, "two-compartment-drug.json")
	toggle := toggleModel(t)
	wins := map[string]func() (fyne.Window, error){
		"sweep": func() (fyne.Window, error) {
			s, err := newSweepWindow(a, drug, "test")
			return s.win, err
		},
		"population": func() (fyne.Window, error) {
			p, err := newPopulationWindow(a, drug, "test")
			return p.win, err
		},
		"stochastic": func() (fyne.Window, error) {
			s, err := newStochasticWindow(a, exampleModel(t, "bursty-reporter.json"), "test")
			return s.win, err
		},
		"steady state": func() (fyne.Window, error) {
			s, err := newSteadyWindow(a, toggle, "test", false)
			return s.win, err
		},
		"continuation": func() (fyne.Window, error) {
			c, err := newContinuationWindow(a, toggle, "test")
			return c.win, err
		},
		"global sensitivity": func() (fyne.Window, error) {
			s, err := newSensitivityWindow(a, drug, "test")
			return s.win, err
		},
		"sensitivity over time": func() (fyne.Window, error) {
			s, err := newTimeSensWindow(a, drug, "test")
			return s.win, err
		},
		"fit": func() (fyne.Window, error) {
			return newFitWindow(a, drug, "test", nil, func([]sliders.Knob) string { return "" }).win, nil
		},
	}
	for name, open := range wins {
		win, err := open()
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		found := false
		for _, l := range shownLabels(win.Content()) {
			if strings.Contains(l.Text, "research aids, not clinical or dosing advice") &&
				strings.Contains(l.Text, "qualified professionals") && strings.Contains(l.Text, "local rules") {
				found = true
				if l.Importance == widget.LowImportance {
					t.Errorf("the %s window shows its caution faintly", name)
				}
			}
		}
		if !found {
			t.Errorf("the %s window shows no whole caution", name)
		}
		win.Close()
	}
}
