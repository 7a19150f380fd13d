package solve

import (
	"context"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// closureSystem is a test System from closures.
type closureSystem struct {
	n    int
	auto bool
	f    func(t float64, y, dy []float64)
	j    func(t float64, y []float64, jac *mat.Dense)
}

func (s *closureSystem) Dim() int                                      { return s.n }
func (s *closureSystem) RHS(t float64, y, dy []float64)                { s.f(t, y, dy) }
func (s *closureSystem) Jacobian(t float64, y []float64, j *mat.Dense) { s.j(t, y, j) }
func (s *closureSystem) Autonomous() bool                              { return s.auto }

// closedFormCase is a system with a known exact solution.
type closedFormCase struct {
	name  string
	sys   System
	y0    []float64
	tEnd  float64
	exact func(t float64, y []float64)
}

// closedFormCases returns problems with exact solutions from the
// literature; every method's tests run them through checkClosedForms.
func closedFormCases() []closedFormCase {
	const k = 0.7
	const kf, kb = 2.0, 0.5
	const k1, k2 = 1.0, 0.3
	const vmax, km, s0 = 1.0, 0.5, 2.0
	return []closedFormCase{{
		// First-order decay y = y0·e^(−kt): common practice.
		name: "decay",
		sys: &closureSystem{n: 1, auto: true,
			f: func(_ float64, y, dy []float64) { dy[0] = -k * y[0] },
			j: func(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -k) }},
		y0: []float64{2}, tEnd: 10,
		exact: func(t float64, y []float64) { y[0] = 2 * math.Exp(-k*t) },
	}, {
		// Reversible A ⇌ B relaxes exponentially with rate kf + kb to
		// A∞ = kb/(kf+kb)·(A0+B0): common practice.
		name: "reversible",
		sys: &closureSystem{n: 2, auto: true,
			f: func(_ float64, y, dy []float64) { r := kf*y[0] - kb*y[1]; dy[0], dy[1] = -r, r },
			j: func(_ float64, _ []float64, j *mat.Dense) {
				j.Set(0, 0, -kf)
				j.Set(0, 1, kb)
				j.Set(1, 0, kf)
				j.Set(1, 1, -kb)
			}},
		y0: []float64{1, 0}, tEnd: 5,
		exact: func(t float64, y []float64) {
			ainf := kb / (kf + kb)
			y[0] = ainf + (1-ainf)*math.Exp(-(kf+kb)*t)
			y[1] = 1 - y[0]
		},
	}, {
		// Chain A → B → C: Bateman (1910), Proc. Cambridge Phil. Soc. 15, 423.
		name: "bateman",
		sys: &closureSystem{n: 3, auto: true,
			f: func(_ float64, y, dy []float64) {
				dy[0] = -k1 * y[0]
				dy[1] = k1*y[0] - k2*y[1]
				dy[2] = k2 * y[1]
			},
			j: func(_ float64, _ []float64, j *mat.Dense) {
				j.Zero()
				j.Set(0, 0, -k1)
				j.Set(1, 0, k1)
				j.Set(1, 1, -k2)
				j.Set(2, 1, k2)
			}},
		y0: []float64{1, 0, 0}, tEnd: 20,
		exact: func(t float64, y []float64) {
			y[0] = math.Exp(-k1 * t)
			y[1] = k1 / (k2 - k1) * (math.Exp(-k1*t) - math.Exp(-k2*t))
			y[2] = 1 - y[0] - y[1]
		},
	}, {
		// Michaelis–Menten depletion S' = −Vmax·S/(Km + S) has
		// S(t) = Km·W((S0/Km)·exp((S0 − Vmax·t)/Km)): Schnell & Mendoza,
		// J. Theor. Biol. 187 (1997) 207–212.
		name: "michaelis-menten",
		sys: &closureSystem{n: 1, auto: true,
			f: func(_ float64, y, dy []float64) { dy[0] = -vmax * y[0] / (km + y[0]) },
			j: func(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, -vmax*km/((km+y[0])*(km+y[0]))) }},
		y0: []float64{s0}, tEnd: 6,
		exact: func(t float64, y []float64) {
			y[0] = km * lambertW0(s0/km*math.Exp((s0-vmax*t)/km))
		},
	}, {
		// Non-autonomous y' = −2t·y, y = e^(−t²): common practice. It
		// exercises the ∂f/∂t terms of Rosenbrock methods.
		name: "time-dependent",
		sys: &closureSystem{n: 1,
			f: func(t float64, y, dy []float64) { dy[0] = -2 * t * y[0] },
			j: func(t float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -2*t) }},
		y0: []float64{1}, tEnd: 3,
		exact: func(t float64, y []float64) { y[0] = math.Exp(-t * t) },
	}}
}

// checkMethodClosedForms solves every closed-form case with method m at rtol
// (atol = rtol·1e-3) and requires the scaled error at 31 output times,
// max |y − exact| / (atol + rtol·|exact|), to stay below bound. It returns
// the largest scaled error per case.
func checkMethodClosedForms(t *testing.T, m Method, rtol, bound float64) map[string]float64 {
	t.Helper()
	worst := map[string]float64{}
	for _, c := range closedFormCases() {
		atol := rtol * 1e-3
		res, err := Solve(context.Background(), c.sys, 0, c.tEnd, c.y0,
			Settings{Method: m, RTol: rtol, ATol: atol, Times: LinearTimes(0, c.tEnd, 31)})
		if err != nil {
			t.Errorf("%s/%s: %v", m, c.name, err)
			continue
		}
		want := make([]float64, len(c.y0))
		var e float64
		for i, ti := range res.T {
			c.exact(ti, want)
			for j := range want {
				e = math.Max(e, math.Abs(res.Y[i][j]-want[j])/(atol+rtol*math.Abs(want[j])))
			}
		}
		worst[c.name] = e
		t.Logf("%s %s rtol %g: scaled error %.3g over %d steps", m, c.name, rtol, e, res.Steps)
		if e > bound || math.IsNaN(e) {
			t.Errorf("%s %s rtol %g: scaled error %.3g > %g", m, c.name, rtol, e, bound)
		}
	}
	return worst
}

// TestClosedForms checks RODAS4 and Dormand–Prince (and Auto) against
// exact solutions, including dense output between steps. The bound 20 on
// the scaled error allows for global error accumulation over the span
// (the tolerance controls the local error per step).
func TestClosedForms(t *testing.T) {
	for _, m := range []Method{Rosenbrock, Explicit, Auto} {
		for _, rtol := range []float64{1e-5, 1e-8} {
			t.Run(fmt.Sprintf("%s/rtol=%g", m, rtol), func(t *testing.T) {
				checkMethodClosedForms(t, m, rtol, 20)
			})
		}
	}
}
