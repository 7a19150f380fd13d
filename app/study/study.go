// Package study prepares parameter sweeps and virtual populations of a
// network model for package explore: it resolves the model values that
// vary (knobs) and the readouts by name, builds the design and the
// simulator, and lays out the results as CSV tables. It holds no widgets
// and builds without cgo, so the desktop window and the batch command share
// it.
//
// Knobs are named "NAME" (a parameter), "init:SPECIES" (an initial
// concentration) or "volume:COMPARTMENT" (a compartment volume), as
// sliders.Knob's Ref writes them.
package study

import (
	"context"
	"fmt"
	"math"
	"strings"

	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/network"
	"kinetarium/solve"
	"kinetarium/solve/explore"
)

// KnobError is a knob name that the model does not have; Index is its
// position in the list given to NewTarget.
type KnobError struct {
	Index int
	Err   error
}

// Error implements error.
func (e *KnobError) Error() string { return e.Err.Error() }

// Unwrap returns the underlying error.
func (e *KnobError) Unwrap() error { return e.Err }

// knob is one resolved knob of a Target: what it sets, and its index in
// the compiled system.
type knob struct {
	sliders.Knob
	index int
}

// Target adapts a compiled network to explore.Target.
type Target struct {
	*network.System
	knobs []knob
}

// NewTarget resolves knob names on sys. An unknown name gives a *KnobError
// that lists what the model has.
func NewTarget(sys *network.System, names []string) (*Target, error) {
	t := &Target{System: sys}
	for k, name := range names {
		kn := knob{Knob: sliders.ParseRef(name)}
		var ok bool
		var err error
		switch kn.Kind {
		case sliders.Initial:
			if kn.index, ok = sys.SpeciesIndex(kn.Name); !ok {
				err = fmt.Errorf("no species %q in the model (species: %s)", kn.Name, strings.Join(sys.Species(), ", "))
			}
		case sliders.Volume:
			if kn.index, ok = sys.CompartmentIndex(kn.Name); !ok {
				err = fmt.Errorf("no compartment %q in the model (compartments: %s)", kn.Name, strings.Join(sys.Compartments(), ", "))
			}
		case sliders.Event:
			_, err = sys.EventValue(kn.Name)
		default:
			if kn.index, ok = sys.ParameterIndex(kn.Name); !ok {
				err = fmt.Errorf("no parameter %q in the model (parameters: %s; use init:SPECIES, volume:COMPARTMENT or event:EVENT.FIELD for those)", kn.Name, strings.Join(sys.Parameters(), ", "))
			}
		}
		if err != nil {
			return nil, &KnobError{Index: k, Err: err}
		}
		t.knobs = append(t.knobs, kn)
	}
	return t, nil
}

// SetKnob implements explore.Target.
func (t *Target) SetKnob(k int, v float64) error {
	kn := t.knobs[k]
	if err := kn.Check(v); err != nil {
		return err
	}
	switch kn.Kind {
	case sliders.Initial:
		t.SetInitial(kn.index, v)
	case sliders.Volume:
		t.SetVolume(kn.index, v)
	case sliders.Event:
		return t.SetEventValue(kn.Name, v)
	default:
		t.SetParameter(kn.index, v)
	}
	return nil
}

// Initial implements explore.Target.
func (t *Target) Initial(y0 []float64) { copy(y0, t.System.Initial()) }

// Clone implements explore.Target.
func (t *Target) Clone() explore.Target {
	return &Target{System: t.System.Clone(), knobs: t.knobs}
}

// AxisValues returns n values from from to to, equally spaced or (log)
// equally spaced in their logarithm. The ends are exact.
func AxisValues(from, to float64, n int, log bool) ([]float64, error) {
	switch {
	case n < 1:
		return nil, fmt.Errorf("number of points: expected at least 1, got %d", n)
	case n > MaxSweepRuns:
		return nil, fmt.Errorf("number of points: expected at most %d, got %d", MaxSweepRuns, n)
	case math.IsNaN(from) || math.IsInf(from, 0) || math.IsNaN(to) || math.IsInf(to, 0):
		return nil, fmt.Errorf("from and to: expected finite numbers, got %v and %v", from, to)
	case log && !(from > 0 && to > 0):
		return nil, fmt.Errorf("log spacing needs positive from and to, got %v and %v", from, to)
	}
	vals := make([]float64, n)
	if n == 1 {
		vals[0] = from
		return vals, nil
	}
	lo, hi := from, to
	if log {
		lo, hi = math.Log(from), math.Log(to)
	}
	for i := range vals {
		v := lo + (hi-lo)*float64(i)/float64(n-1)
		if log {
			v = math.Exp(v)
		}
		vals[i] = v
	}
	vals[0], vals[n-1] = from, to
	return vals, nil
}

// Prepared is a model compiled for a study, with its solver settings.
type Prepared struct {
	Model    *network.Model
	Sys      *network.System
	Sim      network.Simulation // defaults filled in
	Times    []float64          // the output grid
	Settings solve.Settings     // the model's run settings (run.Settings)
}

// Prepare compiles m for a study with its own simulation settings.
func Prepare(m *network.Model) (*Prepared, error) {
	sys, err := network.Compile(m)
	if err != nil {
		return nil, fmt.Errorf("compiling the model: %w", err)
	}
	set, err := run.Settings(m.Simulation)
	if err != nil {
		return nil, err
	}
	return &Prepared{Model: m, Sys: sys, Sim: m.Simulation.WithDefaults(), Times: set.Times, Settings: set}, nil
}

// ReadoutSpec names a readout by species.
type ReadoutSpec struct {
	Name    string       // label in results; "" gives ReadoutName's
	Kind    explore.Kind // what is computed
	Species string       // the species it is computed on
	Time    *float64     // for explore.ValueAt, and only for it
	Level   *float64     // for explore.CrossUp and explore.CrossDown, and only for them
	// From and To, when given (both), restrict the readout to that window
	// of time (every kind but value_at).
	From, To *float64
}

// ItemError is a problem with one field of one item of a study's list:
// a readout or a varied quantity. Index counts from 0; Error counts from
// 1 for people.
type ItemError struct {
	List  string // "readout", "quantity"
	Index int
	Field string // the spec file's key: "species", "time", "target", …
	Err   error
}

// Error implements error.
func (e *ItemError) Error() string {
	return fmt.Sprintf("%s %d: %s: %v", e.List, e.Index+1, e.Field, e.Err)
}

// Unwrap returns the underlying error.
func (e *ItemError) Unwrap() error { return e.Err }

// ReadoutName is the name a readout gets when its spec gives none, in
// tables and figures alike: KIND_SPECIES ("final_P", "time_of_max_P"),
// with "@" and the time or level for kinds that take one
// ("value_at_A@2.5").
func ReadoutName(kind explore.Kind, species string, number *float64) string {
	name := string(kind) + "_" + species
	if number != nil {
		name += "@" + FormatNumber(*number)
	}
	return name
}

// windowName adds a readout's window to its default name:
// "auc_C[216,228]".
func windowName(name string, from, to float64) string {
	return name + "[" + FormatNumber(from) + "," + FormatNumber(to) + "]"
}

// Quantities returns the names of what a trajectory holds: the species,
// then the assignments (see explore.Observer).
func (p *Prepared) Quantities() []string {
	return append(append([]string(nil), p.Sys.Species()...), p.Sys.Assignments()...)
}

// Quantity returns the index in a trajectory of the named species or
// assignment.
func (p *Prepared) Quantity(name string) (int, bool) {
	if i, ok := p.Sys.SpeciesIndex(name); ok {
		return i, true
	}
	for i, a := range p.Sys.Assignments() {
		if a == name {
			return p.Sys.Dim() + i, true
		}
	}
	return 0, false
}

// Readouts resolves readout specs on the model. Errors are *ItemError.
func (p *Prepared) Readouts(specs []ReadoutSpec) ([]explore.Readout, error) {
	var out []explore.Readout
	seen := map[string]bool{}
	for i, rs := range specs {
		bad := func(field, format string, a ...any) error {
			return &ItemError{List: "readout", Index: i, Field: field, Err: fmt.Errorf(format, a...)}
		}
		j, ok := p.Quantity(rs.Species)
		if !ok {
			return nil, bad("species", "no species or assignment %q in the model (%s)", rs.Species, strings.Join(p.Quantities(), ", "))
		}
		r := explore.Readout{Name: rs.Name, Kind: rs.Kind, Component: j}
		var number *float64
		switch rs.Kind {
		case explore.ValueAt:
			if rs.Time == nil {
				return nil, bad("time", "missing (value_at needs the time to read at)")
			}
			r.At, number = *rs.Time, rs.Time
		case explore.CrossUp, explore.CrossDown:
			if rs.Level == nil {
				return nil, bad("level", "missing (%s needs the threshold)", rs.Kind)
			}
			r.Level, number = *rs.Level, rs.Level
		}
		if rs.Time != nil && rs.Kind != explore.ValueAt {
			return nil, bad("time", "only value_at takes a time")
		}
		if rs.Level != nil && rs.Kind != explore.CrossUp && rs.Kind != explore.CrossDown {
			return nil, bad("level", "only cross_up and cross_down take a level")
		}
		if (rs.From == nil) != (rs.To == nil) {
			return nil, bad("from", "a window needs both from and to")
		}
		if rs.From != nil {
			r.Window, r.From, r.To = true, *rs.From, *rs.To
		}
		if r.Name == "" {
			r.Name = ReadoutName(rs.Kind, rs.Species, number)
			if r.Window {
				r.Name = windowName(r.Name, r.From, r.To)
			}
		}
		if err := r.Validate(len(p.Quantities())); err != nil {
			return nil, bad("kind", "%w", err)
		}
		if seen[r.Name] {
			return nil, bad("name", "%q is used twice", r.Name)
		}
		seen[r.Name] = true
		out = append(out, r)
	}
	return out, nil
}

// Distribution is one kind of distribution a population can draw a
// quantity from, with the names of its two numbers in spec files (A, B)
// and for people.
type Distribution struct {
	Name           string // the spec file's word: "lognormal", …
	Title          string // for people: "Log-normal"
	A, B           string // the spec file's keys of the two numbers
	ALabel, BLabel string // the two numbers for people
	New            func(a, b float64) explore.Distribution
}

// Distributions are the distributions of populations, the one table of
// the spec files and the Population window.
var Distributions = []Distribution{
	{"lognormal", "Log-normal", "median", "cv_percent", "median", "CV %",
		func(a, b float64) explore.Distribution { return explore.LogNormal{Median: a, CVPercent: b} }},
	{"normal", "Normal, above zero", "mean", "sd", "mean", "SD",
		func(a, b float64) explore.Distribution { return explore.TruncNormal{Mean: a, SD: b} }},
	{"uniform", "Uniform", "low", "high", "low", "high",
		func(a, b float64) explore.Distribution { return explore.Uniform{Low: a, High: b} }},
	{"loguniform", "Log-uniform", "low", "high", "low", "high",
		func(a, b float64) explore.Distribution { return explore.LogUniform{Low: a, High: b} }},
}

// LookupDistribution returns the distribution of a spec file's word, or
// an error listing the words.
func LookupDistribution(name string) (Distribution, error) {
	var words []string
	for _, d := range Distributions {
		if d.Name == name {
			return d, nil
		}
		words = append(words, d.Name)
	}
	return Distribution{}, fmt.Errorf("expected %s or %s, got %q", strings.Join(words[:len(words)-1], ", "), words[len(words)-1], name)
}

// Make returns the distribution with numbers a and b, checked.
func (d Distribution) Make(a, b float64) (explore.Distribution, error) {
	x := d.New(a, b)
	if err := x.Validate(); err != nil {
		return nil, err
	}
	return x, nil
}

// Limits of sweeps and populations, so that a mistyped number gets a
// message instead of exhausting memory (README, Limits).
const (
	// MaxSweepRuns is the largest number of runs of a sweep (all grid
	// points), and of points on one axis.
	MaxSweepRuns = 100_000
	// MaxSweepValues bounds the trajectory values a sweep keeps: runs ×
	// output times × species (8 bytes each, so 800 MB).
	MaxSweepValues = 100_000_000
	// MaxSamples is the largest population.
	MaxSamples = 1_000_000
)

// Axis is one swept knob.
type Axis struct {
	Knob     string
	From, To float64
	Points   int
	Log      bool // logarithmic spacing
}

// Vary is one knob of a population and its distribution.
type Vary struct {
	Knob string
	Dist explore.Distribution
}

// Job is a prepared sweep or population, ready to Run.
type Job struct {
	Prepared *Prepared
	Design   explore.Design
	ODE      *explore.ODE
	Settings explore.Settings
	Axes     [][]float64 // a sweep's axis values, one list per knob
	AxisLog  []bool      // a sweep's spacing, per knob
	Readouts []explore.Readout
	Species  []string // the species each readout is computed on
	// Shown converts results to the model's display units for tables and
	// figures (nil when it chooses none); KnobUnits are the model's units
	// of the knobs (in headers only with Shown).
	Shown     *run.Shown
	KnobUnits []string
}

// Sweep prepares a sweep over one axis, or a grid over two. The values of
// a two-axis grid must increase strictly.
func (p *Prepared) Sweep(axes []Axis, readouts []ReadoutSpec) (*Job, error) {
	if len(axes) < 1 || len(axes) > 2 {
		return nil, fmt.Errorf("a sweep varies one or two quantities, got %d", len(axes))
	}
	j := &Job{Prepared: p}
	var knobs []string
	for k, a := range axes {
		if k == 1 && a.Knob == axes[0].Knob {
			return nil, fmt.Errorf("the second quantity %q is already the first", a.Knob)
		}
		vals, err := AxisValues(a.From, a.To, a.Points, a.Log)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", a.Knob, err)
		}
		if len(axes) == 2 {
			for i := 1; i < len(vals); i++ {
				if !(vals[i] > vals[i-1]) {
					return nil, fmt.Errorf("%s: a grid of two needs from < to and distinct values", a.Knob)
				}
			}
		}
		knobs = append(knobs, a.Knob)
		j.Axes = append(j.Axes, vals)
		j.AxisLog = append(j.AxisLog, a.Log)
	}
	runs := 1
	for _, a := range j.Axes {
		runs *= len(a)
	}
	if runs > MaxSweepRuns {
		return nil, fmt.Errorf("a grid of %d runs is more than the %d a sweep may have; use fewer points", runs, MaxSweepRuns)
	}
	if vals := len(p.Times) * p.Sys.Dim(); vals > 0 && runs > MaxSweepValues/vals {
		return nil, fmt.Errorf("%d runs of %d output times × %d species keep more trajectory values than the %d a sweep may hold; use fewer points or output times",
			runs, len(p.Times), p.Sys.Dim(), MaxSweepValues)
	}
	if err := j.finish(knobs, readouts); err != nil {
		return nil, err
	}
	j.Design = explore.Grid{Axes: j.Axes}
	j.Settings.KeepTrajectories = true
	return j, nil
}

// Population prepares a virtual population of size samples. When
// bandSpecies is not empty, the run gathers percentile bands of those
// species on the output grid.
func (p *Prepared) Population(vary []Vary, size int, seed uint64, sampling explore.Sampling, readouts []ReadoutSpec, bandSpecies []string) (*Job, error) {
	if len(vary) == 0 {
		return nil, fmt.Errorf("a population needs at least one varied quantity")
	}
	if size > MaxSamples {
		return nil, fmt.Errorf("%d samples is more than the %d a population may have", size, MaxSamples)
	}
	j := &Job{Prepared: p}
	var knobs []string
	var dists []explore.Distribution
	for k, v := range vary {
		for _, prev := range vary[:k] {
			if prev.Knob == v.Knob {
				return nil, fmt.Errorf("%s is varied twice", v.Knob)
			}
		}
		knobs, dists = append(knobs, v.Knob), append(dists, v.Dist)
	}
	if err := j.finish(knobs, readouts); err != nil {
		return nil, err
	}
	pts, err := explore.Population{Vary: dists, Size: size, Seed: seed, Sampling: sampling}.Table()
	if err != nil {
		return nil, err
	}
	j.Design = pts
	if len(bandSpecies) > 0 {
		var comps []int
		for _, sp := range bandSpecies {
			c, ok := p.Quantity(sp)
			if !ok {
				return nil, fmt.Errorf("bands: no species or assignment %q in the model", sp)
			}
			comps = append(comps, c)
		}
		j.Settings.Bands = explore.NewBands(comps, p.Times)
	}
	return j, nil
}

// finish resolves knobs and readouts and makes the simulator.
func (j *Job) finish(knobs []string, readouts []ReadoutSpec) error {
	p := j.Prepared
	tg, err := NewTarget(p.Sys.Clone(), knobs)
	if err != nil {
		return err
	}
	ro, err := p.Readouts(readouts)
	if err != nil {
		return err
	}
	j.Readouts = ro
	for _, r := range ro {
		j.Species = append(j.Species, p.Quantities()[r.Component])
	}
	j.ODE = &explore.ODE{Target: tg, TEnd: p.Sim.TEnd, Settings: p.Settings}
	j.Settings.Knobs = knobs
	j.Settings.Readouts = ro
	return j.show()
}

// Run runs the job on workers goroutines (0: one per CPU), reporting
// progress (a fraction) when progress is not nil. Cancelling ctx stops the
// run; what was done is returned with the error.
func (j *Job) Run(ctx context.Context, workers int, progress func(float64)) (*explore.Result, error) {
	s := j.Settings
	s.Workers, s.Progress = workers, progress
	if s.Bands != nil {
		// A fresh accumulator, so that the job can be run again.
		s.Bands = explore.NewBands(s.Bands.Components, s.Bands.Times)
	}
	return explore.Run(ctx, j.Design, j.ODE.NewSimulator, s)
}
