package calibrate

import (
	"math"
	"strconv"
)

// The tables of a fit, as the batch command writes them and the window
// exports them: one layout each, here.

// Num writes a number for a table: the shortest form that reads back
// exactly, "inf" and "-inf" for infinities, and an empty cell for NaN
// (a value not computed).
func Num(v float64) string {
	switch {
	case math.IsNaN(v):
		return ""
	case math.IsInf(v, 1):
		return "inf"
	case math.IsInf(v, -1):
		return "-inf"
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// EstimateRows lays out the estimates: name, value, se, ci95_low,
// ci95_high, profile_low, profile_high (the profile cells empty when no
// profiles were computed), the noise model's estimates last.
func EstimateRows(rep *Report) [][]string {
	rows := [][]string{{"name", "value", "se", "ci95_low", "ci95_high", "profile_low", "profile_high"}}
	for _, e := range rep.All() {
		rows = append(rows, []string{e.Name, Num(e.Value), Num(e.SE), Num(e.Low), Num(e.High), Num(e.ProfileLow), Num(e.ProfileHigh)})
	}
	return rows
}

// FittedRows lays out every measurement against the fit: experiment,
// time, name, observed, sd, fitted, residual.
func FittedRows(rep *Report) [][]string {
	rows := [][]string{{"experiment", "time", "name", "observed", "sd", "fitted", "residual"}}
	for _, r := range rep.Residuals {
		rows = append(rows, []string{r.Experiment, Num(r.Time), r.Name, Num(r.Observed), Num(r.SD), Num(r.Fitted), Num(r.Residual)})
	}
	return rows
}

// CorrelationRows lays out the correlation matrix of the estimates with
// their names as the first row and column (the noise model's estimates
// last).
func CorrelationRows(rep *Report) [][]string {
	all := rep.All()
	rows := [][]string{{"name"}}
	for _, e := range all {
		rows[0] = append(rows[0], e.Name)
	}
	for a, e := range all {
		row := []string{e.Name}
		for b := range all {
			v := math.NaN()
			if rep.Corr != nil {
				v = rep.Corr.At(a, b)
			}
			row = append(row, Num(v))
		}
		rows = append(rows, row)
	}
	return rows
}

// StartRows lays out every start's outcome: start (from 1), objective,
// converged, iterations, reason.
func StartRows(rep *Report) [][]string {
	rows := [][]string{{"start", "objective", "converged", "iterations", "reason"}}
	for _, s := range rep.Starts {
		rows = append(rows, []string{strconv.Itoa(s.Index + 1), Num(s.Objective), strconv.FormatBool(s.Converged), strconv.Itoa(s.Iterations), s.Reason})
	}
	return rows
}
