package run

import (
	"slices"
	"testing"

	"kinetarium/network"
	"kinetarium/solve"
)

// Every word of the model file's vocabulary (network.Methods) maps to a
// solver method with a title, the table holds nothing else, and no two
// words share a solver method or a title.
func TestMethodsCoverTheFileVocabulary(t *testing.T) {
	if len(Methods) != len(network.Methods) {
		t.Errorf("%d methods in the table, %d in network.Methods", len(Methods), len(network.Methods))
	}
	solvers, titles := map[solve.Method]string{}, map[string]string{}
	for _, name := range network.Methods {
		m, err := LookupMethod(name)
		if err != nil {
			t.Errorf("%q: %v", name, err)
			continue
		}
		if m.Name != name || m.Title == "" {
			t.Errorf("%q maps to %+v", name, m)
		}
		if prev, dup := solvers[m.Solve]; dup {
			t.Errorf("%q and %q both run solver method %q", prev, name, m.Solve)
		}
		if prev, dup := titles[m.Title]; dup {
			t.Errorf("%q and %q are both called %q", prev, name, m.Title)
		}
		solvers[m.Solve], titles[m.Title] = name, name
	}
	for _, m := range Methods {
		if !slices.Contains(network.Methods, m.Name) {
			t.Errorf("%q is in the table but not in network.Methods", m.Name)
		}
	}
	if m, err := LookupMethod(""); err != nil || m.Solve != solve.Auto {
		t.Errorf("the empty word gives %+v, %v; want the automatic choice", m, err)
	}
}

// An unknown method is refused by Settings with the words that are known.
func TestSettingsRefusesUnknownMethod(t *testing.T) {
	_, err := Settings(network.Simulation{Method: "leapfrog"})
	if err == nil || err.Error() != `simulation method "leapfrog" is not known; expected one of auto, rosenbrock, radau, bdf, explicit` {
		t.Errorf("error %v", err)
	}
	s, err := Settings(network.Simulation{Method: "radau", TEnd: 2, Output: network.Output{Points: 3}})
	if err != nil || s.Method != solve.Radau || len(s.Times) != 3 || s.Times[2] != 2 {
		t.Errorf("radau: %+v, %v", s, err)
	}
}
