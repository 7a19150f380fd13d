package analyse

import (
	"context"
	"fmt"
	"math"
	"strings"

	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/app/study"
	"kinetarium/network"
	"kinetarium/solve/steady"
)

// ContinueOptions describe a continuation. The zero value of every field
// but Knob, From and To means a sensible default.
type ContinueOptions struct {
	// Knob is a parameter name or init:SPECIES (for a held species, its
	// level; for another, the totals it enters).
	Knob string
	// From and To bound the knob; the branch starts at From (or at Start,
	// when set) and goes towards To first.
	From, To float64
	Start    *float64
	// MaxPoints stops the branch; default 1000.
	MaxPoints int
	// Quantities are the species and assignments reported; default every
	// species.
	Quantities []string
	// Progress, when set, gets the fraction of the range covered.
	Progress func(float64)
}

// Diagram is a continued branch with the chosen quantities at each point.
type Diagram struct {
	Knob       string
	Quantities []string
	Log        bool // the knob was continued in its logarithm
	*steady.Branch
	// Values[k][q] is quantity q at branch point k; SpecialValues[s][q]
	// the same at special point s.
	Values, SpecialValues [][]float64
	// KnobUnit is the knob's unit in the model ("" when none is known);
	// knob values are never converted.
	KnobUnit string
	// Shown is set when quantities, eigenvalues and periods are in
	// display units (In), and Units then names each quantity's unit.
	Shown *Shown
	Units []string

	columns []int // each quantity's column: state, then assignments
	// raw is the diagram as computed when this one is shown in display
	// units, and scales each quantity's conversion from it.
	raw    *Diagram
	scales []run.Scale
}

// family adapts a compiled network and one knob to steady.Family.
type family struct {
	*network.System
	param  int // parameter index, or −1 for an initial value
	sp     int
	vals   []float64
	colPtr []int
	rowIdx []int
}

func (f *family) SetParameter(p float64) {
	if f.param >= 0 {
		f.System.SetParameter(f.param, p)
	} else {
		f.SetInitial(f.sp, p)
	}
}

func (f *family) ParamDeriv(y, d []float64) {
	for i := range d {
		d[i] = 0
	}
	if f.param < 0 {
		return
	}
	f.ParamJacobianCSC(0, y, f.vals)
	for p := f.colPtr[f.param]; p < f.colPtr[f.param+1]; p++ {
		d[f.rowIdx[p]] = f.vals[p]
	}
}

// quantities resolves species and assignment names.
func (a *Model) quantities(names []string) ([]int, error) {
	if len(names) == 0 {
		names = a.Sys.Species()
	}
	all := append(append([]string(nil), a.Sys.Species()...), a.Sys.Assignments()...)
	var idx []int
	for _, q := range names {
		k := -1
		for i, n := range all {
			if n == q {
				k = i
				break
			}
		}
		if k < 0 {
			return nil, fmt.Errorf("no species or assignment %q in the model (%s)", q, strings.Join(all, ", "))
		}
		idx = append(idx, k)
	}
	return idx, nil
}

// observe returns the quantities idx at state y.
func (a *Model) observe(sys *network.System, idx []int, y []float64) []float64 {
	n := sys.Dim()
	asg := make([]float64, len(sys.Assignments()))
	if len(asg) > 0 {
		sys.Assigned(0, y, asg)
	}
	out := make([]float64, len(idx))
	for k, i := range idx {
		if i < n {
			out[k] = y[i]
		} else {
			out[k] = asg[i-n]
		}
	}
	return out
}

// Continue follows the steady state reached from the model's initial
// state at the start value as the knob moves through [From, To].
func (a *Model) Continue(ctx context.Context, o ContinueOptions) (*Diagram, error) {
	sys := a.Sys.Clone()
	if _, err := study.NewTarget(sys, []string{o.Knob}); err != nil {
		return nil, fmt.Errorf("knob: %w", err)
	}
	kn := sliders.ParseRef(o.Knob)
	f := &family{System: sys, param: -1}
	set := steady.ContinueSettings{MaxPoints: o.MaxPoints, Progress: o.Progress}
	st, err := a.Settings()
	if err != nil {
		return nil, err
	}
	set.Settings = st
	switch kn.Kind {
	case sliders.Parameter:
		f.param, _ = sys.ParameterIndex(kn.Name)
		f.colPtr, f.rowIdx = sys.ParamJacobianPattern()
		f.vals = make([]float64, len(f.rowIdx))
	case sliders.Initial:
		f.sp, _ = sys.SpeciesIndex(kn.Name)
		if a.Gamma != nil {
			r, _ := a.Gamma.Dims()
			set.TotalsSlope = make([]float64, r)
			for k := range set.TotalsSlope {
				set.TotalsSlope[k] = a.Gamma.At(k, f.sp)
			}
		}
	default:
		return nil, fmt.Errorf("knob: continuation varies a parameter or init:SPECIES; %q is a %s", o.Knob, kn.Kind)
	}
	if math.IsNaN(o.From) || math.IsNaN(o.To) || math.IsInf(o.From, 0) || math.IsInf(o.To, 0) {
		return nil, fmt.Errorf("from and to: expected finite numbers, got %v and %v", o.From, o.To)
	}
	if o.From == o.To {
		return nil, fmt.Errorf("from and to are both %g: give a range to continue over", o.From)
	}
	start := o.From
	if o.Start != nil {
		start = *o.Start
	}
	set.Min, set.Max = math.Min(o.From, o.To), math.Max(o.From, o.To)
	if !(start >= set.Min && start <= set.Max) {
		return nil, fmt.Errorf("start: %s = %g is outside the range from %g to %g; the range must contain the value the branch starts from", o.Knob, start, o.From, o.To)
	}
	set.Down = o.To < o.From
	if o.Start != nil && start == set.Max {
		set.Down = true
	}
	if o.Start != nil && start == set.Min {
		set.Down = false
	}
	set.Log = set.Min > 0 && set.Max/set.Min >= 20
	if err := (sliders.Knob{Kind: kn.Kind, Name: kn.Name}).Check(set.Min); err != nil {
		return nil, fmt.Errorf("from and to: %w", err)
	}
	idx, err := a.quantities(o.Quantities)
	if err != nil {
		return nil, fmt.Errorf("quantities: %w", err)
	}
	f.SetParameter(start)
	y0 := sys.Initial()
	s0, err := a.steadyFrom(ctx, sys, y0, st)
	if err != nil {
		return nil, fmt.Errorf("at %s = %g: %w", o.Knob, start, err)
	}
	br, err := steady.Continue(ctx, f, start, s0.Y, set)
	if err != nil {
		return nil, err
	}
	d := &Diagram{Knob: o.Knob, Log: set.Log, Branch: br, KnobUnit: a.knobUnit(o.Knob), columns: idx}
	all := append(append([]string(nil), sys.Species()...), sys.Assignments()...)
	for _, i := range idx {
		d.Quantities = append(d.Quantities, all[i])
	}
	for _, p := range br.Points {
		f.SetParameter(p.P)
		d.Values = append(d.Values, a.observe(sys, idx, p.Y))
	}
	for _, sp := range br.Specials {
		f.SetParameter(sp.P)
		d.SpecialValues = append(d.SpecialValues, a.observe(sys, idx, sp.Y))
	}
	return d, nil
}

// Hill fits a Hill curve to quantity q of the diagram against the knob:
// the dose–response curve. A branch with folds has more than one response
// at some doses; it is refused with the range of the folds.
//
// A diagram shown in display units fits the values as computed and shows
// the curve's bottom and top in the quantity's unit (the dose keeps the
// knob's), so that the fit does not depend on the units it is shown in.
func (d *Diagram) Hill(q int) (steady.Hill, error) {
	if d.raw != nil {
		h, err := d.raw.Hill(q)
		if err == nil {
			sc := d.scales[q]
			h.Bottom, h.Top, h.RMS = sc.Of(h.Bottom), sc.Of(h.Top), sc.Of(h.RMS)
		}
		return h, err
	}
	var folds []float64
	for _, s := range d.Specials {
		if s.Kind == "fold" {
			folds = append(folds, s.P)
		}
	}
	if len(folds) > 0 {
		return steady.Hill{}, fmt.Errorf("the response folds back (at %s = %s): between the folds there are several steady states, which one Hill curve cannot describe", d.Knob, joinNumbers(folds))
	}
	x := make([]float64, len(d.Points))
	r := make([]float64, len(d.Points))
	for k, p := range d.Points {
		x[k], r[k] = p.P, d.Values[k][q]
	}
	return steady.FitHill(x, r)
}

func joinNumbers(v []float64) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmt.Sprintf("%.6g", x)
	}
	return strings.Join(s, " and ")
}
