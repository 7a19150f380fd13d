package plotting

import (
	"fmt"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// MaxSingleRuns is the most single runs EnsemblePlot draws.
const MaxSingleRuns = 10

// Ensemble is what EnsemblePlot draws for one species: the 5–95 % and
// 25–75 % bands and the mean of many stochastic runs, the deterministic
// (ODE) solution for comparison, and a few single runs, drawn as steps
// (each value held until the next time).
type Ensemble struct {
	Name             string
	Times            []float64
	Mean             []float64
	Lo5, Hi95        []float64 // optional, both or neither
	Lo25, Hi75       []float64 // optional, both or neither
	ODE              []float64 // optional, on Times
	Runs             [][]float64
	MeanLabel, Units string
}

// steps returns the corners of the step curve through (xs, ys).
func steps(xs, ys []float64) ([]float64, []float64) {
	if len(xs) == 0 {
		return nil, nil
	}
	sx := make([]float64, 0, 2*len(xs))
	sy := make([]float64, 0, 2*len(xs))
	for i := range xs {
		if i > 0 {
			sx, sy = append(sx, xs[i]), append(sy, ys[i-1])
		}
		sx, sy = append(sx, xs[i]), append(sy, ys[i])
	}
	return sx, sy
}

// EnsemblePlot draws e: single runs thin and faint beneath (at most
// MaxSingleRuns), the bands, the mean as a thick line and the ODE solution
// dashed.
func EnsemblePlot(e Ensemble, o Options) (*plot.Plot, error) {
	n := len(e.Times)
	for _, s := range []struct {
		name string
		v    []float64
		opt  bool
	}{{"mean", e.Mean, false}, {"5 % quantile", e.Lo5, true}, {"95 % quantile", e.Hi95, true},
		{"25 % quantile", e.Lo25, true}, {"75 % quantile", e.Hi75, true}, {"ODE solution", e.ODE, true}} {
		if s.opt && s.v == nil {
			continue
		}
		if len(s.v) != n {
			return nil, fmt.Errorf("plotting: EnsemblePlot %s has %d points; want %d, one per time", s.name, len(s.v), n)
		}
	}
	if (e.Lo5 == nil) != (e.Hi95 == nil) || (e.Lo25 == nil) != (e.Hi75 == nil) {
		return nil, fmt.Errorf("plotting: EnsemblePlot needs both edges of a band or neither")
	}
	for k, r := range e.Runs {
		if len(r) != n {
			return nil, fmt.Errorf("plotting: EnsemblePlot run %d has %d points; want %d", k+1, len(r), n)
		}
	}
	p := newPlot(o)
	legend := newSideLegend(p)
	base := Colour(0)
	runs := e.Runs
	if len(runs) > MaxSingleRuns {
		runs = runs[:MaxSingleRuns]
	}
	for k, r := range runs {
		sx, sy := steps(e.Times, r)
		c := &curve{xs: sx, ys: sy, logX: o.LogX, logY: o.LogY, line: draw.LineStyle{Color: withAlpha(Colour(2), 0.55), Width: vg.Points(0.8)}}
		p.Add(c)
		if k == 0 {
			legend.add(fmt.Sprintf("single runs (%d)", len(runs)), c)
		}
	}
	if e.Lo5 != nil {
		b := &band{xs: e.Times, lo: e.Lo5, hi: e.Hi95, logX: o.LogX, logY: o.LogY, fill: withAlpha(base, 0.18)}
		p.Add(b)
		legend.add("5–95 %", b)
	}
	if e.Lo25 != nil {
		b := &band{xs: e.Times, lo: e.Lo25, hi: e.Hi75, logX: o.LogX, logY: o.LogY, fill: withAlpha(base, 0.38)}
		p.Add(b)
		legend.add("25–75 %", b)
	}
	m := &curve{xs: e.Times, ys: e.Mean, logX: o.LogX, logY: o.LogY, line: draw.LineStyle{Color: base, Width: vg.Points(2)}}
	p.Add(m)
	label := e.MeanLabel
	if label == "" {
		label = "mean"
		if e.Name != "" {
			label = e.Name + " (mean)"
		}
	}
	legend.add(label, m)
	if e.ODE != nil {
		c := &curve{xs: e.Times, ys: e.ODE, logX: o.LogX, logY: o.LogY,
			line: draw.LineStyle{Color: Colour(1), Width: vg.Points(1.8), Dashes: []vg.Length{vg.Points(5), vg.Points(3)}}}
		p.Add(c)
		legend.add("ODE solution", c)
	}
	p.Add(legend)
	var ns notes
	if n == 0 {
		ns.addf("no data")
	}
	var dropped int
	if o.LogY {
		for _, v := range e.Mean {
			if v <= 0 {
				dropped++
			}
		}
	}
	ns.count(dropped, "mean ≤ 0 on the log axis", "means ≤ 0 on the log axis")
	finish(p, o, ns)
	return p, nil
}
