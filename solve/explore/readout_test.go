package explore

import (
	"math"
	"strings"
	"testing"
)

// decayGrid samples y0 = exp(−t) and y1 = t·exp(−t) at t = 0, 0.1, …, 2.
func decayGrid() Trajectory {
	const n = 21
	tr := Trajectory{T: make([]float64, n), Y: make([][]float64, n)}
	for i := range n {
		t := float64(i) / 10
		tr.T[i] = t
		tr.Y[i] = []float64{math.Exp(-t), t * math.Exp(-t)}
	}
	return tr
}

func TestReadoutsOnClosedForm(t *testing.T) {
	tr := decayGrid()
	h := 0.1
	e := math.Exp
	// Trapezoid sum of exp(−t) on a uniform grid, summed by hand as a
	// geometric series: h/2·(1 + e^{−h})·(1 − e^{−nh})/(1 − e^{−h}), n = 20.
	aucHand := h / 2 * (1 + e(-h)) * (1 - e(-2)) / (1 - e(-h))
	// Linear interpolation of the crossing of 1/2 between t = 0.6 and 0.7
	// (exp(−0.6) > 1/2 > exp(−0.7)).
	crossHand := 0.6 + (0.5-e(-0.6))/(e(-0.7)-e(-0.6))*h
	cases := []struct {
		r    Readout
		want float64
		tol  float64
	}{
		{Readout{Kind: Max}, 1, 0},
		{Readout{Kind: TimeOfMax}, 0, 0},
		{Readout{Kind: Min}, e(-2), 0},
		{Readout{Kind: TimeOfMin}, 2, 0},
		{Readout{Kind: Final}, e(-2), 0},
		{Readout{Kind: AUC}, aucHand, 1e-15},
		{Readout{Kind: CrossDown, Level: 0.5}, crossHand, 1e-15},
		{Readout{Kind: ValueAt, At: 0.25}, (e(-0.2) + e(-0.3)) / 2, 1e-16},
		{Readout{Kind: ValueAt, At: 0.3}, e(-0.3), 0},
		{Readout{Kind: ValueAt, At: 0}, 1, 0},
		{Readout{Kind: ValueAt, At: 2}, e(-2), 0},
		// t·exp(−t) peaks at t = 1 with value 1/e (calculus).
		{Readout{Kind: Max, Component: 1}, e(-1), 0},
		{Readout{Kind: TimeOfMax, Component: 1}, 1, 0},
		{Readout{Kind: TimeOfMin, Component: 1}, 0, 0},
		// t·exp(−t) first rises through 0.2 between t = 0.2 and 0.3.
		{Readout{Kind: CrossUp, Component: 1, Level: 0.2},
			0.2 + (0.2-0.2*e(-0.2))/(0.3*e(-0.3)-0.2*e(-0.2))*h, 1e-15},
	}
	for _, c := range cases {
		if err := c.r.Validate(2); err != nil {
			t.Fatalf("%+v: %v", c.r, err)
		}
		got := c.r.Eval(tr)
		if math.Abs(got-c.want) > c.tol*math.Abs(c.want) || math.IsNaN(got) {
			t.Errorf("%s (component %d): got %.17g, want %.17g", c.r.Kind, c.r.Component, got, c.want)
		}
	}
	// The trapezoid AUC approaches ∫₀² e^{−t} dt = 1 − e^{−2} with error
	// about h²/12·(f'(2) − f'(0)) (Euler–Maclaurin; common practice).
	if got, exact := (Readout{Kind: AUC}).Eval(tr), 1-e(-2); math.Abs(got-exact-h*h/12*(1-e(-2))) > 1e-5 {
		t.Errorf("AUC %v vs exact %v: error not the trapezoid's", got, exact)
	}
	// The interpolated crossing is close to ln 2, the exact crossing time.
	if got := (Readout{Kind: CrossDown, Level: 0.5}).Eval(tr); math.Abs(got-math.Ln2) > 2e-3 {
		t.Errorf("crossing %v far from ln 2", got)
	}
}

func TestReadoutsUndefined(t *testing.T) {
	tr := decayGrid()
	for _, r := range []Readout{
		{Kind: CrossUp, Level: 0.5},    // exp(−t) never rises
		{Kind: CrossDown, Level: 1},    // starts at 1: not a crossing
		{Kind: CrossDown, Level: 0.01}, // never falls that low
		{Kind: ValueAt, At: -0.1},
		{Kind: ValueAt, At: 2.01},
	} {
		if got := r.Eval(tr); !math.IsNaN(got) {
			t.Errorf("%s level %v at %v: got %v, want NaN", r.Kind, r.Level, r.At, got)
		}
	}
	if got := (Readout{Kind: Max}).Eval(Trajectory{}); !math.IsNaN(got) {
		t.Errorf("empty trajectory: got %v, want NaN", got)
	}
}

func TestReadoutValidate(t *testing.T) {
	for _, r := range []Readout{
		{Name: "a", Kind: "peak"},
		{Name: "b", Kind: Max, Component: 2},
		{Name: "c", Kind: ValueAt, At: math.NaN()},
		{Name: "d", Kind: CrossUp, Level: math.Inf(1)},
	} {
		err := r.Validate(2)
		if err == nil {
			t.Errorf("%+v: no error", r)
			continue
		}
		if want := `readout "` + r.Name + `"`; len(err.Error()) < len(want) || err.Error()[:len(want)] != want {
			t.Errorf("error %q does not name the readout", err)
		}
	}
	// The kinds are listed as words, not as a Go list in brackets.
	if err := (Readout{Name: "a", Kind: "peak"}).Validate(2); err == nil || !strings.HasSuffix(err.Error(), "expected one of value_at, max, time_of_max, min, time_of_min, final, auc, cross_up, cross_down") {
		t.Errorf("unknown kind: %v", err)
	}
}

func TestReadoutAllocs(t *testing.T) {
	tr := decayGrid()
	var sink float64
	for _, k := range Kinds {
		r := Readout{Kind: k, At: 0.55, Level: 0.3}
		if a := testing.AllocsPerRun(100, func() { sink += r.Eval(tr) }); a != 0 {
			t.Errorf("%s: %v allocs per Eval", k, a)
		}
	}
	_ = sink
}

// A window restricts a readout to [From, To] with the ends interpolated.
// On y = t sampled at 0, 1, …, 10 the trapezoidal rule is exact (common
// practice), so over [2.5, 7.5] the AUC is (7.5² − 2.5²)/2 = 25, the
// maximum 7.5 at the window's end, the minimum 2.5 at its start.
func TestReadoutWindow(t *testing.T) {
	tr := Trajectory{}
	for i := 0; i <= 10; i++ {
		tr.T = append(tr.T, float64(i))
		tr.Y = append(tr.Y, []float64{float64(i)})
	}
	win := func(k Kind, level float64) Readout {
		return Readout{Name: string(k), Kind: k, Level: level, Window: true, From: 2.5, To: 7.5}
	}
	cases := []struct {
		r    Readout
		want float64
	}{
		{win(AUC, 0), 25}, {win(Max, 0), 7.5}, {win(TimeOfMax, 0), 7.5}, {win(Min, 0), 2.5},
		{win(TimeOfMin, 0), 2.5}, {win(Final, 0), 7.5}, {win(CrossUp, 5), 5}, {win(CrossUp, 9), math.NaN()},
		{Readout{Kind: AUC, Window: true, From: -3, To: 2}, 2}, // cut to the grid: ∫0..2 t dt
	}
	for _, c := range cases {
		got := c.r.Eval(tr)
		if !(got == c.want || math.IsNaN(got) && math.IsNaN(c.want)) {
			t.Errorf("%s over [%g, %g] = %v, want %v", c.r.Kind, c.r.From, c.r.To, got, c.want)
		}
	}
	if err := (Readout{Kind: ValueAt, Window: true, From: 1, To: 2}).Validate(1); err == nil {
		t.Error("value_at with a window was accepted")
	}
	if err := (Readout{Kind: Max, Window: true, From: 2, To: 2}).Validate(1); err == nil {
		t.Error("an empty window was accepted")
	}
}
