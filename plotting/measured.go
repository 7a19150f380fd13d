package plotting

import (
	"fmt"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Measured is one measured value for a figure: a time, the series it
// belongs to (by name), the value and its standard deviation (0 or NaN for
// none).
type Measured struct {
	T, Y, SD float64
	Name     string
}

// MeasuredPlot draws measurements as markers with ±SD bars over the curves
// of tr (a model's fitted or simulated time courses), each series and its
// measurements in one colour slot (o.ColourIndex, or position in tr.Names;
// measurements of a name tr lacks get slots after them). Points a log axis
// cannot show are left out and noted.
func MeasuredPlot(tr Trajectories, data []Measured, o Options) (*plot.Plot, error) {
	if err := tr.check("curves"); err != nil {
		return nil, err
	}
	if o.ColourIndex != nil && len(o.ColourIndex) != len(tr.Names) {
		return nil, fmt.Errorf("plotting: Options.ColourIndex has %d entries; want %d, one per name, or nil", len(o.ColourIndex), len(tr.Names))
	}
	p := newPlot(o)
	legend := newSideLegend(p)
	slotOf := map[string]int{}
	for j, name := range tr.Names {
		slotOf[name] = j
		if o.ColourIndex != nil {
			slotOf[name] = o.ColourIndex[j]
		}
		c := &curve{xs: tr.Times, ys: tr.column(j), logX: o.LogX, logY: o.LogY,
			line: draw.LineStyle{Color: Colour(slotOf[name]), Width: vg.Points(lineWidth), Dashes: Dashes(slotOf[name])}}
		p.Add(c)
		legend.add(name+" (model)", c)
	}
	dropped := addMeasured(p, legend, data, slotOf, nil, o)
	if !o.NoLegend {
		p.Add(legend)
	}
	var ns notes
	if len(data) == 0 && len(tr.Times) == 0 {
		ns.addf("no data")
	}
	ns.count(dropped, "measurement a log axis cannot show", "measurements a log axis cannot show")
	finish(p, o, ns)
	limitDecades(p, o)
	return p, nil
}

// addMeasured draws data as markers with ±SD bars, each name in its slot
// of slotOf (names it lacks get the next free slots), leaving out the
// names hidden says are hidden, and returns how many points a log axis
// cannot show.
func addMeasured(p *plot.Plot, legend *sideLegend, data []Measured, slotOf map[string]int, hidden func(string) bool, o Options) int {
	byName := map[string][]Measured{}
	var names []string
	next := 0
	for _, s := range slotOf {
		next = max(next, s+1)
	}
	for _, d := range data {
		if _, ok := byName[d.Name]; !ok {
			names = append(names, d.Name)
			if _, known := slotOf[d.Name]; !known {
				slotOf[d.Name] = next
				next++
			}
		}
		byName[d.Name] = append(byName[d.Name], d)
	}
	var dropped int
	for _, name := range names {
		if hidden != nil && hidden(name) {
			continue
		}
		pts := byName[name]
		col := Colour(slotOf[name])
		xs, ys := make([]float64, len(pts)), make([]float64, len(pts))
		for i, d := range pts {
			xs[i], ys[i] = d.T, d.Y
			if !usable(d.T, o.LogX) || !usable(d.Y, o.LogY) {
				dropped++
			}
			if d.SD > 0 {
				lo := d.Y - d.SD
				if o.LogY && lo <= 0 {
					lo = d.Y / 10 // the bar reaches the bottom of the decade below
				}
				p.Add(&curve{xs: []float64{d.T, d.T}, ys: []float64{lo, d.Y + d.SD}, logX: o.LogX, logY: o.LogY,
					line: draw.LineStyle{Color: col, Width: vg.Points(1)}})
			}
		}
		m := &curve{xs: xs, ys: ys, logX: o.LogX, logY: o.LogY,
			glyph: &draw.GlyphStyle{Color: col, Radius: vg.Points(3), Shape: draw.CircleGlyph{}}}
		p.Add(m)
		legend.add(name+" (measured)", m)
	}
	return dropped
}
