package study

import (
	"math"
	"slices"
	"strconv"

	"kinetarium/app/run"
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
// runs.csv and samples.csv; EachRunRow gives the rows one at a time.
func RunRows(res *explore.Result) ([][]string, error) {
	return collect(res, EachRunRow)
}

// EachRunRow calls row with each row of RunRows' layout in turn, the
// header first, reading the points from res's spill file when it has one:
// memory does not grow with the number of points. The row passed is
// reused for the next call.
func EachRunRow(res *explore.Result, row func([]string) error) error {
	head := append(append([]string{"index"}, res.Knobs...), res.Readouts...)
	return eachRunRow(res, head, nil, row)
}

// eachRunRow calls row with head, then with each point's index, knob
// values and readouts, the readouts multiplied by scales (nil: as
// computed).
func eachRunRow(res *explore.Result, head []string, scales []run.Scale, row func([]string) error) error {
	if err := row(head); err != nil {
		return err
	}
	var buf []string
	return res.EachSample(func(s *explore.Sample) error {
		buf = append(buf[:0], strconv.Itoa(s.Index))
		for _, v := range s.X {
			buf = append(buf, FormatNumber(v))
		}
		for r, v := range s.Readouts {
			if scales != nil {
				v = scales[r].Of(v)
			}
			buf = append(buf, FormatNumber(v))
		}
		return row(buf)
	})
}

// FailureRows lays out the failed points of res: point number, knob values
// and the reason, under a header row.
func FailureRows(res *explore.Result) ([][]string, error) {
	return collect(res, EachFailureRow)
}

// EachFailureRow calls row with each row of FailureRows' layout in turn,
// as EachRunRow does.
func EachFailureRow(res *explore.Result, row func([]string) error) error {
	if err := row(append(append([]string{"index"}, res.Knobs...), "error")); err != nil {
		return err
	}
	var buf []string
	return res.EachFailure(func(f *explore.Failure) error {
		buf = append(buf[:0], strconv.Itoa(f.Index))
		for _, v := range f.X {
			buf = append(buf, FormatNumber(v))
		}
		return row(append(buf, f.Err))
	})
}

// collect gathers the rows that each gives.
func collect(res *explore.Result, each func(*explore.Result, func([]string) error) error) ([][]string, error) {
	var rows [][]string
	err := each(res, func(r []string) error {
		rows = append(rows, append([]string(nil), r...))
		return nil
	})
	return rows, err
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
// samples of res, sorted, and the number of undefined ones. It keeps one
// float64 per sample (read from res's spill file when it has one), which
// exact percentiles need.
func ReadoutValues(res *explore.Result, r int) (vals []float64, undefined int, err error) {
	err = res.EachSample(func(s *explore.Sample) error {
		if v := s.Readouts[r]; math.IsNaN(v) {
			undefined++
		} else {
			vals = append(vals, v)
		}
		return nil
	})
	slices.Sort(vals)
	return vals, undefined, err
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
