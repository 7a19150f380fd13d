package calibrate

import (
	"context"
	"math"
	"testing"
)

// TestWorkersDeterminism fits the protease example's three invented
// experiments from 6 starts with 1 worker and with 2, and requires the
// same result bit for bit: every start's end point and objective, the
// estimates, their standard errors and the correlations. Each start's
// outcome must depend on the seed and its index alone, never on which
// worker ran it or what that worker ran before (common practice for
// parallel runners; the issue asks for it).
func TestWorkersDeterminism(t *testing.T) {
	if testing.Short() {
		t.Skip("two multi-start fits; skipped with -short")
	}
	run := func(workers int) *Report {
		spec, err := LoadSpec("../../examples/fits/protease-fit.json")
		if err != nil {
			t.Fatal(err)
		}
		spec.Starts = 6
		p, err := NewProblem(spec)
		if err != nil {
			t.Fatal(err)
		}
		rep, err := p.Run(context.Background(), Settings{Workers: workers})
		if err != nil {
			t.Fatal(err)
		}
		return rep
	}
	a, b := run(1), run(2)
	same := func(what string, x, y float64) {
		if math.Float64bits(x) != math.Float64bits(y) {
			t.Errorf("%s: %v with 1 worker, %v with 2", what, x, y)
		}
	}
	if len(a.Starts) != len(b.Starts) || a.Best != b.Best {
		t.Fatalf("%d starts, best %d with 1 worker; %d, best %d with 2", len(a.Starts), a.Best, len(b.Starts), b.Best)
	}
	for i := range a.Starts {
		sa, sb := a.Starts[i], b.Starts[i]
		same("start objective", sa.Objective, sb.Objective)
		if len(sa.X) != len(sb.X) {
			t.Fatalf("start %d: %d and %d values", i, len(sa.X), len(sb.X))
		}
		for j := range sa.X {
			same("start end point", sa.X[j], sb.X[j])
		}
	}
	for j := range a.Estimates {
		same(a.Estimates[j].Name+" value", a.Estimates[j].Value, b.Estimates[j].Value)
		same(a.Estimates[j].Name+" SE", a.Estimates[j].SE, b.Estimates[j].SE)
		for k := range a.Estimates {
			same("correlation", a.Corr.At(j, k), b.Corr.At(j, k))
		}
	}
	same("objective", a.Objective, b.Objective)
	t.Logf("6 starts, %d converged, best start %d, objective %.10g: identical with 1 and 2 workers", a.Converged, a.Best+1, a.Objective)
}
