package network

import (
	"strings"
	"testing"
)

// The definition checked here is SBML's: a modifier is a species that
// affects a reaction's rate without being changed by it (SBML Level 3
// Core, ModifierSpeciesReference; from memory). The effects follow from
// the signs of closed-form derivatives of textbook rate laws: for
// v = kcat·E·S/(Km + S), ∂v/∂E = kcat·S/(Km + S) > 0; for competitive
// inhibition v = Vmax·S/(Km·(1 + I/Ki) + S), ∂v/∂I < 0; for a Hill
// activator v = a·X^n/(K^n + X^n), ∂v/∂X > 0 (common practice).
func TestModifiers(t *testing.T) {
	species := []Species{{Name: "E", Initial: 1}, {Name: "S", Initial: 5}, {Name: "P"}, {Name: "I", Initial: 0.5}, {Name: "X"}}
	params := []Parameter{{Name: "k", Value: 1}, {Name: "km", Value: 2}, {Name: "ki", Value: 0.3}, {Name: "vmax", Value: 3}}
	cases := []struct {
		name  string
		rxn   Reaction
		asg   []Assignment
		want  string // "E:activates I:inhibits", or "" for none
		notes string
	}{
		{"mass action has none", Reaction{Name: "r", Equation: "S -> P", Rate: NewRate(MassAction, "k", "k")}, nil, "", ""},
		{"kcat enzyme", Reaction{Name: "r", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "kcat", "k", "enzyme", "E", "km", "km")}, nil, "E:activates", "the enzyme field is read and not changed"},
		{"vmax form has none", Reaction{Name: "r", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", "vmax", "km", "km")}, nil, "", ""},
		{"catalyst on both sides", Reaction{Name: "r", Equation: "S + E -> P + E", Rate: NewRate(MassAction, "k", "k")}, nil, "E:activates", "zero net change, read by mass action"},
		{"catalyst written but not read", Reaction{Name: "r", Equation: "S + E -> P + E", Rate: Rate{Law: Expression, Expression: "k*S"}}, nil, "E:modulates", "written on both sides, no effect on the rate"},
		{"competitive inhibitor", Reaction{Name: "r", Equation: "S -> P", Rate: Rate{Law: Expression, Expression: "vmax*S/(km*(1 + I/ki) + S)"}}, nil, "I:inhibits", ""},
		// X starts at 0, where the Hill derivative n·X^(n−1)… is 0; the
		// other two states decide.
		{"Hill activator", Reaction{Name: "r", Equation: "-> P", Rate: Rate{Law: Expression, Expression: "vmax*X^2/(km^2 + X^2)"}}, nil, "X:activates", ""},
		{"repressor", Reaction{Name: "r", Equation: "-> P", Rate: Rate{Law: Expression, Expression: "vmax/(1 + (I/ki)^2)"}}, nil, "I:inhibits", ""},
		{"through an assignment", Reaction{Name: "r", Equation: "S -> P", Rate: Rate{Law: Expression, Expression: "k*Etot*S"}},
			[]Assignment{{Name: "Etot", Expression: "E + X"}}, "E:activates X:activates", "assignments are written out"},
		{"reactant is not a modifier", Reaction{Name: "r", Equation: "S + E -> P", Rate: NewRate(MassAction, "k", "k")}, nil, "", "E is consumed"},
		{"autocatalysis is not a modifier", Reaction{Name: "r", Equation: "S + P -> 2 P", Rate: NewRate(MassAction, "k", "k")}, nil, "", "P's net change is +1"},
		{"reactant read elsewhere too", Reaction{Name: "r", Equation: "S -> P", Rate: Rate{Law: Expression, Expression: "k*S*E/(1 + S)"}}, nil, "E:activates", ""},
	}
	for _, c := range cases {
		m := &Model{Species: species, Parameters: params, Assignments: c.asg, Reactions: []Reaction{c.rxn}}
		net, probs := Check(m)
		if probs.HasErrors() {
			t.Errorf("%s: %v", c.name, probs.Err())
			continue
		}
		var got []string
		for _, mod := range net.Modifiers(0) {
			got = append(got, mod.Species+":"+mod.Effect.String())
		}
		if s := strings.Join(got, " "); s != c.want {
			t.Errorf("%s: modifiers %q, want %q (%s)", c.name, s, c.want, c.notes)
		}
	}
}

// A derivative whose sign differs between the sampled states gives
// Modulates: ∂/∂X of k·S·(X − 0.5)·(X − 3) is k·S·(2X − 3.5), +6.5·k·S at
// the initial X = 5 and −1.5·k·S at X = 1.
func TestModifierSignDiffers(t *testing.T) {
	m := &Model{
		Species:    []Species{{Name: "S", Initial: 1}, {Name: "P"}, {Name: "X", Initial: 5}},
		Parameters: []Parameter{{Name: "k", Value: 1}},
		Reactions:  []Reaction{{Name: "r", Equation: "S -> P", Rate: Rate{Law: Expression, Expression: "k*S*(X - 0.5)*(X - 3)"}}},
	}
	net, probs := Check(m)
	if probs.HasErrors() {
		t.Fatal(probs.Err())
	}
	mods := net.Modifiers(0)
	if len(mods) != 1 || mods[0].Effect != Modulates {
		t.Errorf("modifiers %v, want X modulates (2X − 3.5 is +6.5 at X = 5 and −1.5 at X = 1)", mods)
	}
}

func TestModifiersOfBadReaction(t *testing.T) {
	m := &Model{Species: []Species{{Name: "S"}}, Reactions: []Reaction{{Name: "r", Equation: "S => ", Rate: NewRate(MassAction, "k", 1)}}}
	net, _ := Check(m)
	if mods := net.Modifiers(0); mods != nil {
		t.Errorf("a reaction whose equation does not read has modifiers %v", mods)
	}
	if mods := net.Modifiers(5); mods != nil {
		t.Errorf("reaction 5 of 1 has modifiers %v", mods)
	}
}
