package network

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve"
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
			rx.Rate = NewRate(MassAction, "k", Named("kf"))
		case k < 7:
			rx.Equation = x() + " + " + x() + " <=> " + x()
			rx.Rate = NewRate(MassAction, "k", Named("kf"), "k_reverse", Named("kb"))
		case k < 9:
			rx.Equation = x() + " -> " + x()
			rx.Rate = NewRate(MichaelisMenten, "vmax", Named("Vm"), "km", Named("Km"))
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

// iterationMatrix returns c·I − J at the initial state of bigModel(n), the
// matrix the implicit solvers factorize, with c = 1/(0.25·h) for h = 0.01.
func iterationMatrix(b *testing.B, n int) (*System, []float64) {
	s, err := Compile(bigModel(n))
	if err != nil {
		b.Fatal(err)
	}
	j := mat.NewDense(n, n, nil)
	s.Jacobian(0, s.Initial(), j)
	m := make([]float64, n*n)
	for i := range n {
		for k := range n {
			m[i*n+k] = -j.At(i, k)
		}
		m[i*n+i] += 1 / (0.25 * 0.01)
	}
	return s, m
}

// BenchmarkLinearSolvers times one factorization and one solve of the
// iteration matrix of generated networks with the dense LU and the sparse
// LU; it is how solve's sparse threshold was chosen.
func BenchmarkLinearSolvers(b *testing.B) {
	for _, n := range []int{20, 50, 100, 200, 1000} {
		s, m := iterationMatrix(b, n)
		rp, ci := s.JacobianPattern()
		sp, err := solve.NewSparseLU(n, rp, ci)
		if err != nil {
			b.Fatal(err)
		}
		rhs := make([]float64, n)
		for _, c := range []struct {
			name string
			ls   solve.LinearSolver
		}{{"dense", solve.NewLU(n)}, {"sparse", sp}} {
			b.Run(fmt.Sprintf("n=%d/%s", n, c.name), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if err := c.ls.Factor(m); err != nil {
						b.Fatal(err)
					}
					c.ls.Solve(rhs)
				}
				if c.name == "dense" {
					b.ReportMetric(2*float64(n)*float64(n)*float64(n)/3, "flops")
				}
				if c.name == "sparse" {
					b.ReportMetric(float64(sp.FactorNonzeros())/float64(n), "LU-nnz/row")
					b.ReportMetric(sp.FactorFlops(), "flops")
				}
			})
		}
	}
}

func BenchmarkParamJacobianCSC1000(b *testing.B) {
	s, y := benchSystem(b)
	_, ri := s.ParamJacobianPattern()
	vals := make([]float64, len(ri))
	b.ReportAllocs()
	for b.Loop() {
		s.ParamJacobianCSC(1, y, vals)
	}
}

func BenchmarkParamJacobian1000(b *testing.B) {
	s, y := benchSystem(b)
	var jac mat.Dense
	b.ReportAllocs()
	for b.Loop() {
		s.ParamJacobian(1, y, &jac)
	}
}

// BenchmarkCheckCascade50 measures Check, unit check included, on the
// 50-species cascade: the editor runs it after every edit.
func BenchmarkCheckCascade50(b *testing.B) {
	m := loadExample(b, "signalling-cascade-50.json")
	b.ReportAllocs()
	for b.Loop() {
		Check(m)
	}
}

// BenchmarkRHSInhibited compares the right-hand side of a network of
// mixed-inhibition steps (expression route) with Michaelis–Menten steps
// (hand-written fast path) of the same size.
func BenchmarkRHSInhibited(b *testing.B) {
	for _, law := range []string{MichaelisMenten, MixedInhibition} {
		m := &Model{Species: []Species{{Name: "I", Initial: 0.3}}, Parameters: []Parameter{{Name: "V", Value: 1}, {Name: "K", Value: 2}}}
		for i := 0; i < 200; i++ {
			m.Species = append(m.Species, Species{Name: fmt.Sprintf("S%d", i), Initial: 1})
		}
		for i := 0; i < 199; i++ {
			r := NewRate(law, "vmax", "V", "km", "K")
			if law == MixedInhibition {
				r = NewRate(law, "vmax", "V", "km", "K", "inhibitor", "I", "ki", "K", "alpha_ki", "K")
			}
			m.Reactions = append(m.Reactions, Reaction{Name: fmt.Sprintf("r%d", i), Equation: fmt.Sprintf("S%d -> S%d", i, i+1), Rate: r})
		}
		s := mustCompile(b, m)
		y, f := s.Initial(), make([]float64, s.Dim())
		b.Run(law, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				s.RHS(0, y, f)
			}
		})
	}
}
