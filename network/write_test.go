package network_test

import (
	"bytes"
	"math"
	"testing"

	"kinetarium/examples"
	"kinetarium/internal/gennet"
	"kinetarium/network"
)

// Write encodes a field and a list item at a time; its text is the one
// encoding/json (the standard library, as the reference) gives for the
// whole model as one value with a two-space indent, byte for byte: on
// every example model, on the generated networks, and on a model with
// every optional part, characters HTML would escape and empty lists.
func TestWriteMatchesWholeDocument(t *testing.T) {
	var models []*network.Model
	for _, name := range examples.Names() {
		b, err := examples.Open(name)
		if err != nil {
			t.Fatal(err)
		}
		m, err := network.Read(bytes.NewReader(b), name)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		models = append(models, m)
	}
	models = append(models, gennet.Cascade(200), gennet.Feedback(200), gennet.Random(3, 60),
		&network.Model{}, &network.Model{Title: "<a & b>", Species: []network.Species{{Name: "A", Note: "x < y & \"z\""}}})
	no := false
	models = append(models, &network.Model{
		Title: "all parts", Note: "n", Units: network.Units{Time: "s", Amount: "uM"},
		Compartments: []network.Compartment{{Name: "c", Volume: 2, Unit: "L"}},
		Species:      []network.Species{{Name: "A", Initial: 1, Compartment: "c", Fixed: true}},
		Parameters:   []network.Parameter{{Name: "k", Value: 0.5, Unit: "1/s"}},
		Assignments:  []network.Assignment{{Name: "T", Expression: "2*A"}},
		Reactions:    []network.Reaction{{Name: "r", Equation: "A -> ", Rate: network.NewRate(network.MassAction, "k", "k")}},
		Events: []network.Event{{Name: "e", At: network.Number(1), Every: network.Named("k"), Count: 2,
			Add: []network.Change{{Target: "A", Value: "1"}}, Set: []network.Change{{Target: "k", Value: "k*2"}}}},
		Rates:      []network.RateRule{{Name: "k", Expression: "-k"}},
		Simulation: network.Simulation{TEnd: 5, NonNegative: &no, Output: network.Output{Points: 3, Spacing: "log"}, Display: network.Display{Time: "min"}},
		Layout:     network.Layout{Style: "sbgn", Places: []network.Place{{Kind: network.PlaceSpecies, Name: "A", X: 1, Y: 2}, {Kind: network.PlaceReaction, Name: "r", X: 3, Y: 4}}},
	})
	for i, m := range models {
		var got bytes.Buffer
		if err := m.Write(&got); err != nil {
			t.Fatalf("model %d (%s): %v", i, m.Title, err)
		}
		want, err := network.WholeDocument(m)
		if err != nil {
			t.Fatalf("model %d (%s): reference: %v", i, m.Title, err)
		}
		if !bytes.Equal(got.Bytes(), want) {
			n := 0
			for n < min(got.Len(), len(want)) && got.Bytes()[n] == want[n] {
				n++
			}
			t.Errorf("model %d (%s): Write differs from the whole document at byte %d: %q, want %q", i, m.Title, n,
				got.Bytes()[n:min(got.Len(), n+40)], want[n:min(len(want), n+40)])
		}
	}
	bad := gennet.Cascade(8)
	bad.Species[3].Initial = math.NaN()
	if err := bad.Write(&bytes.Buffer{}); err == nil {
		t.Error("a NaN initial concentration was written without an error")
	}
}
