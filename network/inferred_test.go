package network

import "testing"

// The unit of an assignment without a declared one is the unit its
// expression comes out in, written in the model's units (dimensional
// analysis, common practice): A + B in uM, k·A in uM/s with k in 1/s,
// A/B a pure number, A·V in uM·L (an amount) written as umol, the unit
// symbol equal to it. A declared unit is kept; a name without a unit
// leaves the unit unknown.
func TestInferredAssignmentUnits(t *testing.T) {
	m := &Model{
		Units:        Units{Time: "s", Amount: "uM"},
		Species:      []Species{{Name: "A", Initial: 1}, {Name: "B", Initial: 1}},
		Parameters:   []Parameter{{Name: "k", Value: 1, Unit: "1/s"}, {Name: "V", Value: 2, Unit: "L"}, {Name: "q", Value: 1}},
		Compartments: nil,
		Assignments: []Assignment{
			{Name: "sum", Expression: "A + B"},
			{Name: "flux", Expression: "k*A"},
			{Name: "ratio", Expression: "A/B"},
			{Name: "amount", Expression: "A*V"},
			{Name: "told", Expression: "A", Unit: "nM"},
			{Name: "unknown", Expression: "q*A"},
		},
		Reactions: []Reaction{{Name: "r", Equation: "A -> B", Rate: NewRate(MassAction, "k", Named("k"))}},
	}
	net, probs := Check(m)
	if err := probs.Err(); err != nil {
		t.Fatal(err)
	}
	want := map[string]struct {
		unit     string
		inferred bool
	}{
		"sum": {"uM", true}, "flux": {"uM/s", true}, "ratio": {"1", true}, "amount": {"umol", true},
		"told": {"nM", false}, "unknown": {"", false},
	}
	for _, ca := range net.Assignments {
		w := want[ca.Name]
		if ca.Unit != w.unit || ca.UnitInferred != w.inferred {
			t.Errorf("%s: unit %q (inferred %v), want %q (inferred %v)", ca.Name, ca.Unit, ca.UnitInferred, w.unit, w.inferred)
		}
	}
	sys, err := net.Compile()
	if err != nil {
		t.Fatal(err)
	}
	got := sys.AssignmentUnits()
	for k, name := range sys.Assignments() {
		if got[k] != want[name].unit {
			t.Errorf("System.AssignmentUnits()[%d] (%s) = %q, want %q", k, name, got[k], want[name].unit)
		}
	}
}
