package plotting

import (
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TracePlot draws the progress of several runs of an iterative method,
// such as the starts of a fit: runs[k][i] is run k's value after its
// step i+1, drawn against the step as a thin line in one colour, with the
// lowest value reached so far by any run marked at each step as a bold
// line in a second colour. Empty runs are skipped; non-finite values and
// values a log axis cannot show are left out and noted.
func TracePlot(runs [][]float64, o Options) (*plot.Plot, error) {
	p := newPlot(o)
	legend := newSideLegend(p)
	var ns notes
	longest, dropped := 0, 0
	first := true
	for _, r := range runs {
		if len(r) == 0 {
			continue
		}
		longest = max(longest, len(r))
		xs := make([]float64, len(r))
		for i := range xs {
			xs[i] = float64(i + 1)
			if !usable(r[i], o.LogY) {
				dropped++
			}
		}
		c := &curve{xs: xs, ys: r, logY: o.LogY, logX: o.LogX,
			line: draw.LineStyle{Color: withAlpha(Colour(0), 0.55), Width: vg.Points(1)}}
		p.Add(c)
		if first {
			legend.add("each run", c)
			first = false
		}
	}
	if longest > 0 {
		best := make([]float64, longest)
		xs := make([]float64, longest)
		for i := range best {
			xs[i] = float64(i + 1)
			best[i] = math.Inf(1)
			for _, r := range runs {
				for _, v := range r[:min(i+1, len(r))] {
					if usable(v, o.LogY) && v < best[i] {
						best[i] = v
					}
				}
			}
			if i > 0 && best[i-1] < best[i] {
				best[i] = best[i-1]
			}
		}
		c := &curve{xs: xs, ys: best, logY: o.LogY, logX: o.LogX,
			line: draw.LineStyle{Color: Colour(1), Width: vg.Points(2.2)}}
		p.Add(c)
		legend.add("lowest so far", c)
	} else {
		ns.addf("no data")
	}
	if !o.NoLegend {
		p.Add(legend)
	}
	ns.count(dropped, "value a log axis cannot show", "values a log axis cannot show")
	finish(p, o, ns)
	return p, nil
}
