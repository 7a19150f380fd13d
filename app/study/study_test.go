package study

import (
	"context"
	"errors"
	"math"
	"testing"

	"kinetarium/network"
	"kinetarium/solve/explore"
)

// Log spacing puts equal ratios between neighbours, 1, 10, 100, 1000
// (common practice), with exact ends; bad ranges are refused with a reason.
func TestAxisValues(t *testing.T) {
	v, err := AxisValues(1, 1000, 4, true)
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []float64{1, 10, 100, 1000} {
		if math.Abs(v[i]-want) > 1e-12*want {
			t.Errorf("value %d = %v, want %v", i, v[i], want)
		}
	}
	if _, err := AxisValues(0, 1, 3, true); err == nil {
		t.Error("log spacing from 0 was accepted")
	}
	if _, err := AxisValues(1, 2, 0, false); err == nil {
		t.Error("0 points were accepted")
	}
}

// An unknown knob names its position and what the model has.
func TestNewTargetUnknown(t *testing.T) {
	m := &network.Model{
		Compartments: []network.Compartment{{Name: "cell", Volume: 1}},
		Species:      []network.Species{{Name: "A", Initial: 1, Compartment: "cell"}},
		Parameters:   []network.Parameter{{Name: "k", Value: 1}},
		Reactions:    []network.Reaction{{Name: "r", Equation: "A ->", Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
	}
	sys, err := network.Compile(m)
	if err != nil {
		t.Fatal(err)
	}
	_, err = NewTarget(sys, []string{"k", "init:B"})
	var ke *KnobError
	if !errors.As(err, &ke) || ke.Index != 1 || err.Error() != `no species "B" in the model (species: A)` {
		t.Fatalf("error %v", err)
	}
}

// A readout can be computed on an assignment. For A -> B at rate k·A the
// closed form is A(t) = A0·exp(−k t) (first-order kinetics, common
// practice), so the assignment frac = A/(A + B) ends at exp(−k·t_end) for
// each swept k.
func TestSweepReadoutOnAssignment(t *testing.T) {
	m := &network.Model{
		Species:     []network.Species{{Name: "A", Initial: 2}, {Name: "B"}},
		Parameters:  []network.Parameter{{Name: "k", Value: 1}},
		Assignments: []network.Assignment{{Name: "frac", Expression: "A/(A + B)"}},
		Reactions:   []network.Reaction{{Name: "r", Equation: "A -> B", Rate: network.NewRate(network.MassAction, "k", "k")}},
		Simulation:  network.Simulation{TEnd: 3, RTol: 1e-9, ATol: 1e-14},
	}
	p, err := Prepare(m)
	if err != nil {
		t.Fatal(err)
	}
	job, err := p.Sweep([]Axis{{Knob: "k", From: 0.1, To: 1, Points: 4}},
		[]ReadoutSpec{{Kind: explore.Final, Species: "frac"}, {Kind: explore.Final, Species: "A"}})
	if err != nil {
		t.Fatal(err)
	}
	if job.Species[0] != "frac" {
		t.Errorf("readout species %v", job.Species)
	}
	res, err := job.Run(context.Background(), 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	frac, a := res.Values(0), res.Values(1)
	for i, k := range job.Axes[0] {
		want := math.Exp(-k * 3)
		if math.Abs(frac[i]-want) > 1e-6*want {
			t.Errorf("k = %g: final frac = %g, want %g", k, frac[i], want)
		}
		if math.Abs(a[i]-2*want) > 1e-6*want {
			t.Errorf("k = %g: final A = %g, want %g", k, a[i], 2*want)
		}
	}
	if _, err := p.Sweep([]Axis{{Knob: "k", From: 0.1, To: 1, Points: 2}}, []ReadoutSpec{{Kind: explore.Final, Species: "nope"}}); err == nil {
		t.Error("a readout on an unknown quantity was accepted")
	}
}

// Event quantities are knobs: a sweep over the amount of a single bolus
// into V = 10 gives a peak of D/V, and a sweep over the dosing interval of
// three doses gives the peak after the third, (D/V)(1 + e^(−kτ) +
// e^(−2kτ)) (repeated IV bolus, Gibaldi & Perrier 1982, from memory).
func TestSweepEventKnobs(t *testing.T) {
	m := &network.Model{
		Compartments: []network.Compartment{{Name: "body", Volume: 10}},
		Species:      []network.Species{{Name: "C", Compartment: "body"}},
		Parameters:   []network.Parameter{{Name: "k", Value: 0.1}},
		Reactions:    []network.Reaction{{Name: "elim", Equation: "C ->", Rate: network.NewRate(network.MassAction, "k", "k")}},
		Events: []network.Event{{Name: "iv", At: network.Number(0), Every: network.Number(12), Count: 3,
			Add: []network.Change{{Target: "C", Value: "100"}}}},
		Simulation: network.Simulation{TEnd: 60, RTol: 1e-10, ATol: 1e-14, Output: network.Output{Points: 6001}},
	}
	p, err := Prepare(m)
	if err != nil {
		t.Fatal(err)
	}
	job, err := p.Sweep([]Axis{{Knob: "event:iv.add.C", From: 50, To: 200, Points: 4}, {Knob: "event:iv.every", From: 6, To: 24, Points: 3}},
		[]ReadoutSpec{{Kind: explore.Max, Species: "C"}})
	if err != nil {
		t.Fatal(err)
	}
	res, err := job.Run(context.Background(), 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	peak := res.Values(0)
	for i, d := range job.Axes[0] {
		for j, tau := range job.Axes[1] {
			q := math.Exp(-0.1 * tau)
			want := d / 10 * (1 + q + q*q)
			if got := peak[i*len(job.Axes[1])+j]; math.Abs(got-want) > 1e-6*want {
				t.Errorf("D = %g, tau = %g: peak %.9g, want %.9g", d, tau, got, want)
			}
		}
	}
	if _, err := p.Sweep([]Axis{{Knob: "event:iv.add.X", From: 1, To: 2, Points: 2}}, nil); err == nil {
		t.Error("an unknown event quantity was accepted")
	}
}

// A readout window: with doses every 12 h (D/V = 10, k = 0.1) and output
// every 0.5 h, the trough before the 3rd dose on the grid is the minimum
// over [12, 23.5], (D/V)(1 + e^(−1.2))e^(−1.15) (repeated IV bolus, Gibaldi
// & Perrier 1982, from memory), and the readout's name says its window.
// (Readouts read the output grid: the last grid time before a dose gives
// the trough.)
func TestReadoutWindowOnDoses(t *testing.T) {
	m := &network.Model{
		Compartments: []network.Compartment{{Name: "body", Volume: 10}},
		Species:      []network.Species{{Name: "C", Compartment: "body"}},
		Parameters:   []network.Parameter{{Name: "k", Value: 0.1}, {Name: "D", Value: 100}},
		Reactions:    []network.Reaction{{Name: "elim", Equation: "C ->", Rate: network.NewRate(network.MassAction, "k", "k")}},
		Events: []network.Event{{Name: "iv", At: network.Number(0), Every: network.Number(12), Count: 3,
			Add: []network.Change{{Target: "C", Value: "D"}}}},
		Simulation: network.Simulation{TEnd: 48, RTol: 1e-10, ATol: 1e-14, Output: network.Output{Points: 97}},
	}
	p, err := Prepare(m)
	if err != nil {
		t.Fatal(err)
	}
	from, to := 12.0, 23.5
	job, err := p.Sweep([]Axis{{Knob: "D", From: 100, To: 200, Points: 2}},
		[]ReadoutSpec{{Kind: explore.Min, Species: "C", From: &from, To: &to}})
	if err != nil {
		t.Fatal(err)
	}
	if got := job.Readouts[0].Name; got != "min_C[12,23.5]" {
		t.Errorf("name %q", got)
	}
	res, err := job.Run(context.Background(), 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i, d := range job.Axes[0] {
		want := d / 10 * (1 + math.Exp(-1.2)) * math.Exp(-0.1*11.5)
		if got := res.Values(0)[i]; math.Abs(got-want) > 1e-6*want {
			t.Errorf("D = %g: trough %.9g, want %.9g", d, got, want)
		}
	}
}

// A readout's axis says what it is in words with its unit, not the code
// name (a review found "t_up_P@5" on the axis), and the varied quantity's
// axis names its unit too, without display units as with them (a review
// found "I initial" beside "final value of P (uM)").
func TestReadoutAxisInWords(t *testing.T) {
	m := &network.Model{
		Units:      network.Units{Time: "s", Amount: "uM"},
		Species:    []network.Species{{Name: "A", Initial: 10}, {Name: "P"}},
		Parameters: []network.Parameter{{Name: "k", Value: 1, Unit: "1/s"}},
		Reactions:  []network.Reaction{{Name: "r", Equation: "A -> P", Rate: network.NewRate(network.MassAction, "k", "k")}},
		Simulation: network.Simulation{TEnd: 5},
	}
	p, err := Prepare(m)
	if err != nil {
		t.Fatal(err)
	}
	level := 5.0
	job, err := p.Sweep([]Axis{{Knob: "k", From: 0.5, To: 2, Points: 3}}, []ReadoutSpec{{Kind: explore.CrossUp, Species: "P", Level: &level}})
	if err != nil {
		t.Fatal(err)
	}
	res, err := job.Run(context.Background(), 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	fig, err := job.Figures().Readout(res, 0)
	if err != nil {
		t.Fatal(err)
	}
	if got := fig.Y.Label.Text; got != "time P rises past 5 (s)" {
		t.Errorf("readout axis %q, want %q", got, "time P rises past 5 (s)")
	}
	if got := fig.X.Label.Text; got != "k (1/s)" {
		t.Errorf("varied quantity's axis %q, want %q", got, "k (1/s)")
	}
}
