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
