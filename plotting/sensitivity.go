package plotting

import (
	"fmt"

	"gonum.org/v1/plot"
)

// SensitivityMap draws a quantity over time for each of several named
// inputs as a heat map: z[j][i] for input names[j] at times[i], time
// across and the inputs up, labelled by name, on the diverging scale
// centred on 0 (Options.Signed), with a colour bar labelled
// zLabel. Times need only ascend: at a repeated time (the two rows of an
// event) the later value is drawn; on a log time axis times ≤ 0 are left
// out without a note, as the first time of a log-spaced grid is.
func SensitivityMap(times []float64, names []string, z [][]float64, o Options, zLabel string) (*plot.Plot, error) {
	if len(z) != len(names) {
		return nil, fmt.Errorf("plotting: SensitivityMap has %d rows of z but %d names; want one row per name", len(z), len(names))
	}
	var xs []float64
	var keep []int
	for i, t := range times {
		if o.LogX && t <= 0 {
			continue
		}
		if len(xs) > 0 && t <= xs[len(xs)-1] {
			if t < xs[len(xs)-1] {
				return nil, fmt.Errorf("plotting: SensitivityMap times descend at %d (%g after %g)", i, t, xs[len(xs)-1])
			}
			keep[len(keep)-1] = i
			continue
		}
		xs, keep = append(xs, t), append(keep, i)
	}
	ys := make([]float64, len(names))
	zz := make([][]float64, len(names))
	for j, row := range z {
		if len(row) != len(times) {
			return nil, fmt.Errorf("plotting: SensitivityMap row %d (%s) has %d values; want %d, one per time", j, names[j], len(row), len(times))
		}
		ys[j] = float64(j)
		zz[j] = make([]float64, len(keep))
		for a, i := range keep {
			zz[j][a] = row[i]
		}
	}
	o.Signed = true
	p, err := HeatMap(xs, ys, zz, o, zLabel)
	if err != nil {
		return nil, err
	}
	NameAxis(&p.Y, names)
	return p, nil
}
