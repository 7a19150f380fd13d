package solve

import (
	"context"
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// decays is y_i' = −k_i·y_i, y_i(0) = 1, for rates k_i spread evenly in
// log from 1e-3 to 1e4: the closed form is y_i = exp(−k_i·t). Its Jacobian
// is diagonal, so the solver takes the sparse path.
type decays struct{ k []float64 }

func newDecays(n int) decays {
	k := make([]float64, n)
	for i := range k {
		k[i] = math.Pow(10, -3+7*float64(i)/float64(n-1))
	}
	return decays{k}
}

func (d decays) Dim() int { return len(d.k) }
func (d decays) RHS(t float64, y, dydt []float64) {
	for i, k := range d.k {
		dydt[i] = -k * y[i]
	}
}
func (d decays) Jacobian(t float64, y []float64, jac *mat.Dense) {
	jac.Zero()
	for i, k := range d.k {
		jac.Set(i, i, -k)
	}
}
func (d decays) JacobianPattern() (rowPtr, colIdx []int) {
	n := len(d.k)
	rowPtr, colIdx = make([]int, n+1), make([]int, n)
	for i := range n {
		rowPtr[i+1], colIdx[i] = i+1, i
	}
	return rowPtr, colIdx
}
func (d decays) JacobianCSR(t float64, y []float64, vals []float64) {
	for i, k := range d.k {
		vals[i] = -k
	}
}

// TestAutoRadauLandsOnOutputs checks that Auto, having chosen Radau IIA
// for a sparse system of 150 variables, keeps the error at 200
// log-spaced output times within 10 of the tolerance against the closed
// form exp(−k·t) (common practice: the test equation of stiff solvers),
// and that Radau IIA chosen by name, which interpolates between steps
// with its order-3 collocation polynomial, does not: the landing is what
// the bound tests. Measured: auto 6.2 (the largest in the fastest decay's
// first output), Radau IIA interpolating 17.4, BDF 43.7; at rtol 1e-8
// 11.7, 52.7 and 90.7.
func TestAutoRadauLandsOnOutputs(t *testing.T) {
	sys := newDecays(150)
	var times []float64
	for i := range 200 {
		times = append(times, 1e-3*math.Pow(1e6, float64(i)/199))
	}
	y0 := make([]float64, sys.Dim())
	for i := range y0 {
		y0[i] = 1
	}
	const rtol, atol = 1e-6, 1e-12
	runErr := func(m Method) (float64, *Result) {
		res, err := Solve(context.Background(), sys, 0, 1000, y0, Settings{Method: m, RTol: rtol, ATol: atol, Times: times})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		e := 0.0
		for k, tk := range res.T {
			for i, y := range res.Y[k] {
				want := math.Exp(-sys.k[i] * tk)
				e = math.Max(e, math.Abs(y-want)/(atol+rtol*want))
			}
		}
		return e, res
	}
	eAuto, res := runErr(Auto)
	eRadau, _ := runErr(Radau)
	t.Logf("scaled error over the output times: auto %.3g (%v, %d steps), radau interpolating %.3g", eAuto, res.Stats.Methods, res.Stats.Steps, eRadau)
	if !slices.Contains(res.Stats.Methods, Radau) {
		t.Fatalf("auto chose %v, want Radau IIA for 150 sparse variables", res.Stats.Methods)
	}
	if eAuto > 10 {
		t.Errorf("auto: scaled error %.3g over the output times, want at most 10", eAuto)
	}
	if eRadau <= 10 {
		t.Errorf("radau by name, interpolating: scaled error %.3g, expected above 10 (else this test does not test the landing)", eRadau)
	}
}
