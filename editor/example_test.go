package editor_test

import (
	"fmt"

	"kinetarium/editor"
	"kinetarium/network"
)

func ExampleReplaceName() {
	s, n := editor.ReplaceName("S + 2S2 -> ES", "S", "Sub")
	fmt.Println(s, n)
	// Output: Sub + 2S2 -> ES 1
}

func ExampleDocument_Rename() {
	d := editor.NewDocument(&network.Model{
		Species:    []network.Species{{Name: "S", Initial: 1}, {Name: "P"}},
		Parameters: []network.Parameter{{Name: "k", Value: 0.1}},
		Reactions: []network.Reaction{{Name: "r", Equation: "S -> P",
			Rate: network.Rate{Law: network.Expression, Expression: "k*S"}}},
	}, "")
	n, err := d.Rename(editor.KindSpecies, "S", "substrate", true)
	fmt.Println(n, err)
	fmt.Println(d.Model().Reactions[0].Equation, "|", d.Model().Reactions[0].Rate.Expression)
	d.Undo()
	fmt.Println(d.Model().Reactions[0].Equation)
	// Output:
	// 2 <nil>
	// substrate -> P | k*substrate
	// S -> P
}
