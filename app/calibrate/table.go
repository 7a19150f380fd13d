package calibrate

import (
	"math"
	"strconv"
)

// Scaled returns the scaled sensitivity ∂ln y/∂ln q = (q/y)·∂y/∂q, and
// false where it is undefined (y = 0).
func Scaled(y, q, dydq float64) (float64, bool) {
	if y == 0 || math.IsNaN(y) {
		return 0, false
	}
	return q / y * dydq, true
}

// SensitivityRows lays out the sensitivities of r as CSV rows, one per
// output time, output and target: time, output, quantity, value (of the
// output), sensitivity (∂y/∂q) and scaled (∂ln y/∂ln q, empty where y is
// zero). q holds the targets' values.
func SensitivityRows(r *Result, targets []string, q []float64) [][]string {
	rows := [][]string{{"time", "output", "quantity", "value", "sensitivity", "scaled"}}
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	nq := len(targets)
	for i, t := range r.T {
		for k, name := range r.Names {
			y := r.Y[i][k]
			for j, tg := range targets {
				d := r.D[i][k*nq+j]
				sc := ""
				if v, ok := Scaled(y, q[j], d); ok {
					sc = f(v)
				}
				rows = append(rows, []string{f(t), name, tg, f(y), f(d), sc})
			}
		}
	}
	return rows
}

// ScaledGrid returns the scaled sensitivities ∂ln y/∂ln q of output k of
// r to every target: z[j][i] for target j at time r.T[i], NaN where the
// output is zero. q holds the targets' values.
func ScaledGrid(r *Result, k int, q []float64) [][]float64 {
	nq := len(q)
	z := make([][]float64, nq)
	for j := range z {
		z[j] = make([]float64, len(r.T))
		for i := range r.T {
			v, ok := Scaled(r.Y[i][k], q[j], r.D[i][k*nq+j])
			if !ok {
				v = math.NaN()
			}
			z[j][i] = v
		}
	}
	return z
}
