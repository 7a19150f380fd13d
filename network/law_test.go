package network

import (
	"math"
	"strings"
	"testing"
)

// lawCase is one reaction with one law over the species S, P, I, A, B, R
// (in one compartment) at given concentrations and parameter values.
type lawCase struct {
	eq     string
	rate   Rate
	params map[string]float64
	conc   map[string]float64
}

var lawSpecies = []string{"S", "P", "I", "A", "B", "R"}

// lawSystem compiles c into a System and returns it with the state.
func lawSystem(t *testing.T, c lawCase) (*System, []float64) {
	t.Helper()
	m := &Model{Reactions: []Reaction{{Name: "r", Equation: c.eq, Rate: c.rate}}}
	for _, s := range lawSpecies {
		m.Species = append(m.Species, Species{Name: s, Initial: c.conc[s]})
	}
	for name, v := range c.params {
		m.Parameters = append(m.Parameters, Parameter{Name: name, Value: v})
	}
	s := mustCompile(t, m)
	return s, s.Initial()
}

// lawRate returns the reaction's rate, and checks its derivatives by
// species and by parameters against central differences at that state
// (checkJacobianFD, checkParamJacobianFD: common practice).
func lawRate(t *testing.T, c lawCase) float64 {
	t.Helper()
	s, y := lawSystem(t, c)
	r := make([]float64, 1)
	s.Rates(0, y, r)
	label := c.rate.Law + " " + c.eq
	checkJacobianFD(t, label, s, y)
	checkParamJacobianFD(t, label, s, y)
	return r[0]
}

func near(a, b, rel float64) bool { return math.Abs(a-b) <= rel*math.Max(math.Abs(a), math.Abs(b)) }

func wantNear(t *testing.T, what string, got, want, rel float64) {
	t.Helper()
	if !near(got, want, rel) {
		t.Errorf("%s = %.17g, want %.17g (rel. difference %.2g)", what, got, want, math.Abs(got-want)/math.Abs(want))
	}
}

// Points where each law is checked: concentrations of S, P, I, A, B and R
// spanning below, near and above the constants.
var lawPoints = []map[string]float64{
	{"S": 0.3, "P": 0.1, "I": 0.2, "A": 0.4, "B": 0.7, "R": 0.5},
	{"S": 2, "P": 1.5, "I": 1, "A": 3, "B": 0.2, "R": 2},
	{"S": 40, "P": 7, "I": 9, "A": 25, "B": 60, "R": 30},
}

func TestReversibleMichaelisMenten(t *testing.T) {
	par := map[string]float64{"Vf": 5, "Vr": 2, "Kms": 1.5, "Kmp": 4}
	vr := NewRate(MichaelisMentenReversible, "vf", "Vf", "vr", "Vr", "kms", "Kms", "kmp", "Kmp")
	for _, y := range lawPoints {
		// Segel, Enzyme Kinetics, 1975, ch. 2 (reversible uni uni,
		// from memory): v = (Vf·S/Kms − Vr·P/Kmp)/(1 + S/Kms + P/Kmp).
		S, P := y["S"], y["P"]
		want := (5*S/1.5 - 2*P/4) / (1 + S/1.5 + P/4)
		wantNear(t, "reversible MM", lawRate(t, lawCase{"S <=> P", vr, par, y}), want, 1e-14)
	}
	// Haldane relationship (Haldane, Enzymes, 1930; Segel 1975, from
	// memory): at equilibrium P/S = Keq = Vf·Kmp/(Vr·Kms).
	keq := 5.0 * 4 / (2 * 1.5)
	for _, S := range []float64{0.01, 1, 30} {
		v := lawRate(t, lawCase{"S <=> P", vr, par, map[string]float64{"S": S, "P": keq * S}})
		if scale := 5 * S / 1.5; math.Abs(v) > 1e-14*scale {
			t.Errorf("rate at P/S = Keq (S = %g) is %g, want 0", S, v)
		}
	}
	// The Keq form with Keq from Haldane is the same law.
	par2 := map[string]float64{"Vf": 5, "Keq": keq, "Kms": 1.5, "Kmp": 4}
	vk := NewRate(MichaelisMentenReversible, "vf", "Vf", "keq", "Keq", "kms", "Kms", "kmp", "Kmp")
	for _, y := range lawPoints {
		wantNear(t, "Keq form", lawRate(t, lawCase{"S <=> P", vk, par2, y}), lawRate(t, lawCase{"S <=> P", vr, par, y}), 1e-13)
	}
	// Without product it is Michaelis–Menten with Km = Kms.
	wantNear(t, "reversible MM at P = 0", lawRate(t, lawCase{"S <=> P", vr, par, map[string]float64{"S": 2}}), 5*2/(1.5+2), 1e-14)
}

func TestInhibitedMichaelisMenten(t *testing.T) {
	const V, Km, Ki, aKi = 3.0, 2.0, 0.5, 1.25
	par := map[string]float64{"V": V, "Km": Km, "Ki": Ki, "aKi": aKi}
	law := func(name string) Rate {
		r := NewRate(name, "vmax", "V", "km", "Km", "inhibitor", "I", "ki", "Ki")
		if name == MixedInhibition {
			r = r.With("alpha_ki", Named("aKi"))
		}
		return r
	}
	laws := []string{CompetitiveInhibition, UncompetitiveInhibition, NoncompetitiveInhibition, MixedInhibition}
	// Segel, Enzyme Kinetics, 1975, ch. 3 (from memory).
	textbook := map[string]func(S, I float64) float64{
		CompetitiveInhibition:    func(S, I float64) float64 { return V * S / (Km*(1+I/Ki) + S) },
		UncompetitiveInhibition:  func(S, I float64) float64 { return V * S / (Km + S*(1+I/Ki)) },
		NoncompetitiveInhibition: func(S, I float64) float64 { return V * S / ((Km + S) * (1 + I/Ki)) },
		MixedInhibition:          func(S, I float64) float64 { return V * S / (Km*(1+I/Ki) + S*(1+I/aKi)) },
	}
	for _, name := range laws {
		for _, y := range lawPoints {
			wantNear(t, name, lawRate(t, lawCase{"S -> P", law(name), par, y}), textbook[name](y["S"], y["I"]), 1e-14)
		}
		// At zero inhibitor each is Michaelis–Menten; compared with the
		// michaelis_menten law (its own fast path in System).
		for _, S := range []float64{0.1, 2, 50} {
			y := map[string]float64{"S": S}
			mm := lawRate(t, lawCase{"S -> P", NewRate(MichaelisMenten, "vmax", "V", "km", "Km"), par, y})
			wantNear(t, name+" at I = 0", lawRate(t, lawCase{"S -> P", law(name), par, y}), mm, 1e-15)
		}
	}
	// The classical effects on the apparent constants (Segel 1975, ch. 3;
	// common practice of enzymology), at I = 1:
	const I = 1.0
	f := 1 + I/Ki
	rate := func(name string, S float64) float64 {
		return lawRate(t, lawCase{"S -> P", law(name), par, map[string]float64{"S": S, "I": I}})
	}
	// competitive: Km_app = Km·(1 + I/Ki), Vmax unchanged → V/2 there;
	wantNear(t, "competitive at S = Km_app", rate(CompetitiveInhibition, Km*f), V/2, 1e-14)
	// uncompetitive: Km_app = Km/(1 + I/Ki), V_app = V/(1 + I/Ki);
	wantNear(t, "uncompetitive at S = Km_app", rate(UncompetitiveInhibition, Km/f), V/f/2, 1e-14)
	// noncompetitive: Km unchanged, V_app = V/(1 + I/Ki).
	wantNear(t, "noncompetitive at S = Km", rate(NoncompetitiveInhibition, Km), V/f/2, 1e-14)

	// Mixed reduces to competitive as αKi → ∞, to uncompetitive as Ki →
	// ∞ (with αKi finite), and to noncompetitive at αKi = Ki.
	for _, y := range lawPoints {
		big := map[string]float64{"V": V, "Km": Km, "Ki": Ki, "aKi": 1e15}
		wantNear(t, "mixed, αKi → ∞", lawRate(t, lawCase{"S -> P", law(MixedInhibition), big, y}),
			lawRate(t, lawCase{"S -> P", law(CompetitiveInhibition), par, y}), 1e-13)
		big = map[string]float64{"V": V, "Km": Km, "Ki": 1e15, "aKi": Ki}
		wantNear(t, "mixed, Ki → ∞", lawRate(t, lawCase{"S -> P", law(MixedInhibition), big, y}),
			lawRate(t, lawCase{"S -> P", law(UncompetitiveInhibition), par, y}), 1e-13)
		eq := map[string]float64{"V": V, "Km": Km, "Ki": Ki, "aKi": Ki}
		wantNear(t, "mixed, αKi = Ki", lawRate(t, lawCase{"S -> P", law(MixedInhibition), eq, y}),
			lawRate(t, lawCase{"S -> P", law(NoncompetitiveInhibition), par, y}), 1e-14)
	}
	// The inhibitor is read, not consumed.
	s, y := lawSystem(t, lawCase{"S -> P", law(MixedInhibition), par, lawPoints[1]})
	f2 := make([]float64, s.Dim())
	s.RHS(0, y, f2)
	if f2[2] != 0 || f2[0] >= 0 || f2[1] != -f2[0] {
		t.Errorf("RHS %v: want S consumed, P made, I (index 2) unchanged", f2)
	}
}

func TestHill(t *testing.T) {
	const V, K = 4.0, 1.5
	for _, n := range []float64{1, 2, 3.7} {
		par := map[string]float64{"V": V, "K": K, "n": n}
		act := NewRate(HillActivation, "vmax", "V", "k_half", "K", "n", "n", "regulator", "R")
		rep := NewRate(HillRepression, "vmax", "V", "k_half", "K", "n", "n", "regulator", "R")
		for _, y := range lawPoints {
			// Hill 1910; Alon 2007, ch. 2 (from memory):
			// Vmax·Xⁿ/(Kⁿ + Xⁿ) and Vmax·Kⁿ/(Kⁿ + Xⁿ).
			X := y["R"]
			wantNear(t, "hill activation", lawRate(t, lawCase{"S -> P", act, par, y}), V*math.Pow(X, n)/(math.Pow(K, n)+math.Pow(X, n)), 1e-14)
			wantNear(t, "hill repression", lawRate(t, lawCase{"-> P", rep, par, y}), V*math.Pow(K, n)/(math.Pow(K, n)+math.Pow(X, n)), 1e-14)
		}
		// K is the regulator's level of half effect, whatever n.
		at := map[string]float64{"R": K}
		wantNear(t, "activation at X = K", lawRate(t, lawCase{"S -> P", act, par, at}), V/2, 1e-15)
		wantNear(t, "repression at X = K", lawRate(t, lawCase{"-> P", rep, par, at}), V/2, 1e-15)
		// The Hill plot, log(v/(V − v)) against log X, has slope n
		// (Hill 1910; common practice).
		v1 := lawRate(t, lawCase{"S -> P", act, par, map[string]float64{"R": 0.5}})
		v2 := lawRate(t, lawCase{"S -> P", act, par, map[string]float64{"R": 5}})
		slope := (math.Log(v2/(V-v2)) - math.Log(v1/(V-v1))) / (math.Log(5) - math.Log(0.5))
		wantNear(t, "Hill plot slope", slope, n, 1e-12)
	}
	// With n = 1 and no regulator, activation is Michaelis–Menten on the
	// substrate with Km = K (the michaelis_menten law's fast path).
	par := map[string]float64{"V": V, "K": K, "n": 1}
	for _, y := range lawPoints {
		mm := lawRate(t, lawCase{"S -> P", NewRate(MichaelisMenten, "vmax", "V", "km", "K"), par, y})
		wantNear(t, "hill n = 1", lawRate(t, lawCase{"S -> P", NewRate(HillActivation, "vmax", "V", "k_half", "K", "n", "n"), par, y}), mm, 1e-15)
	}
}

func TestTwoSubstrateLaws(t *testing.T) {
	const V, Ka, Kb, al = 6.0, 0.8, 2.5, 3.0
	par := map[string]float64{"V": V, "Ka": Ka, "Kb": Kb, "al": al, "Kia": 0.6, "Kma": 1.2, "Kmb": 0.4}
	random := NewRate(RandomBi, "vmax", "V", "ka", "Ka", "kb", "Kb", "alpha", "al")
	ordered := NewRate(OrderedBi, "vmax", "V", "kia", "Kia", "kma", "Kma", "kmb", "Kmb")
	for _, y := range lawPoints {
		A, B := y["A"], y["B"]
		// Segel 1975, ch. 6 (from memory): Vmax·A·B/(αKaKb + αKbA + αKaB + AB).
		wantNear(t, "random_bi", lawRate(t, lawCase{"A + B -> P", random, par, y}), V*A*B/(al*Ka*Kb+al*Kb*A+al*Ka*B+A*B), 1e-14)
		// Cornish-Bowden, Fundamentals of Enzyme Kinetics (from memory):
		// V·A·B/(Kia·Kmb + Kmb·A + Kma·B + A·B).
		wantNear(t, "ordered_bi", lawRate(t, lawCase{"A + B -> P + R", ordered, par, y}), V*A*B/(0.6*0.4+0.4*A+1.2*B+A*B), 1e-14)
		// With α = 1 the two bind independently: the product of two
		// Michaelis–Menten factors (Segel 1975, from memory).
		ind := map[string]float64{"V": V, "Ka": Ka, "Kb": Kb, "al": 1}
		wantNear(t, "random_bi, α = 1", lawRate(t, lawCase{"A + B -> P", random, ind, y}), V*A/(Ka+A)*B/(Kb+B), 1e-14)
		// The rapid-equilibrium random law is the general two-substrate
		// form with Kia = Ka, Kma = α·Ka, Kmb = α·Kb (Cornish-Bowden, from
		// memory): the two laws agree then.
		same := map[string]float64{"V": V, "Kia": Ka, "Kma": al * Ka, "Kmb": al * Kb}
		wantNear(t, "ordered_bi as random_bi", lawRate(t, lawCase{"A + B -> P", ordered, same, y}), lawRate(t, lawCase{"A + B -> P", random, par, y}), 1e-14)
	}
	// Saturating the second substrate leaves Michaelis–Menten in the first
	// with Km = Kma (ordered) or α·Ka (random), and the other way round.
	const sat = 1e12
	wantNear(t, "ordered, B saturating, A = Kma", lawRate(t, lawCase{"A + B -> P", ordered, par, map[string]float64{"A": 1.2, "B": sat}}), V/2, 1e-9)
	wantNear(t, "ordered, A saturating, B = Kmb", lawRate(t, lawCase{"A + B -> P", ordered, par, map[string]float64{"A": sat, "B": 0.4}}), V/2, 1e-9)
	wantNear(t, "random, B saturating, A = αKa", lawRate(t, lawCase{"A + B -> P", random, par, map[string]float64{"A": al * Ka, "B": sat}}), V/2, 1e-9)
}

func TestSaturableTransport(t *testing.T) {
	// Vmax·S/(Km + S) on the source concentration; the amount leaving the
	// source (V_src·rate) arrives in the destination (common practice of
	// compartmental modelling).
	m := &Model{
		Compartments: []Compartment{{Name: "out", Volume: 5}, {Name: "cell", Volume: 0.4}},
		Species:      []Species{{Name: "G_out", Initial: 3, Compartment: "out"}, {Name: "G_in", Initial: 1, Compartment: "cell"}},
		Parameters:   []Parameter{{Name: "V", Value: 2}, {Name: "Km", Value: 1.5}},
		Reactions:    []Reaction{{Name: "carrier", Equation: "G_out -> G_in", Rate: NewRate(Transport, "vmax", "V", "km", "Km")}},
	}
	s := mustCompile(t, m)
	y := s.Initial()
	f := make([]float64, 2)
	s.RHS(0, y, f)
	want := 2 * 3 / (1.5 + 3.0)
	wantNear(t, "d[G_out]/dt", f[0], -want, 1e-15)
	wantNear(t, "d[G_in]/dt", f[1], want*5/0.4, 1e-15)
	if bal := 5*f[0] + 0.4*f[1]; math.Abs(bal) > 1e-14 {
		t.Errorf("amount balance V_out·f_out + V_in·f_in = %g, want 0", bal)
	}
	checkJacobianFD(t, "transport", s, y)
	checkParamJacobianFD(t, "transport", s, y)
}

// Bad uses of the laws give located messages that point to the law that
// fits.
func TestLawMessages(t *testing.T) {
	base := func() *Model {
		return &Model{
			Compartments: []Compartment{{Name: "c", Volume: 1}, {Name: "d", Volume: 2}},
			Species:      []Species{{Name: "S", Compartment: "c"}, {Name: "P", Compartment: "c"}, {Name: "I", Compartment: "c"}, {Name: "Q", Compartment: "d"}},
			Parameters:   []Parameter{{Name: "k", Value: 1}},
		}
	}
	for _, c := range []struct {
		eq    string
		rate  Rate
		field string
		want  string
	}{
		{"S <=> P", NewRate(MichaelisMenten, "vmax", "k", "km", "k"), "equation", "or michaelis_menten_reversible for a reversible step"},
		{"S + I -> P", NewRate(MichaelisMenten, "vmax", "k", "km", "k"), "equation", "use random_bi or ordered_bi for two substrates"},
		{"S -> P", NewRate(MichaelisMentenReversible, "vf", "k", "vr", "k", "kms", "k", "kmp", "k"), "equation", `needs a reversible equation such as "S <=> P"`},
		{"S <=> P", NewRate(MichaelisMentenReversible, "vf", "k", "kms", "k", "kmp", "k"), "rate.vr", "either vr, the reverse limiting rate, or keq"},
		{"S <=> P", NewRate(MichaelisMentenReversible, "vf", "k", "vr", "k", "keq", "k", "kms", "k", "kmp", "k"), "rate", "either vr or keq, not both"},
		{"S -> P", NewRate(MixedInhibition, "vmax", "k", "km", "k", "inhibitor", "I", "ki", "k"), "rate.alpha_ki", "mixed_inhibition needs alpha_ki"},
		{"S -> P", NewRate(CompetitiveInhibition, "vmax", "k", "km", "k", "ki", "k"), "rate.inhibitor", "competitive_inhibition needs inhibitor"},
		{"S -> P", NewRate(CompetitiveInhibition, "vmax", "k", "km", "k", "ki", "k", "inhibitor", "k"), "rate.inhibitor", `Inhibitor "k" is not a species; expected the name of a species`},
		{"S -> P", NewRate(CompetitiveInhibition, "vmax", "k", "km", "k", "ki", "k", "inhibitor", "I", "alpha_ki", "k"), "rate.alpha_ki", "αKi (complex) is not used by the Michaelis–Menten, competitive inhibitor law"},
		{"-> P", NewRate(HillRepression, "vmax", "k", "k_half", "k", "n", "k"), "rate.regulator", "hill_repression needs regulator"},
		{"S + I -> P", NewRate(HillActivation, "vmax", "k", "k_half", "k", "n", "k"), "equation", "name the regulator species otherwise"},
		{"S -> P", NewRate(HillActivation, "vmax", "k", "k_half", "k", "n", 0.0), "rate.n", "Hill coefficient n = 0 is not allowed; expected a positive number"},
		{"S -> P", NewRate(RandomBi, "vmax", "k", "ka", "k", "kb", "k", "alpha", "k"), "equation", "random_bi needs two different substrates"},
		{"S + S -> P", NewRate(OrderedBi, "vmax", "k", "kia", "k", "kma", "k", "kmb", "k"), "equation", "ordered_bi needs two different substrates"},
		{"S + I -> P", NewRate(RandomBi, "vmax", "k", "ka", "k", "kb", "k"), "rate.alpha", "random_bi needs alpha"},
		{"S -> P", NewRate(Transport, "vmax", "k", "km", "k"), "equation", "S and P are both in compartment c"},
		{"S <=> Q", NewRate(Transport, "vmax", "k", "km", "k"), "equation", "saturable_transport moves one way"},
	} {
		m := base()
		m.Reactions = []Reaction{{Name: "r", Equation: c.eq, Rate: c.rate}}
		_, probs := Check(m)
		found := false
		for _, p := range probs.Errors() {
			if p.Section == "reactions" && p.Item == "r" && p.Field == c.field && strings.Contains(p.Message, c.want) {
				found = true
			}
		}
		if !found {
			t.Errorf("%s %q: no error at %s containing %q; got %v", c.rate.Law, c.eq, c.field, c.want, probs)
		}
	}
}

func TestLawFormulas(t *testing.T) {
	for _, c := range []struct {
		eq   string
		rate Rate
		want string
	}{
		{"S <=> P", NewRate(MichaelisMentenReversible, "vf", "Vf", "vr", "Vr", "kms", "Ks", "kmp", "Kp"), "(Vf·S/Ks − Vr·P/Kp)/(1 + S/Ks + P/Kp)"},
		{"S <=> P", NewRate(MichaelisMentenReversible, "vf", "Vf", "keq", "Keq", "kms", "Ks", "kmp", "Kp"), "Vf/Ks·(S − P/Keq)/(1 + S/Ks + P/Kp)"},
		{"S -> P", NewRate(CompetitiveInhibition, "vmax", "V", "km", "Km", "inhibitor", "I", "ki", "Ki"), "V·S/(Km·(1 + I/Ki) + S)"},
		{"S -> P", NewRate(UncompetitiveInhibition, "vmax", "V", "km", "Km", "inhibitor", "I", "ki", "Ki"), "V·S/(Km + S·(1 + I/Ki))"},
		{"S -> P", NewRate(NoncompetitiveInhibition, "vmax", "V", "km", "Km", "inhibitor", "I", "ki", "Ki"), "V·S/((Km + S)·(1 + I/Ki))"},
		{"S -> P", NewRate(MixedInhibition, "vmax", "V", "km", "Km", "inhibitor", "I", "ki", "Ki"), "V·S/(Km·(1 + I/Ki) + S·(1 + I/?))"},
		{"S -> P", NewRate(HillActivation, "vmax", "V", "k_half", "K", "n", 2), "V·(S/K)^2/(1 + (S/K)^2)"},
		{"-> P", NewRate(HillRepression, "vmax", "V", "k_half", "K", "n", "n", "regulator", "R"), "V/(1 + (R/K)^n)"},
		{"A + B -> P", NewRate(RandomBi, "vmax", "V", "ka", "Ka", "kb", "Kb", "alpha", "a"), "V·A·B/(a·Ka·Kb + a·Kb·A + a·Ka·B + A·B)"},
		{"A + B -> P", NewRate(OrderedBi, "vmax", "V", "kia", "Kia", "kma", "Ka", "kmb", "Kb"), "V·A·B/(Kia·Kb + Kb·A + Ka·B + A·B)"},
		{"G_out -> G_in", NewRate(Transport, "vmax", "V", "km", "Km"), "V·G_out/(Km + G_out)"},
	} {
		law, _ := LawNamed(c.rate.Law)
		eq, err := ParseEquation(c.eq)
		if err != nil {
			t.Fatal(err)
		}
		if got := law.Formula(c.rate, &eq); got != c.want {
			t.Errorf("%s: Formula = %q, want %q", c.rate.Law, got, c.want)
		}
	}
}
