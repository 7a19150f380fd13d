package run

import (
	"kinetarium/network"
	"kinetarium/plotting"
)

// MeasuredShown returns measurements pts, given in the units of model m,
// in the units outcome o of m is shown in (the model's display units), so
// that they lie over o's curves: the same conversion as Convert applies
// to o, found by converting an outcome of ones with o's columns.
// Measurements of a name o lacks keep their values.
func MeasuredShown(m *network.Model, o *Outcome, pts []plotting.Measured) []plotting.Measured {
	if len(pts) == 0 || o == nil {
		return pts
	}
	probe := &Outcome{TimeUnit: m.Units.Time, AmountUnit: m.Units.Amount, Names: o.Names, Species: o.Species,
		Units: make([]string, len(o.Names)), T: []float64{1}, Y: [][]float64{make([]float64, len(o.Names))}}
	for j := range o.Names {
		probe.Y[0][j] = 1
		if j < o.Species {
			probe.Units[j] = m.Units.Amount
			continue
		}
		for _, a := range m.Assignments {
			if a.Name == o.Names[j] {
				probe.Units[j] = a.Unit
			}
		}
	}
	c, err := probe.Convert(m.Simulation.Display)
	if err != nil || len(c.T) != 1 {
		return pts
	}
	fy := make(map[string]float64, len(o.Names))
	for j, n := range o.Names {
		fy[n] = c.Y[0][j]
	}
	out := make([]plotting.Measured, len(pts))
	for i, p := range pts {
		f, ok := fy[p.Name]
		if !ok {
			f = 1
		}
		out[i] = plotting.Measured{T: p.T * c.T[0], Y: p.Y * f, SD: p.SD * f, Name: p.Name}
	}
	return out
}
