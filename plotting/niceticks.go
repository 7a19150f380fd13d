package plotting

import (
	"math"
	"strconv"

	"gonum.org/v1/plot"
)

// niceTicks marks a linear axis with about five labelled ticks at round
// values (1, 2 or 5 times a power of ten apart), after Heckbert's "nice
// numbers" (Graphics Gems, 1990), with unlabelled minor ticks between.
type niceTicks struct{}

// Ticks implements plot.Ticker.
func (niceTicks) Ticks(min, max float64) []plot.Tick {
	if !(max > min) || math.IsInf(max-min, 0) {
		return plot.DefaultTicks{}.Ticks(min, max)
	}
	step := niceStep((max - min) / 5)
	minor := step / 5
	if m := step / math.Pow(10, math.Floor(math.Log10(step))); m == 2 {
		minor = step / 4
	}
	// Digits after the decimal point that the step needs.
	prec := max0(-int(math.Floor(math.Log10(step) + 1e-9)))
	var ticks []plot.Tick
	first := math.Ceil(min/minor-1e-9) * minor
	for i := 0; ; i++ {
		v := first + float64(i)*minor
		if v > max+minor*1e-9 {
			break
		}
		if math.Abs(v) < minor*1e-9 {
			v = 0
		}
		t := plot.Tick{Value: v}
		if r := v / step; math.Abs(r-math.Round(r)) < 1e-6 {
			t.Label = strconv.FormatFloat(math.Round(r)*step, 'f', prec, 64)
		}
		ticks = append(ticks, t)
		if i > 1000 {
			break
		}
	}
	return ticks
}

// niceStep rounds x up to 1, 2 or 5 times a power of ten.
func niceStep(x float64) float64 {
	e := math.Pow(10, math.Floor(math.Log10(x)))
	switch f := x / e; {
	case f <= 1:
		return e
	case f <= 2:
		return 2 * e
	case f <= 5:
		return 5 * e
	default:
		return 10 * e
	}
}

func max0(n int) int {
	if n < 0 {
		return 0
	}
	return n
}
