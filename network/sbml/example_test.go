package sbml_test

import (
	"fmt"
	"strings"

	"kinetarium/network"
	"kinetarium/network/sbml"
)

// An SBML kinetic law is an amount per time; the imported rate is a
// concentration per time in the compartment of the first reactant, here
// the kinetic law divided by the cell's size of 2.
func ExampleParse() {
	doc := `<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2">
<model id="decay">
  <listOfCompartments><compartment id="cell" spatialDimensions="3" size="2" constant="true"/></listOfCompartments>
  <listOfSpecies>
    <species id="A" compartment="cell" initialAmount="6" hasOnlySubstanceUnits="false" boundaryCondition="false" constant="false"/>
  </listOfSpecies>
  <listOfParameters><parameter id="k" value="0.3" constant="true"/></listOfParameters>
  <listOfReactions>
    <reaction id="loss" reversible="false">
      <listOfReactants><speciesReference species="A" stoichiometry="1" constant="true"/></listOfReactants>
      <kineticLaw><math xmlns="http://www.w3.org/1998/Math/MathML">
        <apply><times/><ci>cell</ci><ci>k</ci><ci>A</ci></apply>
      </math></kineticLaw>
    </reaction>
  </listOfReactions>
</model>
</sbml>`
	imp, err := sbml.Parse([]byte(doc), "decay.xml")
	if err != nil {
		fmt.Println(err)
		return
	}
	m := imp.Model
	fmt.Printf("%s: initial concentration %v\n", m.Species[0].Name, m.Species[0].Initial)
	fmt.Printf("%s: %s at rate %s\n", m.Reactions[0].Name, m.Reactions[0].Equation, m.Reactions[0].Rate.Expression)
	// Output:
	// A: initial concentration 3
	// loss: A -> at rate k*A
}

// Encode writes a model as SBML Level 3 Version 2; the kinetic law is the
// rate times the size of its compartment.
func ExampleEncode() {
	m := &network.Model{
		Compartments: []network.Compartment{{Name: "cell", Volume: 2}},
		Species:      []network.Species{{Name: "A", Initial: 3, Compartment: "cell"}},
		Parameters:   []network.Parameter{{Name: "k", Value: 0.3}},
		Reactions:    []network.Reaction{{Name: "loss", Equation: "A ->", Rate: network.NewRate(network.MassAction, "k", "k")}},
	}
	data, err := sbml.Encode(m)
	if err != nil {
		fmt.Println(err)
		return
	}
	s := string(data)
	law := s[strings.Index(s, "<kineticLaw>"):strings.Index(s, "</kineticLaw>")]
	fmt.Println(strings.Join(strings.Fields(law), " "))
	// Output:
	// <kineticLaw> <math xmlns="http://www.w3.org/1998/Math/MathML"> <apply> <times/> <ci>cell</ci> <apply> <times/> <ci>k</ci> <ci>A</ci> </apply> </apply> </math>
}
