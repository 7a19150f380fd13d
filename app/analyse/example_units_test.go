package analyse_test

import (
	"context"
	"fmt"

	"kinetarium/app/analyse"
	"kinetarium/network"
)

// A steady state found in the model's units (uM and s) shown in its
// display units (nM and h): X = k0/k1 = 5 uM is 5000 nM, the flux
// k0 = 0.5 uM/s is 1.8e6 nM/h and the eigenvalue −k1 = −0.1/s is −360/h.
func ExampleSteady_In() {
	m := &network.Model{
		Units:      network.Units{Time: "s", Amount: "uM"},
		Species:    []network.Species{{Name: "X"}},
		Parameters: []network.Parameter{{Name: "k0", Value: 0.5, Unit: "uM/s"}, {Name: "k1", Value: 0.1, Unit: "1/s"}},
		Reactions: []network.Reaction{
			{Name: "make", Equation: "-> X", Rate: network.NewRate(network.MassAction, "k", network.Named("k0"))},
			{Name: "clear", Equation: "X ->", Rate: network.NewRate(network.MassAction, "k", network.Named("k1"))}},
		Simulation: network.Simulation{Display: network.Display{Time: "h", Concentration: "nM"}},
	}
	a, err := analyse.Prepare(m)
	if err != nil {
		fmt.Println(err)
		return
	}
	sh, err := a.Show()
	if err != nil {
		fmt.Println(err)
		return
	}
	s, err := a.FindSteady(context.Background())
	if err != nil {
		fmt.Println(err)
		return
	}
	s = s.In(sh)
	fmt.Printf("%s = %.6g\n", sh.Header("X", sh.Unit(0)), s.Y[0])
	fmt.Printf("%s = %.6g\n", sh.Header("make", sh.RateUnit), s.Fluxes[0])
	fmt.Printf("%s = %.6g\n", sh.Header("eigenvalue", sh.PerTimeUnit), real(s.Eigenvalues[0]))
	// Output:
	// X (nM) = 5000
	// make (nM/h) = 1.8e+06
	// eigenvalue (1/h) = -360
}
