package network

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// rankOf returns the numerical rank of a (gonum SVD, an outside reference).
func rankOf(a *mat.Dense) int {
	var svd mat.SVD
	if !svd.Factorize(a, mat.SVDNone) {
		panic("SVD failed")
	}
	return svd.Rank(1e-10)
}

// checkLaws verifies that every law is conserved, Σ w_i·V_i·f_i(y) = 0 at
// random states (amount balance, common practice), and that their number
// is n − rank(N) over the non-fixed species.
func checkLaws(t *testing.T, m *Model) []ConservationLaw {
	t.Helper()
	laws := m.ConservationLaws()
	s := mustCompile(t, m)
	_, _, n := m.Stoichiometry()
	var free []int
	for i, sp := range m.Species {
		if !sp.Fixed {
			free = append(free, i)
		}
	}
	rank := 0
	if n != nil && len(free) > 0 {
		sub := mat.NewDense(len(free), len(m.Reactions), nil)
		for k, i := range free {
			for j := range m.Reactions {
				sub.Set(k, j, n.At(i, j))
			}
		}
		rank = rankOf(sub)
	}
	if len(laws) != len(free)-rank {
		t.Errorf("%d laws, want n − rank = %d − %d", len(laws), len(free), rank)
	}
	rng := rand.New(rand.NewPCG(9, 9))
	f := make([]float64, s.Dim())
	for k := 0; k < 5; k++ {
		y := randomState(rng, s)
		s.RHS(0, y, f)
		for _, law := range laws {
			sum, scale := 0.0, 0.0
			for _, lt := range law.Terms {
				i, w := lt.Species, lt.Weight
				v := s.AmountVolume(s.SpeciesCompartment(i))
				sum += float64(w) * v * f[i]
				scale += math.Abs(float64(w) * v * f[i])
			}
			if math.Abs(sum) > 1e-12*(1+scale) {
				t.Errorf("law %q changes at rate %g", law.Text, sum)
			}
		}
	}
	return laws
}

func TestConservationEnzyme(t *testing.T) {
	m := &Model{
		Species: []Species{{Name: "E", Initial: 1}, {Name: "S", Initial: 10}, {Name: "ES"}, {Name: "P"}},
		Reactions: []Reaction{
			{Name: "bind", Equation: "E + S <=> ES", Rate: NewRate(MassAction, "k", Number(2), "k_reverse", Number(1))},
			{Name: "cat", Equation: "ES -> E + P", Rate: NewRate(MassAction, "k", Number(3))},
		},
	}
	laws := checkLaws(t, m)
	var texts []string
	for _, l := range laws {
		texts = append(texts, l.Text)
	}
	// Total enzyme and total substrate (textbook enzyme kinetics, common practice).
	joined := strings.Join(texts, "; ")
	if !strings.Contains(joined, "E + ES = constant") || !strings.Contains(joined, "S + ES + P = constant") {
		t.Errorf("laws %q, want E + ES and S + ES + P", joined)
	}
}

func TestConservationCompartmentsAndCoefficients(t *testing.T) {
	m := &Model{
		Compartments: []Compartment{{Name: "blood", Volume: 5}, {Name: "tissue", Volume: 0.7}},
		Species: []Species{{Name: "A", Initial: 1, Compartment: "blood"}, {Name: "A_t", Compartment: "tissue"},
			{Name: "D", Compartment: "tissue"}, {Name: "F", Initial: 1, Fixed: true}},
		Reactions: []Reaction{
			{Name: "move", Equation: "A <=> A_t", Rate: NewRate(MassAction, "k", Number(0.4), "k_reverse", Number(0.2))},
			{Name: "dimer", Equation: "2 A_t <=> D", Rate: NewRate(MassAction, "k", Number(1.5), "k_reverse", Number(0.1))},
			{Name: "feed", Equation: "F + A -> F + A", Rate: NewRate(MassAction, "k", Number(1))},
		},
	}
	laws := checkLaws(t, m)
	if len(laws) != 1 || !strings.HasPrefix(laws[0].Text, "A + A_t + 2 D = constant") {
		t.Errorf("laws %+v, want A + A_t + 2 D", laws)
	}
}

func TestConservationRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for k := 0; k < 100; k++ {
		m := randomModel(rng)
		// Conservation needs rate laws that are exactly what the
		// stoichiometry says; all laws qualify.
		checkLaws(t, m)
		if t.Failed() {
			t.Fatalf("random network %d", k)
		}
	}
}

func TestStoichiometry(t *testing.T) {
	m := &Model{Species: []Species{{Name: "A"}, {Name: "B"}, {Name: "C"}},
		Reactions: []Reaction{{Name: "r", Equation: "2 A + B -> B + 3 C"}, {Name: "q", Equation: "C <=> A"}}}
	_, _, n := m.Stoichiometry()
	want := mat.NewDense(3, 2, []float64{-2, 1, 0, 0, 3, -1})
	if !mat.Equal(n, want) {
		t.Errorf("N =\n%v\nwant\n%v", mat.Formatted(n), mat.Formatted(want))
	}
}

// TestConservationDecimalCoefficients checks laws with decimal coefficients:
// for A -> c B, the conserved total is c·A + B (the stoichiometry of the
// reaction; common practice), scaled to coprime integers.
func TestConservationDecimalCoefficients(t *testing.T) {
	for _, tc := range []struct{ eq, want string }{
		{"A -> 0.1 B", "A + 10 B = constant"},
		{"A -> 0.000001 B", "A + 1000000 B = constant"},
		{"A -> 0.3 B + 0.7 C", ""}, // two laws, basis not unique: weights checked only
	} {
		m := &Model{
			Species:   []Species{{Name: "A", Initial: 1}, {Name: "B"}, {Name: "C"}},
			Reactions: []Reaction{{Name: "r", Equation: tc.eq, Rate: NewRate(MassAction, "k", Number(1))}},
		}
		laws := checkLaws(t, m)
		var texts []string
		for _, l := range laws {
			texts = append(texts, l.Text)
			for _, lt := range l.Terms {
				i, w := lt.Species, lt.Weight
				if w > 1e6 || w < -1e6 {
					t.Errorf("%s: law %q has weight %d for %s; expected small decimal-derived weights", tc.eq, l.Text, w, m.Species[i].Name)
				}
			}
		}
		if tc.want != "" && !slices.Contains(texts, tc.want) {
			t.Errorf("%s: laws %q, want %q", tc.eq, texts, tc.want)
		}
	}
	// Weights beyond an int are left out, not truncated into a wrong law.
	m := &Model{
		Species:   []Species{{Name: "A", Initial: 1}, {Name: "B"}},
		Reactions: []Reaction{{Name: "r", Equation: "A -> 1000000000000000000000 B", Rate: NewRate(MassAction, "k", Number(1))}},
	}
	if laws := m.ConservationLaws(); len(laws) != 0 {
		t.Errorf("A -> 1e21 B: laws %+v, want none (weights do not fit an int)", laws)
	}
}
