package network

import (
	"context"
	"math"
	"testing"

	"kinetarium/solve"
)

// sensSolve solves sys from its initial state with forward sensitivities
// to the targets (the jump rule as the hook unless noJump) at rtol 1e-10.
func sensSolve(t *testing.T, m *Model, targets []SensTarget, overrides map[string]bool, set map[string]float64, tEnd float64, times []float64, noJump bool) *solve.Result {
	t.Helper()
	net, problems := Check(m)
	if err := problems.Err(); err != nil {
		t.Fatal(err)
	}
	sys, err := net.Compile()
	if err != nil {
		t.Fatal(err)
	}
	for ref, v := range set {
		if err := sys.SetEventValue(ref, v); err != nil {
			t.Fatal(err)
		}
	}
	j, err := net.SensJump(sys, targets, overrides)
	if err != nil {
		t.Fatal(err)
	}
	for k, why := range j.Inexact() {
		if why != "" {
			t.Fatalf("target %d is not carried by the rule: %s", k, why)
		}
	}
	np := len(sys.Parameters())
	ss := &solve.SensSettings{ErrorControl: true}
	if !noJump {
		ss.Jump = j.Jump
	}
	for _, tg := range targets {
		q := solve.Sensitivity{Param: -1}
		switch tg.Kind {
		case SensParameter:
			q.Param = tg.Index
		case SensVolume:
			q.Param = np + tg.Index
		case SensInitial:
			q.Initial = make([]float64, sys.Dim())
			q.Initial[tg.Index] = 1
		}
		ss.Quantities = append(ss.Quantities, q)
	}
	j.Reset()
	res, err := solve.Solve(context.Background(), sys, 0, tEnd, sys.Initial(),
		solve.Settings{RTol: 1e-10, ATol: 1e-14, Times: times, Method: solve.BDF, Sens: ss})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// bolusSens is C(t) of repeated IV boluses and its derivatives by
// superposition (Gibaldi & Perrier, Pharmacokinetics, 2nd ed. 1982; from
// memory, the same closed form as TestEventRepeatedBolus; common
// practice): C = C0·e^(−kt) + (D/V)·Σ_{j: jτ ≤ t} e^(−k(t − jτ)), j < 3.
// It returns C and ∂C/∂(k, D, τ, V, C0).
func bolusSens(t, k, d, tau, v, c0 float64) (c float64, dk, dd, dtau, dv, dc0 float64) {
	e0 := math.Exp(-k * t)
	c, dk, dc0 = c0*e0, -c0*t*e0, e0
	for j := 0; j < 3 && float64(j)*tau <= t; j++ {
		s := t - float64(j)*tau
		e := math.Exp(-k * s)
		c += d / v * e
		dk -= d / v * s * e
		dd += e / v
		dtau += d / v * k * float64(j) * e
		dv -= d / (v * v) * e
	}
	return
}

// TestSensJumpRepeatedBolus carries the sensitivities of repeated IV
// boluses (D = 100 into V = 10 every τ = 12 h, three doses, k = 0.1,
// C0 = 1) across the doses and compares them with the derivatives of the
// closed form (bolusSens): to the elimination constant, the dose
// parameter, the interval parameter, the volume and the initial value,
// and, with the event's quantities set from outside, to the dose's amount
// and interval as event knobs. Bound: 1e-7 of the largest sensitivity over
// the run (rtol 1e-10 with error control). Without the rule the
// sensitivities to the dose and the interval pass the doses unchanged and
// must miss the bound by far, which shows that the check can fail.
func TestSensJumpRepeatedBolus(t *testing.T) {
	m := pkModel(Event{Name: "iv", At: Number(0), Every: Named("tau"), Count: 3, Add: []Change{{"C", "dose"}}})
	m.Species[0].Initial = 1
	times := []float64{5, 13, 20, 29, 36.5, 47}
	const k, d, tau, v, c0 = 0.1, 100, 12, 10, 1
	pk, pd, ptau := 0, 1, 2 // parameter indices in pkModel
	targets := []SensTarget{{Kind: SensParameter, Index: pk}, {Kind: SensParameter, Index: pd}, {Kind: SensParameter, Index: ptau},
		{Kind: SensVolume, Index: 0}, {Kind: SensInitial, Index: 0}}
	names := []string{"k", "dose", "tau", "volume:body", "init:C"}
	// check compares quantity qs[c] of res with closed-form column cols[c].
	check := func(res *solve.Result, qs, cols []int, names []string, want func(i int) []float64, log bool) (worst float64) {
		var big float64
		for i := range res.T {
			for _, w := range want(i) {
				big = math.Max(big, math.Abs(w))
			}
		}
		for i, tt := range res.T {
			w := want(i)
			for c, j := range cols {
				got := res.Sens(i, qs[c])[0]
				err := math.Abs(got-w[j]) / big
				worst = math.Max(worst, err)
				if err > 1e-7 && log {
					t.Logf("∂C/∂%s at t = %g: %.10g, closed form %.10g", names[c], tt, got, w[j])
				}
			}
		}
		return worst
	}
	closed := func(i int) []float64 {
		_, dk, dd, dt, dv, dc0 := bolusSens(times[i], k, d, tau, v, c0)
		return []float64{dk, dd, dt, dv, dc0}
	}
	res := sensSolve(t, m, targets, nil, nil, 48, times, false)
	if w := check(res, []int{0, 1, 2, 3, 4}, []int{0, 1, 2, 3, 4}, names, closed, true); w > 1e-7 {
		t.Errorf("sensitivities differ from the closed form by %.3g of the largest (bound 1e-7)", w)
	} else {
		t.Logf("largest difference from the closed form: %.2g of the largest sensitivity", w)
	}
	// The dose's amount and interval as event knobs, set from outside.
	over := map[string]bool{"iv.add.C": true, "iv.every": true}
	res = sensSolve(t, m, []SensTarget{{Kind: SensEvent, Event: "iv.add.C"}, {Kind: SensEvent, Event: "iv.every"}}, over,
		map[string]float64{"iv.add.C": d, "iv.every": tau}, 48, times, false)
	if w := check(res, []int{0, 1}, []int{1, 2}, []string{"event:iv.add.C", "event:iv.every"}, closed, true); w > 1e-7 {
		t.Errorf("event knobs: sensitivities differ from the closed form by %.3g of the largest (bound 1e-7)", w)
	}
	// Without the jump rule.
	res = sensSolve(t, m, targets, nil, nil, 48, times, true)
	w := check(res, []int{1, 2}, []int{1, 2}, names[1:3], closed, false)
	if w < 1e3*1e-7 {
		t.Errorf("without the jump rule the sensitivities to dose and tau are off by only %.3g; the check cannot tell", w)
	}
	t.Logf("without the jump rule: off by %.2g of the largest sensitivity", w)
}

// TestSensJumpTriggered checks the dτ/dq term of a triggered event. A
// decays from A0 = 10 at rate k = 0.2; when A falls below 2, at τ =
// ln(A0/2)/k, B is set to 1 and then decays at k2 = 0.3, so B(t) =
// e^(−k2(t − τ)) after τ (first-order decay; common practice) and
// ∂B/∂k = −B·k2·τ/k, ∂B/∂k2 = −(t − τ)·B, ∂B/∂A0 = B·k2/(k·A0). Bound:
// 1e-6 of the largest (the crossing is located by bisection to rtol·h
// and enters through dτ/dq).
func TestSensJumpTriggered(t *testing.T) {
	m := &Model{
		Compartments: []Compartment{{Name: "c", Volume: 1}},
		Species:      []Species{{Name: "A", Compartment: "c", Initial: 10}, {Name: "B", Compartment: "c"}},
		Parameters:   []Parameter{{Name: "k", Value: 0.2}, {Name: "k2", Value: 0.3}},
		Reactions: []Reaction{{Name: "a", Equation: "A ->", Rate: NewRate(MassAction, "k", "k")},
			{Name: "b", Equation: "B ->", Rate: NewRate(MassAction, "k", "k2")}},
		Events: []Event{{Name: "switch", When: "A < 2", Once: true, Set: []Change{{"B", "1"}}}},
	}
	const k, k2, a0 = 0.2, 0.3, 10
	tau := math.Log(a0/2) / k
	times := []float64{tau + 0.5, tau + 2, tau + 5, tau + 9}
	res := sensSolve(t, m, []SensTarget{{Kind: SensParameter, Index: 0}, {Kind: SensParameter, Index: 1}, {Kind: SensInitial, Index: 0}}, nil, nil, times[3], times, false)
	var big, worst float64
	want := make([][3]float64, len(times))
	for i, tt := range times {
		b := math.Exp(-k2 * (tt - tau))
		want[i] = [3]float64{-b * k2 * tau / k, -(tt - tau) * b, b * k2 / (k * a0)}
		for _, w := range want[i] {
			big = math.Max(big, math.Abs(w))
		}
	}
	for i, tt := range times {
		for j, name := range []string{"k", "k2", "init:A"} {
			got := res.Sens(i, j)[1]
			if d := math.Abs(got-want[i][j]) / big; d > 1e-6 {
				t.Errorf("∂B/∂%s at t = %g: %.10g, closed form %.10g (difference %.2g of the largest, bound 1e-6)", name, tt, got, want[i][j], d)
			}
			worst = math.Max(worst, math.Abs(got-want[i][j])/big)
		}
	}
	t.Logf("largest difference from the closed form: %.2g of the largest sensitivity", worst)
}

// The jump allocates nothing once prepared (hot loop rule): it runs at
// every event of every solve of a fit.
func TestSensJumpAllocates(t *testing.T) {
	m := pkModel(Event{Name: "iv", At: Number(0), Every: Named("tau"), Count: 3, Add: []Change{{"C", "dose"}}})
	net, _ := Check(m)
	sys, err := net.Compile()
	if err != nil {
		t.Fatal(err)
	}
	j, err := net.SensJump(sys, []SensTarget{{Kind: SensParameter, Index: 0}, {Kind: SensParameter, Index: 2}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	y := []float64{3, 1}
	s := [][]float64{{0.1, 0}, {0.2, 0}}
	fired := []string{"iv"}
	if a := testing.AllocsPerRun(100, func() { j.Reset(); j.Jump(12, fired, y, y, s) }); a != 0 {
		t.Errorf("Jump allocates %v times per call", a)
	}
}
