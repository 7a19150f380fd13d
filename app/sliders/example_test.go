package sliders_test

import (
	"context"
	"fmt"
	"math"

	"kinetarium/app/sliders"
	"kinetarium/network"
)

// A session compiles the model once and simulates it again with a slider's
// value: here the rate constant of A -> B, moved from 0.5 to 2.
func ExampleSession() {
	m := &network.Model{
		Species:    []network.Species{{Name: "A", Initial: 1}, {Name: "B"}},
		Parameters: []network.Parameter{{Name: "k", Value: 0.5}},
		Reactions: []network.Reaction{{Name: "r", Equation: "A -> B",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: 1, Output: network.Output{Points: 2}, RTol: 1e-9},
	}
	s, err := sliders.NewSession(m)
	if err != nil {
		fmt.Println(err)
		return
	}
	k := sliders.Candidates(m)[0]
	fmt.Printf("%s: slider from %g to %g, log scale %v\n", k.Label(), k.Min, k.Max, k.Log())
	k.Value = k.At(0.8) // about 2: 0.05·100^0.8
	if err := s.Set([]sliders.Knob{k}); err != nil {
		fmt.Println(err)
		return
	}
	o, err := s.Run(context.Background())
	if err != nil {
		fmt.Println(err)
		return
	}
	last := len(o.T) - 1
	fmt.Printf("k = %.3f: A(1) = %.4f, closed form %.4f\n", k.Value, o.Y[last][0], math.Exp(-k.Value))
	// Output:
	// k: slider from 0.05 to 5, log scale true
	// k = 1.991: A(1) = 0.1366, closed form 0.1366
}

// A Mailbox keeps only the newest value.
func ExampleMailbox() {
	var box sliders.Mailbox[string]
	box.Put("k = 1")
	box.Put("k = 2")
	gen := box.Put("k = 3")
	v, g, _ := box.TryTake()
	fmt.Println(v, g == gen)
	_, _, ok := box.TryTake()
	fmt.Println(ok)
	// Output:
	// k = 3 true
	// false
}
