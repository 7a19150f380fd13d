package solve

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// decayEvents is y' = −k·y with optional scheduled doses (add dose every
// tau, count times, the first at first) and an optional watched level: when
// y falls to level, it is refilled to refill.
type decayEvents struct {
	k                float64
	dose, first, tau float64
	count, given     int
	level, refill    float64
	watch            bool
	names            []string
}

func (d *decayEvents) Dim() int                                      { return 1 }
func (d *decayEvents) RHS(t float64, y, f []float64)                 { f[0] = -d.k * y[0] }
func (d *decayEvents) Jacobian(t float64, y []float64, j *mat.Dense) { j.Set(0, 0, -d.k) }
func (d *decayEvents) ResetEvents(t0 float64)                        { d.given = 0 }
func (d *decayEvents) NextEvent(t float64) float64 {
	if d.given < d.count {
		return d.first + float64(d.given)*d.tau
	}
	return math.Inf(1)
}
func (d *decayEvents) Conditions() int {
	if d.watch {
		return 1
	}
	return 0
}
func (d *decayEvents) Watch(t float64, y, g []float64) { g[0] = d.level - y[0] } // true when y ≤ level
func (d *decayEvents) Fire(t float64, y []float64, rose []bool) []string {
	d.names = d.names[:0]
	if rose != nil && rose[0] {
		y[0] = d.refill
		d.names = append(d.names, "refill")
	}
	for d.given < d.count && d.first+float64(d.given)*d.tau <= t {
		y[0] += d.dose
		d.given++
		d.names = append(d.names, "dose")
	}
	return d.names
}

// Repeated IV bolus into one compartment (Gibaldi & Perrier,
// Pharmacokinetics, 2nd ed. 1982; from memory, worked values in
// shared/reference/analytic-checks.md): D = 100, V = 10, CL = 1 (k = 0.1),
// tau = 12. Five hours after the 3rd dose C = 8.4423740382; the peak after
// the n-th dose is (D/V)(1 − e^(−n k tau))/(1 − e^(−k tau)). Every method,
// rtol 1e-10, agrees to 1e-8 relative.
func TestEventsRepeatedBolus(t *testing.T) {
	for _, m := range []Method{Auto, Rosenbrock, Radau, BDF, Explicit} {
		sys := &decayEvents{k: 0.1, dose: 10, first: 0, tau: 12, count: 3}
		times := []float64{0, 11.999, 24 + 5, 40}
		res, err := Solve(context.Background(), sys, 0, 40, []float64{0}, Settings{Method: m, RTol: 1e-10, ATol: 1e-14, Times: times})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		r := 1 - math.Exp(-0.1*12)
		want := []float64{10, 10 * math.Exp(-0.1*11.999), 8.4423740382, 10 * (1 - math.Exp(-3*0.1*12)) / r * math.Exp(-0.1*16)}
		for i, w := range want {
			if got := res.Y[i][0]; math.Abs(got-w) > 1e-8*w {
				t.Errorf("%s: C(%g) = %.12g, want %.12g", m, times[i], got, w)
			}
		}
		if len(res.Events) != 3 || res.Events[1].T != 12 || res.Events[2].Name != "dose" {
			t.Errorf("%s: firings %v, want 3 doses at 0, 12, 24", m, res.Events)
		}
		// The jump at the 3rd dose: just before it the 2nd dose's decay,
		// just after it that plus D/V.
		j := res.Jumps[2]
		before := 10 * (1 + math.Exp(-1.2)) * math.Exp(-1.2)
		if j.T != 24 || math.Abs(j.Before[0]-before) > 1e-8*before || math.Abs(j.After[0]-before-10) > 1e-8*before {
			t.Errorf("%s: jump %+v, want %g -> %g at 24", m, j, before, before+10)
		}
	}
}

// A watched level: y decays from 2 at rate k = 0.5 to the level 0.5 at
// t* = ln(2/0.5)/0.5 (first-order decay, common practice) and is refilled
// to 2 each time, so it fires every t* and the firing times are n·t*; each
// is located to within rtol·h plus the solution's own error.
func TestEventsLevelCrossing(t *testing.T) {
	for _, m := range []Method{Rosenbrock, BDF, Explicit, Radau} {
		sys := &decayEvents{k: 0.5, level: 0.5, refill: 2, watch: true}
		res, err := Solve(context.Background(), sys, 0, 10, []float64{2}, Settings{Method: m, RTol: 1e-8, ATol: 1e-12})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		ts := math.Log(4) / 0.5 // 2.7726
		if len(res.Events) != 3 {
			t.Fatalf("%s: %d firings %v, want 3 (t* = %g)", m, len(res.Events), res.Events, ts)
		}
		for i, f := range res.Events {
			if want := float64(i+1) * ts; math.Abs(f.T-want) > 1e-6*want {
				t.Errorf("%s: firing %d at %.10g, want %.10g", m, i, f.T, want)
			}
		}
	}
}

// oscillator is y1' = y2, y2' = −y1 (y1 = sin t from (0, 1), common
// practice), watching y1 > 0.5, which turns true at π/6 + 2πn.
type oscillator struct{ fired int }

func (o *oscillator) Dim() int                      { return 2 }
func (o *oscillator) RHS(t float64, y, f []float64) { f[0], f[1] = y[1], -y[0] }
func (o *oscillator) Jacobian(t float64, y []float64, j *mat.Dense) {
	j.Set(0, 0, 0)
	j.Set(0, 1, 1)
	j.Set(1, 0, -1)
	j.Set(1, 1, 0)
}
func (o *oscillator) ResetEvents(t0 float64)          { o.fired = 0 }
func (o *oscillator) NextEvent(t float64) float64     { return math.Inf(1) }
func (o *oscillator) Conditions() int                 { return 1 }
func (o *oscillator) Watch(t float64, y, g []float64) { g[0] = y[0] - 0.5 }
func (o *oscillator) Fire(t float64, y []float64, rose []bool) []string {
	o.fired++
	return []string{"up"}
}

func TestEventsOscillationCount(t *testing.T) {
	o := &oscillator{}
	res, err := Solve(context.Background(), o, 0, 10*math.Pi, []float64{0, 1}, Settings{RTol: 1e-8, ATol: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Events) != 5 {
		t.Fatalf("%d firings, want 5: %v", len(res.Events), res.Events)
	}
	for n, f := range res.Events {
		if want := math.Pi/6 + 2*math.Pi*float64(n); math.Abs(f.T-want) > 1e-6 {
			t.Errorf("firing %d at %.9g, want %.9g", n, f.T, want)
		}
	}
	// Starting where the condition already holds (y1 = 0.8 > 0.5), the
	// first rise comes only after it has turned false: at 2π + π/6.
	y0 := []float64{0.8, 0.6} // on the unit circle: y1 = sin(t0') with t0' = asin 0.8
	res, err = Solve(context.Background(), o, 0, 2*math.Pi, y0, Settings{RTol: 1e-8, ATol: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	if want := 2*math.Pi + math.Pi/6 - math.Asin(0.8); len(res.Events) != 1 || math.Abs(res.Events[0].T-want) > 1e-6 {
		t.Errorf("firings %v, want one at %.9g", res.Events, want)
	}
}
