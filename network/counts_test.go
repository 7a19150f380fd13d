package network

import (
	"bytes"
	"math"
	"strings"
	"testing"
)

func countsOf(t *testing.T, m *Model) *Counts {
	t.Helper()
	net, probs := Check(m)
	if err := probs.Err(); err != nil {
		t.Fatal(err)
	}
	c, err := net.Counts()
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// mass-action propensity a = C·Π falling factorials, as the engine
// computes it.
func massProp(ch CountChannel, x []float64) float64 {
	a := ch.C
	for _, r := range ch.Reactants {
		for m := 0; m < r.N; m++ {
			a *= x[r.Species] - float64(m)
		}
	}
	return a
}

// TestCombinatorialPropensities checks the conversion of mass-action
// rates to propensities against the combinatorial forms of Gillespie
// (1977) and Wilkinson (Stochastic Modelling for Systems Biology), with
// Ω = volume × molecules per amount: ∅ → A has k·Ω, A → … has k·n_A,
// A + B → … has (k/Ω)·n_A·n_B, 2 A → … has (k/Ω)·n_A(n_A − 1).
func TestCombinatorialPropensities(t *testing.T) {
	m := &Model{
		Units:        Units{MoleculesPerAmount: 100},
		Compartments: []Compartment{{Name: "cell", Volume: 2}},
		Species:      []Species{{Name: "A", Initial: 0.5}, {Name: "B", Initial: 0.25}, {Name: "C"}},
		Parameters:   []Parameter{{Name: "k", Value: 3}},
		Reactions: []Reaction{
			{Name: "make", Equation: "-> A", Rate: NewRate(MassAction, "k", "k")},
			{Name: "lose", Equation: "A ->", Rate: NewRate(MassAction, "k", "k")},
			{Name: "bind", Equation: "A + B -> C", Rate: NewRate(MassAction, "k", "k")},
			{Name: "pair", Equation: "2 A <=> C", Rate: NewRate(MassAction, "k", "k", "k_reverse", 0.5)},
		},
	}
	c := countsOf(t, m)
	const omega = 200.0
	x := []float64{100, 50, 7}
	if c.Initial[0] != 100 || c.Initial[1] != 50 || c.Omega[0] != omega {
		t.Fatalf("initial counts %v, Ω %v", c.Initial, c.Omega)
	}
	want := map[string]float64{
		"make": 3 * omega, "lose": 3 * 100, "bind": 3 / omega * 100 * 50,
		"pair": 3 / omega * 100 * 99, "pair (reverse)": 0.5 * 7,
	}
	if len(c.Channels) != len(want) {
		t.Fatalf("%d channels", len(c.Channels))
	}
	for _, ch := range c.Channels {
		if got := massProp(ch, x); math.Abs(got-want[ch.Name]) > 1e-12*want[ch.Name] {
			t.Errorf("%s: propensity %v, want %v", ch.Name, got, want[ch.Name])
		}
	}
	if p := c.Channels[3].Change; len(p) != 2 || p[0] != (CountTerm{0, -2}) || p[1] != (CountTerm{2, 1}) {
		t.Errorf("pair changes %v", p)
	}
}

// TestGeneralPropensity: a Michaelis–Menten reaction's propensity is its
// rate at the counts' concentrations × volume × molecules per amount.
func TestGeneralPropensity(t *testing.T) {
	m := &Model{
		Units:        Units{Amount: "nM"},
		Compartments: []Compartment{{Name: "well", Volume: 1e-12}},
		Species:      []Species{{Name: "S", Initial: 10}, {Name: "P"}},
		Parameters:   []Parameter{{Name: "vmax", Value: 2}, {Name: "km", Value: 5}},
		Reactions:    []Reaction{{Name: "conv", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", "vmax", "km", "km")}},
	}
	c := countsOf(t, m)
	omega := 1e-12 * Avogadro * 1e-9 // molecules per nM in a picolitre: 602.2
	if math.Abs(c.Omega[0]-omega) > 1e-9*omega || c.Initial[0] != math.Round(10*omega) {
		t.Fatalf("Ω %v, initial %v", c.Omega[0], c.Initial[0])
	}
	if len(c.Approximate) != 1 || !c.Channels[0].General {
		t.Fatalf("approximate %v", c.Approximate)
	}
	d := c.NewDynamic()
	x := []float64{3000, 0}
	s := 3000 / omega
	want := 2 * s / (5 + s) * omega
	if got := d.Propensity(0, 0, x); math.Abs(got-want) > 1e-12*want {
		t.Errorf("propensity %v, want %v", got, want)
	}
}

func TestMoleculesPerAmount(t *testing.T) {
	for _, c := range []struct {
		units Units
		want  float64
		err   string
	}{
		{Units{Amount: "uM"}, Avogadro * 1e-6, ""},
		{Units{Amount: "µM"}, Avogadro * 1e-6, ""},
		{Units{Amount: "molecules"}, 1, ""},
		{Units{Amount: "nM", MoleculesPerAmount: 7}, 7, ""},
		{Units{Amount: "mg/L"}, 0, `"mg/L" is not one`},
		{Units{}, 0, "no amount unit"},
		{Units{MoleculesPerAmount: -1}, 0, "not allowed"},
	} {
		n, _, err := MoleculesPerAmount(&Model{Units: c.units})
		switch {
		case c.err != "" && (err == nil || !strings.Contains(err.Error(), c.err) || !strings.HasPrefix(err.Error(), "units.molecules_per_amount: ")):
			t.Errorf("%+v: error %v, want one with %q naming units.molecules_per_amount", c.units, err, c.err)
		case c.err == "" && (err != nil || math.Abs(n-c.want) > 1e-12*c.want):
			t.Errorf("%+v: %v, %v; want %v", c.units, n, err, c.want)
		}
	}
}

func TestCountsProblems(t *testing.T) {
	m := &Model{
		Species:   []Species{{Name: "A", Initial: 1}, {Name: "B"}},
		Reactions: []Reaction{{Name: "half", Equation: "0.5 A -> B", Rate: NewRate(MassAction, "k", 1)}},
	}
	net, _ := Check(m)
	_, err := net.Counts()
	el, ok := err.(ErrorList)
	if !ok || len(el) != 2 {
		t.Fatalf("error %v: want the coefficient and the missing molecules_per_amount", err)
	}
	if !strings.Contains(err.Error(), "whole number") || !strings.Contains(err.Error(), "molecules_per_amount") {
		t.Errorf("error %v", err)
	}
}

// TestCountEvents: a dose of an amount becomes amount × molecules per
// amount molecules; a parameter set by an event changes the mass-action
// constants.
func TestCountEvents(t *testing.T) {
	m := &Model{
		Units:        Units{MoleculesPerAmount: 10},
		Compartments: []Compartment{{Name: "c", Volume: 4}},
		Species:      []Species{{Name: "A", Initial: 1}},
		Parameters:   []Parameter{{Name: "k", Value: 1}},
		Reactions:    []Reaction{{Name: "lose", Equation: "A ->", Rate: NewRate(MassAction, "k", "k")}},
		Events:       []Event{{Name: "dose", At: Number(2), Add: []Change{{"A", "3"}}, Set: []Change{{"k", "5"}}}},
	}
	c := countsOf(t, m)
	d := c.NewDynamic()
	d.ResetEvents(0)
	if next := d.NextEvent(0); next != 2 {
		t.Fatalf("next event %v", next)
	}
	x := []float64{17}
	if names := d.Fire(2, x, nil); len(names) != 1 || x[0] != 17+30 {
		t.Fatalf("fired %v, count %v; want 47 (3 amount units × 10 molecules)", names, x[0])
	}
	// k is now carried in the state (an event sets it), so the channel is
	// a general one: its propensity is k·[A]·V·(molecules per amount) =
	// 5 × 47 (first-order decay, common practice).
	var got float64
	if c.Channels[0].General {
		got = d.Propensity(0, 2, x)
	} else {
		cs := make([]float64, 1)
		d.Constants(cs)
		got = cs[0] * x[0]
	}
	if math.Abs(got-5*47) > 1e-9 {
		t.Errorf("propensity after the event %v, want %v", got, 5*47)
	}
}

func TestMoleculesPerAmountFile(t *testing.T) {
	m := &Model{Units: Units{Amount: "nM", MoleculesPerAmount: 602.2}, Species: []Species{{Name: "A"}},
		Reactions: []Reaction{{Name: "r", Equation: "A ->", Rate: NewRate(MassAction, "k", 1)}}}
	var buf bytes.Buffer
	if err := m.Write(&buf); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), `"molecules_per_amount": 602.2`) {
		t.Fatalf("written: %s", buf.String())
	}
	back, err := Read(&buf, "m.json")
	if err != nil {
		t.Fatal(err)
	}
	if back.Units != m.Units {
		t.Errorf("read back %+v, want %+v", back.Units, m.Units)
	}
}
