package sbml

import (
	"math"
	"strings"
	"testing"

	"kinetarium/network"
)

// Compartments in mL and L are exported in one unit, mL (a unit
// definition of litre at scale −3, SBML Level 3 Version 2 core, section
// 4.4), sizes converted (1 L = 1000 mL, SI), and read back as mL: the
// round trip simulates the same.
func TestVolumeUnitsRoundTrip(t *testing.T) {
	m := &network.Model{
		Units:        network.Units{Time: "s", Amount: "uM"},
		Compartments: []network.Compartment{{Name: "cell", Volume: 2, Unit: "mL"}, {Name: "bath", Volume: 0.5, Unit: "L"}},
		Species:      []network.Species{{Name: "A", Initial: 3, Compartment: "cell"}, {Name: "B", Initial: 0.1, Compartment: "bath"}},
		Parameters:   []network.Parameter{{Name: "k", Value: 0.4, Unit: "1/s"}},
		Reactions:    []network.Reaction{{Name: "out", Equation: "A -> B", Rate: network.NewRate(network.MassAction, "k", "k")}},
		Simulation:   network.Simulation{TEnd: 10},
	}
	data, err := Encode(m)
	if err != nil {
		t.Fatal(err)
	}
	text := string(data)
	for _, want := range []string{`<unitDefinition id="millilitre">`, `<unit kind="litre" exponent="1" scale="-3" multiplier="1"/>`,
		`id="cell" spatialDimensions="3" size="2" units="millilitre"`, `id="bath" spatialDimensions="3" size="500" units="millilitre"`} {
		if !strings.Contains(text, want) {
			t.Errorf("export lacks %s:\n%s", want, text)
		}
	}
	if m.Compartments[1].Volume != 0.5 {
		t.Errorf("the export changed the model: bath volume %v", m.Compartments[1].Volume)
	}
	imp, err := Parse(data, "units.xml")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range imp.Model.Compartments {
		if c.Unit != "mL" {
			t.Errorf("compartment %s imported in %q, want mL", c.Name, c.Unit)
		}
	}
	back := imp.Model
	back.Simulation = m.Simulation
	_, want := simulate(t, m)
	_, got := simulate(t, back)
	for i := range want {
		for j := range want[i] {
			if d := math.Abs(want[i][j] - got[i][j]); d > 1e-10*math.Max(math.Abs(want[i][j]), 1e-6) {
				t.Fatalf("row %d column %d: %v before, %v after", i, j, want[i][j], got[i][j])
			}
		}
	}
}

// Reading: litre and a unit definition of microlitre map to L and uL; a
// definition that is not a plain scaled litre, and compartments in
// different units, are used as they stand, without units (the latter
// with a warning on the compartment).
func TestImportVolumeUnits(t *testing.T) {
	defs := `<listOfUnitDefinitions>
  <unitDefinition id="ul"><listOfUnits><unit kind="litre" exponent="1" scale="-6" multiplier="1"/></listOfUnits></unitDefinition>
  <unitDefinition id="odd"><listOfUnits><unit kind="litre" exponent="1" scale="-6" multiplier="2.5"/></listOfUnits></unitDefinition>
</listOfUnitDefinitions>`
	model := func(u1, u2 string) string {
		return doc(defs + `
<listOfCompartments>
  <compartment id="A" spatialDimensions="3" size="2" units="` + u1 + `" constant="true"/>
  <compartment id="B" spatialDimensions="3" size="5" units="` + u2 + `" constant="true"/>
</listOfCompartments>`)
	}
	for _, c := range []struct {
		u1, u2, want, warn string
	}{
		{"litre", "litre", "L", ""},
		{"ul", "ul", "uL", ""},
		{"odd", "odd", "", ""},
		{"ul", "litre", "", "the compartments' sizes are in different units (uL and L)"},
	} {
		imp, err := Parse([]byte(model(c.u1, c.u2)), "v.xml")
		if err != nil {
			t.Fatalf("%s/%s: %v", c.u1, c.u2, err)
		}
		for _, comp := range imp.Model.Compartments {
			if comp.Unit != c.want {
				t.Errorf("%s/%s: compartment %s in %q, want %q", c.u1, c.u2, comp.Name, comp.Unit, c.want)
			}
		}
		found := c.warn == ""
		for _, p := range imp.Problems {
			found = found || strings.Contains(p.Message, c.warn)
		}
		if !found {
			t.Errorf("%s/%s: no warning %q in %v", c.u1, c.u2, c.warn, imp.Problems)
		}
	}
}
