package solve

import (
	"context"
	"errors"
	"math"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"
)

// decaySystem is y' = −k·y for every component.
func decaySystem(n int, k float64) *closureSystem {
	return &closureSystem{n: n, auto: true,
		f: func(_ float64, y, dy []float64) {
			for i := range y {
				dy[i] = -k * y[i]
			}
		},
		j: func(_ float64, _ []float64, j *mat.Dense) {
			j.Zero()
			for i := 0; i < n; i++ {
				j.Set(i, i, -k)
			}
		}}
}

// TestStopTimesDose checks landing on stop times and a bolus applied there
// against the closed form of first-order elimination with doses (common
// practice: superposition of exponentials).
func TestStopTimesDose(t *testing.T) {
	const k = 0.4
	exact := func(t float64) float64 {
		v := math.Exp(-k * t)
		for _, td := range []float64{3, 7} {
			if t >= td {
				v += 2 * math.Exp(-k*(t-td))
			}
		}
		return v
	}
	for _, m := range []Method{Rosenbrock, Explicit, Auto} {
		set := Settings{Method: m, RTol: 1e-9, ATol: 1e-12, StopTimes: []float64{3, 7},
			OnStop: func(_ float64, y []float64) { y[0] += 2 }}
		res, err := Solve(context.Background(), decaySystem(1, k), 0, 10, []float64{1}, set)
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		var seen3, seen7 int
		for i, ti := range res.T {
			if i > 0 && ti < res.T[i-1] {
				t.Fatalf("%s: times decrease at %d", m, i)
			}
			switch ti {
			case 3:
				seen3++
			case 7:
				seen7++
			}
		}
		// Every-step mode reports a stop time twice: before and after the dose.
		if seen3 != 2 || seen7 != 2 {
			t.Errorf("%s: stop times 3 and 7 seen %d and %d times, want 2 each (exactly, bit for bit)", m, seen3, seen7)
		}
		last := len(res.T) - 1
		if res.T[last] != 10 || math.Abs(res.Y[last][0]-exact(10)) > 1e-7 {
			t.Errorf("%s: y(10) = %.10g at t = %g, want %.10g", m, res.Y[last][0], res.T[last], exact(10))
		}
		// Fixed output times: at a stop time the state after the dose.
		set.Times = []float64{0, 2.5, 3, 5, 7, 10}
		res, err = Solve(context.Background(), decaySystem(1, k), 0, 10, []float64{1}, set)
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		for i, ti := range res.T {
			if d := math.Abs(res.Y[i][0] - exact(ti)); d > 1e-7 {
				t.Errorf("%s: y(%g) = %.10g, want %.10g", m, ti, res.Y[i][0], exact(ti))
			}
		}
	}
}

// TestWideScalesNonNegative integrates a chain of first-order steps whose
// rates range from 1e8 to 1e-12 over a span of 1e12, with values from 1e-20
// to 1. It must finish, keep every output ≥ 0 and conserve the total (each
// step moves mass from one species to the next: common practice).
func TestWideScalesNonNegative(t *testing.T) {
	// Rates 1e8, 1e7, …, 1e-8, then 1e-12 into the final species.
	const n = 19
	k := make([]float64, n-1)
	for i := range k {
		k[i] = math.Pow(10, 8-float64(i))
	}
	k[n-2] = 1e-12
	sys := &closureSystem{n: n, auto: true,
		f: func(_ float64, y, dy []float64) {
			for i := range dy {
				dy[i] = 0
			}
			for i, ki := range k {
				r := ki * y[i]
				dy[i] -= r
				dy[i+1] += r
			}
		},
		j: func(_ float64, _ []float64, j *mat.Dense) {
			j.Zero()
			for i, ki := range k {
				j.Set(i, i, -ki)
				j.Set(i+1, i, ki)
			}
		}}
	y0 := make([]float64, n)
	y0[0] = 1
	times := append([]float64{0}, LogTimes(1e-10, 1e12, 45)...)
	for _, m := range []Method{Rosenbrock, Auto} {
		res, err := Solve(context.Background(), sys, 0, 1e12, y0,
			Settings{Method: m, RTol: 1e-6, ATol: 1e-20, NonNegative: true, Times: times})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		t.Logf("%s: %d steps, %d rejected, %d non-negativity fixes; %s", m, res.Steps, res.Rejected, res.NonNegFixes, res.Choice)
		for i, row := range res.Y {
			var sum float64
			for j, v := range row {
				if v < 0 {
					t.Errorf("%s: component %d = %g < 0 at t = %g", m, j, v, res.T[i])
				}
				sum += v
			}
			if math.Abs(sum-1) > 1e-5 {
				t.Errorf("%s: total %.8g at t = %g, want 1", m, sum, res.T[i])
			}
		}
		// At t = 1e12 the steps faster than 1e-7 have long finished (their
		// delays sum to about 1e7, 1e-5 of the span), so the final species
		// follows the two-step chain with rates ka = 1e-8, kb = 1e-12:
		// C = 1 − e^(−ka·t) − ka/(kb − ka)·(e^(−ka·t) − e^(−kb·t)) (Bateman 1910).
		ka, kb, tt := 1e-8, 1e-12, 1e12
		want := 1 - math.Exp(-ka*tt) - ka/(kb-ka)*(math.Exp(-ka*tt)-math.Exp(-kb*tt))
		if got := res.Y[len(res.Y)-1][n-1]; math.Abs(got-want) > 3e-5 {
			t.Errorf("%s: final species %.8g at t = 1e12, want %.8g", m, got, want)
		}
	}
}

// TestBlowUp: y' = y², y(0) = 1 has y = 1/(1 − t), which blows up at t = 1
// (common practice). The solve must stop there with a *StepError, a
// message giving the time and a plain cause, and the partial solution.
func TestBlowUp(t *testing.T) {
	sys := &closureSystem{n: 1, auto: true,
		f: func(_ float64, y, dy []float64) { dy[0] = y[0] * y[0] },
		j: func(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, 2*y[0]) }}
	for _, m := range []Method{Rosenbrock, Explicit, Auto} {
		res, err := Solve(context.Background(), sys, 0, 2, []float64{1}, Settings{Method: m})
		var se *StepError
		if !errors.As(err, &se) {
			t.Fatalf("%s: error %v, want a *StepError", m, err)
		}
		t.Logf("%s: %v (after %d steps)", m, err, res.Steps)
		// The numerical solution lags the exact one slightly, so its blow-up
		// comes within a small distance of t = 1.
		if math.Abs(se.T-1) > 1e-3 {
			t.Errorf("%s: stopped at t = %.9g, want about 1", m, se.T)
		}
		if msg := err.Error(); !strings.Contains(msg, "t = 0.99") && !strings.Contains(msg, "t = 1") {
			t.Errorf("%s: message %q does not give the time", m, msg)
		}
		if !strings.Contains(err.Error(), "without bound") && !strings.Contains(err.Error(), "infinite") {
			t.Errorf("%s: message %q gives no plain cause", m, err)
		}
		if res == nil || len(res.T) < 2 || res.T[len(res.T)-1] != se.T {
			t.Errorf("%s: partial result missing or not up to the last accepted step", m)
		}
	}
}

// TestNaNNamesComponent: a rate that turns NaN must be reported with the
// index of its component.
func TestNaNNamesComponent(t *testing.T) {
	sys := &closureSystem{n: 3,
		f: func(tt float64, y, dy []float64) {
			dy[0] = -y[0]
			dy[1] = -y[1]
			dy[2] = math.Sqrt(1 - tt) // NaN for t > 1
		},
		j: func(_ float64, _ []float64, j *mat.Dense) {
			j.Zero()
			j.Set(0, 0, -1)
			j.Set(1, 1, -1)
		}}
	for _, m := range []Method{Rosenbrock, Explicit, Auto} {
		_, err := Solve(context.Background(), sys, 0, 2, []float64{1, 1, 0}, Settings{Method: m})
		var se *StepError
		if !errors.As(err, &se) || se.Component != 2 || !strings.Contains(err.Error(), "component 2") {
			t.Errorf("%s: error %v, want a *StepError naming component 2", m, err)
		} else {
			t.Logf("%s: %v", m, err)
		}
	}
	// NaN at the start point itself.
	_, err := Solve(context.Background(), sys, 1.5, 2, []float64{1, 1, 0}, Settings{Method: Rosenbrock})
	var se *StepError
	if !errors.As(err, &se) || se.Component != 2 || !strings.Contains(err.Error(), "NaN") {
		t.Errorf("start point: error %v, want a *StepError naming component 2 as NaN", err)
	}
}

// TestCancel checks that a cancelled solve returns promptly with an error
// wrapping ctx.Err() (a responsiveness check, not a speed target).
func TestCancel(t *testing.T) {
	// Harmonic oscillator over a very long span at a tight tolerance.
	sys := &closureSystem{n: 2, auto: true,
		f: func(_ float64, y, dy []float64) { dy[0], dy[1] = y[1], -y[0] },
		j: func(_ float64, _ []float64, j *mat.Dense) {
			j.Set(0, 0, 0)
			j.Set(0, 1, 1)
			j.Set(1, 0, -1)
			j.Set(1, 1, 0)
		}}
	for _, m := range []Method{Explicit, Rosenbrock} {
		ctx, cancel := context.WithCancel(context.Background())
		var cancelled atomic.Int64
		timer := time.AfterFunc(20*time.Millisecond, func() {
			cancelled.Store(time.Now().UnixNano())
			cancel()
		})
		res, err := Solve(ctx, sys, 0, 1e9, []float64{1, 0},
			Settings{Method: m, RTol: 1e-12, ATol: 1e-14, MaxSteps: 1 << 40, Times: []float64{1e9}})
		back := time.Now()
		timer.Stop()
		cancel()
		if !errors.Is(err, context.Canceled) {
			t.Fatalf("%s: error %v, want one wrapping context.Canceled", m, err)
		}
		delay := back.Sub(time.Unix(0, cancelled.Load()))
		t.Logf("%s: returned %v after cancel, %d steps done: %v", m, delay, res.Steps, err)
		if delay > 100*time.Millisecond {
			t.Errorf("%s: returned %v after cancel, want < 100 ms", m, delay)
		}
	}
}

// TestValidation checks that bad input gets an error naming the problem.
func TestValidation(t *testing.T) {
	sys := decaySystem(2, 1)
	y0 := []float64{1, 1}
	cases := []struct {
		name     string
		t0, t1   float64
		y0       []float64
		set      Settings
		sys      System
		fragment string
	}{
		{"reversed span", 1, 0, y0, Settings{}, sys, "must be after"},
		{"NaN end", 0, math.NaN(), y0, Settings{}, sys, "end time"},
		{"short y0", 0, 1, []float64{1}, Settings{}, sys, "has 1 values"},
		{"NaN y0", 0, 1, []float64{1, math.NaN()}, Settings{}, sys, "component 1"},
		{"negative y0", 0, 1, []float64{1, -1}, Settings{NonNegative: true}, sys, "component 1"},
		{"negative rtol", 0, 1, y0, Settings{RTol: -1}, sys, "relative tolerance"},
		{"tiny rtol", 0, 1, y0, Settings{RTol: 1e-17}, sys, "relative tolerance"},
		{"atol length", 0, 1, y0, Settings{ATolVec: []float64{1}}, sys, "absolute tolerances"},
		{"times order", 0, 1, y0, Settings{Times: []float64{0.5, 0.2}}, sys, "output times must increase"},
		{"times range", 0, 1, y0, Settings{Times: []float64{2}}, sys, "outside"},
		{"stop order", 0, 1, y0, Settings{StopTimes: []float64{0.5, 0.5}}, sys, "stop times must increase"},
		{"method", 0, 1, y0, Settings{Method: "leapfrog"}, sys, "unknown method"},
		{"nil system", 0, 1, y0, Settings{}, nil, "no system"},
	}
	for _, c := range cases {
		_, err := Solve(context.Background(), c.sys, c.t0, c.t1, c.y0, c.set)
		if err == nil || !strings.Contains(err.Error(), c.fragment) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.fragment)
		}
	}
}

// TestMaxSteps checks the step limit's error.
func TestMaxSteps(t *testing.T) {
	res, err := Solve(context.Background(), hiresSystem{}, 0, hiresTEnd, hiresY0(),
		Settings{Method: Explicit, MaxSteps: 50})
	var se *StepError
	if !errors.As(err, &se) || !strings.Contains(err.Error(), "took more than 50 steps") {
		t.Fatalf("error %v, want a *StepError about the step limit", err)
	}
	if res.Steps != 50 || len(res.T) != 51 {
		t.Errorf("partial result has %d steps and %d rows, want 50 and 51", res.Steps, len(res.T))
	}
}

// TestProgress checks that progress is reported, grows and ends at 1.
func TestProgress(t *testing.T) {
	var got []float64
	_, err := Solve(context.Background(), polluSystem(), 0, polluTEnd, polluY0(),
		Settings{RTol: 1e-10, ATol: 1e-14, ProgressEvery: time.Nanosecond,
			Progress: func(f float64) { got = append(got, f) }})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) < 2 || got[len(got)-1] != 1 {
		t.Fatalf("progress %v: want several calls ending with 1", got)
	}
	for i := 1; i < len(got); i++ {
		if got[i] < got[i-1] || got[i] > 1 {
			t.Fatalf("progress not increasing within [0, 1]: %v", got)
		}
	}
}

// TestSetSystemReuse checks that a Solver reused with another system of the
// same size gives the same answer as a fresh one.
func TestSetSystemReuse(t *testing.T) {
	set := Settings{Method: Rosenbrock, RTol: 1e-8, Times: []float64{1, 2}}
	sv := NewSolver(decaySystem(2, 1), set)
	if _, err := sv.Solve(context.Background(), 0, 2, []float64{1, 1}); err != nil {
		t.Fatal(err)
	}
	sv.SetSystem(decaySystem(2, 3))
	a, err := sv.Solve(context.Background(), 0, 2, []float64{1, 2})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := Solve(context.Background(), decaySystem(2, 3), 0, 2, []float64{1, 2}, set)
	for i := range a.Y {
		for j := range a.Y[i] {
			if a.Y[i][j] != b.Y[i][j] {
				t.Errorf("reused solver y[%d][%d] = %g, fresh %g", i, j, a.Y[i][j], b.Y[i][j])
			}
		}
	}
	// exp(−3·2)·2 (common practice).
	if d := math.Abs(a.Y[1][1] - 2*math.Exp(-6)); d > 1e-9 {
		t.Errorf("y(2) off by %g", d)
	}
}

// TestAllocsPerStep checks that steps allocate nothing: a solve of 10× as
// many steps must allocate exactly as often.
func TestAllocsPerStep(t *testing.T) {
	for _, m := range []Method{Rosenbrock, Explicit, Auto} {
		count := func(span float64) (float64, int) {
			times := LinearTimes(0, span, 5)
			sv := NewSolver(hiresSystem{}, Settings{Method: m, RTol: 1e-6, MaxStep: 0.1, Times: times})
			var steps int
			a := testing.AllocsPerRun(1, func() {
				res, err := sv.Solve(context.Background(), 0, span, hiresY0())
				if err != nil {
					t.Fatal(err)
				}
				steps = res.Steps
			})
			return a, steps
		}
		// Auto starts HIRES with the explicit method on short spans and
		// switches (one extra message); on these spans it starts stiff.
		short := 30.0
		if m == Auto {
			short = 300
		}
		a1, s1 := count(short)
		a2, s2 := count(10 * short)
		t.Logf("%s: %d steps %.0f allocs; %d steps %.0f allocs", m, s1, a1, s2, a2)
		if s2 < 5*s1 {
			t.Fatalf("%s: step counts %d and %d do not differ enough", m, s1, s2)
		}
		if a1 != a2 {
			t.Errorf("%s: %.0f allocations for %d steps but %.0f for %d steps", m, a1, s1, a2, s2)
		}
	}
}

// countingLU wraps the dense LU to check that Settings.LinearSolver reaches
// every implicit method.
type countingLU struct {
	*LU
	factors *int
}

func (c countingLU) Factor(m []float64) error { *c.factors++; return c.LU.Factor(m) }

func TestLinearSolverSetting(t *testing.T) {
	for _, m := range []Method{Rosenbrock, Radau, BDF} {
		var n int
		s := Settings{Method: m, LinearSolver: func(dim int) LinearSolver { return countingLU{NewLU(dim), &n} }}
		res, err := Solve(context.Background(), hiresSystem{}, 0, 321.8122, hiresY0(), s)
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		if n == 0 || n > res.Factorizations {
			t.Errorf("%s: the custom solver factorized %d times; the solve counted %d factorizations", m, n, res.Factorizations)
		}
	}
}

// negSource is y' = −1: a rate that keeps pushing y below zero.
type negSource struct{}

func (negSource) Dim() int                                      { return 1 }
func (negSource) RHS(_ float64, _, dy []float64)                { dy[0] = -1 }
func (negSource) Jacobian(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, 0) }

// A rate that stays negative at zero cannot be honoured with non-negativity
// on; the error must name the component instead of blaming the tolerance
// (common practice: y(t) = 1 − t reaches 0 at t = 1).
func TestNonNegativityStallNamed(t *testing.T) {
	_, err := Solve(context.Background(), negSource{}, 0, 10, []float64{1},
		Settings{NonNegative: true, MaxSteps: 2000, Method: Explicit})
	var se *StepError
	if !errors.As(err, &se) {
		t.Fatalf("want a *StepError, got %v", err)
	}
	if se.Component != 0 || !strings.Contains(se.Error(), "component 0 is at zero") || math.Abs(se.T-1) > 1e-3 {
		t.Errorf("error %q (component %d, t = %g): want component 0 named, stalled near t = 1", se, se.Component, se.T)
	}
}

// A stiff problem forced onto the explicit method is diagnosed as stiff,
// with the stiff methods named, and not blamed on non-negativity (issue
// 17). y' = k − λy with λ = 10⁵ and k/λ = 10⁻¹³, below the absolute
// tolerance: the exact solution relaxes to k/λ at rate λ (closed form of a
// linear ODE). An explicit method's step size is bounded by about 3.3/λ
// (Dormand–Prince's stability interval on the negative real axis, Hairer &
// Wanner II, IV.2, from memory), which is what runs out of steps; at that
// bound y oscillates about k/λ and is clipped at zero on many steps.
// Before, the message only said the problem "may need a looser tolerance
// or a stiff method"; the stiffness verdict now also comes before the
// non-negativity diagnosis, which may not blame a stiff problem.
func TestExplicitStiffDiagnosis(t *testing.T) {
	const lambda, k = 1e5, 1e-8
	sys := &closureSystem{n: 1, auto: true,
		f: func(_ float64, y, dy []float64) { dy[0] = k - lambda*y[0] },
		j: func(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, -lambda) }}
	for _, maxSteps := range []int{20000, 20001, 20002, 20003} {
		for _, nonneg := range []bool{true, false} {
			sv := NewSolver(sys, Settings{Method: Explicit, RTol: 1e-6, ATol: 1e-12, NonNegative: nonneg, MaxSteps: maxSteps})
			_, err := sv.Solve(context.Background(), 0, 100, []float64{1})
			var se *StepError
			if !errors.As(err, &se) {
				t.Fatalf("non-negative %v: error %v, want a StepError", nonneg, err)
			}
			msg := se.Error()
			if strings.Contains(msg, "non-negative") || se.Component >= 0 {
				t.Errorf("non-negative %v, %d steps: %q blames non-negativity (component %d)", nonneg, maxSteps, msg, se.Component)
			}
			for _, want := range []string{"the problem is stiff", "stability bound", "bdf, radau or rosenbrock"} {
				if !strings.Contains(msg, want) {
					t.Errorf("non-negative %v, %d steps: %q lacks %q", nonneg, maxSteps, msg, want)
				}
			}
		}
	}
	// The same problem with a stiff method solves.
	if _, err := NewSolver(sys, Settings{Method: BDF, RTol: 1e-6, ATol: 1e-12, NonNegative: true}).Solve(context.Background(), 0, 100, []float64{1}); err != nil {
		t.Errorf("BDF: %v", err)
	}
	// A non-stiff problem that runs out of steps is not called stiff.
	slow := &closureSystem{n: 1, auto: true,
		f: func(t float64, y, dy []float64) { dy[0] = math.Cos(t) },
		j: func(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, 0) }}
	_, err := NewSolver(slow, Settings{Method: Explicit, RTol: 1e-10, ATol: 1e-14, MaxSteps: 50}).Solve(context.Background(), 0, 1000, []float64{0})
	if err == nil || strings.Contains(err.Error(), "is stiff") {
		t.Errorf("oscillation out of steps: %v; want an error not calling it stiff", err)
	}
}
