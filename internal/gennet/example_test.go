package gennet_test

import (
	"fmt"

	"kinetarium/internal/gennet"
	"kinetarium/network"
)

// A cascade of 20,000 species, checked, with its conservation laws: one
// total, B + C, in each of its 5,000 modules.
func ExampleCascade() {
	m := gennet.Cascade(20000)
	net, probs := network.Check(m)
	laws := net.ConservationLaws()
	fmt.Println(len(m.Species), "species,", len(m.Reactions), "reactions,", len(probs), "problems")
	fmt.Println(len(laws), "laws; the first:", laws[0].Text)
	// Output:
	// 20000 species, 20000 reactions, 0 problems
	// 5000 laws; the first: B0 + C0 = constant
}
