package network

import (
	"context"
	"fmt"
	"testing"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve"
	"kinetarium/solve/steady"
)

// lawsOf returns the conservation laws of the checked model as rows of Γ
// in concentrations, as app/analyse builds them.
func lawsOf(b *testing.B, m *Model, s *System) *mat.Dense {
	net, _ := Check(m)
	laws := net.ConservationLaws()
	if len(laws) == 0 {
		return nil
	}
	g := mat.NewDense(len(laws), s.Dim(), nil)
	for k, l := range laws {
		for _, lt := range l.Terms {
			i, w := lt.Species, lt.Weight
			g.Set(k, i, float64(w)*s.AmountVolume(s.SpeciesCompartment(i)))
		}
	}
	return g
}

// steadyModel is the generated network of bigModel with an inflow and a
// first-order removal of every species added (n + n more reactions), so
// that it has a steady state: bigModel alone grows without bound (its
// dissociations make molecules faster than anything removes them).
func steadyModel(n int) *Model {
	m := bigModel(n)
	m.Parameters = append(m.Parameters, Parameter{Name: "kin", Value: 1}, Parameter{Name: "kd", Value: 2})
	for i := 0; i < n; i++ {
		x := fmt.Sprintf("X%d", i)
		m.Reactions = append(m.Reactions,
			Reaction{Name: "in_" + x, Equation: "-> " + x, Rate: NewRate(MassAction, "k", Named("kin"))},
			Reaction{Name: "out_" + x, Equation: x + " ->", Rate: NewRate(MassAction, "k", Named("kd"))})
	}
	return m
}

// Steady state of the generated 1,000-species network (steadyModel: 5,000
// reactions):
// Newton with the sparse LU (the default from 100 variables) against the
// dense LU, from the same Finder each time (its ordering and work space
// reused), without the eigenvalues (a 1,000×1,000 eigenproblem is
// measured apart).
func BenchmarkSteady1000(b *testing.B) {
	m := steadyModel(1000)
	s, err := Compile(m)
	if err != nil {
		b.Fatal(err)
	}
	g := lawsOf(b, m, s)
	for _, c := range []struct {
		name   string
		linear func(int) solve.LinearSolver
	}{{"sparse", nil}, {"dense", func(n int) solve.LinearSolver { return solve.NewLU(n) }}} {
		b.Run(c.name, func(b *testing.B) {
			set := steady.Settings{Laws: g, NoEigenvalues: true, Linear: c.linear, Integration: solve.Settings{NonNegative: true}}
			var r *steady.Result
			f, err := steady.NewFinder(s, set)
			if err != nil {
				b.Fatal(err)
			}
			for b.Loop() {
				r, err = f.Find(context.Background(), s.Initial())
				if err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(r.Iterations), "newton-iters")
			if r.Integrated {
				b.ReportMetric(r.IntegratedTo, "integrated-to")
			}
		})
	}
}
