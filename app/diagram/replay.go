package diagram

import (
	"errors"
	"fmt"
	"image/color"
	"math"
	"sort"

	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/plotting"
	pd "kinetarium/plotting/diagram"
)

// Replay shows a run on the diagram: at a time t, each species is
// coloured by its concentration on a log scale (plotting.ScaleColour, dark
// for low, light for high) and each reaction's lines are as thick as its
// flux, also on a log scale. Values between output times are interpolated
// linearly, as readouts are.
type Replay struct {
	o       *run.Outcome
	sys     *network.System
	rxNames []string
	// Lo and Hi are the concentrations at the two ends of the colour
	// scale: Hi the largest in the run, Lo Decades below it (or the
	// smallest positive value, when that is closer).
	Lo, Hi float64
	// FluxMax is the largest |flux| of any reaction at any output time.
	FluxMax float64

	y, rates []float64
}

// Decades is the span of the replay's colour and width scales.
const Decades = 6

// NewReplay prepares the replay of outcome o, a run of model m. The
// fluxes are the rates of m's reactions at the interpolated state with
// m's parameter values (parameters changed by events during the run are
// not followed).
func NewReplay(m *network.Model, o *run.Outcome) (*Replay, error) {
	if o == nil || len(o.T) == 0 {
		return nil, errors.New("no run to replay; simulate first")
	}
	sys, err := network.Compile(m)
	if err != nil {
		return nil, fmt.Errorf("the model cannot be replayed: %w", err)
	}
	if sys.Dim() != o.Species {
		return nil, errors.New("the model has changed since the run; simulate again to replay it")
	}
	r := &Replay{o: o, sys: sys, y: make([]float64, o.Species), rates: make([]float64, len(m.Reactions))}
	for _, rx := range m.Reactions {
		r.rxNames = append(r.rxNames, rx.Name)
	}
	lo := math.Inf(1)
	for _, row := range o.Y {
		for _, v := range row[:o.Species] {
			if v > 0 && !math.IsInf(v, 0) {
				lo, r.Hi = math.Min(lo, v), math.Max(r.Hi, v)
			}
		}
	}
	if r.Hi == 0 {
		r.Hi, lo = 1, 1
	}
	r.Lo = math.Max(lo, r.Hi*math.Pow(10, -Decades))
	if r.Lo >= r.Hi {
		r.Lo = r.Hi / 10
	}
	for i, t := range o.T {
		sys.Rates(t, o.Y[i][:o.Species], r.rates)
		for _, v := range r.rates {
			if !math.IsNaN(v) && !math.IsInf(v, 0) {
				r.FluxMax = math.Max(r.FluxMax, math.Abs(v))
			}
		}
	}
	return r, nil
}

// Span returns the first and last output times.
func (r *Replay) Span() (t0, t1 float64) { return r.o.T[0], r.o.T[len(r.o.T)-1] }

// Values returns the species' concentrations at time t (clamped to the
// run), interpolated linearly between the output times around it, into
// a new slice.
func (r *Replay) Values(t float64) []float64 {
	out := make([]float64, r.o.Species)
	r.values(t, out)
	return out
}

func (r *Replay) values(t float64, out []float64) {
	T, Y := r.o.T, r.o.Y
	n := r.o.Species
	switch {
	case t <= T[0]:
		copy(out, Y[0][:n])
		return
	case t >= T[len(T)-1]:
		copy(out, Y[len(T)-1][:n])
		return
	}
	i := sort.SearchFloat64s(T, t) // T[i-1] < t <= T[i]
	t0, t1 := T[i-1], T[i]
	w := 0.0
	if t1 > t0 {
		w = (t - t0) / (t1 - t0)
	}
	for j := 0; j < n; j++ {
		out[j] = (1-w)*Y[i-1][j] + w*Y[i][j]
	}
}

// Fluxes returns each reaction's rate at time t, at the interpolated
// state.
func (r *Replay) Fluxes(t float64) []float64 {
	r.values(t, r.y)
	out := make([]float64, len(r.rates))
	r.sys.Rates(t, r.y, out)
	return out
}

// Colour returns the colour of concentration v: plotting.ScaleColour of
// its place between Lo and Hi on a log scale (0 at or below Lo).
func (r *Replay) Colour(v float64) color.Color {
	return plotting.ScaleColour(r.Level(v))
}

// Level returns v's place on the colour scale, from 0 (at or below Lo)
// to 1 (Hi).
func (r *Replay) Level(v float64) float64 {
	if !(v > r.Lo) {
		return 0
	}
	f := math.Log(v/r.Lo) / math.Log(r.Hi/r.Lo)
	return math.Min(f, 1)
}

// Width returns the line width (diagram points) of flux v: 0.6 for no
// flux up to 5 for FluxMax, on a log scale over Decades.
func (r *Replay) Width(v float64) float64 {
	a := math.Abs(v)
	if r.FluxMax == 0 || !(a > 0) || math.IsInf(a, 0) {
		return 0.6
	}
	f := 1 + math.Log10(a/r.FluxMax)/Decades
	return 0.6 + 4.4*math.Max(0, math.Min(f, 1))
}

// Frame sets d to show time t: species' fill colours, and the width of
// each reaction's lines (and direction, for a reversible reaction running
// backwards).
func (r *Replay) Frame(d *pd.Diagram, t float64) {
	vals := r.Values(t)
	flux := r.Fluxes(t)
	spIx := map[string]int{}
	for j, name := range r.o.Names[:r.o.Species] {
		spIx[name] = j
	}
	rxIx := map[string]int{}
	for j, name := range r.rxNames {
		rxIx[name] = j
	}
	for i := range d.Nodes {
		n := &d.Nodes[i]
		n.Fill = nil
		if n.Kind == pd.Species {
			if j, ok := spIx[n.Name]; ok {
				n.Fill = r.Colour(vals[j])
			}
		}
	}
	for k := range d.Edges {
		e := &d.Edges[k]
		rn := e.To
		if d.Nodes[rn].Kind != pd.Reaction {
			rn = e.From
		}
		j, ok := rxIx[d.Nodes[rn].Name]
		if !ok || e.Role.Modifier() {
			e.Width, e.Backward = 0, false
			continue
		}
		e.Width = r.Width(flux[j])
		e.Backward = d.Nodes[rn].Reversible && flux[j] < 0
	}
}

// Caption says what a frame at t shows.
func (r *Replay) Caption(t float64) string {
	u := ""
	if r.o.TimeUnit != "" {
		u = " " + r.o.TimeUnit
	}
	return fmt.Sprintf("t = %.4g%s\ncolour: concentration %s, log scale; width: flux", t, u, r.ColourRange())
}

// ColourRange says which concentrations the colours span, with their
// unit: "0.00414 (dark) to 200 (light) mg/L".
func (r *Replay) ColourRange() string {
	s := fmt.Sprintf("%.3g (dark) to %.3g (light)", r.Lo, r.Hi)
	if r.o.AmountUnit != "" {
		s += " " + r.o.AmountUnit
	}
	return s
}
