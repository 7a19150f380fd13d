package network_test

import (
	"fmt"
	"strings"

	"gonum.org/v1/gonum/mat"

	"kinetarium/network"
)

const enzymeModel = `{
  "format": "kinetarium.model/1",
  "title": "Enzyme",
  "species": [{"name": "E", "initial": 1}, {"name": "S", "initial": 10}, {"name": "ES", "initial": 0}, {"name": "P", "initial": 0}],
  "parameters": [{"name": "kon", "value": 2}, {"name": "koff", "value": 1}],
  "reactions": [
    {"name": "bind", "equation": "E + S <=> ES", "rate": {"law": "mass_action", "k": "kon", "k_reverse": "koff"}},
    {"name": "cut", "equation": "ES -> E + P", "rate": {"law": "expression", "expression": "3*ES"}}
  ]
}`

func ExampleRead() {
	m, err := network.Read(strings.NewReader(enzymeModel), "enzyme.json")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.Title, len(m.Species), "species,", len(m.Reactions), "reactions")
	fmt.Println("k of bind:", m.Reactions[0].Rate.Arg("k"))
	for _, law := range m.ConservationLaws() {
		fmt.Println(law.Text)
	}
	// Output:
	// Enzyme 4 species, 2 reactions
	// k of bind: kon
	// E + ES = constant
	// S + ES + P = constant
}

func ExampleCompile() {
	m, _ := network.Read(strings.NewReader(enzymeModel), "enzyme.json")
	sys, err := network.Compile(m)
	if err != nil {
		fmt.Println(err)
		return
	}
	y := sys.Initial() // E=1, S=10, ES=0, P=0
	dydt := make([]float64, sys.Dim())
	sys.RHS(0, y, dydt)
	fmt.Println("dy/dt:", dydt)
	jac := mat.NewDense(sys.Dim(), sys.Dim(), nil)
	sys.Jacobian(0, y, jac)
	fmt.Println("d(dE/dt)/dS:", jac.At(0, 1))
	// Output:
	// dy/dt: [-20 -20 20 0]
	// d(dE/dt)/dS: -2
}

func ExampleModel_Validate() {
	m, _ := network.Read(strings.NewReader(enzymeModel), "enzyme.json")
	m.Reactions[0].Equation = "E + S <=> EQ"
	for _, p := range m.Validate() {
		fmt.Println(p)
	}
	// Output:
	// enzyme.json:7:45: reaction "bind", equation, column 11: unknown species "EQ"; did you mean "E"? Otherwise declare it under species or fix the name
}
