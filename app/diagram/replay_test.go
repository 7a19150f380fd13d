package diagram

import (
	"context"
	"image/color"
	"math"
	"testing"

	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/plotting"
	pd "kinetarium/plotting/diagram"
)

// decay is A → B at rate k·A, A(0) = 1: A(t) = exp(−k·t), B = 1 − A (the
// closed form of first-order decay, common practice).
func decay(t *testing.T) (*network.Model, *run.Outcome) {
	m := &network.Model{
		Species:    []network.Species{{Name: "A", Initial: 1}, {Name: "B"}},
		Parameters: []network.Parameter{{Name: "k", Value: 0.5}},
		Reactions:  []network.Reaction{{Name: "decay", Equation: "A -> B", Rate: network.NewRate(network.MassAction, "k", "k")}},
		Simulation: network.Simulation{TEnd: 10, Output: network.Output{Points: 21}, RTol: 1e-10, ATol: 1e-14},
	}
	o, err := run.Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	return m, o
}

func sameColour(a, b color.Color) bool {
	r1, g1, b1, a1 := a.RGBA()
	r2, g2, b2, a2 := b.RGBA()
	return r1 == r2 && g1 == g2 && b1 == b2 && a1 == a2
}

// The colour of a species in a frame at time t is the scale colour of
// its value interpolated linearly from the run's output, and that value
// is within the interpolation error h²/8·max|A”| = h²k²/8 of the closed
// form exp(−k·t).
func TestReplayColoursMatchInterpolatedValues(t *testing.T) {
	m, o := decay(t)
	r, err := NewReplay(m, o)
	if err != nil {
		t.Fatal(err)
	}
	net, _ := network.Check(m)
	d := Build(net)
	Arrange(d)
	k, h := 0.5, 0.5 // output every 0.5
	for _, tt := range []float64{0, 0.25, 1.3, 3.77, 9.99, 10} {
		r.Frame(d, tt)
		// Interpolate independently.
		i := 1
		for i < len(o.T)-1 && o.T[i] < tt {
			i++
		}
		w := (tt - o.T[i-1]) / (o.T[i] - o.T[i-1])
		want := (1-w)*o.Y[i-1][0] + w*o.Y[i][0]
		if got := r.Values(tt)[0]; math.Abs(got-want) > 1e-15 {
			t.Errorf("t = %v: A = %v, interpolated %v", tt, got, want)
		}
		if bound := h * h * k * k / 8 * 1.01; math.Abs(want-math.Exp(-k*tt)) > bound+1e-9 {
			t.Errorf("t = %v: A = %v, closed form %v, beyond the interpolation bound %v", tt, want, math.Exp(-k*tt), bound)
		}
		a := d.Nodes[d.Find(pd.Species, "A")]
		level := math.Log(want/r.Lo) / math.Log(r.Hi/r.Lo)
		if wantCol := plotting.ScaleColour(math.Max(0, math.Min(1, level))); !sameColour(a.Fill, wantCol) {
			t.Errorf("t = %v: A's colour %v, want %v (level %.3f)", tt, a.Fill, wantCol, level)
		}
		// The flux is k·A at the interpolated state.
		if f := r.Fluxes(tt)[0]; math.Abs(f-k*want) > 1e-12 {
			t.Errorf("t = %v: flux %v, want k·A = %v", tt, f, k*want)
		}
	}
	// The scale: Hi is A(0) = 1, Lo six decades below (B starts at 0 and
	// A falls to exp(−5) ≈ 6.7e-3, so the smallest positive value, B's
	// first positive one, lies below 1e-6 or not: the bound holds).
	if r.Hi != 1 || r.Lo < 1e-6*(1-1e-12) {
		t.Errorf("scale %v … %v, want … 1 with at most 6 decades", r.Lo, r.Hi)
	}
	// A colour that differs: the frame at a later time is darker for A.
	r.Frame(d, 0)
	c0 := d.Nodes[0].Fill
	r.Frame(d, 10)
	if sameColour(c0, d.Nodes[0].Fill) {
		t.Error("A has the same colour at t = 0 and t = 10")
	}
	// Line widths grow with the flux, which falls with A.
	r.Frame(d, 0)
	w0 := d.Edges[0].Width
	r.Frame(d, 10)
	if !(w0 > d.Edges[0].Width) {
		t.Errorf("width at t = 0 is %v, at t = 10 %v; want it to fall with the flux", w0, d.Edges[0].Width)
	}
}

// A reversible reaction running backwards is drawn so.
func TestReplayBackward(t *testing.T) {
	m := &network.Model{
		Species:    []network.Species{{Name: "A"}, {Name: "B", Initial: 1}},
		Reactions:  []network.Reaction{{Name: "swap", Equation: "A <=> B", Rate: network.NewRate(network.MassAction, "k", 1.0, "k_reverse", 1.0)}},
		Simulation: network.Simulation{TEnd: 1, Output: network.Output{Points: 11}},
	}
	o, err := run.Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	r, err := NewReplay(m, o)
	if err != nil {
		t.Fatal(err)
	}
	net, _ := network.Check(m)
	d := Build(net)
	Arrange(d)
	r.Frame(d, 0.5)
	for _, e := range d.Edges {
		if !e.Backward {
			t.Errorf("edge %v not marked backward while B turns into A", e)
		}
	}
	// A model changed since the run cannot replay it.
	m2 := m.Clone()
	m2.Species = append(m2.Species, network.Species{Name: "C"})
	if _, err := NewReplay(m2, o); err == nil {
		t.Error("a model with another species replays the run")
	}
}
