package plotting

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Trajectories are time courses of named series, independent of the solver
// that produced them.
type Trajectories struct {
	Times  []float64
	Names  []string
	Values [][]float64 // Values[i][j] is series j at Times[i]
}

// check reports the first inconsistency in tr's shape.
func (tr *Trajectories) check(what string) error {
	if len(tr.Values) != len(tr.Times) {
		return fmt.Errorf("plotting: %s has %d times but %d rows of values; want one row per time", what, len(tr.Times), len(tr.Values))
	}
	for i, row := range tr.Values {
		if len(row) != len(tr.Names) {
			return fmt.Errorf("plotting: %s row %d (time %g) has %d values; want %d, one per name", what, i, tr.Times[i], len(row), len(tr.Names))
		}
	}
	return nil
}

// column returns series j as a new slice.
func (tr *Trajectories) column(j int) []float64 {
	c := make([]float64, len(tr.Times))
	for i, row := range tr.Values {
		c[i] = row[j]
	}
	return c
}

// TrajectoryPlot draws every visible series of tr against time, one colour
// slot per series (o.ColourIndex, or position), with a legend beside the
// data unless o.NoLegend. A previous run in o.Overlay is drawn beneath, faint
// and dashed, in the same colours.
//
// On a log time axis, points at t ≤ 0 are dropped; on a log value axis,
// values ≤ 0 are; both, and any NaN or infinite values, are counted in a note
// under the title. Empty data give an empty figure with a note. Only an
// inconsistent shape (rows, names, Visible, ColourIndex of the wrong length)
// is an error.
func TrajectoryPlot(tr Trajectories, o Options) (*plot.Plot, error) {
	if err := tr.check("trajectories"); err != nil {
		return nil, err
	}
	if o.Visible != nil && len(o.Visible) != len(tr.Names) {
		return nil, fmt.Errorf("plotting: Options.Visible has %d entries; want %d, one per name, or nil", len(o.Visible), len(tr.Names))
	}
	if o.ColourIndex != nil && len(o.ColourIndex) != len(tr.Names) {
		return nil, fmt.Errorf("plotting: Options.ColourIndex has %d entries; want %d, one per name, or nil", len(o.ColourIndex), len(tr.Names))
	}
	if o.Overlay != nil {
		if err := o.Overlay.check("overlay"); err != nil {
			return nil, err
		}
	}
	p := newPlot(o)
	legend := newSideLegend(p)
	var nonFinite, nonPositive int // values of shown series left out
	slotOf := make(map[string]int, len(tr.Names))
	for j, name := range tr.Names {
		slot := j
		if o.ColourIndex != nil {
			slot = o.ColourIndex[j]
		}
		slotOf[name] = slot
	}
	visible := func(j int) bool { return o.Visible == nil || o.Visible[j] }

	// The previous run, beneath.
	if ov := o.Overlay; ov != nil {
		first := true
		for j, name := range ov.Names {
			slot, ok := slotOf[name]
			if ok {
				jj := indexOf(tr.Names, name)
				if !visible(jj) {
					continue
				}
			} else {
				slot = j
			}
			c := &curve{
				xs: ov.Times, ys: ov.column(j), logX: o.LogX, logY: o.LogY,
				line: draw.LineStyle{
					Color:  withAlpha(Colour(slot), 0.4),
					Width:  vg.Points(lineWidth),
					Dashes: []vg.Length{vg.Points(4), vg.Points(3)},
				},
			}
			p.Add(c)
			if first {
				label := o.OverlayLabel
				if label == "" {
					label = "previous run (faint, dashed)"
				}
				legend.add(label, &curve{line: draw.LineStyle{Color: withAlpha(Colour(6), 0.4), Width: vg.Points(lineWidth), Dashes: c.line.Dashes}})
				first = false
			}
		}
	}

	// This run.
	shown := 0
	for j, name := range tr.Names {
		if !visible(j) {
			continue
		}
		shown++
		slot := slotOf[name]
		c := &curve{
			xs: tr.Times, ys: tr.column(j), logX: o.LogX, logY: o.LogY,
			line: draw.LineStyle{Color: Colour(slot), Width: vg.Points(lineWidth), Dashes: Dashes(slot)},
		}
		p.Add(c)
		label := name
		if j < len(o.SeriesUnits) && o.SeriesUnits[j] != "" {
			label = AxisLabel(name, o.SeriesUnits[j])
		}
		legend.add(label, c)
		for i, t := range tr.Times {
			if !usable(t, o.LogX) {
				continue
			}
			v := tr.Values[i][j]
			if !usable(v, false) {
				nonFinite++
			} else if o.LogY && v <= 0 {
				nonPositive++
			}
		}
	}
	droppedMeasured := 0
	if len(o.Measured) > 0 {
		droppedMeasured = addMeasured(p, legend, o.Measured, slotOf, func(name string) bool {
			j := indexOf(tr.Names, name)
			return j >= 0 && !visible(j)
		}, o)
	}
	if len(o.Marks) > 0 {
		p.Add(&marks{xs: o.Marks, logX: o.LogX})
	}
	if !o.NoLegend {
		p.Add(legend)
	}

	var ns notes
	if len(tr.Times) == 0 || len(tr.Names) == 0 {
		ns.addf("no data")
	} else if shown == 0 {
		ns.addf("no series selected")
	}
	if o.LogX {
		dropped := 0
		for _, t := range tr.Times {
			if usable(t, false) && t <= 0 {
				dropped++
			}
		}
		ns.count(dropped, "time ≤ 0 on the log axis", "times ≤ 0 on the log axis")
	}
	ns.count(nonPositive, "value ≤ 0 on the log axis", "values ≤ 0 on the log axis")
	ns.count(nonFinite, "NaN or infinite value", "NaN or infinite values")
	ns.count(droppedMeasured, "measurement a log axis cannot show", "measurements a log axis cannot show")
	finish(p, o, ns)
	limitDecades(p, o)
	return p, nil
}

// limitDecades applies Options.Decades to a logarithmic value axis.
func limitDecades(p *plot.Plot, o Options) {
	d := o.Decades
	if !o.LogY || d < 0 {
		return
	}
	if d == 0 {
		d = 12
	}
	if lo := p.Y.Max / math.Pow(10, float64(d)); p.Y.Min < lo {
		p.Y.Min = lo
	}
}

// indexOf returns the index of s in list, or -1.
func indexOf(list []string, s string) int {
	for i, v := range list {
		if v == s {
			return i
		}
	}
	return -1
}

// marks draws Options.Marks as short grey ticks rising from the bottom of
// the data area; they do not change the axes' ranges.
type marks struct {
	xs   []TimeMark
	logX bool
}

// markHeight is how far a mark rises from the time axis.
const markHeight = 7 // points

func (m *marks) Plot(c draw.Canvas, p *plot.Plot) {
	sty := draw.LineStyle{Color: color.Gray{Y: 90}, Width: vg.Points(0.8)}
	for _, mk := range m.xs {
		if !usable(mk.X, m.logX) || mk.X < p.X.Min || mk.X > p.X.Max {
			continue
		}
		x := c.X(p.X.Norm(mk.X))
		c.StrokeLine2(sty, x, c.Min.Y, x, c.Min.Y+vg.Points(markHeight))
	}
}
