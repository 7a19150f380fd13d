package explore

import (
	"context"
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve"
)

// elimination is dC/dt = −k·C with knobs k (0) and C(0) (1).
type elimination struct{ k, c0 float64 }

func (e *elimination) Dim() int                                      { return 1 }
func (e *elimination) RHS(_ float64, y, dy []float64)                { dy[0] = -e.k * y[0] }
func (e *elimination) Jacobian(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -e.k) }
func (e *elimination) Initial(y0 []float64)                          { y0[0] = e.c0 }
func (e *elimination) Clone() Target                                 { c := *e; return &c }
func (e *elimination) SetKnob(k int, v float64) error {
	if v < 0 {
		return fmt.Errorf("must be ≥ 0, got %v", v)
	}
	if k == 0 {
		e.k = v
	} else {
		e.c0 = v
	}
	return nil
}

// quadratic is y' = a·y², y(0) = 1, whose solution 1/(1 − a·t) is infinite
// at t = 1/a (Riccati; closed form by separation of variables).
type quadratic struct{ a float64 }

func (q *quadratic) Dim() int                                      { return 1 }
func (q *quadratic) RHS(_ float64, y, dy []float64)                { dy[0] = q.a * y[0] * y[0] }
func (q *quadratic) Jacobian(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, 2*q.a*y[0]) }
func (q *quadratic) Initial(y0 []float64)                          { y0[0] = 1 }
func (q *quadratic) Clone() Target                                 { c := *q; return &c }
func (q *quadratic) SetKnob(_ int, v float64) error                { q.a = v; return nil }

func TestODEAgainstClosedForm(t *testing.T) {
	times := grid(11, 1)
	ode := &ODE{Target: &elimination{k: 1, c0: 1}, TEnd: 10,
		Settings: solve.Settings{Times: times, RTol: 1e-9, ATol: 1e-14}}
	pts, err := Population{Vary: []Distribution{LogNormal{Median: 0.5, CVPercent: 50}, Uniform{1, 3}}, Size: 40, Seed: 9}.Sample()
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), pts, ode.NewSimulator, Settings{
		Knobs: []string{"k", "C0"}, Readouts: []Readout{{Name: "auc", Kind: AUC}}, KeepTrajectories: true, Workers: 2,
	})
	if err != nil || res.Failed != 0 {
		t.Fatalf("error %v, failures %+v", err, res.Failures)
	}
	for _, s := range res.Samples {
		k, c0 := s.X[0], s.X[1]
		for i, tm := range s.Traj.T {
			// C(t) = C0·exp(−k·t): first-order elimination, closed form.
			want := c0 * math.Exp(-k*tm)
			if got := s.Traj.Y[i][0]; math.Abs(got-want) > 1e-7*c0 {
				t.Fatalf("k = %v, t = %v: %v, closed form %v", k, tm, got, want)
			}
		}
	}
}

func TestODEBlowUpIsAFailure(t *testing.T) {
	ode := &ODE{Target: &quadratic{}, TEnd: 1, Settings: solve.Settings{Times: grid(11, 0.1)}}
	res, err := Run(context.Background(), Grid{Axes: [][]float64{{0.5, 2, 0.9, 5}}}, ode.NewSimulator, Settings{
		Knobs: []string{"a"}, Readouts: []Readout{{Name: "final", Kind: Final}},
	})
	if err != nil {
		t.Fatal(err)
	}
	// a = 2 and a = 5 blow up at t = 1/a < 1; a = 0.5 and 0.9 end at 1/(1 − a).
	if res.Failed != 2 || res.Failures[0].X[0] != 2 || res.Failures[1].X[0] != 5 {
		t.Fatalf("failures %+v", res.Failures)
	}
	for _, s := range res.Samples {
		if want := 1 / (1 - s.X[0]); math.Abs(s.Readouts[0]-want) > 1e-4*want {
			t.Errorf("a = %v: final %v, closed form %v", s.X[0], s.Readouts[0], want)
		}
	}
	for _, f := range res.Failures {
		if f.Err == "" || !strings.Contains(f.Err, "t") {
			t.Errorf("failure %+v has no useful message", f)
		}
	}
	t.Logf("blow-up message: %s", res.Failures[0].Err)
}

func TestODEBadKnobIsAFailure(t *testing.T) {
	ode := &ODE{Target: &elimination{k: 1, c0: 1}, TEnd: 1, Settings: solve.Settings{Times: grid(3, 0.5)}}
	res, err := Run(context.Background(), Grid{Axes: [][]float64{{-1, 1}, {1}}}, ode.NewSimulator, Settings{Knobs: []string{"k", "C0"}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Failed != 1 || !strings.Contains(res.Failures[0].Err, "knob 0") {
		t.Fatalf("failures %+v", res.Failures)
	}
}
