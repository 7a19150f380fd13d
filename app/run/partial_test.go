package run

import (
	"context"
	"strings"
	"testing"

	"kinetarium/network"
)

// runawayModel is 2A -> 3A at rate k·A², which makes dA/dt = k·A² and
// A(t) = A0/(1 − k·A0·t): it grows without bound at t = 1/(k·A0) = 1
// (closed form of the Riccati equation y' = y², common practice), so no
// solver reaches t_end = 10.
func runawayModel() *network.Model {
	return &network.Model{
		Title:      "runaway",
		Species:    []network.Species{{Name: "A", Initial: 1}},
		Parameters: []network.Parameter{{Name: "k", Value: 1}},
		Reactions: []network.Reaction{{Name: "grow", Equation: "2 A -> 3 A",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: 10, Output: network.Output{Points: 101}},
	}
}

// A run that stops early gives the part computed up to the blow-up at
// t = 1, and its figure keeps the requested time axis, 0 to t_end, with a
// title line saying where the run stopped.
func TestPartialRunFigure(t *testing.T) {
	o, err := Run(context.Background(), runawayModel(), nil)
	if err == nil {
		t.Fatal("the run of a solution that blows up at t = 1 did not fail")
	}
	if o == nil || len(o.T) == 0 {
		t.Fatalf("no partial outcome: %v", o)
	}
	if end := o.T[len(o.T)-1]; end > 1 || end < 0.9 {
		t.Errorf("the part computed ends at t = %g, want just before the blow-up at t = 1", end)
	}
	p, err := Figure(o, View{})
	if err != nil {
		t.Fatal(err)
	}
	if p.X.Min != 0 || p.X.Max != 10 {
		t.Errorf("time axis %g to %g, want 0 to t_end = 10", p.X.Min, p.X.Max)
	}
	if !strings.Contains(p.Title.Text, "stopped at t = 1 of 10") {
		t.Errorf("title %q does not say where the run stopped", p.Title.Text)
	}
}

// A run that stops before its second output time still draws on sensible
// axes: time 0 to t_end, and a value axis around the one value.
func TestPartialRunOneRowFigure(t *testing.T) {
	m := runawayModel()
	o := &Outcome{Title: m.Title, Names: []string{"A"}, Species: 1, T: []float64{0}, Y: [][]float64{{1}},
		TEnd: 10, Err: context.Canceled}
	p, err := Figure(o, View{})
	if err != nil {
		t.Fatal(err)
	}
	if p.X.Min != 0 || p.X.Max != 10 {
		t.Errorf("time axis %g to %g, want 0 to 10", p.X.Min, p.X.Max)
	}
	if !(p.Y.Min < 1 && p.Y.Max > 1) {
		t.Errorf("value axis %g to %g, want a range around the value 1", p.Y.Min, p.Y.Max)
	}
}

// On a log time axis, time 0 of an evenly spaced grid is left out with the
// figure's note (as README promises); on a log-spaced grid, where it is
// the only time ≤ 0 and expected to go, quietly.
func TestLogTimeNotesDroppedZero(t *testing.T) {
	for _, logGrid := range []bool{false, true} {
		o := &Outcome{Title: "decay", Names: []string{"A"}, Species: 1, T: []float64{0, 1, 2}, Y: [][]float64{{1}, {0.5}, {0.25}},
			TEnd: 2, LogGrid: logGrid}
		p, err := Figure(o, View{LogX: true})
		if err != nil {
			t.Fatal(err)
		}
		noted := strings.Contains(p.Title.Text, "1 time ≤ 0 on the log axis")
		if noted == logGrid {
			t.Errorf("log-spaced grid %v: title %q; want the note only for an evenly spaced grid", logGrid, p.Title.Text)
		}
	}
}
