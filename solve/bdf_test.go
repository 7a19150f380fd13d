package solve

import (
	"context"
	"fmt"
	"math"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

func newBDFStepper(p *problem) stepper { return newBDF(p) }

func TestBDFClosedForms(t *testing.T) { checkClosedForms(t, newBDFStepper, 100) }

// TestBDFTestset checks BDF on HIRES and POLLU against the reference
// solutions of the Test Set for IVP Solvers (Mazzia & Magherini, Univ. Bari,
// release 2.4): scaled error at most 10 from rtol 1e-6 to 1e-10, the bound
// of issue 16. Before the Newton tolerance was tied to the controller's aim
// HIRES measured 12.7 at 1e-9 and 48 at 1e-10 (CVODE's BDF: 297 at 1e-10,
// bench/cvode-comparison.md).
func TestBDFTestset(t *testing.T) {
	checkTestset(t, newBDFStepper, []float64{1e-6, 1e-8, 1e-9, 1e-10}, func(float64) float64 { return 10 })
}

// TestBDFControllers runs HIRES and POLLU (Test Set for IVP Solvers,
// release 2.4) with the calibrated controller and with the unbiased one it
// replaced, at rtol 1e-6 and 1e-8. The calibrated one must factorize less
// (it keeps h unless the step can grow by 1.5; measured 12–44% fewer) and
// reach the reference within 10 of the tolerance; the unbiased one is
// logged for comparison. The wall-time comparison at equal accuracy is in
// README (internal/workprecision), not in a timed test.
func TestBDFControllers(t *testing.T) {
	for _, c := range testsetCases() {
		for _, rtol := range []float64{1e-6, 1e-8} {
			var lu [2]int
			for i, ctl := range []bdfControl{bdfCalibrated, bdfUnbiased} {
				mk := func(p *problem) stepper { return newBDFKappa(p, bdfKappa, ctl) }
				y, st, err := runStepper(mk, c.sys, 0, c.tEnd, c.y0, Settings{RTol: rtol, ATol: c.atol, NonNegative: true})
				if err != nil {
					t.Fatalf("%s rtol %g: %v", c.name, rtol, err)
				}
				sc := scaledError(y, c.ref, rtol, c.atol)
				lu[i] = st.Factorizations
				t.Logf("%s rtol %g %s: scaled error %.3g, %d steps, %d rejected, %d factorizations",
					c.name, rtol, []string{"calibrated", "unbiased"}[i], sc, st.Steps, st.Rejected, st.Factorizations)
				if i == 0 && sc > 10 {
					t.Errorf("%s rtol %g: calibrated scaled error %.3g > 10", c.name, rtol, sc)
				}
			}
			if lu[0] >= lu[1] {
				t.Errorf("%s rtol %g: calibrated controller factorized %d times, unbiased %d", c.name, rtol, lu[0], lu[1])
			}
		}
	}
}

// TestBDFKappaChoice compares the NDFs (κ of Shampine & Reichelt 1997) with
// the pure BDFs (κ = 0) on HIRES and POLLU and logs steps and errors; the
// default in newBDF follows this measurement. Both must meet the Test Set
// bound of TestBDFTestset at rtol 1e-8.
func TestBDFKappaChoice(t *testing.T) {
	const rtol = 1e-8
	for _, c := range testsetCases() {
		for _, v := range []struct {
			name  string
			kappa [bdfMaxOrder + 1]float64
		}{{"NDF", bdfKappa}, {"BDF", [bdfMaxOrder + 1]float64{}}} {
			mk := func(p *problem) stepper { return newBDFKappa(p, v.kappa, bdfCalibrated) }
			y, st, err := runStepper(mk, c.sys, 0, c.tEnd, c.y0, Settings{RTol: rtol, ATol: c.atol, NonNegative: true})
			if err != nil {
				t.Fatalf("%s %s: %v", c.name, v.name, err)
			}
			sc := scaledError(y, c.ref, rtol, c.atol)
			t.Logf("%s %s rtol %g: scaled error %.3g, %d steps, %d RHS, %d Jacobians, %d factorizations",
				c.name, v.name, rtol, sc, st.Steps, st.RHSEvals, st.JacobianEvals, st.Factorizations)
			if sc > 100 {
				t.Errorf("%s %s: scaled error %.3g > 100", c.name, v.name, sc)
			}
		}
	}
}

// TestBDFOrder measures the order of the formulas of order k = 1…5 with a
// fixed step and exact starting values on y' = −y + sin t (closed form
// (e^{−t} + sin t − cos t)/2). A k-step BDF or NDF has order k (Shampine &
// Reichelt 1997, section 2).
func TestBDFOrder(t *testing.T) {
	const tEnd = 4.0
	for k := 1; k <= bdfMaxOrder; k++ {
		var hs, errs []float64
		for _, nsteps := range []int{40, 56, 80, 112, 160} {
			h := tEnd / float64(nsteps)
			e, err := bdfFixedRun(k, h, nsteps)
			if err != nil {
				t.Fatal(err)
			}
			hs, errs = append(hs, h), append(errs, e)
		}
		slope := orderSlope(hs, errs)
		t.Logf("order %d: errors %.3e … %.3e, measured order %.3f", k, errs[0], errs[len(errs)-1], slope)
		if math.Abs(slope-float64(k)) > 0.3 {
			t.Errorf("order %d: measured order %.3f, want %d ± 0.3", k, slope, k)
		}
	}
}

// bdfFixedRun integrates y' = −y + sin t from its exact values at
// t = −k·h … 0 with order k and fixed step h for nsteps steps and returns the
// error at the end.
func bdfFixedRun(k int, h float64, nsteps int) (float64, error) {
	var stats Stats
	p := newProblem(forcedDecay, Settings{RTol: 1e-13, ATol: 1e-15}, &stats)
	b := newBDFKappa(p, bdfKappa, bdfCalibrated)
	if err := b.start(0, []float64{forcedDecayExact(0)}, h); err != nil {
		return 0, err
	}
	// Backward differences of the exact solution at 0, −h, …, −(k+1)h.
	vals := make([]float64, k+2)
	for i := range vals {
		vals[i] = forcedDecayExact(-float64(i) * h)
	}
	for j := 0; j <= k+1; j++ {
		b.d[j][0] = vals[0]
		for i := 0; i+1 < len(vals)-j; i++ {
			vals[i] -= vals[i+1]
		}
	}
	b.order, b.hAbs = k, h
	p.jac(0, b.d[0], b.jac)
	c := h / b.alpha[k]
	if err := b.factor(c); err != nil {
		return 0, err
	}
	for i := 0; i < nsteps; i++ {
		b.predict()
		tNew := b.t + h
		if !b.newton(tNew, c) {
			return 0, fmt.Errorf("order %d, h %g: Newton failed at t = %g", k, h, b.t)
		}
		b.t = tNew
		b.accept()
	}
	return math.Abs(b.d[0][0] - forcedDecayExact(b.t)), nil
}

// TestBDFDense checks the dense output between steps against the closed
// form of the chain A → B → C (Bateman 1910).
func TestBDFDense(t *testing.T) { checkDense(t, newBDFStepper, 100) }

// TestBDFNoAllocs checks that steps allocate nothing.
func TestBDFNoAllocs(t *testing.T) { checkNoAllocs(t, BDF, newBDFStepper) }

func TestBDFFailures(t *testing.T) { checkFailures(t, newBDFStepper) }

// TestBDFStops checks that steps land exactly on the limit they are given.
func TestBDFStops(t *testing.T) { checkStops(t, newBDFStepper) }

// TestBDFNonNegative integrates a fast irreversible binding A + B → C with
// B in slight excess at a loose tolerance: without the projection A
// undershoots below zero. Closed form (second-order kinetics with unequal
// initial amounts, common practice):
// A(t) = (b0 − a0)·a0 / (b0·e^{(b0−a0)kt} − a0).
func TestBDFNonNegative(t *testing.T) {
	checkNonNegative(t, newBDFStepper)
}

func TestRadauNonNegative(t *testing.T) { checkNonNegative(t, newRadau) }

func checkNonNegative(t *testing.T, mk func(*problem) stepper) {
	const k, a0, b0 = 1e4, 1.0, 1.001
	sys := funcSystem{n: 3,
		f: func(_ float64, y, dy []float64) {
			r := k * y[0] * y[1]
			dy[0], dy[1], dy[2] = -r, -r, r
		},
		j: func(_ float64, y []float64, j *mat.Dense) {
			j.Zero()
			j.Set(0, 0, -k*y[1])
			j.Set(0, 1, -k*y[0])
			j.Set(1, 0, -k*y[1])
			j.Set(1, 1, -k*y[0])
			j.Set(2, 0, k*y[1])
			j.Set(2, 1, k*y[0])
		}}
	var stats Stats
	const tEnd = 1.0
	p := newProblem(sys, Settings{RTol: 1e-3, ATol: 1e-9, NonNegative: true}, &stats)
	p.tEnd, p.maxStep = tEnd, tEnd
	st := mk(p)
	if err := st.start(0, []float64{a0, b0, 0}, 0); err != nil {
		t.Fatal(err)
	}
	out := make([]float64, 3)
	for tt := 0.0; tt < tEnd; {
		if err := st.step(tEnd); err != nil {
			t.Fatal(err)
		}
		tn, y := st.current()
		for i, v := range y {
			if v < 0 {
				t.Fatalf("t = %g: component %d = %g < 0", tn, i, v)
			}
		}
		st.dense((tt+tn)/2, out)
		for i, v := range out {
			if v < 0 {
				t.Fatalf("dense output at t = %g: component %d = %g < 0", (tt+tn)/2, i, v)
			}
		}
		tt = tn
	}
	_, y := st.current()
	exact := (b0 - a0) * a0 / (b0*math.Exp((b0-a0)*k*tEnd) - a0)
	t.Logf("A(%g) = %.4g (exact %.4g), %d non-negativity fixes", tEnd, y[0], exact, stats.NonNegFixes)
	if math.Abs(y[0]-exact) > 1e-6 || math.Abs(y[1]-(b0-a0+exact)) > 1e-6 {
		t.Errorf("A = %g, B = %g; want %g, %g", y[0], y[1], exact, b0-a0+exact)
	}
}

func BenchmarkBDFHIRES(b *testing.B) { benchTestset(b, newBDFStepper, testsetCases()[0]) }

// BenchmarkBDFControllerCost measures what the calibrated controller costs
// against the unbiased one at equal accuracy on HIRES and POLLU (Test Set
// for IVP Solvers, release 2.4, with its reference solutions), with less
// noise than a few tolerances a decade apart give: each controller runs at
// 25 tolerances, rtol 1e-4 … 1e-10 four to a decade, each solve timed as
// the fastest of 9, and log time is fitted by least squares as a straight
// line in log absolute error (scaled error · rtol). The metrics are the
// ratio of the fitted lines, calibrated ÷ unbiased, at the middle and the
// two ends of the error range both cover, and the residual of the
// calibrated line (in decades; the scatter about it). Run it alone on a
// quiet machine:
//
//	go test ./solve -run '^$' -bench BDFControllerCost -benchtime 1x
func BenchmarkBDFControllerCost(b *testing.B) {
	for _, c := range testsetCases() {
		b.Run(c.name, func(b *testing.B) {
			for b.Loop() {
				var lines [2][2][]float64 // [controller][log error, log seconds]
				for i, ctl := range []bdfControl{bdfCalibrated, bdfUnbiased} {
					mk := func(p *problem) stepper { return newBDFKappa(p, bdfKappa, ctl) }
					for j := 0; j <= 24; j++ {
						rtol := math.Pow(10, -4-float64(j)/4)
						best := time.Duration(math.MaxInt64)
						var y []float64
						for range 9 {
							t0 := time.Now()
							var err error
							y, _, err = runStepper(mk, c.sys, 0, c.tEnd, c.y0, Settings{RTol: rtol, ATol: c.atol, NonNegative: true})
							if err != nil {
								b.Fatalf("rtol %g: %v", rtol, err)
							}
							best = min(best, time.Since(t0))
						}
						lines[i][0] = append(lines[i][0], math.Log10(scaledError(y, c.ref, rtol, c.atol)*rtol))
						lines[i][1] = append(lines[i][1], math.Log10(best.Seconds()))
					}
				}
				a1, b1 := stat.LinearRegression(lines[0][0], lines[0][1], nil, false)
				a0, b0 := stat.LinearRegression(lines[1][0], lines[1][1], nil, false)
				lo := math.Max(floats.Min(lines[0][0]), floats.Min(lines[1][0]))
				hi := math.Min(floats.Max(lines[0][0]), floats.Max(lines[1][0]))
				ratio := func(x float64) float64 { return math.Pow(10, a1+b1*x-(a0+b0*x)) }
				var ss float64
				for j, x := range lines[0][0] {
					d := lines[0][1][j] - a1 - b1*x
					ss += d * d
				}
				b.ReportMetric(ratio((lo+hi)/2), "cal/unb-mid")
				b.ReportMetric(ratio(hi), "cal/unb-loose")
				b.ReportMetric(ratio(lo), "cal/unb-tight")
				b.ReportMetric(math.Sqrt(ss/float64(len(lines[0][0])-2)), "resid-dex")
			}
		})
	}
}
func BenchmarkBDFPOLLU(b *testing.B) { benchTestset(b, newBDFStepper, testsetCases()[1]) }

// ExampleSolve_bdf integrates the stiff chain A → B → C (k1 = 1, k2 = 1000)
// by the variable-order formulas and compares A with the closed form e^{−t}.
func ExampleSolve_bdf() {
	chain := funcSystem{n: 3,
		f: func(_ float64, y, dy []float64) {
			r1, r2 := y[0], 1000*y[1]
			dy[0], dy[1], dy[2] = -r1, r1-r2, r2
		},
		j: func(_ float64, _ []float64, j *mat.Dense) {
			j.Zero()
			j.Set(0, 0, -1)
			j.Set(1, 0, 1)
			j.Set(1, 1, -1000)
			j.Set(2, 1, 1000)
		},
	}
	res, err := Solve(context.Background(), chain, 0, 5, []float64{1, 0, 0},
		Settings{Method: BDF, RTol: 1e-8, ATol: 1e-12, NonNegative: true, Times: []float64{1, 5}})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, t := range res.T {
		fmt.Printf("t=%g A=%.5f exact=%.5f C=%.5f\n", t, res.Y[i][0], math.Exp(-t), res.Y[i][2])
	}
	// Output:
	// t=1 A=0.36788 exact=0.36788 C=0.63175
	// t=5 A=0.00674 exact=0.00674 C=0.99326
}
