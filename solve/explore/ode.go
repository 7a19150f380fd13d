package explore

import (
	"context"
	"fmt"

	"kinetarium/solve"
)

// Target is an ODE system with knobs: numbered inputs, such as rate
// constants, initial amounts or volumes, that a design sets before each
// simulation.
type Target interface {
	solve.System
	// SetKnob sets knob k to v, or says why v is not acceptable.
	SetKnob(k int, v float64) error
	// Initial writes the initial state, as the knobs now make it, into y0.
	Initial(y0 []float64)
	// Clone returns an independent copy, knob settings included.
	Clone() Target
}

// An Observer computes quantities derived from the state, such as the named
// assignments of a reaction network (E_total = E + ES). When a Target is
// also an Observer, its trajectories carry these quantities after the
// state's components, in the order Assignments lists them, so that
// readouts and bands can use them like any component.
type Observer interface {
	Assignments() []string
	Assigned(t float64, y, out []float64)
}

// ODE simulates a Target from T0 to TEnd with package solve. Settings.Times
// must be set when the run has bands, so that every trajectory has the same
// output grid.
type ODE struct {
	Target   Target
	T0, TEnd float64
	Settings solve.Settings
}

// NewSimulator returns a Simulator with its own clone of the target and its
// own solve.Solver, whose work space is reused from one simulation to the
// next. It suits Run's newSim argument: o.NewSimulator.
func (o *ODE) NewSimulator() (Simulator, error) {
	if o.Target == nil {
		return nil, fmt.Errorf("explore: ODE has no target")
	}
	if !(o.TEnd > o.T0) {
		return nil, fmt.Errorf("explore: ODE end time %v is not after start time %v", o.TEnd, o.T0)
	}
	tg := o.Target.Clone()
	return &odeSim{o: o, tg: tg, sv: solve.NewSolver(tg, o.Settings), y0: make([]float64, tg.Dim())}, nil
}

// odeSim is the Simulator of an ODE.
type odeSim struct {
	o  *ODE
	tg Target
	sv *solve.Solver
	y0 []float64

	rows [][]float64 // trajectories with observed quantities
	buf  []float64
}

// Simulate implements Simulator.
func (s *odeSim) Simulate(ctx context.Context, x []float64) (Trajectory, error) {
	for k, v := range x {
		if err := s.tg.SetKnob(k, v); err != nil {
			return Trajectory{}, fmt.Errorf("knob %d: %w", k, err)
		}
	}
	s.tg.Initial(s.y0)
	res, err := s.sv.Solve(ctx, s.o.T0, s.o.TEnd, s.y0)
	if err != nil {
		return Trajectory{}, err
	}
	tr := Trajectory{T: res.T, Y: res.Y}
	if ob, ok := s.tg.(Observer); ok && len(ob.Assignments()) > 0 {
		tr.Y = s.observe(ob, res)
	}
	return tr, nil
}

// observe returns the states of res with the observer's quantities
// appended to each, in rows reused from one simulation to the next (Run
// copies a trajectory it keeps).
func (s *odeSim) observe(ob Observer, res *solve.Result) [][]float64 {
	n, m := s.tg.Dim(), len(ob.Assignments())
	if len(s.rows) < len(res.T) || len(s.buf) < len(res.T)*(n+m) {
		s.rows = make([][]float64, len(res.T))
		s.buf = make([]float64, len(res.T)*(n+m))
	}
	rows := s.rows[:len(res.T)]
	for i, y := range res.Y {
		row := s.buf[i*(n+m) : (i+1)*(n+m)]
		copy(row, y)
		ob.Assigned(res.T[i], y, row[n:])
		rows[i] = row
	}
	return rows
}
