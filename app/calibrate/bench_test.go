package calibrate

import (
	"context"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// protease loads the example fit of three invented experiments (five
// estimates, 180 values).
func protease(b *testing.B) *Problem {
	spec, err := LoadSpec("../../examples/fits/protease-fit.json")
	if err != nil {
		b.Fatal(err)
	}
	p, err := NewProblem(spec)
	if err != nil {
		b.Fatal(err)
	}
	return p
}

// BenchmarkProteaseJacobian evaluates the residuals and their Jacobian at
// the starting values, by sensitivities and by central differences of
// whole solves.
func BenchmarkProteaseJacobian(b *testing.B) {
	for _, byDiff := range []bool{false, true} {
		name := "sensitivities"
		if byDiff {
			name = "differences"
		}
		b.Run(name, func(b *testing.B) {
			p := protease(b)
			p.ByDifferences = byDiff
			x := make([]float64, len(p.Params))
			for j, q := range p.Params {
				x[j] = q.Start
			}
			r := make([]float64, p.NData)
			jac := mat.NewDense(p.NData, len(x), nil)
			b.ReportAllocs()
			for b.Loop() {
				if err := p.Residuals(context.Background(), x, r, jac); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkProteaseFit fits from the given start only, and from 20 starts
// on every core.
func BenchmarkProteaseFit(b *testing.B) {
	for _, starts := range []int{1, 20} {
		b.Run(map[int]string{1: "one-start", 20: "20-starts"}[starts], func(b *testing.B) {
			p := protease(b)
			p.Spec.Starts = starts
			for b.Loop() {
				rep, err := p.Run(context.Background(), Settings{})
				if err != nil {
					b.Fatal(err)
				}
				b.ReportMetric(float64(rep.Iterations), "iterations")
			}
		})
	}
}
