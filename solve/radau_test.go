package solve

import (
	"context"
	"errors"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// funcSystem is a System made of two functions.
type funcSystem struct {
	n int
	f func(t float64, y, dy []float64)
	j func(t float64, y []float64, jac *mat.Dense)
}

func (s funcSystem) Dim() int                                        { return s.n }
func (s funcSystem) RHS(t float64, y, dy []float64)                  { s.f(t, y, dy) }
func (s funcSystem) Jacobian(t float64, y []float64, jac *mat.Dense) { s.j(t, y, jac) }

// runStepper integrates sys from t0 to tEnd with the stepper made by mk,
// without the driver, and returns the final state and the work done.
func runStepper(mk func(*problem) stepper, sys System, t0, tEnd float64, y0 []float64, s Settings) ([]float64, Stats, error) {
	var stats Stats
	p := newProblem(sys, s, &stats)
	p.tEnd = tEnd
	if p.maxStep == 0 {
		p.maxStep = tEnd - t0
	}
	st := mk(p)
	if err := st.start(t0, y0, 0); err != nil {
		return nil, stats, err
	}
	for t := t0; t < tEnd; {
		if err := st.step(tEnd); err != nil {
			return nil, stats, err
		}
		stats.Steps++
		t, _ = st.current()
	}
	_, y := st.current()
	return append([]float64(nil), y...), stats, nil
}

// closedForm is a small kinetic system with a solution known in closed form.
type closedForm struct {
	name  string
	sys   System
	y0    []float64
	tEnd  float64
	exact func(t float64, y []float64)
}

// closedForms returns the closed-form checks shared by the Radau and BDF
// tests.
func closedForms() []closedForm {
	const k = 2.0
	const kf, kb = 3.0, 1.0
	const k1, k2 = 1.0, 1000.0
	return []closedForm{
		{
			// First-order decay y' = −k·y: y = e^{−kt} (common practice).
			name: "decay",
			sys: funcSystem{n: 1,
				f: func(_ float64, y, dy []float64) { dy[0] = -k * y[0] },
				j: func(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -k) }},
			y0: []float64{1}, tEnd: 3,
			exact: func(t float64, y []float64) { y[0] = math.Exp(-k * t) },
		},
		{
			// Reversible A ⇌ B from A = 1, B = 0:
			// A = (kb + kf·e^{−(kf+kb)t})/(kf+kb) (common practice).
			name: "A<=>B",
			sys: funcSystem{n: 2,
				f: func(_ float64, y, dy []float64) {
					r := kf*y[0] - kb*y[1]
					dy[0], dy[1] = -r, r
				},
				j: func(_ float64, _ []float64, j *mat.Dense) {
					j.Set(0, 0, -kf)
					j.Set(0, 1, kb)
					j.Set(1, 0, kf)
					j.Set(1, 1, -kb)
				}},
			y0: []float64{1, 0}, tEnd: 2,
			exact: func(t float64, y []float64) {
				y[0] = (kb + kf*math.Exp(-(kf+kb)*t)) / (kf + kb)
				y[1] = 1 - y[0]
			},
		},
		{
			// Stiff chain A → B → C (Bateman 1910):
			// A = e^{−k1 t}, B = k1/(k2−k1)·(e^{−k1 t} − e^{−k2 t}), C = 1 − A − B.
			name: "A->B->C",
			sys: funcSystem{n: 3,
				f: func(_ float64, y, dy []float64) {
					r1, r2 := k1*y[0], k2*y[1]
					dy[0], dy[1], dy[2] = -r1, r1-r2, r2
				},
				j: func(_ float64, _ []float64, j *mat.Dense) {
					j.Zero()
					j.Set(0, 0, -k1)
					j.Set(1, 0, k1)
					j.Set(1, 1, -k2)
					j.Set(2, 1, k2)
				}},
			y0: []float64{1, 0, 0}, tEnd: 5,
			exact: func(t float64, y []float64) {
				y[0] = math.Exp(-k1 * t)
				y[1] = k1 / (k2 - k1) * (math.Exp(-k1*t) - math.Exp(-k2*t))
				y[2] = 1 - y[0] - y[1]
			},
		},
	}
}

// checkClosedForms integrates every closed form at tightening tolerances and
// checks the scaled error (max over components of |y − exact|/(atol +
// rtol·|exact|)) at the end: it must stay below maxScaled and the absolute
// error must fall as rtol tightens.
func checkClosedForms(t *testing.T, mk func(*problem) stepper, maxScaled float64) {
	for _, cf := range closedForms() {
		prev := math.Inf(1)
		for _, rtol := range []float64{1e-4, 1e-6, 1e-8, 1e-10} {
			atol := rtol * 1e-3
			y, st, err := runStepper(mk, cf.sys, 0, cf.tEnd, cf.y0, Settings{RTol: rtol, ATol: atol, NonNegative: true})
			if err != nil {
				t.Fatalf("%s rtol %g: %v", cf.name, rtol, err)
			}
			ref := make([]float64, len(y))
			cf.exact(cf.tEnd, ref)
			var abs float64
			for i := range y {
				abs = math.Max(abs, math.Abs(y[i]-ref[i]))
			}
			sc := scaledError(y, ref, rtol, atol)
			t.Logf("%s rtol %g: max abs error %.3g, scaled %.3g, %d steps, %d rejected", cf.name, rtol, abs, sc, st.Steps, st.Rejected)
			if sc > maxScaled {
				t.Errorf("%s rtol %g: scaled error %.3g > %g", cf.name, rtol, sc, maxScaled)
			}
			if abs >= prev && abs > 1e-14 {
				t.Errorf("%s rtol %g: error %.3g did not fall (was %.3g)", cf.name, rtol, abs, prev)
			}
			prev = abs
		}
	}
}

func TestRadauClosedForms(t *testing.T) { checkClosedForms(t, newRadau, 10) }

// testsetCase is one run on a Test Set problem.
type testsetCase struct {
	name string
	sys  System
	y0   []float64
	tEnd float64
	ref  []float64
	atol float64
}

// testsetCases are HIRES and POLLU with the reference solutions of the Test
// Set for IVP Solvers (Mazzia & Magherini, Univ. Bari, release 2.4), held in
// testproblems_test.go.
func testsetCases() []testsetCase {
	return []testsetCase{
		{"HIRES", hiresSystem{}, hiresY0(), 321.8122, hiresRef, 1e-12},
		{"POLLU", polluSystem(), polluY0(), 60, polluRef, 1e-14},
	}
}

// checkTestset runs the Test Set problems and returns the scaled errors.
func checkTestset(t *testing.T, mk func(*problem) stepper, rtols []float64, bound func(rtol float64) float64) {
	for _, c := range testsetCases() {
		for _, rtol := range rtols {
			y, st, err := runStepper(mk, c.sys, 0, c.tEnd, c.y0, Settings{RTol: rtol, ATol: c.atol, NonNegative: true})
			if err != nil {
				t.Fatalf("%s rtol %g: %v", c.name, rtol, err)
			}
			sc := scaledError(y, c.ref, rtol, c.atol)
			t.Logf("%s rtol %g atol %g: scaled error %.3g; %d steps, %d rejected, %d RHS, %d Jacobians, %d factorizations, %d solves, %d non-negativity fixes",
				c.name, rtol, c.atol, sc, st.Steps, st.Rejected, st.RHSEvals, st.JacobianEvals, st.Factorizations, st.LinearSolves, st.NonNegFixes)
			if b := bound(rtol); !(sc <= b) {
				t.Errorf("%s rtol %g: scaled error %.3g > %g", c.name, rtol, sc, b)
			}
		}
	}
}

// TestRadauTestset checks Radau on HIRES and POLLU against the reference
// solutions of the Test Set for IVP Solvers (Mazzia & Magherini, Univ. Bari,
// release 2.4): scaled error at most 10.
func TestRadauTestset(t *testing.T) {
	checkTestset(t, newRadau, []float64{1e-6, 1e-8, 1e-10}, func(float64) float64 { return 10 })
}

// forcedDecay is y' = −y + sin t with y(0) = 0, whose solution is
// y = (e^{−t} + sin t − cos t)/2 (common practice: linear first-order ODE).
// Being affine in y, its Newton iteration is exact after one step, so the
// measured error is that of the formula alone.
var forcedDecay = funcSystem{n: 1,
	f: func(t float64, y, dy []float64) { dy[0] = -y[0] + math.Sin(t) },
	j: func(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -1) },
}

func forcedDecayExact(t float64) float64 { return (math.Exp(-t) + math.Sin(t) - math.Cos(t)) / 2 }

// orderSlope returns the least-squares slope of log(err) against log(h).
func orderSlope(hs, errs []float64) float64 {
	var sx, sy, sxx, sxy float64
	for i := range hs {
		x, y := math.Log(hs[i]), math.Log(errs[i])
		sx += x
		sy += y
		sxx += x * x
		sxy += x * y
	}
	n := float64(len(hs))
	return (n*sxy - sx*sy) / (n*sxx - sx*sx)
}

// TestRadauOrder measures the order of the 3-stage Radau IIA method with
// fixed steps on y' = −y + sin t; the classical order is 5
// (Hairer & Wanner, Solving ODEs II, 1996, IV.5).
func TestRadauOrder(t *testing.T) {
	const tEnd = 4.0
	var hs, errs []float64
	for _, nsteps := range []int{4, 6, 8, 12, 16} {
		var stats Stats
		p := newProblem(forcedDecay, Settings{RTol: 1e-13, ATol: 1e-15}, &stats)
		r := newRadau(p).(*radau)
		if err := r.start(0, []float64{0}, 1); err != nil {
			t.Fatal(err)
		}
		h := tEnd / float64(nsteps)
		for i := 0; i < nsteps; i++ {
			if err := radauFixedStep(r, h); err != nil {
				t.Fatal(err)
			}
		}
		e := math.Abs(r.y[0] - forcedDecayExact(r.t))
		t.Logf("h = %.4f: error %.3e", h, e)
		hs, errs = append(hs, h), append(errs, e)
	}
	slope := orderSlope(hs, errs)
	t.Logf("measured order %.3f", slope)
	if math.Abs(slope-5) > 0.3 {
		t.Errorf("measured order %.3f, want 5 ± 0.3", slope)
	}
}

// radauFixedStep advances r by one step of size h without error control,
// with a fresh Jacobian and Newton iterated to convergence.
func radauFixedStep(r *radau, h float64) error {
	for i := range r.scal {
		r.scal[i] = r.atol[i] + r.rtol*math.Abs(r.y[i])
	}
	r.p.jac(r.t, r.y, r.jac)
	if err := r.factor(h); err != nil {
		return err
	}
	if ok, _ := r.newton(h); !ok {
		return fmt.Errorf("Newton iteration did not converge at t = %g", r.t)
	}
	r.first = false
	r.tOld, r.hOld = r.t, h
	r.t += h
	r.setDense()
	for i := range r.y {
		r.y[i] += r.z3[i]
	}
	return nil
}

// TestRadauDense checks the dense output between steps against the closed
// form of the chain A → B → C (Bateman 1910).
func TestRadauDense(t *testing.T) { checkDense(t, newRadau, 10) }

// checkDense integrates the Bateman chain at rtol 1e-7 and compares dense
// output at many points inside every step with the closed form; the error
// relative to the tolerance scale must stay below maxScaled.
func checkDense(t *testing.T, mk func(*problem) stepper, maxScaled float64) {
	cf := closedForms()[2]
	var stats Stats
	const rtol, atol = 1e-7, 1e-10
	p := newProblem(cf.sys, Settings{RTol: rtol, ATol: atol, NonNegative: true}, &stats)
	p.tEnd, p.maxStep = cf.tEnd, cf.tEnd
	st := mk(p)
	if err := st.start(0, cf.y0, 0); err != nil {
		t.Fatal(err)
	}
	out, ref := make([]float64, 3), make([]float64, 3)
	var worst float64
	tPrev := 0.0
	for tPrev < cf.tEnd {
		if err := st.step(cf.tEnd); err != nil {
			t.Fatal(err)
		}
		tn, _ := st.current()
		for _, s := range []float64{0, 0.25, 0.5, 0.75, 1} {
			tt := tPrev + s*(tn-tPrev)
			st.dense(tt, out)
			cf.exact(tt, ref)
			worst = math.Max(worst, scaledError(out, ref, rtol, atol))
		}
		tPrev = tn
	}
	t.Logf("worst scaled dense-output error %.3g (relative to rtol %g, atol %g)", worst, rtol, atol)
	if worst > maxScaled {
		t.Errorf("dense output scaled error %.3g > %g", worst, maxScaled)
	}
}

// TestRadauNoAllocs checks that steps allocate nothing: a whole solve over a
// short and a long span allocates the same, and the stepper alone nothing.
func TestRadauNoAllocs(t *testing.T) { checkNoAllocs(t, Radau, newRadau) }

func checkNoAllocs(t *testing.T, m Method, mk func(*problem) stepper) {
	sys := polluSystem()
	y0 := polluY0()
	solveAllocs := func(tEnd float64) float64 {
		return testing.AllocsPerRun(3, func() {
			s := Settings{Method: m, RTol: 1e-6, ATol: 1e-12, NonNegative: true, Times: []float64{tEnd / 2, tEnd}}
			if _, err := Solve(context.Background(), sys, 0, tEnd, y0, s); err != nil {
				t.Fatal(err)
			}
		})
	}
	short, long := solveAllocs(0.01), solveAllocs(60)
	t.Logf("%s: allocations per Solve: %v over [0, 0.01], %v over [0, 60]", m, short, long)
	if short != long {
		t.Errorf("%s: a solve over [0, 60] allocates %v times, over [0, 0.01] %v: steps allocate", m, long, short)
	}
	var stats Stats
	p := newProblem(sys, Settings{RTol: 1e-6, ATol: 1e-12, NonNegative: true}, &stats)
	p.tEnd, p.maxStep = 60, 60
	st := mk(p)
	out := make([]float64, len(y0))
	a := testing.AllocsPerRun(2, func() {
		if err := st.start(0, y0, 0); err != nil {
			t.Fatal(err)
		}
		for tt := 0.0; tt < 60; tt, _ = st.current() {
			if err := st.step(60); err != nil {
				t.Fatal(err)
			}
			st.dense(tt, out)
		}
	})
	if a != 0 {
		t.Errorf("%s: the stepper allocated %v times per solve", m, a)
	}
}

// blowUp is y' = y² with y(0) = 1, whose solution 1/(1 − t) becomes
// infinite at t = 1 (common practice).
var blowUp = funcSystem{n: 1,
	f: func(_ float64, y, dy []float64) { dy[0] = y[0] * y[0] },
	j: func(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, 2*y[0]) },
}

// nanAfter is y' = −y until t = 1 and NaN after, as a rate law that is
// undefined beyond some time would be.
var nanAfter = funcSystem{n: 2,
	f: func(t float64, y, dy []float64) {
		dy[0] = -y[0]
		dy[1] = -y[1]
		if t > 1 {
			dy[1] = math.NaN()
		}
	},
	j: func(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -1); j.Set(1, 1, -1) },
}

// checkFailures checks that a singular solution and a rate that turns NaN
// end in a *StepError (never a panic) that says where.
func checkFailures(t *testing.T, mk func(*problem) stepper) {
	_, _, err := runStepper(mk, blowUp, 0, 2, []float64{1}, Settings{RTol: 1e-6})
	var se *StepError
	if !errors.As(err, &se) {
		t.Fatalf("y' = y²: want a *StepError, got %v", err)
	}
	t.Logf("y' = y²: %v", err)
	if math.Abs(se.T-1) > 1e-3 {
		t.Errorf("y' = y²: stopped at t = %g, want near the pole t = 1", se.T)
	}
	_, _, err = runStepper(mk, nanAfter, 0, 2, []float64{1, 1}, Settings{RTol: 1e-6})
	if !errors.As(err, &se) {
		t.Fatalf("NaN rate: want a *StepError, got %v", err)
	}
	t.Logf("NaN rate: %v", err)
	if se.Component != 1 || math.Abs(se.T-1) > 1e-6 {
		t.Errorf("NaN rate: error names component %d at t = %g, want component 1 at t = 1", se.Component, se.T)
	}
}

func TestRadauFailures(t *testing.T) { checkFailures(t, newRadau) }

// TestRadauStops checks that steps land exactly on the limit they are given.
func TestRadauStops(t *testing.T) { checkStops(t, newRadau) }

func checkStops(t *testing.T, mk func(*problem) stepper) {
	cf := closedForms()[0]
	var stats Stats
	p := newProblem(cf.sys, Settings{RTol: 1e-8, ATol: 1e-12}, &stats)
	p.tEnd, p.maxStep = 3, 3
	st := mk(p)
	if err := st.start(0, cf.y0, 0); err != nil {
		t.Fatal(err)
	}
	ref := []float64{0}
	for _, lim := range []float64{0.1, 0.7, 0.70001, 3} {
		for {
			if err := st.step(lim); err != nil {
				t.Fatal(err)
			}
			tn, y := st.current()
			if tn > lim {
				t.Fatalf("stepped to %g past the limit %g", tn, lim)
			}
			if tn == lim {
				cf.exact(lim, ref)
				if e := math.Abs(y[0] - ref[0]); e > 1e-7 {
					t.Errorf("at %g: error %.3g", lim, e)
				}
				break
			}
		}
	}
}

// BenchmarkComplexSolve compares the complex LU (clu.go) with the real
// 2n×2n block form of the same complex system, factorization plus one solve.
func BenchmarkComplexSolve(b *testing.B) {
	for _, n := range []int{20, 200} {
		re, im := make([]float64, n*n), make([]float64, n*n)
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				re[i*n+j] = math.Sin(float64(3*i+7*j+1)) / float64(n)
			}
			re[i*n+i] += 3
			im[i*n+i] = 2
		}
		br, bi := make([]float64, n), make([]float64, n)
		b.Run(fmt.Sprintf("complex/n=%d", n), func(b *testing.B) {
			f := newCLU(n)
			b.ReportAllocs()
			for b.Loop() {
				if err := f.factor(re, im); err != nil {
					b.Fatal(err)
				}
				f.solve(br, bi)
			}
		})
		b.Run(fmt.Sprintf("real2n/n=%d", n), func(b *testing.B) {
			m := 2 * n
			big := make([]float64, m*m)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					big[i*m+j] = re[i*n+j]
					big[(i+n)*m+j+n] = re[i*n+j]
					big[i*m+j+n] = -im[i*n+j]
					big[(i+n)*m+j] = im[i*n+j]
				}
			}
			f := NewLU(m)
			rhs := make([]float64, m)
			b.ReportAllocs()
			for b.Loop() {
				if err := f.Factor(big); err != nil {
					b.Fatal(err)
				}
				f.Solve(rhs)
			}
		})
	}
}

// TestComplexLU checks the complex LU against the real 2n×2n block form of
// the same system, solved with the real LU (an independent check).
func TestComplexLU(t *testing.T) {
	const n = 7
	re, im := make([]float64, n*n), make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			re[i*n+j] = math.Sin(float64(3*i + 7*j + 1))
			im[i*n+j] = math.Cos(float64(5*i + 2*j))
		}
		re[i*n+i] += 4
	}
	m := 2 * n
	big := make([]float64, m*m)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			big[i*m+j], big[(i+n)*m+j+n] = re[i*n+j], re[i*n+j]
			big[i*m+j+n], big[(i+n)*m+j] = -im[i*n+j], im[i*n+j]
		}
	}
	br, bi, rhs := make([]float64, n), make([]float64, n), make([]float64, m)
	for i := 0; i < n; i++ {
		br[i], bi[i] = float64(i+1), float64(2-i)
		rhs[i], rhs[i+n] = br[i], bi[i]
	}
	c := newCLU(n)
	if err := c.factor(re, im); err != nil {
		t.Fatal(err)
	}
	c.solve(br, bi)
	r := NewLU(m)
	if err := r.Factor(big); err != nil {
		t.Fatal(err)
	}
	r.Solve(rhs)
	for i := 0; i < n; i++ {
		if math.Abs(br[i]-rhs[i]) > 1e-12 || math.Abs(bi[i]-rhs[i+n]) > 1e-12 {
			t.Errorf("x[%d] = %g%+gi, block form gives %g%+gi", i, br[i], bi[i], rhs[i], rhs[i+n])
		}
	}
	if err := c.factor(make([]float64, n*n), make([]float64, n*n)); err == nil {
		t.Error("zero matrix: want an error")
	}
}

// benchTestset runs one Test Set problem per iteration and reports the
// work of the last run.
func benchTestset(b *testing.B, mk func(*problem) stepper, c testsetCase) {
	const rtol = 1e-8
	var st Stats
	var y []float64
	b.ReportAllocs()
	for b.Loop() {
		var err error
		y, st, err = runStepper(mk, c.sys, 0, c.tEnd, c.y0, Settings{RTol: rtol, ATol: c.atol, NonNegative: true})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(st.Steps), "steps")
	b.ReportMetric(float64(st.RHSEvals), "rhs")
	b.ReportMetric(float64(st.JacobianEvals), "jacobians")
	b.ReportMetric(float64(st.Factorizations), "factorizations")
	b.ReportMetric(scaledError(y, c.ref, rtol, c.atol), "scaled-error")
}

func BenchmarkRadauHIRES(b *testing.B) { benchTestset(b, newRadau, testsetCases()[0]) }
func BenchmarkRadauPOLLU(b *testing.B) { benchTestset(b, newRadau, testsetCases()[1]) }

// ExampleSolve_radau integrates the decay A → B with k = 0.5 by Radau IIA and
// compares with the closed form A = e^{−0.5 t}.
func ExampleSolve_radau() {
	decay := funcSystem{n: 2,
		f: func(_ float64, y, dy []float64) { dy[0], dy[1] = -0.5*y[0], 0.5*y[0] },
		j: func(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -0.5); j.Set(1, 0, 0.5) },
	}
	res, err := Solve(context.Background(), decay, 0, 4, []float64{1, 0},
		Settings{Method: Radau, RTol: 1e-8, ATol: 1e-12, Times: []float64{2, 4}})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, t := range res.T {
		fmt.Printf("t=%g A=%.6f exact=%.6f\n", t, res.Y[i][0], math.Exp(-0.5*t))
	}
	// Output:
	// t=2 A=0.367879 exact=0.367879
	// t=4 A=0.135335 exact=0.135335
}
