package network

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// bigModel generates a network of n species and 3n reactions: unimolecular
// and bimolecular mass action (some reversible), Michaelis–Menten and Hill
// expressions.
func bigModel(n int) *Model {
	rng := rand.New(rand.NewPCG(42, 1))
	m := &Model{}
	for i := 0; i < n; i++ {
		m.Species = append(m.Species, Species{Name: fmt.Sprintf("X%d", i), Initial: 0.1 + rng.Float64()})
	}
	m.Parameters = []Parameter{{Name: "kf", Value: 1}, {Name: "kb", Value: 0.1}, {Name: "Vm", Value: 2},
		{Name: "Km", Value: 0.5}, {Name: "a", Value: 1}, {Name: "K", Value: 0.3}, {Name: "h", Value: 2}}
	x := func() string { return fmt.Sprintf("X%d", rng.IntN(n)) }
	for r := 0; r < 3*n; r++ {
		rx := Reaction{Name: fmt.Sprintf("r%d", r)}
		switch k := rng.IntN(10); {
		case k < 4:
			rx.Equation = x() + " -> " + x()
			rx.Rate = Rate{Law: MassAction, K: Named("kf")}
		case k < 7:
			rx.Equation = x() + " + " + x() + " <=> " + x()
			rx.Rate = Rate{Law: MassAction, K: Named("kf"), KReverse: Named("kb")}
		case k < 9:
			rx.Equation = x() + " -> " + x()
			rx.Rate = Rate{Law: MichaelisMenten, Vmax: Named("Vm"), Km: Named("Km")}
		default:
			rx.Equation = x() + " -> " + x()
			rx.Rate = Rate{Law: Expression, Expression: "a*" + x() + "/(1 + (" + x() + "/K)^h)"}
		}
		m.Reactions = append(m.Reactions, rx)
	}
	return m
}

func benchSystem(b *testing.B) (*System, []float64) {
	s, err := Compile(bigModel(1000))
	if err != nil {
		b.Fatal(err)
	}
	return s, s.Initial()
}

func BenchmarkRHS1000(b *testing.B) {
	s, y := benchSystem(b)
	f := make([]float64, s.Dim())
	b.ReportAllocs()
	for b.Loop() {
		s.RHS(1, y, f)
	}
}

func BenchmarkJacobian1000(b *testing.B) {
	s, y := benchSystem(b)
	jac := mat.NewDense(s.Dim(), s.Dim(), nil)
	b.ReportAllocs()
	for b.Loop() {
		s.Jacobian(1, y, jac)
	}
}

func BenchmarkJacobianCSR1000(b *testing.B) {
	s, y := benchSystem(b)
	_, ci := s.JacobianPattern()
	vals := make([]float64, len(ci))
	b.ReportAllocs()
	for b.Loop() {
		s.JacobianCSR(1, y, vals)
	}
}

func BenchmarkCompile1000(b *testing.B) {
	m := bigModel(1000)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Compile(m); err != nil {
			b.Fatal(err)
		}
	}
}

func TestBigModelJacobian(t *testing.T) {
	s := mustCompile(t, bigModel(60))
	checkJacobianFD(t, "generated network", s, randomState(newRng(), s))
}
