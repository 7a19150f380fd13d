package sliders

import (
	"context"
	"fmt"
	"time"

	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/solve"
)

// Session simulates one model again and again with changed values. It
// compiles the model once and keeps one solver, so that trying a value
// costs a solve and no compilation. A Session is used by one goroutine at a
// time.
type Session struct {
	model  *network.Model
	sys    *network.System
	solver *solve.Solver
	tEnd   float64
	y0     []float64 // initial state, as set

	// Indices into sys of the model's parameters, species and declared
	// compartments, in model order.
	par, sp, comp []int
}

// NewSession compiles m for repeated simulation. The caller must not
// change m afterwards.
func NewSession(m *network.Model) (*Session, error) {
	sys, err := network.Compile(m)
	if err != nil {
		return nil, fmt.Errorf("the model cannot be simulated: %w", err)
	}
	set, err := run.Settings(m.Simulation)
	if err != nil {
		return nil, err
	}
	s := &Session{
		model:  m,
		sys:    sys,
		solver: solve.NewSolver(sys, set),
		tEnd:   m.Simulation.WithDefaults().TEnd,
		y0:     sys.Initial(),
	}
	for _, p := range m.Parameters {
		i, ok := sys.ParameterIndex(p.Name)
		if !ok {
			return nil, fmt.Errorf("parameter %q is missing from the compiled model", p.Name)
		}
		s.par = append(s.par, i)
	}
	for _, sp := range m.Species {
		i, ok := sys.SpeciesIndex(sp.Name)
		if !ok {
			return nil, fmt.Errorf("species %q is missing from the compiled model", sp.Name)
		}
		s.sp = append(s.sp, i)
	}
	for _, c := range m.Compartments {
		i, ok := sys.CompartmentIndex(c.Name)
		if !ok {
			return nil, fmt.Errorf("compartment %q is missing from the compiled model", c.Name)
		}
		s.comp = append(s.comp, i)
	}
	return s, nil
}

// Model returns the model the session simulates.
func (s *Session) Model() *network.Model { return s.model }

// Set gives the compiled model the knobs' values, and the model's own
// values to everything no knob sets. It checks every value first and
// changes nothing when one is not allowed or names nothing in the model.
func (s *Session) Set(knobs []Knob) error {
	for _, k := range knobs {
		if err := k.Check(k.Value); err != nil {
			return err
		}
		if _, ok := Lookup(s.model, k.Kind, k.Name); !ok {
			return fmt.Errorf("%s: the model has no %s called %q", k.Label(), k.Kind, k.Name)
		}
	}
	m := s.model
	for j, p := range m.Parameters {
		s.sys.SetParameter(s.par[j], p.Value)
	}
	for j, sp := range m.Species {
		s.setInitial(s.sp[j], sp.Initial)
	}
	for j, c := range m.Compartments {
		if s.sys.Volume(s.comp[j]) != c.Volume {
			s.sys.SetVolume(s.comp[j], c.Volume)
		}
	}
	s.sys.ResetEventValues()
	for _, k := range knobs {
		switch k.Kind {
		case Parameter:
			i, _ := s.sys.ParameterIndex(k.Name)
			s.sys.SetParameter(i, k.Value)
		case Initial:
			i, _ := s.sys.SpeciesIndex(k.Name)
			s.setInitial(i, k.Value)
		case Volume:
			i, _ := s.sys.CompartmentIndex(k.Name)
			s.sys.SetVolume(i, k.Value)
		case Event:
			if err := s.sys.SetEventValue(k.Name, k.Value); err != nil {
				return err
			}
		}
	}
	return nil
}

func (s *Session) setInitial(i int, v float64) {
	s.sys.SetInitial(i, v)
	s.y0[i] = v
}

// Run simulates the model with the values set, from time 0 to the model's
// end time. A solve that fails or is cancelled gives the partial outcome
// with Err set and the same error.
func (s *Session) Run(ctx context.Context) (*run.Outcome, error) {
	start := time.Now()
	res, err := s.solver.Solve(ctx, 0, s.tEnd, s.y0)
	return run.NewOutcome(s.model, s.sys, res, err, start)
}
