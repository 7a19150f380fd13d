package study

import (
	"errors"
	"math"
	"testing"

	"kinetarium/network"
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
