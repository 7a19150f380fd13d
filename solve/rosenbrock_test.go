package solve

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// rosDecay is y' = −y, y(0) = 1, whose solution e^(−t) is common practice.
var rosDecay = &closureSystem{n: 1, auto: true,
	f: func(_ float64, y, dy []float64) { dy[0] = -y[0] },
	j: func(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -1) }}

// rosOneStep takes one accepted RODAS4 step of exactly h from (0, y0) of
// rosDecay with tolerances loose enough that the step is never rejected.
func rosOneStep(t *testing.T, h float64) *rosenbrock {
	t.Helper()
	var stats Stats
	p := newProblem(rosDecay, Settings{RTol: 1, ATol: 1}, &stats)
	p.tEnd, p.maxStep = h, h
	r := newRosenbrock(p)
	if err := r.start(0, []float64{1}, h); err != nil {
		t.Fatal(err)
	}
	if err := r.step(h); err != nil {
		t.Fatal(err)
	}
	if r.t != h || r.hDone != h {
		t.Fatalf("step went to %g with size %g; want %g", r.t, r.hDone, h)
	}
	return r
}

// TestRosenbrockLocalOrders checks the orders of one RODAS4 step on
// y' = −y against e^(−h): the solution has local error O(h^5) (order 4),
// the error estimate k6 — the difference to the embedded order-3 solution
// — is O(h^4) and larger than the true error, and the continuous output
// (order 3) has error O(h^4) inside the step (Hairer & Wanner, Solving
// ODEs II, 1996, IV.7). A wrong a- or C-coefficient of stages 5 and 6, or
// of the dense-output rows, lowers one of these slopes.
func TestRosenbrockLocalOrders(t *testing.T) {
	hs := []float64{0.1, 0.05, 0.025, 0.0125}
	var est, loc, mid []float64
	for _, h := range hs {
		r := rosOneStep(t, h)
		est = append(est, math.Abs(r.errVec[0]))
		loc = append(loc, math.Abs(r.y[0]-math.Exp(-h)))
		out := []float64{0}
		r.dense(0.4*h, out)
		mid = append(mid, math.Abs(out[0]-math.Exp(-0.4*h)))
		if est[len(est)-1] <= loc[len(loc)-1] {
			t.Errorf("h = %g: estimate %.3g is not above the true local error %.3g", h, est[len(est)-1], loc[len(loc)-1])
		}
	}
	n := len(hs) - 1
	for _, c := range []struct {
		name string
		e    []float64
		want float64
	}{{"local error", loc, 5}, {"error estimate", est, 4}, {"dense output", mid, 4}} {
		slope := math.Log2(c.e[n-1] / c.e[n])
		t.Logf("%s: %.3g at h = %g, slope %.2f", c.name, c.e[n], hs[n], slope)
		if math.Abs(slope-c.want) > 0.25 {
			t.Errorf("%s: slope %.2f, want %g", c.name, slope, c.want)
		}
	}
}

// TestRosenbrockNoAllocs checks that RODAS4 steps, with the non-negativity
// projection on, allocate nothing (POLLU, shared helper).
func TestRosenbrockNoAllocs(t *testing.T) {
	checkNoAllocs(t, Rosenbrock, func(p *problem) stepper { return newRosenbrock(p) })
}
