// Package calibrate meets models with measurements: the forward
// sensitivities of a model's species and assignments to its knobs
// (parameters, initial concentrations, volumes, event quantities), files
// of measured time courses, the fit specification ("kinetarium.fit/1"),
// and the fit of a model to experiments with the uncertainty of the
// estimates. It holds no widgets and builds without cgo, so the window and
// the batch command share it.
package calibrate

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"

	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/network"
	"kinetarium/network/expr"
	"kinetarium/solve"
)

// Options say what an Evaluator computes. The zero value of every field
// means a sensible default.
type Options struct {
	// Targets are the knobs ("kcat", "init:S", "volume:C",
	// "event:dose.add.C") whose sensitivities are computed and whose
	// values Solve takes.
	Targets []string
	// Fixed are knob values that replace the model's in every solve (an
	// experiment's starting concentrations, say); they must not name a
	// target.
	Fixed map[string]float64
	// Outputs are the species and assignments reported, by name; default
	// every species, then every assignment, in model order.
	Outputs []string
	// Times are the output times, ascending and ≥ 0; default the model's
	// output grid. The solve ends at the last time (at the model's end
	// time when that is 0).
	Times []float64
	// Settings override the model's solver settings where not zero
	// (RTol, ATol, Method).
	RTol, ATol float64
	Method     solve.Method
	// ErrorControl includes the sensitivities in the solver's error test.
	ErrorControl bool
}

// Evaluator solves one model again and again with the targets' values
// changed, with the sensitivities of its outputs to the targets. It
// compiles the model once. An Evaluator is used by one goroutine at a time;
// Clone gives another.
type Evaluator struct {
	model   *network.Model
	net     *network.Net
	sys     *network.System
	opts    Options
	targets []target
	fixed   []sliders.Knob
	outputs []output
	times   []float64
	tEnd    float64
	set     solve.Settings
	plain   *solve.Solver // without sensitivities
	sensSv  *solve.Solver
	y0      []float64
	base    []float64 // the model's values of the targets
	vars    []float64 // [y | parameters | t] for the derivative programs
	np      int

	jump      *network.SensJump // the events' jump rule for the sensitivities
	exact     []bool            // per target
	inexactBy []string          // per target: why its sensitivities are taken by differences
	overrides map[string]bool   // event quantities given values from outside
}

// target is one resolved target knob.
type target struct {
	sliders.Knob
	index int // parameter, species or compartment index in the system
}

// output is one reported quantity: a species or an assignment with its
// derivatives.
type output struct {
	name    string
	species int // ≥ 0 for a species
	asg     *network.DiffExpr
}

// Result is one solve of an Evaluator.
type Result struct {
	T     []float64
	Names []string    // the outputs
	Y     [][]float64 // Y[i][k]: output k at T[i]
	// D[i][k·len(Targets)+j] is ∂(output k)/∂(target j) at T[i]; nil
	// when sensitivities were not asked for.
	D     [][]float64
	Stats solve.Stats
	// Events are the events that fired.
	Events []solve.Firing
	// Exact reports, per target, whether its sensitivities were
	// integrated with the state (true) or taken by central differences of
	// whole solves (false; see Evaluator.Inexact).
	Exact []bool
}

// NewEvaluator checks m and compiles it for repeated solves.
func NewEvaluator(m *network.Model, o Options) (*Evaluator, error) {
	net, problems := network.Check(m)
	if err := problems.Err(); err != nil {
		return nil, fmt.Errorf("the model cannot be simulated: %w", err)
	}
	sys, err := net.Compile()
	if err != nil {
		return nil, fmt.Errorf("the model cannot be simulated: %w", err)
	}
	e := &Evaluator{model: m, net: net, sys: sys, opts: o, np: len(sys.Parameters()), overrides: map[string]bool{}}
	n := sys.Dim()
	e.vars = make([]float64, sys.VarsLen())
	seen := map[string]bool{}
	for _, ref := range o.Targets {
		t, err := resolve(sys, ref)
		if err != nil {
			return nil, err
		}
		if seen[t.Key()] {
			return nil, fmt.Errorf("target %q is listed twice", ref)
		}
		seen[t.Key()] = true
		v, ok := sliders.Lookup(m, t.Kind, t.Name)
		if !ok {
			return nil, fmt.Errorf("target %q: the model has no such %s", ref, t.Kind)
		}
		e.targets = append(e.targets, t)
		e.base = append(e.base, v)
		if t.Kind == sliders.Event {
			e.overrides[t.Name] = true
		}
	}
	fixedRefs := make([]string, 0, len(o.Fixed))
	for ref := range o.Fixed {
		fixedRefs = append(fixedRefs, ref)
	}
	slices.Sort(fixedRefs)
	for _, ref := range fixedRefs {
		t, err := resolve(sys, ref)
		if err != nil {
			return nil, err
		}
		if seen[t.Key()] {
			return nil, fmt.Errorf("%q is both estimated and given a fixed value", ref)
		}
		t.Value = o.Fixed[ref]
		if err := t.Check(t.Value); err != nil {
			return nil, err
		}
		e.fixed = append(e.fixed, t.Knob)
		if t.Kind == sliders.Event {
			e.overrides[t.Name] = true
		}
	}
	if err := e.buildOutputs(); err != nil {
		return nil, err
	}
	sim := m.Simulation.WithDefaults()
	set, err := run.Settings(sim)
	if err != nil {
		return nil, err
	}
	e.times = set.Times
	e.tEnd = sim.TEnd
	if o.Times != nil {
		for i, t := range o.Times {
			if math.IsNaN(t) || t < 0 || math.IsInf(t, 0) || (i > 0 && !(t > o.Times[i-1])) {
				return nil, fmt.Errorf("output times must be finite, ≥ 0 and increasing; time %d is %g", i, t)
			}
		}
		e.times = slices.Clone(o.Times)
		if len(e.times) > 0 && e.times[len(e.times)-1] > 0 {
			e.tEnd = e.times[len(e.times)-1]
		}
	}
	if o.RTol > 0 {
		set.RTol = o.RTol
	}
	if o.ATol > 0 {
		set.ATol = o.ATol
	}
	if o.Method != "" {
		set.Method = o.Method
	}
	if set.Method == solve.Explicit {
		set.Method = solve.Auto // sensitivities need a stiff method
	}
	set.Times = e.times
	e.set = set
	if err := e.buildJump(); err != nil {
		return nil, err
	}
	e.plain = solve.NewSolver(sys, set)
	if len(e.targets) > 0 {
		ss := set
		ss.Sens = e.sensSettings()
		e.sensSv = solve.NewSolver(sys, ss)
	}
	e.y0 = make([]float64, n)
	return e, nil
}

// resolve finds a knob on sys.
func resolve(sys *network.System, ref string) (target, error) {
	t := target{Knob: sliders.ParseRef(ref)}
	var ok bool
	var err error
	switch t.Kind {
	case sliders.Initial:
		if t.index, ok = sys.SpeciesIndex(t.Name); !ok {
			err = fmt.Errorf("%q: no species %q in the model (species: %s)", ref, t.Name, strings.Join(sys.Species(), ", "))
		}
	case sliders.Volume:
		if t.index, ok = sys.CompartmentIndex(t.Name); !ok {
			err = fmt.Errorf("%q: no compartment %q in the model (compartments: %s)", ref, t.Name, strings.Join(sys.Compartments(), ", "))
		}
	case sliders.Event:
		if _, err = sys.EventValue(t.Name); err != nil {
			err = fmt.Errorf("%q: %w", ref, err)
		}
	default:
		if t.index, ok = sys.ParameterIndex(t.Name); !ok {
			err = fmt.Errorf("%q: no parameter %q in the model (parameters: %s; use init:SPECIES, volume:COMPARTMENT or event:EVENT.FIELD for those)", ref, t.Name, strings.Join(sys.Parameters(), ", "))
		}
	}
	return t, err
}

// Clone returns an independent Evaluator for another goroutine.
func (e *Evaluator) Clone() (*Evaluator, error) {
	return NewEvaluator(e.model, e.opts)
}

// Targets returns the target knobs' names as given.
func (e *Evaluator) Targets() []string { return slices.Clone(e.opts.Targets) }

// Base returns the model's values of the targets.
func (e *Evaluator) Base() []float64 { return slices.Clone(e.base) }

// Knobs returns the target knobs (with the model's values).
func (e *Evaluator) Knobs() []sliders.Knob {
	out := make([]sliders.Knob, len(e.targets))
	for j, t := range e.targets {
		out[j] = t.Knob
		out[j].Model, out[j].Value = e.base[j], e.base[j]
	}
	return out
}

// Outputs returns the names of the outputs.
func (e *Evaluator) Outputs() []string {
	names := make([]string, len(e.outputs))
	for k, o := range e.outputs {
		names[k] = o.name
	}
	return names
}

// Times returns the output times.
func (e *Evaluator) Times() []float64 { return slices.Clone(e.times) }

// Inexact returns, for each target whose sensitivities are taken by
// central differences of whole solves, why; "" for exact ones.
func (e *Evaluator) Inexact() []string { return slices.Clone(e.inexactBy) }

// System returns the compiled model.
func (e *Evaluator) System() *network.System { return e.sys }

// buildOutputs resolves the outputs and compiles the assignments'
// derivatives.
func (e *Evaluator) buildOutputs() error {
	names := e.opts.Outputs
	if names == nil {
		names = append(slices.Clone(e.sys.Species()), e.sys.Assignments()...)
	}
	for _, name := range names {
		if i, ok := e.sys.SpeciesIndex(name); ok {
			e.outputs = append(e.outputs, output{name: name, species: i})
			continue
		}
		k, ok := e.net.AssignmentIndex(name)
		if !ok {
			return fmt.Errorf("%q is neither a species nor an assignment of the model (species: %s; assignments: %s)",
				name, strings.Join(e.sys.Species(), ", "), strings.Join(e.sys.Assignments(), ", "))
		}
		var node expr.Node
		for _, a := range e.net.Assignments {
			if a.Index == k {
				node = a.Expr
			}
		}
		d, err := e.net.DiffExpr(e.sys, node)
		if err != nil {
			return fmt.Errorf("assignment %q: %w", name, err)
		}
		e.outputs = append(e.outputs, output{name: name, species: -1, asg: d})
	}
	return nil
}

// buildJump prepares the events' jump rule for the targets and decides
// which targets have exact sensitivities (network.SensJump).
func (e *Evaluator) buildJump() error {
	ts := make([]network.SensTarget, len(e.targets))
	for j, t := range e.targets {
		switch t.Kind {
		case sliders.Initial:
			ts[j] = network.SensTarget{Kind: network.SensInitial, Index: t.index}
		case sliders.Volume:
			ts[j] = network.SensTarget{Kind: network.SensVolume, Index: t.index}
		case sliders.Event:
			ts[j] = network.SensTarget{Kind: network.SensEvent, Event: t.Name}
		default:
			ts[j] = network.SensTarget{Kind: network.SensParameter, Index: t.index}
		}
	}
	jump, err := e.net.SensJump(e.sys, ts, e.overrides)
	if err != nil {
		return err
	}
	e.jump = jump
	e.inexactBy = jump.Inexact()
	e.exact = make([]bool, len(e.targets))
	for j, why := range e.inexactBy {
		e.exact[j] = why == ""
	}
	return nil
}

// load puts t, y and the current parameter values into e.vars.
func (e *Evaluator) load(t float64, y []float64) { e.sys.LoadVars(e.vars, t, y) }

// deriv returns the derivative of d along target j, with the state's
// sensitivities s (to target j), at the point loaded.
func (e *Evaluator) deriv(d *network.DiffExpr, j int, s []float64) float64 {
	p := -1
	if t := e.targets[j]; t.Kind == sliders.Parameter {
		p = t.index
	}
	return d.Along(e.vars, s, p)
}

// sensSettings makes the solver's sensitivity settings for the targets.
func (e *Evaluator) sensSettings() *solve.SensSettings {
	n := e.sys.Dim()
	ss := &solve.SensSettings{ErrorControl: e.opts.ErrorControl, Jump: e.jump.Jump}
	for j, t := range e.targets {
		q := solve.Sensitivity{Param: -1, Scale: math.Abs(e.base[j])}
		switch t.Kind {
		case sliders.Parameter:
			q.Param = t.index
		case sliders.Volume:
			q.Param = e.np + t.index
		case sliders.Initial:
			q.Initial = make([]float64, n)
			q.Initial[t.index] = 1
		}
		if !e.exact[j] {
			q.Param = -1 // taken by differences; integrated only as a placeholder
			q.Initial = nil
		}
		ss.Quantities = append(ss.Quantities, q)
	}
	return ss
}

// setValues gives the system the model's values, the fixed knobs and the
// targets' values x.
func (e *Evaluator) setValues(x []float64) error {
	m := e.model
	sys := e.sys
	for _, p := range m.Parameters {
		i, _ := sys.ParameterIndex(p.Name)
		sys.SetParameter(i, p.Value)
	}
	for _, s := range m.Species {
		i, _ := sys.SpeciesIndex(s.Name)
		sys.SetInitial(i, s.Initial)
	}
	for _, c := range m.Compartments {
		i, _ := sys.CompartmentIndex(c.Name)
		if sys.Volume(i) != c.Volume {
			sys.SetVolume(i, c.Volume)
		}
	}
	sys.ResetEventValues()
	apply := func(k sliders.Knob) error {
		switch k.Kind {
		case sliders.Initial:
			i, _ := sys.SpeciesIndex(k.Name)
			sys.SetInitial(i, k.Value)
		case sliders.Volume:
			i, _ := sys.CompartmentIndex(k.Name)
			sys.SetVolume(i, k.Value)
		case sliders.Event:
			return sys.SetEventValue(k.Name, k.Value)
		default:
			i, _ := sys.ParameterIndex(k.Name)
			sys.SetParameter(i, k.Value)
		}
		return nil
	}
	for _, k := range e.fixed {
		if err := apply(k); err != nil {
			return err
		}
	}
	for j, t := range e.targets {
		k := t.Knob
		k.Value = x[j]
		if err := k.Check(k.Value); err != nil {
			return err
		}
		if err := apply(k); err != nil {
			return err
		}
	}
	copy(e.y0, sys.Initial())
	return nil
}

// Solve solves the model with the targets at x (nil: the model's values),
// with sensitivities when sens is true.
func (e *Evaluator) Solve(ctx context.Context, x []float64, sens bool) (*Result, error) {
	if x == nil {
		x = e.base
	}
	if len(x) != len(e.targets) {
		return nil, fmt.Errorf("%d values given for %d targets", len(x), len(e.targets))
	}
	if err := e.setValues(x); err != nil {
		return nil, err
	}
	sv := e.plain
	if sens && e.sensSv != nil {
		sv = e.sensSv
	}
	e.jump.Reset()
	res, err := sv.Solve(ctx, 0, e.tEnd, e.y0)
	out := e.pack(res, sens && e.sensSv != nil)
	if err != nil {
		return out, run.NameSpecies(err, e.sys.Species())
	}
	if len(out.T) != len(e.times) {
		return out, fmt.Errorf("the solve reported %d of %d output times", len(out.T), len(e.times))
	}
	if sens && e.sensSv != nil {
		if err := e.differences(ctx, x, out); err != nil {
			return out, err
		}
	}
	return out, nil
}

// pack turns a solver result into outputs and their sensitivities.
func (e *Evaluator) pack(res *solve.Result, sens bool) *Result {
	out := &Result{Names: e.Outputs(), Exact: slices.Clone(e.exact)}
	if res == nil {
		return out
	}
	out.T, out.Stats, out.Events = res.T, res.Stats, res.Events
	no, nq := len(e.outputs), len(e.targets)
	flat := make([]float64, len(res.T)*no)
	out.Y = make([][]float64, len(res.T))
	var dflat []float64
	if sens {
		dflat = make([]float64, len(res.T)*no*nq)
		out.D = make([][]float64, len(res.T))
	}
	for i, t := range res.T {
		row := flat[i*no : (i+1)*no]
		y := res.Y[i]
		e.load(t, y)
		for k, o := range e.outputs {
			if o.species >= 0 {
				row[k] = y[o.species]
			} else {
				row[k] = o.asg.Eval(e.vars)
			}
		}
		out.Y[i] = row
		if !sens {
			continue
		}
		d := dflat[i*no*nq : (i+1)*no*nq]
		for j := 0; j < nq; j++ {
			s := res.Sens(i, j)
			for k, o := range e.outputs {
				if o.species >= 0 {
					d[k*nq+j] = s[o.species]
				} else {
					d[k*nq+j] = e.deriv(o.asg, j, s)
				}
			}
		}
		out.D[i] = d
	}
	return out
}

// differences fills the columns of inexact targets by central differences
// of whole solves.
func (e *Evaluator) differences(ctx context.Context, x []float64, out *Result) error {
	nq, no := len(e.targets), len(e.outputs)
	xp := slices.Clone(x)
	for j := range e.targets {
		if e.exact[j] {
			continue
		}
		h := 1e-4 * math.Max(math.Abs(x[j]), 1e-8)
		lo, hi := x[j]-h, x[j]+h
		if e.targets[j].Check(lo) != nil {
			lo = x[j]
		}
		var rs [2]*Result
		for k, v := range [2]float64{lo, hi} {
			xp[j] = v
			if err := e.setValues(xp); err != nil {
				return err
			}
			e.jump.Reset()
			res, err := e.plain.Solve(ctx, 0, e.tEnd, e.y0)
			if err != nil {
				return fmt.Errorf("differences for %s: %w", e.targets[j].Ref(), run.NameSpecies(err, e.sys.Species()))
			}
			rs[k] = e.pack(res, false)
		}
		xp[j] = x[j]
		for i := range out.T {
			for k := 0; k < no; k++ {
				out.D[i][k*nq+j] = (rs[1].Y[i][k] - rs[0].Y[i][k]) / (hi - lo)
			}
		}
	}
	return e.setValues(x)
}
