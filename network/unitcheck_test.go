package network

import (
	"strings"
	"testing"
)

// unitModel is a model in uM and s with species A, B, C and the given
// parameters ("name=value unit") and one reaction.
func unitModel(eq string, rate Rate, params ...string) *Model {
	m := &Model{Units: Units{Time: "s", Amount: "uM"},
		Species: []Species{{Name: "A", Initial: 1}, {Name: "B", Initial: 1}, {Name: "C"}}}
	for _, p := range params {
		name, unit, _ := strings.Cut(p, " ")
		m.Parameters = append(m.Parameters, Parameter{Name: name, Value: 1, Unit: unit})
	}
	m.Reactions = []Reaction{{Name: "r", Equation: eq, Rate: rate}}
	return m
}

func expression(s string) Rate { return Rate{Law: Expression, Expression: s} }

// The dimension check on correct and incorrect models. The expected units
// follow from dimensional analysis (common practice): a rate is
// concentration per time, a rate constant of an order-m step is in
// concentration^(1−m)/time, Michaelis and dissociation constants are
// concentrations, Hill coefficients and interaction factors pure numbers;
// the factors between units are those of the SI (see
// network/units.TestSIFactors).
func TestUnitCheckTable(t *testing.T) {
	type want struct {
		field string
		col   int
		text  string
	}
	for _, c := range []struct {
		name string
		m    *Model
		want []want // nil: no warning about units
	}{
		{"second order, right", unitModel("A + B -> C", NewRate(MassAction, "k", "k"), "k 1/(uM*s)"), nil},
		{"second order, right in other words", unitModel("A + B -> C", NewRate(MassAction, "k", "k"), "k 1000/(mM*s)"), nil},
		{"second order, k in nM", unitModel("A + B -> C", NewRate(MassAction, "k", "k"), "k 1/(nM*s)"),
			[]want{{"rate.k", 0, "Rate constant uses k in 1/(nM*s), but Rate constant is in 1/(uM·s) with this model's units (for a second-order step); 1 1/(nM*s) = 1000 1/(uM·s), so convert the value"}}},
		{"second order, first-order unit", unitModel("2 A -> C", NewRate(MassAction, "k", "k"), "k 1/s"),
			[]want{{"rate.k", 0, "is in 1/(uM·s) with this model's units (for a second-order step); they measure different kinds of quantity"}}},
		{"reversible, reverse in minutes", unitModel("A <=> C", NewRate(MassAction, "k", "kf", "k_reverse", "kr"), "kf 1/s", "kr 1/min"),
			[]want{{"rate.k_reverse", 0, "Reverse constant uses kr in 1/min, but Reverse constant is in 1/s with this model's units (for a first-order step); 1 1/min = 0.0166667 1/s"}}},
		{"zeroth order", unitModel("-> C", NewRate(MassAction, "k", "k"), "k uM/s"), nil},
		{"zeroth order, per time", unitModel("-> C", NewRate(MassAction, "k", "k"), "k 1/s"),
			[]want{{"rate.k", 0, "is in uM/s with this model's units (for a zeroth-order step)"}}},
		{"michaelis–menten, right", unitModel("A -> C", NewRate(MichaelisMenten, "vmax", "V", "km", "K"), "V uM/s", "K uM"), nil},
		{"michaelis–menten, Km in nM", unitModel("A -> C", NewRate(MichaelisMenten, "vmax", "V", "km", "K"), "V uM/s", "K nM"),
			[]want{{"rate.km", 0, "Km uses K in nM, but Km is in uM with this model's units (a concentration); 1 nM = 0.001 uM"}}},
		{"michaelis–menten, kcat", unitModel("A -> C", NewRate(MichaelisMenten, "kcat", "kc", "enzyme", "B", "km", "K"), "kc 1/s", "K uM"), nil},
		{"michaelis–menten, Vmax per time", unitModel("A -> C", NewRate(MichaelisMenten, "vmax", "V", "km", "K"), "V 1/s", "K uM"),
			[]want{{"rate.vmax", 0, "Vmax uses V in 1/s, but Vmax is in uM/s with this model's units (concentration per time)"}}},
		{"hill, n a number", unitModel("A -> C", NewRate(HillActivation, "vmax", "V", "k_half", "K", "n", "n"), "V uM/s", "K uM", "n 1"), nil},
		{"hill, n in uM", unitModel("A -> C", NewRate(HillActivation, "vmax", "V", "k_half", "K", "n", "n"), "V uM/s", "K uM", "n uM"),
			[]want{{"rate.n", 0, "Hill coefficient n uses n in uM, but Hill coefficient n is in 1 with this model's units (a pure number)"}}},
		{"ordered bi, right", unitModel("A + B -> C", NewRate(OrderedBi, "vmax", "V", "kia", "K", "kma", "K", "kmb", "K"), "V uM/s", "K uM"), nil},
		{"mixed inhibition, alpha_ki in mg/L", unitModel("A -> C", NewRate(MixedInhibition, "vmax", "V", "km", "K", "inhibitor", "B", "ki", "K", "alpha_ki", "aK"), "V uM/s", "K uM", "aK mg/L"),
			[]want{{"rate.alpha_ki", 0, "they measure different kinds of quantity"}}},
		{"expression, right", unitModel("A + B -> C", expression("k*A*B"), "k 1/(uM*s)"), nil},
		{"expression, numbers are pure", unitModel("A -> C", expression("2*V*A/(K + A)"), "V uM/s", "K uM"), nil},
		{"expression with t", unitModel("-> C", expression("k*t"), "k uM/s^2"), nil},
		{"expression, first-order constant on two species", unitModel("A + B -> C", expression("k*A*B"), "k 1/s"),
			[]want{{"rate.expression", 0, "the rate comes out in uM^2/s, but a rate is concentration per time, uM/s here; they measure different kinds of quantity"}}},
		{"expression, constant in nM", unitModel("A + B -> C", expression("k*A*B"), "k 1/(nM*s)"),
			[]want{{"rate.expression", 0, "the rate comes out in 1000 × uM/s, but a rate is concentration per time, uM/s here; they differ by a factor of 1000"}}},
		{"expression, sum of different units", unitModel("A -> C", expression("V*A/(K + A)"), "V uM/s", "K nM"),
			[]want{{"rate.expression", 8, `the two sides of "+" differ: 0.001 × uM on the left, uM on the right; they differ by a factor of 0.001`}}},
		{"expression, exp of a concentration", unitModel("A -> C", expression("k*A*exp(-A)"), "k 1/s"),
			[]want{{"rate.expression", 5, "exp needs a pure number, but its argument is in uM"}}},
		{"expression, Hill with a varying power is not checked", unitModel("-> C", expression("V*A^n/(K^n + A^n)"), "V uM/s", "K uM", "n 1"), nil},
		{"unitless parameters, one note", unitModel("A + B -> C", expression("k*A*B + j*A"), "k", "j"),
			[]want{{"unit", 0, "2 parameters used by rate laws have no unit (k, j), so the reactions that use them are not checked for units"}}},
		{"unknown unit", unitModel("A -> C", NewRate(MassAction, "k", "k"), "k 1/(uMol*s)"),
			[]want{{"unit", 4, `unit "1/(uMol*s)" does not read: unknown unit "uMol"; did you mean "umol"?`}}},
		{"stray operator", unitModel("A -> C", NewRate(MassAction, "k", "k"), "k 1/(uM*)"),
			[]want{{"unit", 6, `"*" needs a unit after it`}}},
	} {
		_, probs := Check(c.m)
		if probs.HasErrors() {
			t.Errorf("%s: errors %v", c.name, probs.Errors())
			continue
		}
		var got []Problem
		for _, p := range probs {
			if p.Field == "unit" || strings.HasPrefix(p.Field, "rate") {
				got = append(got, p)
			}
		}
		if len(got) != len(c.want) {
			t.Errorf("%s: %d unit warnings, want %d: %v", c.name, len(got), len(c.want), got)
			continue
		}
		for i, w := range c.want {
			p := got[i]
			if p.Severity != Warning || p.Field != w.field || p.Col != w.col || !strings.Contains(p.Message, w.text) {
				t.Errorf("%s: got %s at %s col %d\n%q\nwant at %s col %d containing\n%q", c.name, p.Severity, p.Field, p.Col, p.Message, w.field, w.col, w.text)
			}
		}
	}
}

// The model's own units: unknown or of the wrong kind are warnings at the
// Run settings' fields; without them nothing is checked.
func TestModelUnits(t *testing.T) {
	bad := unitModel("A + B -> C", NewRate(MassAction, "k", "k"), "k 1/s")
	for _, c := range []struct {
		units Units
		field string
		want  string
	}{
		{Units{Time: "s", Amount: "mg"}, "units.amount", `"mg" is not a concentration (it is mass)`},
		{Units{Time: "uM", Amount: "uM"}, "units.time", `"uM" is not a unit of time (it is concentration)`},
		{Units{Time: "hours", Amount: "uM"}, "units.time", `unit "hours" does not read: unknown unit "hours"`},
	} {
		bad.Units = c.units
		_, probs := Check(bad)
		found := false
		for _, p := range probs {
			found = found || p.Section == "simulation" && p.Field == c.field && strings.Contains(p.Message, c.want)
			if strings.HasPrefix(p.Field, "rate") {
				t.Errorf("%v: reaction checked although the model's units do not read: %v", c.units, p)
			}
		}
		if !found {
			t.Errorf("%v: no warning at %s containing %q: %v", c.units, c.field, c.want, probs)
		}
	}
	bad.Units = Units{}
	if _, probs := Check(bad); len(probs) != 0 {
		t.Errorf("a model without units got %v", probs)
	}
	// A pharmacological model in mg/L and h.
	pk := unitModel("A -> C", NewRate(MichaelisMenten, "vmax", "V", "km", "K"), "V mg/L/h", "K mg/L")
	pk.Units = Units{Time: "h", Amount: "mg/L"}
	_, probs := Check(pk)
	for _, p := range probs {
		if p.Field == "unit" || strings.HasPrefix(p.Field, "rate") || strings.HasPrefix(p.Field, "units") {
			t.Errorf("mg/L and h: %v", p)
		}
	}
}

func TestUnitHint(t *testing.T) {
	for _, c := range []struct {
		m    *Model
		want string
	}{
		{unitModel("A + B -> C", NewRate(MassAction, "k", "k")), "Rate constant in 1/(uM·s) for a second-order step"},
		{unitModel("A <=> C", NewRate(MassAction, "k", "k", "k_reverse", "k")), "Forward constant in 1/s for a first-order step\nReverse constant in 1/s for a first-order step"},
		{unitModel("A -> C", NewRate(MichaelisMenten, "vmax", "k", "km", "k")), "Km in uM\nVmax in uM/s"},
		{unitModel("A -> C", NewRate(HillRepression, "vmax", "k", "k_half", "k", "n", "k", "regulator", "B")), "Vmax in uM/s\nK (half effect) in uM\nHill coefficient n in 1"},
		{unitModel("A -> C", expression("k*A")), ""},
		{func() *Model {
			m := unitModel("A + B -> C", NewRate(MassAction, "k", "k"))
			m.Units = Units{}
			return m
		}(), "Rate constant in 1/(concentration·time) for a second-order step"},
	} {
		net, _ := Check(c.m)
		if got := net.UnitHint(0); got != c.want {
			t.Errorf("%s: UnitHint = %q, want %q", c.m.Reactions[0].Rate.Law, got, c.want)
		}
	}
}
