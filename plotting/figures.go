package plotting

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// FamilyPlot draws one curve per parameter value, curves[k][i] at times[i]
// for values[k], coloured along the sequential scale (ScaleColour) by value,
// with a colour bar labelled paramName. The colour scale is logarithmic when
// every value is positive and they span at least two decades, as values of
// a sweep on a log grid do. Non-finite parameter values are drawn grey.
func FamilyPlot(times []float64, curves [][]float64, values []float64, paramName string, o Options) (*plot.Plot, error) {
	if len(values) != len(curves) {
		return nil, fmt.Errorf("plotting: FamilyPlot has %d curves but %d parameter values; want one value per curve", len(curves), len(values))
	}
	for k, c := range curves {
		if len(c) != len(times) {
			return nil, fmt.Errorf("plotting: FamilyPlot curve %d (%s = %g) has %d points; want %d, one per time", k, paramName, values[k], len(c), len(times))
		}
	}
	p := newPlot(o)
	var ns notes
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range values {
		if usable(v, false) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	logScale := lo > 0 && hi/lo >= 100
	frac := func(v float64) float64 {
		switch {
		case !usable(v, false):
			return math.NaN()
		case hi == lo:
			return 0.5
		case logScale:
			return math.Log(v/lo) / math.Log(hi/lo)
		}
		return (v - lo) / (hi - lo)
	}
	var dropped, nonFinite int
	for k, c := range curves {
		p.Add(&curve{
			xs: times, ys: c, logX: o.LogX, logY: o.LogY,
			line: draw.LineStyle{Color: ScaleColour(frac(values[k])), Width: vg.Points(lineWidth)},
		})
		for i, y := range c {
			if !usable(times[i], o.LogX) {
				continue
			}
			if !usable(y, false) {
				nonFinite++
			} else if o.LogY && y <= 0 {
				dropped++
			}
		}
	}
	if len(curves) == 0 || len(times) == 0 {
		ns.addf("no data")
	}
	if o.LogX {
		k := 0
		for _, t := range times {
			if usable(t, false) && t <= 0 {
				k++
			}
		}
		ns.count(k, "time ≤ 0 on the log axis", "times ≤ 0 on the log axis")
	}
	ns.count(dropped, "value ≤ 0 on the log axis", "values ≤ 0 on the log axis")
	ns.count(nonFinite, "NaN or infinite value", "NaN or infinite values")
	if lo <= hi {
		p.Add(newColourBar(lo, hi, logScale, paramName))
	}
	finish(p, o, ns)
	return p, nil
}

// XYPlot draws a readout y against a parameter x as a line with a marker at
// each point. Points a log axis cannot show, and non-finite ones, are left
// out and noted.
func XYPlot(x, y []float64, o Options) (*plot.Plot, error) {
	if len(x) != len(y) {
		return nil, fmt.Errorf("plotting: XYPlot has %d x values but %d y values; want the same number", len(x), len(y))
	}
	p := newPlot(o)
	c := &curve{
		xs: x, ys: y, logX: o.LogX, logY: o.LogY,
		line:  draw.LineStyle{Color: Colour(0), Width: vg.Points(lineWidth)},
		glyph: &draw.GlyphStyle{Color: Colour(0), Radius: vg.Points(3), Shape: draw.CircleGlyph{}},
	}
	p.Add(c)
	var ns notes
	if len(x) == 0 {
		ns.addf("no data")
	}
	var nonFinite, dropped int
	for i := range x {
		switch {
		case !usable(x[i], false) || !usable(y[i], false):
			nonFinite++
		case !usable(x[i], o.LogX) || !usable(y[i], o.LogY):
			dropped++
		}
	}
	ns.count(dropped, "point ≤ 0 on a log axis", "points ≤ 0 on a log axis")
	ns.count(nonFinite, "point with a NaN or infinite value", "points with NaN or infinite values")
	finish(p, o, ns)
	return p, nil
}

// HeatMap draws a readout z[iy][ix] over a grid of two parameters, xs
// across and ys up, as coloured cells with a colour bar labelled zLabel.
// With o.Signed the colours diverge from 0 (DivergingColour) over a range
// symmetric about 0.
// xs and ys must ascend strictly. On log axes, cell edges lie at geometric
// midpoints and grid lines at values ≤ 0 are left out and noted; NaN or
// infinite z leave their cell blank, also noted.
func HeatMap(xs, ys []float64, z [][]float64, o Options, zLabel string) (*plot.Plot, error) {
	if len(z) != len(ys) {
		return nil, fmt.Errorf("plotting: HeatMap has %d rows of z but %d y values; want one row per y", len(z), len(ys))
	}
	for iy, row := range z {
		if len(row) != len(xs) {
			return nil, fmt.Errorf("plotting: HeatMap row %d of z (y = %g) has %d values; want %d, one per x", iy, ys[iy], len(row), len(xs))
		}
	}
	if err := ascending("x", xs); err != nil {
		return nil, err
	}
	if err := ascending("y", ys); err != nil {
		return nil, err
	}
	p := newPlot(o)
	var ns notes
	// Keep the grid lines a log axis can show.
	keep := func(v []float64, log bool) []int {
		var idx []int
		for i, x := range v {
			if !log || x > 0 {
				idx = append(idx, i)
			}
		}
		return idx
	}
	ix, iy := keep(xs, o.LogX), keep(ys, o.LogY)
	ns.count(len(xs)-len(ix), "x ≤ 0 on the log axis", "x values ≤ 0 on the log axis")
	ns.count(len(ys)-len(iy), "y ≤ 0 on the log axis", "y values ≤ 0 on the log axis")
	if len(ix) == 0 || len(iy) == 0 {
		ns.addf("no data")
		finish(p, o, ns)
		return p, nil
	}
	kx, ky := make([]float64, len(ix)), make([]float64, len(iy))
	for a, i := range ix {
		kx[a] = xs[i]
	}
	for b, j := range iy {
		ky[b] = ys[j]
	}
	kz := make([][]float64, len(iy))
	lo, hi := math.Inf(1), math.Inf(-1)
	blank := 0
	for b, j := range iy {
		kz[b] = make([]float64, len(ix))
		for a, i := range ix {
			v := z[j][i]
			kz[b][a] = v
			if usable(v, false) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			} else {
				blank++
			}
		}
	}
	ns.count(blank, "cell with a NaN or infinite value", "cells with NaN or infinite values")
	scale := ScaleColour
	if o.Signed && lo <= hi {
		// Symmetric about 0, so that 0 is the scale's neutral middle.
		m := math.Max(math.Abs(lo), math.Abs(hi))
		if m == 0 {
			m = 1
		}
		lo, hi, scale = -m, m, DivergingColour
	}
	colour := func(v float64) color.Color {
		if hi == lo {
			return scale(0.5)
		}
		return scale((v - lo) / (hi - lo))
	}
	p.Add(&cells{xe: cellEdges(kx, o.LogX), ye: cellEdges(ky, o.LogY), z: kz, colour: colour})
	if lo <= hi {
		bar := newColourBar(lo, hi, false, zLabel)
		bar.signed = o.Signed
		p.Add(bar)
	}
	finish(p, o, ns)
	// Cells fill the data area edge to edge.
	p.X.Padding, p.Y.Padding = 0, 0
	return p, nil
}

// ascending reports an error unless v ascends strictly.
func ascending(name string, v []float64) error {
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("plotting: HeatMap %s[%d] is %g; want a finite value", name, i, x)
		}
		if i > 0 && x <= v[i-1] {
			return fmt.Errorf("plotting: HeatMap %s values must ascend strictly, but %s[%d] = %g follows %g", name, name, i, x, v[i-1])
		}
	}
	return nil
}

// BandPlot draws the median of a population over time as a line, over
// shaded bands from lo5 to hi95 (lighter) and lo25 to hi75 (darker). Either
// band may be left out by passing nil for both its edges. name labels the
// median in the legend.
func BandPlot(times []float64, median, lo5, hi95, lo25, hi75 []float64, name string, o Options) (*plot.Plot, error) {
	for _, s := range []struct {
		name string
		v    []float64
		opt  bool
	}{{"median", median, false}, {"5 % quantile", lo5, true}, {"95 % quantile", hi95, true}, {"25 % quantile", lo25, true}, {"75 % quantile", hi75, true}} {
		if s.opt && s.v == nil {
			continue
		}
		if len(s.v) != len(times) {
			return nil, fmt.Errorf("plotting: BandPlot %s has %d points; want %d, one per time", s.name, len(s.v), len(times))
		}
	}
	if (lo5 == nil) != (hi95 == nil) || (lo25 == nil) != (hi75 == nil) {
		return nil, fmt.Errorf("plotting: BandPlot needs both edges of a band or neither (5–95 %%: %t/%t, 25–75 %%: %t/%t given)", lo5 != nil, hi95 != nil, lo25 != nil, hi75 != nil)
	}
	p := newPlot(o)
	legend := newSideLegend(p)
	base := Colour(0)
	if lo5 != nil {
		b := &band{xs: times, lo: lo5, hi: hi95, logX: o.LogX, logY: o.LogY, fill: withAlpha(base, 0.18)}
		p.Add(b)
		legend.add("5–95 %", b)
	}
	if lo25 != nil {
		b := &band{xs: times, lo: lo25, hi: hi75, logX: o.LogX, logY: o.LogY, fill: withAlpha(base, 0.38)}
		p.Add(b)
		legend.add("25–75 %", b)
	}
	m := &curve{xs: times, ys: median, logX: o.LogX, logY: o.LogY, line: draw.LineStyle{Color: base, Width: vg.Points(2)}}
	p.Add(m)
	label := "median"
	if name != "" {
		label = name + " (median)"
	}
	legend.add(label, m)
	p.Add(legend)

	var ns notes
	if len(times) == 0 {
		ns.addf("no data")
	}
	var dropped, nonFinite int
	for _, s := range [][]float64{median, lo5, hi95, lo25, hi75} {
		for i, v := range s {
			if !usable(times[i], o.LogX) {
				continue
			}
			if !usable(v, false) {
				nonFinite++
			} else if o.LogY && v <= 0 {
				dropped++
			}
		}
	}
	if o.LogX {
		k := 0
		for _, t := range times {
			if usable(t, false) && t <= 0 {
				k++
			}
		}
		ns.count(k, "time ≤ 0 on the log axis", "times ≤ 0 on the log axis")
	}
	ns.count(dropped, "value ≤ 0 on the log axis", "values ≤ 0 on the log axis")
	ns.count(nonFinite, "NaN or infinite value", "NaN or infinite values")
	finish(p, o, ns)
	return p, nil
}

// Histogram draws the distribution of values in bins bins of equal width
// (equal width in log x when o.LogX); bins ≤ 0 chooses Sturges' rule,
// ⌈log2 n⌉ + 1 bins. The Y axis counts values unless o.YLabel says
// otherwise. Values a log axis cannot show and non-finite values are left
// out and noted.
func Histogram(values []float64, bins int, o Options) (*plot.Plot, error) {
	if o.YLabel == "" {
		o.YLabel = "count"
	}
	p := newPlot(o)
	var ns notes
	var kept []float64
	var nonFinite, dropped int
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range values {
		switch {
		case !usable(v, false):
			nonFinite++
		case !usable(v, o.LogX):
			dropped++
		default:
			kept = append(kept, v)
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	ns.count(dropped, "value ≤ 0 on the log axis", "values ≤ 0 on the log axis")
	ns.count(nonFinite, "NaN or infinite value", "NaN or infinite values")
	if len(kept) == 0 {
		ns.addf("no data")
		finish(p, o, ns)
		return p, nil
	}
	if hi > lo && hi-lo <= 1e-9*math.Max(math.Abs(lo), math.Abs(hi)) {
		// Values equal but for rounding: one bar, not a spread of 1e-13.
		ns.addf("all %d values equal to 9 digits (%.9g)", len(kept), lo)
		hi = lo
		for i := range kept {
			kept[i] = lo
		}
	}
	edges, counts := histogramBins(kept, lo, hi, bins, o.LogX)
	p.Add(&bars{
		edges: edges, counts: counts, logX: o.LogX, logY: o.LogY,
		fill: withAlpha(Colour(0), 0.6),
		line: draw.LineStyle{Color: Colour(0), Width: vg.Points(1)},
	})
	finish(p, o, ns)
	return p, nil
}

// histogramBins sorts the finite values v, all within [lo, hi], into bins
// of equal width (in log10 when log) and returns the bins+1 edges and the
// counts. bins ≤ 0 chooses Sturges' rule, ⌈log2 n⌉ + 1.
func histogramBins(v []float64, lo, hi float64, bins int, log bool) (edges, counts []float64) {
	if bins <= 0 {
		bins = int(math.Ceil(math.Log2(float64(len(v))))) + 1
	}
	fwd, inv := func(v float64) float64 { return v }, func(v float64) float64 { return v }
	if log {
		fwd, inv = math.Log10, func(v float64) float64 { return math.Pow(10, v) }
	}
	a, b := fwd(lo), fwd(hi)
	if a == b {
		// One value: a bar ±5 % around it (half a decade on a log axis).
		d := 0.5
		if !log && a != 0 {
			d = 0.05 * math.Abs(a)
		}
		a, b = a-d, b+d
	}
	edges = make([]float64, bins+1)
	for i := range edges {
		edges[i] = inv(a + (b-a)*float64(i)/float64(bins))
	}
	counts = make([]float64, bins)
	for _, x := range v {
		i := int(float64(bins) * (fwd(x) - a) / (b - a))
		counts[min(max(i, 0), bins-1)]++
	}
	return edges, counts
}
