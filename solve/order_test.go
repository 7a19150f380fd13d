package solve

import (
	"context"
	"math"
	"testing"
)

// fixedStepError integrates a closed-form case with n constant steps of a
// stepper's raw step (no error control) and returns the error at the end.
func fixedStepError(t *testing.T, m Method, c closedFormCase, n int) float64 {
	t.Helper()
	var stats Stats
	p := newProblem(c.sys, Settings{}, &stats)
	p.tEnd, p.maxStep = c.tEnd, c.tEnd
	h := c.tEnd / float64(n)
	var y []float64
	switch m {
	case Rosenbrock:
		r := newRosenbrock(p)
		if err := r.start(0, c.y0, h); err != nil {
			t.Fatal(err)
		}
		for i := 0; i < n; i++ {
			if err := r.prepare(); err != nil {
				t.Fatal(err)
			}
			if r.luH != h {
				if err := r.factor(h); err != nil {
					t.Fatal(err)
				}
			}
			r.attempt(h)
			copy(r.y, r.yNew)
			r.t = float64(i+1) * h
		}
		y = r.y
	case Explicit:
		d := newDopri(p)
		if err := d.start(0, c.y0, h); err != nil {
			t.Fatal(err)
		}
		for i := 0; i < n; i++ {
			d.attempt(h)
			copy(d.y, d.yNew)
			copy(d.k[0], d.k[6])
			d.t = float64(i+1) * h
		}
		y = d.y
	}
	want := make([]float64, len(y))
	c.exact(c.tEnd, want)
	var e float64
	for i := range y {
		e = math.Max(e, math.Abs(y[i]-want[i]))
	}
	return e
}

// TestConvergenceOrder measures the order of the fixed-step methods from
// errors at halved step sizes: 4 for RODAS4 and 5 for Dormand–Prince
// (Hairer & Wanner 1996, IV.7; Dormand & Prince 1980), within ±0.3.
func TestConvergenceOrder(t *testing.T) {
	cases := map[string]closedFormCase{}
	for _, c := range closedFormCases() {
		cases[c.name] = c
	}
	for _, tc := range []struct {
		m     Method
		order float64
		ns    []int
	}{
		{Rosenbrock, 4, []int{10, 20, 40, 80}},
		{Explicit, 5, []int{20, 40, 80, 160}},
	} {
		for _, name := range []string{"michaelis-menten", "bateman", "time-dependent"} {
			c := cases[name]
			var slopes []float64
			prev := fixedStepError(t, tc.m, c, tc.ns[0])
			for _, n := range tc.ns[1:] {
				e := fixedStepError(t, tc.m, c, n)
				slopes = append(slopes, math.Log2(prev/e))
				prev = e
			}
			t.Logf("%s %s: slopes %.3f (last error %.3g)", tc.m, name, slopes, prev)
			if s := slopes[len(slopes)-1]; math.Abs(s-tc.order) > 0.3 {
				t.Errorf("%s %s: observed order %.2f, want %g ± 0.3", tc.m, name, s, tc.order)
			}
		}
	}
}

// TestDenseOutputOrder checks the continuous extensions: halving the step
// must reduce the error at mid-step points by the dense order (3 for
// RODAS4's rodas.f interpolant, 4 for dopri5.f's), at least.
func TestDenseOutputOrder(t *testing.T) {
	c := closedFormCases()[3] // Michaelis–Menten
	for _, tc := range []struct {
		m     Method
		order float64
	}{{Rosenbrock, 3}, {Explicit, 4}} {
		var errs []float64
		for _, h := range []float64{0.2, 0.1, 0.05} {
			times := LinearTimes(0, c.tEnd, int(c.tEnd/h)*3+1)
			res, err := Solve(context.Background(), c.sys, 0, c.tEnd, c.y0,
				Settings{Method: tc.m, RTol: 1e-3, InitialStep: h, MaxStep: h, Times: times})
			if err != nil {
				t.Fatal(err)
			}
			var e float64
			want := []float64{0}
			for i, ti := range res.T {
				c.exact(ti, want)
				e = math.Max(e, math.Abs(res.Y[i][0]-want[0]))
			}
			errs = append(errs, e)
		}
		s := math.Log2(errs[1] / errs[2])
		t.Logf("%s dense output: errors %.3g, slope %.2f", tc.m, errs, s)
		if s < tc.order-0.3 {
			t.Errorf("%s dense output order %.2f, want ≥ %g", tc.m, s, tc.order)
		}
	}
}

// TestHIRESErrorFalls checks that the error at the end of HIRES (against
// the Test Set's reference) falls as rtol goes from 1e-4 to 1e-10.
func TestHIRESErrorFalls(t *testing.T) {
	for _, m := range []Method{Rosenbrock, Auto} {
		prev := math.Inf(1)
		for _, rtol := range []float64{1e-4, 1e-6, 1e-8, 1e-10} {
			res, err := Solve(context.Background(), hiresSystem{}, 0, hiresTEnd, hiresY0(),
				Settings{Method: m, RTol: rtol, ATol: rtol * 1e-4, Times: []float64{hiresTEnd}})
			if err != nil {
				t.Fatal(err)
			}
			var e float64
			for i, v := range res.Y[0] {
				e = math.Max(e, math.Abs(v-hiresRef[i])/math.Abs(hiresRef[i]))
			}
			t.Logf("%s rtol %g: max relative error %.3g, %d steps", m, rtol, e, res.Steps)
			if !(e < prev) {
				t.Errorf("%s: error %.3g at rtol %g did not fall below %.3g", m, e, rtol, prev)
			}
			prev = e
		}
	}
}
