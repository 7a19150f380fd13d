package network

import (
	"math"
	"strings"
	"testing"
)

// withAssignments is unitModel("A -> C", k·A with k in 1/s) with the
// given assignments ("name = expression [unit]").
func withExtras(asgs []Assignment, events []Event, comps []Compartment, params ...string) *Model {
	m := unitModel("A -> C", NewRate(MassAction, "k", "k"), append([]string{"k 1/s"}, params...)...)
	m.Assignments = asgs
	m.Events = events
	if comps != nil {
		m.Compartments = comps
		for i := range m.Species {
			m.Species[i].Compartment = comps[0].Name
		}
	}
	return m
}

// Units of assignments and events on a table of correct and incorrect
// models, each incorrect one with its located warning. Expected units
// follow from dimensional analysis (common practice): an amount is a
// concentration times a volume, an infusion an amount per time, a
// trigger compares like with like; numbers standing alone take the unit
// of what they are compared with or assigned to.
func TestUnitCheckAssignmentsAndEvents(t *testing.T) {
	type want struct {
		section, field string
		col            int
		text           string
	}
	at := func(x float64) Value { return Number(x) }
	cell := []Compartment{{Name: "cell", Volume: 2, Unit: "mL"}}
	for _, c := range []struct {
		name string
		m    *Model
		want []want // nil: no warning about units
	}{
		{"assignment, declared and right", withExtras([]Assignment{{Name: "tot", Expression: "A + B", Unit: "uM"}}, nil, nil), nil},
		{"assignment, right in other words", withExtras([]Assignment{{Name: "tot", Expression: "A + B", Unit: "umol/L"}}, nil, nil), nil},
		{"assignment, declared in nM", withExtras([]Assignment{{Name: "tot", Expression: "A + B", Unit: "nM"}}, nil, nil),
			[]want{{"assignments", "unit", 0, "assignment tot comes out in uM, but its unit is nM; they differ by a factor of 1000"}}},
		{"assignment, flux declared as a concentration", withExtras([]Assignment{{Name: "flux", Expression: "k*A", Unit: "uM"}}, nil, nil),
			[]want{{"assignments", "unit", 0, "assignment flux comes out in uM/s, but its unit is uM; they measure different kinds of quantity"}}},
		{"assignment, constant with a unit", withExtras([]Assignment{{Name: "c0", Expression: "5", Unit: "uM"}}, nil, nil), nil},
		{"assignment, sum of unlike terms", withExtras([]Assignment{{Name: "bad", Expression: "A + k"}}, nil, nil),
			[]want{{"assignments", "expression", 3, `the two sides of "+" differ`}}},
		{"assignment without a unit, propagated into a rate",
			func() *Model {
				m := withExtras([]Assignment{{Name: "kk", Expression: "2*k"}}, nil, nil)
				m.Reactions = append(m.Reactions, Reaction{Name: "r2", Equation: "B -> C", Rate: expression("kk*B*A")})
				return m
			}(),
			[]want{{"reactions", "rate.expression", 0, "the rate comes out in uM^2/s"}}},
		{"trigger, like with like", withExtras(nil, []Event{{Name: "e", When: "A > K", Set: []Change{{Target: "B", Value: "0"}}}}, nil, "K uM"), nil},
		{"trigger, against a number", withExtras(nil, []Event{{Name: "e", When: "A > 5", Set: []Change{{Target: "B", Value: "0"}}}}, nil), nil},
		{"trigger, time against a concentration", withExtras(nil, []Event{{Name: "e", When: "t >= K", Set: []Change{{Target: "B", Value: "0"}}}}, nil, "K uM"),
			[]want{{"events", "when", 3, `the two sides of ">=" compare s with uM; they measure different kinds of quantity`}}},
		{"trigger, nM against uM", withExtras(nil, []Event{{Name: "e", When: "A < K", Set: []Change{{Target: "B", Value: "0"}}}}, nil, "K nM"),
			[]want{{"events", "when", 3, `the two sides of "<" compare uM with 0.001 × uM; they differ by a factor of 1000`}}},
		{"set species to a concentration", withExtras(nil, []Event{{Name: "e", At: at(1), Set: []Change{{Target: "B", Value: "2*K"}}}}, nil, "K uM"), nil},
		{"set species to a rate", withExtras(nil, []Event{{Name: "e", At: at(1), Set: []Change{{Target: "B", Value: "k*A"}}}}, nil),
			[]want{{"events", "set.B", 0, "the value of set.B comes out in uM/s, but the concentration of B is in uM here"}}},
		{"set parameter in its unit", withExtras(nil, []Event{{Name: "e", At: at(1), Set: []Change{{Target: "k", Value: "k2"}}}}, nil, "k2 1/min"),
			[]want{{"events", "set.k", 0, "but parameter k is in 1/s here; they differ by a factor of 0.0166667"}}},
		{"add, no compartments: a concentration step", withExtras(nil, []Event{{Name: "e", At: at(1), Add: []Change{{Target: "A", Value: "K"}}}}, nil, "K uM"), nil},
		{"add an amount into mL", withExtras(nil, []Event{{Name: "e", At: at(1), Add: []Change{{Target: "A", Value: "dose"}}}}, cell, "dose nmol"), nil},
		{"add a concentration into mL", withExtras(nil, []Event{{Name: "e", At: at(1), Add: []Change{{Target: "A", Value: "dose"}}}}, cell, "dose uM"),
			[]want{{"events", "add.A", 0, "but an amount of A is in uM·mL here; they measure different kinds of quantity"}}},
		{"add umol into mL", withExtras(nil, []Event{{Name: "e", At: at(1), Add: []Change{{Target: "A", Value: "dose"}}}}, cell, "dose umol"),
			[]want{{"events", "add.A", 0, "they differ by a factor of 1000"}}},
		{"add an amount, volumes without a unit", withExtras(nil, []Event{{Name: "e", At: at(1), Add: []Change{{Target: "A", Value: "dose"}}}},
			[]Compartment{{Name: "cell", Volume: 2}}, "dose umol"), nil},
		{"dosing interval in hours, model in seconds", withExtras(nil, []Event{{Name: "e", At: at(0), Every: Named("tau"), Count: 3, Add: []Change{{Target: "A", Value: "1"}}}}, nil, "tau h"),
			[]want{{"events", "every", 0, "every is the parameter tau in h, but times are in s here; they differ by a factor of 3600"}}},
		{"dosing interval in seconds", withExtras(nil, []Event{{Name: "e", At: at(0), Every: Named("tau"), Count: 3, Add: []Change{{Target: "A", Value: "1"}}}}, nil, "tau s"), nil},
		{"infuse an amount per time", withExtras(nil, []Event{{Name: "e", From: at(0), To: at(5), Infuse: []Change{{Target: "A", Value: "r"}}}}, cell, "r nmol/s"), nil},
		{"infuse an amount", withExtras(nil, []Event{{Name: "e", From: at(0), To: at(5), Infuse: []Change{{Target: "A", Value: "r"}}}}, cell, "r nmol"),
			[]want{{"events", "infuse.A", 0, "but an infusion rate of A is in uM·mL/s here"}}},
	} {
		_, probs := Check(c.m)
		if probs.HasErrors() {
			t.Errorf("%s: errors %v", c.name, probs.Errors())
			continue
		}
		var got []Problem
		for _, p := range probs {
			if p.Field == "unit" && p.Section == "parameters" || p.Message == "this parameter is used by no rate law or assignment" {
				continue
			}
			if p.Section == "assignments" || p.Section == "events" || strings.HasPrefix(p.Field, "rate") {
				got = append(got, p)
			}
		}
		if len(got) != len(c.want) {
			t.Errorf("%s: %d unit warnings, want %d: %v", c.name, len(got), len(c.want), got)
			continue
		}
		for i, w := range c.want {
			p := got[i]
			if p.Severity != Warning || p.Section != w.section || p.Field != w.field || p.Col != w.col || !strings.Contains(p.Message, w.text) {
				t.Errorf("%s: got %s at %s.%s col %d\n%q\nwant at %s.%s col %d containing\n%q", c.name, p.Severity, p.Section, p.Field, p.Col, p.Message, w.section, w.field, w.col, w.text)
			}
		}
	}
}

// A compartment's unit must be a volume: located errors otherwise, and a
// warning for a compartment without one beside one that has it.
func TestCompartmentUnits(t *testing.T) {
	for _, c := range []struct {
		comps    []Compartment
		sev      Severity
		index    int
		col      int
		contains string
	}{
		{[]Compartment{{Name: "a", Volume: 1, Unit: "uM"}}, Error, 0, 0, `"uM" is not a unit of volume (it is concentration); expected L, mL, uL, nL or fL`},
		{[]Compartment{{Name: "a", Volume: 1, Unit: "mLL"}}, Error, 0, 1, `the volume's unit "mLL" does not read`},
		{[]Compartment{{Name: "a", Volume: 1, Unit: "mL*"}}, Error, 0, 3, `does not read`},
		{[]Compartment{{Name: "a", Volume: 1, Unit: "mL"}, {Name: "b", Volume: 1}}, Warning, 1, 0, "the volume gives no unit, so it is read in mL, the unit of compartment a"},
	} {
		m := &Model{Compartments: c.comps, Species: []Species{{Name: "A", Initial: 1, Compartment: "a"}},
			Reactions: []Reaction{{Name: "r", Equation: "A ->", Rate: NewRate(MassAction, "k", Number(1))}}}
		_, probs := Check(m)
		found := false
		for _, p := range probs {
			if p.Section == "compartments" && p.Field == "unit" && p.Index == c.index && p.Severity == c.sev && p.Col == c.col && strings.Contains(p.Message, c.contains) {
				found = true
			}
		}
		if !found {
			t.Errorf("%v: no %s at compartments[%d].unit col %d containing %q: %v", c.comps, c.sev, c.index, c.col, c.contains, probs)
		}
	}
}

// The compartment rule with volumes in different units: plasma of 5 L
// and tissue of 30 000 mL give the equations of plasma 5 L and tissue
// 30 L, d[D_t]/dt = +k·[D_p]·5/30 (README, Compartments; 1 L = 1000 mL,
// SI). Saturable transport conserves the amount across them, and volume
// knobs stay in each compartment's own unit.
func TestCompartmentRuleAcrossUnits(t *testing.T) {
	model := func(tissueVol float64, unit string, law Rate) *Model {
		return &Model{
			Compartments: []Compartment{{Name: "plasma", Volume: 5, Unit: "L"}, {Name: "tissue", Volume: tissueVol, Unit: unit}},
			Species:      []Species{{Name: "D_p", Initial: 2, Compartment: "plasma"}, {Name: "D_t", Initial: 0.1, Compartment: "tissue"}},
			Reactions:    []Reaction{{Name: "move", Equation: "D_p -> D_t", Rate: law}},
		}
	}
	for _, law := range []Rate{NewRate(MassAction, "k", Number(0.3)), NewRate(Transport, "vmax", Number(0.8), "km", Number(1.5))} {
		inL := mustCompile(t, model(30, "L", law))
		inML := mustCompile(t, model(30000, "mL", law))
		y := []float64{2, 0.1}
		f1, f2 := make([]float64, 2), make([]float64, 2)
		inL.RHS(0, y, f1)
		inML.RHS(0, y, f2)
		rate := f1[0] * -1
		if want := rate * 5 / 30; math.Abs(f1[1]-want) > 1e-15 {
			t.Errorf("%s: tissue gains %g, want %g", law.Law, f1[1], want)
		}
		for i := range f1 {
			if math.Abs(f1[i]-f2[i]) > 1e-15*math.Abs(f1[i]) {
				t.Errorf("%s: f[%d] = %g with mL, %g with L", law.Law, i, f2[i], f1[i])
			}
		}
		// Amounts (concentration × volume in the model's unit, L) are conserved.
		if d := 5*f2[0] + inML.AmountVolume(1)*f2[1]; math.Abs(d) > 1e-14 {
			t.Errorf("%s: amount changes at %g", law.Law, d)
		}
		if inML.Volume(1) != 30000 || inML.AmountVolume(1) != 30 || inML.VolumeScale(1) != 0.001 {
			t.Errorf("tissue volume %g mL, %g L, scale %g", inML.Volume(1), inML.AmountVolume(1), inML.VolumeScale(1))
		}
		inML.SetVolume(1, 60000) // 60 L: tissue now gains rate·5/60
		inML.RHS(0, y, f2)
		if want := rate * 5 / 60; math.Abs(f2[1]-want) > 1e-15 {
			t.Errorf("%s: after SetVolume(60000 mL) tissue gains %g, want %g", law.Law, f2[1], want)
		}
		checkParamJacobianFD(t, law.Law+" in mL", inML, y)
	}
}

// Molecules per amount with volumes in fL: 1 uM in 1 fL is
// 6.02214076e23 × 1e-6 × 1e-15 ≈ 602 molecules (Avogadro's number, SI
// 2019, exact; common practice).
func TestMoleculesPerAmountVolumeUnit(t *testing.T) {
	m := &Model{Units: Units{Time: "s", Amount: "uM"}, Compartments: []Compartment{{Name: "cell", Volume: 1, Unit: "fL"}}}
	n, how, err := MoleculesPerAmount(m)
	if err != nil || math.Abs(n-602.214076) > 1e-9 || !strings.Contains(how, "fL") {
		t.Errorf("got %v, %q, %v; want 602.214076 per uM·fL", n, how, err)
	}
	m.Compartments[0].Unit = ""
	if n, _, _ := MoleculesPerAmount(m); math.Abs(n-6.02214076e17) > 1e3 {
		t.Errorf("without a volume unit: %v, want 6.02214076e17 per uM·L", n)
	}
}

// The model's unit of volume is that of the first compartment giving one,
// and each compartment's factor to it follows the SI prefixes (1 L =
// 1000 mL = 10⁶ uL = 10¹⁵ fL; common practice); a compartment without a
// unit is read in the model's (factor 1).
func TestVolumeUnitFactors(t *testing.T) {
	m := &Model{Compartments: []Compartment{{Name: "a", Volume: 1}, {Name: "b", Volume: 1, Unit: "mL"},
		{Name: "c", Volume: 1, Unit: "L"}, {Name: "d", Volume: 1, Unit: "uL"}, {Name: "e", Volume: 1, Unit: "fL"}, {Name: "f", Volume: 1, Unit: "bad"}}}
	unit, scale := m.VolumeUnit()
	if unit != "mL" {
		t.Errorf("unit %q, want mL", unit)
	}
	for i, want := range []float64{1, 1, 1000, 1e-3, 1e-12, 1} {
		if scale[i] != want {
			t.Errorf("compartment %s: factor %v, want %v", m.Compartments[i].Name, scale[i], want)
		}
	}
	if unit, scale := (&Model{Compartments: []Compartment{{Name: "a", Volume: 2}}}).VolumeUnit(); unit != "" || scale[0] != 1 {
		t.Errorf("no units: %q %v", unit, scale)
	}
}
