package plotting

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Branch is a branch of steady states for BifurcationPlot: the parameter
// at each point, the plotted quantities (Values[q][k] is quantity q at
// point k, named Names[q]) and whether each point is stable.
type Branch struct {
	P      []float64
	Values [][]float64
	Names  []string
	Stable []bool
	// Marks are special points: Kind "fold" or "hopf", at P with one value
	// per quantity.
	Marks []Mark
}

// Mark is a special point of a branch.
type Mark struct {
	Kind   string
	P      float64
	Values []float64
}

// unstableDashes is the dash pattern of unstable parts of a branch.
var unstableDashes = []vg.Length{vg.Points(5), vg.Points(3)}

// markGlyph returns the marker of a special point's kind.
func markGlyph(kind string) draw.GlyphStyle {
	if kind == "hopf" {
		return draw.GlyphStyle{Color: color.Black, Radius: vg.Points(4), Shape: draw.BoxGlyph{}}
	}
	return draw.GlyphStyle{Color: color.Black, Radius: vg.Points(4.5), Shape: draw.PyramidGlyph{}}
}

// BifurcationPlot draws the steady-state value of each quantity against
// the parameter: stable parts solid, unstable parts dashed, folds as
// triangles and Hopf points as squares, with a legend that says so.
func BifurcationPlot(b Branch, o Options) (*plot.Plot, error) {
	n := len(b.P)
	if len(b.Stable) != n {
		return nil, fmt.Errorf("plotting: BifurcationPlot has %d points but %d stability flags", n, len(b.Stable))
	}
	if len(b.Names) != len(b.Values) {
		return nil, fmt.Errorf("plotting: BifurcationPlot has %d quantities but %d names", len(b.Values), len(b.Names))
	}
	for q, v := range b.Values {
		if len(v) != n {
			return nil, fmt.Errorf("plotting: BifurcationPlot quantity %s has %d values for %d points", b.Names[q], len(v), n)
		}
	}
	for _, m := range b.Marks {
		if len(m.Values) != len(b.Values) {
			return nil, fmt.Errorf("plotting: a %s mark has %d values for %d quantities", m.Kind, len(m.Values), len(b.Values))
		}
	}
	p := newPlot(o)
	legend := newSideLegend(p)
	var ns notes
	if n == 0 {
		ns.addf("no data")
	}
	for q, vals := range b.Values {
		col := Colour(q)
		var first *curve
		// Runs of equal stability, each sharing its end point with the next.
		for k := 0; k < n; {
			e := k
			for e+1 < n && b.Stable[e+1] == b.Stable[k] {
				e++
			}
			end := min(e+2, n)
			c := &curve{xs: b.P[k:end], ys: vals[k:end], logX: o.LogX, logY: o.LogY,
				line: draw.LineStyle{Color: col, Width: vg.Points(lineWidth)}}
			if !b.Stable[k] {
				c.line.Dashes = unstableDashes
			} else if first == nil {
				first = c
			}
			p.Add(c)
			k = e + 1
		}
		if first == nil && n > 0 {
			first = &curve{line: draw.LineStyle{Color: col, Width: vg.Points(lineWidth)}}
		}
		if first != nil {
			legend.add(b.Names[q], first)
		}
	}
	kinds := map[string]bool{}
	for _, m := range b.Marks {
		g := markGlyph(m.Kind)
		for q := range b.Values {
			c := &curve{xs: []float64{m.P}, ys: []float64{m.Values[q]}, logX: o.LogX, logY: o.LogY, glyph: &g}
			p.Add(c)
			if !kinds[m.Kind] {
				kinds[m.Kind] = true
				label := "fold (turning point)"
				if m.Kind == "hopf" {
					label = "Hopf (oscillations begin)"
				}
				legend.add(label, c)
			}
		}
	}
	if n > 0 {
		legend.add("unstable (dashed)", &curve{line: draw.LineStyle{Color: color.Gray{Y: 0x55}, Width: vg.Points(lineWidth), Dashes: unstableDashes}})
	}
	p.Add(legend)
	var dropped int
	for q := range b.Values {
		for k := range b.P {
			if !usable(b.P[k], o.LogX) || !usable(b.Values[q][k], o.LogY) {
				dropped++
			}
		}
	}
	ns.count(dropped, "point not shown (≤ 0 on a log axis, or not finite)", "points not shown (≤ 0 on a log axis, or not finite)")
	finish(p, o, ns)
	return p, nil
}

// DoseResponsePlot draws responses (markers) against doses with a fitted
// curve through them (a line evaluated by fit at 200 doses spanning the
// data), labelled fitLabel.
func DoseResponsePlot(dose, resp []float64, fit func(float64) float64, fitLabel string, o Options) (*plot.Plot, error) {
	if len(dose) != len(resp) {
		return nil, fmt.Errorf("plotting: DoseResponsePlot has %d doses but %d responses", len(dose), len(resp))
	}
	p := newPlot(o)
	legend := newSideLegend(p)
	pts := &curve{xs: dose, ys: resp, logX: o.LogX, logY: o.LogY,
		glyph: &draw.GlyphStyle{Color: Colour(0), Radius: vg.Points(2.5), Shape: draw.CircleGlyph{}}}
	p.Add(pts)
	legend.add("steady state", pts)
	var ns notes
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, d := range dose {
		if usable(d, o.LogX) {
			lo, hi = math.Min(lo, d), math.Max(hi, d)
		}
	}
	if fit != nil && hi > lo {
		xs, ys := make([]float64, 200), make([]float64, 200)
		for i := range xs {
			f := float64(i) / 199
			if o.LogX {
				xs[i] = lo * math.Pow(hi/lo, f)
			} else {
				xs[i] = lo + (hi-lo)*f
			}
			ys[i] = fit(xs[i])
		}
		c := &curve{xs: xs, ys: ys, logX: o.LogX, logY: o.LogY, line: draw.LineStyle{Color: Colour(1), Width: vg.Points(lineWidth)}}
		p.Add(c)
		legend.add(fitLabel, c)
	}
	p.Add(legend)
	if len(dose) == 0 {
		ns.addf("no data")
	}
	finish(p, o, ns)
	return p, nil
}

// Interval is an estimate with a confidence interval.
type Interval struct {
	Value, Low, High float64
}

// IndexBars draws, for each input named in names, two bars side by side —
// first-order and total sensitivity indices — with whiskers for their
// intervals. first and total have one Interval per name.
func IndexBars(names []string, first, total []Interval, o Options) (*plot.Plot, error) {
	if len(first) != len(names) || len(total) != len(names) {
		return nil, fmt.Errorf("plotting: IndexBars has %d names, %d first-order and %d total indices", len(names), len(first), len(total))
	}
	if o.YLabel == "" {
		o.YLabel = "sensitivity index"
	}
	p := newPlot(o)
	legend := newSideLegend(p)
	fb := &indexBars{vals: first, offset: -0.2, fill: withAlpha(Colour(0), 0.8)}
	tb := &indexBars{vals: total, offset: 0.2, fill: withAlpha(Colour(1), 0.8)}
	p.Add(fb, tb)
	legend.add("first order", fb)
	legend.add("total", tb)
	p.Add(legend)
	p.X.Tick.Marker = nameTicks(names)
	p.X.Min, p.X.Max = -0.6, float64(len(names))-0.4
	var ns notes
	if len(names) == 0 {
		ns.addf("no data")
	}
	finish(p, o, ns)
	return p, nil
}

// NameAxis labels the whole numbers 0, 1, … of axis a with names, for
// figures whose rows or columns are named things, such as a heat map of
// estimates or parameters drawn at 0, 1, ….
func NameAxis(a *plot.Axis, names []string) { a.Tick.Marker = nameTicks(names) }

// nameTicks labels the whole numbers 0, 1, … with names.
type nameTicks []string

// Ticks implements plot.Ticker.
func (t nameTicks) Ticks(min, max float64) []plot.Tick {
	var out []plot.Tick
	for i, n := range t {
		out = append(out, plot.Tick{Value: float64(i), Label: n})
	}
	return out
}

// indexBars draws one bar per input at i + offset with an interval.
type indexBars struct {
	vals   []Interval
	offset float64
	fill   color.Color
}

// Plot implements plot.Plotter.
func (b *indexBars) Plot(dc draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&dc)
	w := trX(0.18) - trX(0)
	line := draw.LineStyle{Color: color.Black, Width: vg.Points(1)}
	for i, v := range b.vals {
		x := trX(float64(i) + b.offset)
		if usable(v.Value, false) {
			y0, y1 := trY(0), trY(v.Value)
			if y1 < y0 {
				y0, y1 = y1, y0
			}
			r := vg.Rectangle{Min: vg.Point{X: x - w, Y: y0}, Max: vg.Point{X: x + w, Y: y1}}
			dc.FillPolygon(b.fill, dc.ClipPolygonXY([]vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}}))
		}
		if usable(v.Low, false) && usable(v.High, false) {
			lo, hi := trY(v.Low), trY(v.High)
			dc.StrokeLines(line, dc.ClipLinesXY([]vg.Point{{X: x, Y: lo}, {X: x, Y: hi}})...)
			dc.StrokeLines(line, dc.ClipLinesXY([]vg.Point{{X: x - w/2, Y: lo}, {X: x + w/2, Y: lo}})...)
			dc.StrokeLines(line, dc.ClipLinesXY([]vg.Point{{X: x - w/2, Y: hi}, {X: x + w/2, Y: hi}})...)
		}
	}
}

// DataRange implements plot.DataRanger.
func (b *indexBars) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax = -0.6, float64(len(b.vals))-0.4
	ymin, ymax = 0, 0
	for _, v := range b.vals {
		for _, x := range []float64{v.Value, v.Low, v.High} {
			if usable(x, false) {
				ymin, ymax = math.Min(ymin, x), math.Max(ymax, x)
			}
		}
	}
	if ymax <= ymin {
		ymax = ymin + 1
	}
	return xmin, xmax, ymin, ymax
}

// Thumbnail implements plot.Thumbnailer.
func (b *indexBars) Thumbnail(dc *draw.Canvas) {
	r := dc.Rectangle
	dc.FillPolygon(b.fill, []vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}})
}
