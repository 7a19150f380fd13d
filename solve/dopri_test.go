package solve

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestDopriNonNegative runs the fast binding A + B → C of checkNonNegative
// (closed form there) with the explicit method.
func TestDopriNonNegative(t *testing.T) {
	checkNonNegative(t, func(p *problem) stepper { return newDopri(p) })
}

// TestDopriNonNegativeDepletion integrates Michaelis–Menten depletion
// S' = −S/(Km + S) with Km ≪ S0: S falls almost linearly and then drops to
// zero within a time of order Km. Because f is nearly constant before the
// corner, the embedded error estimate is nearly zero and, at a loose
// tolerance, a step jumps past the corner to S ≈ −1. The projection of
// Shampine, Thompson, Kierzenka & Byrne (Appl. Math. Comput. 170 (2005)
// 556–569) counts the clipped amount as error, so that step is rejected.
// Closed form (Schnell & Mendoza, J. Theor. Biol. 187 (1997) 207–212):
// S(t) = Km·W((S0/Km)·e^((S0 − t)/Km)).
func TestDopriNonNegativeDepletion(t *testing.T) {
	const km, s0 = 1e-4, 1.0
	sys := &closureSystem{n: 1, auto: true,
		f: func(_ float64, y, dy []float64) { dy[0] = -y[0] / (km + y[0]) },
		j: func(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, -km/((km+y[0])*(km+y[0]))) }}
	exact := func(t float64) float64 {
		// W(e^L) with L = ln(S0/Km) + (S0 − t)/Km; for large L solve
		// w + ln w = L by Newton's method, as e^L overflows.
		l := math.Log(s0/km) + (s0-t)/km
		if l < 700 {
			return km * lambertW0(math.Exp(l))
		}
		w := l - math.Log(l)
		for i := 0; i < 50; i++ {
			w -= (w + math.Log(w) - l) / (1 + 1/w)
		}
		return km * w
	}
	times := []float64{0.25, 0.5, 0.9, 0.99, 1.2, 1.5, 2}
	const rtol, atol = 1e-3, 1e-8
	run := func(nonneg bool) *Result {
		t.Helper()
		res, err := Solve(context.Background(), sys, 0, 2, []float64{s0},
			Settings{Method: Explicit, RTol: rtol, ATol: atol, Times: times, NonNegative: nonneg})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}

	// Without the projection the failure is real (so the checks below can
	// fail): the solution ends near −1.
	if free := run(false); free.Y[len(times)-1][0] > -0.5 {
		t.Errorf("without projection S(2) = %g; the scenario no longer jumps past the corner, so this test no longer exercises the projection", free.Y[len(times)-1][0])
	}

	res := run(true)
	for k, tk := range times {
		got, want := res.Y[k][0], exact(tk)
		if got < 0 {
			t.Errorf("S(%g) = %g < 0", tk, got)
		}
		// Global error within ten local tolerances: common practice.
		if tol := 10 * (atol + rtol*want); !(math.Abs(got-want) <= tol) {
			t.Errorf("S(%g) = %.6g, want %.6g (closed form)", tk, got, want)
		}
	}
	t.Logf("steps %d, rejected %d, non-negativity fixes %d", res.Stats.Steps, res.Stats.Rejected, res.Stats.NonNegFixes)
}

// TestDopriNoAllocs checks that Dormand–Prince steps allocate nothing,
// including steps where the non-negativity projection acts and the first
// stage of the next step is evaluated again.
func TestDopriNoAllocs(t *testing.T) {
	const km = 1e-4
	sys := &closureSystem{n: 1, auto: true,
		f: func(_ float64, y, dy []float64) { dy[0] = -y[0] / (km + y[0]) },
		j: func(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, -km/((km+y[0])*(km+y[0]))) }}
	var stats Stats
	p := newProblem(sys, Settings{RTol: 1e-3, ATol: 1e-8, NonNegative: true}, &stats)
	p.tEnd, p.maxStep = 2, 2
	d := newDopri(p)
	out := []float64{0}
	a := testing.AllocsPerRun(2, func() {
		if err := d.start(0, []float64{1}, 0); err != nil {
			t.Fatal(err)
		}
		for tt := 0.0; tt < 2; tt, _ = d.current() {
			if err := d.step(2); err != nil {
				t.Fatal(err)
			}
			d.dense(tt, out)
		}
	})
	if a != 0 {
		t.Errorf("%v allocations per integration; want 0", a)
	}
	if stats.Rejected == 0 {
		t.Errorf("no step was rejected; the run did not exercise the projection")
	}
}
