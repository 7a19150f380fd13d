package study

import (
	"math"
	"slices"
	"strconv"

	"kinetarium/solve/explore"
)

// Percentiles are the probabilities of band and readout summaries: 5, 25,
// 50, 75 and 95 %.
var Percentiles = []float64{0.05, 0.25, 0.5, 0.75, 0.95}

// FormatNumber formats v so that it reads back to the same float64.
func FormatNumber(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// RunRows lays out every successful point of res, one row each: the point
// number, the knob values and the readouts, under a header row "index",
// knob names, readout names. It is the layout of the batch command's
// runs.csv and samples.csv.
func RunRows(res *explore.Result) [][]string {
	head := append([]string{"index"}, res.Knobs...)
	head = append(head, res.Readouts...)
	rows := [][]string{head}
	for _, s := range res.Samples {
		row := []string{strconv.Itoa(s.Index)}
		for _, v := range s.X {
			row = append(row, FormatNumber(v))
		}
		for _, v := range s.Readouts {
			row = append(row, FormatNumber(v))
		}
		rows = append(rows, row)
	}
	return rows
}

// FailureRows lays out the failed points of res: point number, knob values
// and the reason, under a header row.
func FailureRows(res *explore.Result) [][]string {
	rows := [][]string{append(append([]string{"index"}, res.Knobs...), "error")}
	for _, f := range res.Failures {
		row := []string{strconv.Itoa(f.Index)}
		for _, v := range f.X {
			row = append(row, FormatNumber(v))
		}
		rows = append(rows, append(row, f.Err))
	}
	return rows
}

// BandRows lays out the bands b of the named species (one name per band
// component): species, time, the Percentiles, min, max and the count n.
func BandRows(b *explore.Bands, species []string) [][]string {
	rows := [][]string{{"species", "time", "p5", "p25", "p50", "p75", "p95", "min", "max", "n"}}
	for c, sp := range species {
		for i, t := range b.Times {
			cell := &b.Cells[c*len(b.Times)+i]
			row := []string{sp, FormatNumber(t)}
			for _, p := range Percentiles {
				row = append(row, FormatNumber(cell.Quantile(p)))
			}
			if cell.N == 0 {
				row = append(row, "NaN", "NaN")
			} else {
				row = append(row, FormatNumber(cell.Min), FormatNumber(cell.Max))
			}
			rows = append(rows, append(row, strconv.FormatUint(cell.N, 10)))
		}
	}
	return rows
}

// BandCurves returns the percentile curves of band component c: q[k][i] is
// Percentiles[k] at Times[i].
func BandCurves(b *explore.Bands, c int) [][]float64 {
	q := make([][]float64, len(Percentiles))
	for k, p := range Percentiles {
		q[k] = make([]float64, len(b.Times))
		for i := range b.Times {
			q[k][i] = b.Cells[c*len(b.Times)+i].Quantile(p)
		}
	}
	return q
}

// ReadoutValues returns the defined (not NaN) values of readout r over the
// samples of res, sorted, and the number of undefined ones.
func ReadoutValues(res *explore.Result, r int) (vals []float64, undefined int) {
	for _, s := range res.Samples {
		if v := s.Readouts[r]; math.IsNaN(v) {
			undefined++
		} else {
			vals = append(vals, v)
		}
	}
	slices.Sort(vals)
	return vals, undefined
}

// EmpiricalQuantile is the k-th smallest of sorted values,
// k = max(1, ⌈p·n⌉); NaN when sorted is empty.
func EmpiricalQuantile(sorted []float64, p float64) float64 {
	if len(sorted) == 0 {
		return math.NaN()
	}
	k := max(1, int(math.Ceil(p*float64(len(sorted)))))
	return sorted[min(k, len(sorted))-1]
}
