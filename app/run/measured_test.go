package run

import (
	"math"
	"testing"

	"kinetarium/network"
	"kinetarium/plotting"
)

// Measurements in the model's units (min, mM) are shown in its display
// units (h, µM) as the curves are: 1 h = 60 min and 1 mM = 1000 µM (SI
// and the trade's units, common practice); an assignment without a unit
// and a name the outcome lacks keep their values.
func TestMeasuredShown(t *testing.T) {
	m := &network.Model{
		Units:       network.Units{Time: "min", Amount: "mM"},
		Species:     []network.Species{{Name: "A", Initial: 1}},
		Assignments: []network.Assignment{{Name: "ratio", Expression: "A"}},
		Simulation:  network.Simulation{Display: network.Display{Time: "h", Concentration: "uM"}},
	}
	o := &Outcome{Names: []string{"A", "ratio"}, Species: 1}
	got := MeasuredShown(m, o, []plotting.Measured{
		{T: 30, Y: 0.5, SD: 0.01, Name: "A"},
		{T: 90, Y: 2, Name: "ratio"},
		{T: 60, Y: 3, Name: "other"},
	})
	want := []plotting.Measured{{T: 0.5, Y: 500, SD: 10, Name: "A"}, {T: 1.5, Y: 2, Name: "ratio"}, {T: 1, Y: 3, Name: "other"}}
	for i := range want {
		g, w := got[i], want[i]
		if g.Name != w.Name || math.Abs(g.T-w.T) > 1e-12 || math.Abs(g.Y-w.Y) > 1e-9 || math.Abs(g.SD-w.SD) > 1e-12 {
			t.Errorf("point %d shown as %+v, want %+v", i, g, w)
		}
	}
	m.Simulation.Display = network.Display{}
	if p := MeasuredShown(m, o, want[:1]); p[0] != want[0] {
		t.Errorf("without display units the point changed to %+v", p[0])
	}
}
