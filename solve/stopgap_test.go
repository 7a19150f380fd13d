package solve

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// decay1 is y' = −y.
type decay1 struct{}

func (decay1) Dim() int                                      { return 1 }
func (decay1) RHS(t float64, y, f []float64)                 { f[0] = -y[0] }
func (decay1) Jacobian(t float64, y []float64, j *mat.Dense) { j.Set(0, 0, -1) }

// TestCloseStopTimes checks that two stop times a few ulps apart are
// crossed: the landing step between them is legitimately shorter than the
// step-size floor. Radau and BDF used to stop there with "step size fell
// below the smallest step". Reference: the closed form y(t) = e^{−t}.
func TestCloseStopTimes(t *testing.T) {
	for _, m := range []Method{Radau, BDF, Rosenbrock, Explicit} {
		for _, gap := range []float64{5e-15, 1e-13} {
			res, err := Solve(context.Background(), decay1{}, 0, 10, []float64{1},
				Settings{Method: m, RTol: 1e-8, ATol: 1e-12, Times: []float64{10}, StopTimes: []float64{1, 1 + gap}})
			if err != nil {
				t.Errorf("%s, stop times 1 and 1+%g: %v", m, gap, err)
				continue
			}
			want := math.Exp(-10) // closed form
			if got := res.Y[0][0]; math.Abs(got-want) > 1e-5*want {
				t.Errorf("%s, stop times 1 and 1+%g: y(10) = %.10g, want %.10g", m, gap, got, want)
			}
		}
	}
}
