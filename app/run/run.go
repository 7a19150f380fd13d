// Package run runs a reaction-network model and draws its time
// courses, without any widgets: it compiles a model, integrates it with the
// model's run settings, turns the result into a figure with the on-screen
// view (log axes, hidden species, zoom, previous run), maps pointer
// positions on the figure back to data, writes the result as CSV, and
// coordinates runs started from the user interface so that a stale result
// is never shown (Controller).
package run

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"time"

	"kinetarium/network"
	"kinetarium/network/units"
	"kinetarium/solve"
)

// Caution is the one caution that results carry, in the window's result
// windows, its Help and the headless command's outputs: what results are,
// and who decides about treatment and doses.
const Caution = "Results are research aids, not clinical or dosing advice. " +
	"Decisions about treatment or dosing rest with qualified professionals and must follow local rules."

// Outcome is the result of one simulation of a model, in the units it is
// shown in: the model's display units (network.Display) where it has them,
// else its own (see Convert).
type Outcome struct {
	Title      string
	TimeUnit   string // unit of T, events, jumps and TEnd
	AmountUnit string // unit of the species columns
	// Names are the species in model order, then the assignments in
	// model order; the first Species of them are species.
	Names   []string
	Species int
	// Units holds the unit of each column of Names, "" where none is
	// known: AmountUnit for species, and each assignment's declared unit
	// (converted to AmountUnit when it is a concentration).
	Units []string
	// Inferred holds, for an assignment column without a declared unit,
	// the unit its expression comes out in (network infers it; nil or ""
	// where none is known). Convert converts such a column as if it were
	// declared; tables name it only once it is shown in display units.
	Inferred []string
	// Notes say what the display units left as it was, such as an
	// assignment whose unit is not a concentration.
	Notes []string
	T     []float64   // output times
	Y     [][]float64 // Y[i][j] is quantity j (species, then assignments) at T[i]
	// Events are the events that fired, and Jumps the quantities just
	// before and after each time they fired (assignments included).
	Events  []solve.Firing
	Jumps   []solve.Jump
	Stats   solve.Stats
	Compile time.Duration // time spent compiling the model
	Elapsed time.Duration // compile and solve together
	// Err is the reason the solve stopped early, or nil. T and Y then hold
	// the part computed before it stopped.
	Err error
	// TEnd is the end time asked for; a run that stopped early ends
	// before it.
	TEnd float64
	// LogGrid reports that the output times were spaced logarithmically
	// (the model's output spacing "log"), so that time 0 is expected to
	// be left out on a log time axis.
	LogGrid bool
}

// Run compiles m and integrates it from time 0 to the model's end time.
// progress, when not nil, is called with the fraction done from the
// solver's goroutine. A model with errors gives an error and no outcome; a
// solve that fails or is cancelled gives the partial outcome with Err set
// and the same error.
func Run(ctx context.Context, m *network.Model, progress func(float64)) (*Outcome, error) {
	start := time.Now()
	sys, err := network.Compile(m)
	if err != nil {
		return nil, fmt.Errorf("the model cannot be simulated: %w", err)
	}
	compiled := time.Since(start)
	set, err := Settings(m.Simulation)
	if err != nil {
		return nil, err
	}
	set.Progress = progress
	sim := m.Simulation.WithDefaults()
	res, serr := solve.Solve(ctx, sys, 0, sim.TEnd, sys.Initial(), set)
	out, err := NewOutcome(m, sys, res, serr, start)
	out.Compile = compiled
	return out, err
}

// NewOutcome packs the result of a solve of m, compiled as sys, begun at
// start — complete, or partial when err is not nil — with the species
// names, and adds a column for each assignment, evaluated at every output
// time, then shows it in the model's display units (Convert). A cancelled
// solve's error says so.
func NewOutcome(m *network.Model, sys *network.System, res *solve.Result, err error, start time.Time) (*Outcome, error) {
	species, asg := sys.Species(), sys.Assignments()
	out := &Outcome{
		Title: m.Title, TimeUnit: m.Units.Time, AmountUnit: m.Units.Amount,
		Names:   append(append([]string(nil), species...), asg...),
		Species: len(species),
	}
	out.Units = make([]string, len(out.Names))
	for j := range species {
		out.Units[j] = m.Units.Amount
	}
	if len(asg) > 0 {
		unit := make(map[string]string, len(m.Assignments))
		for _, a := range m.Assignments {
			unit[a.Name] = a.Unit // the last of a repeated name, as before
		}
		for k, name := range asg {
			out.Units[len(species)+k] = unit[name]
		}
		// An assignment without a declared unit converts in the unit
		// its expression comes out in.
		for k, u := range sys.AssignmentUnits() {
			if j := len(species) + k; strings.TrimSpace(out.Units[j]) == "" && u != "" {
				if out.Inferred == nil {
					out.Inferred = make([]string, len(out.Names))
				}
				out.Inferred[j] = u
			}
		}
	}
	sim := m.Simulation.WithDefaults()
	out.TEnd, out.LogGrid = sim.TEnd, sim.Output.Spacing == "log"
	if res != nil {
		out.T, out.Y, out.Stats = res.T, res.Y, res.Stats
		out.Events, out.Jumps = res.Events, res.Jumps
		if len(asg) > 0 {
			extend := func(t float64, y []float64) []float64 {
				row := make([]float64, len(species)+len(asg))
				copy(row, y)
				sys.Assigned(t, y, row[len(species):])
				return row
			}
			out.Y = make([][]float64, len(res.Y))
			for i, y := range res.Y {
				out.Y[i] = extend(res.T[i], y)
			}
			out.Jumps = make([]solve.Jump, len(res.Jumps))
			for i, j := range res.Jumps {
				out.Jumps[i] = solve.Jump{T: j.T, Before: extend(j.T, j.Before), After: extend(j.T, j.After)}
			}
		}
	}
	if shown, cerr := out.Convert(m.Simulation.Display); cerr != nil {
		// Check refuses display units that do not convert, so this is
		// a model that was never checked: show it as computed.
		out.Notes = append(out.Notes, cerr.Error()+"; results are shown in the model's units")
	} else {
		out = shown
	}
	out.Elapsed = time.Since(start)
	if err != nil {
		if errors.Is(err, context.Canceled) {
			err = fmt.Errorf("cancelled: %w", err)
		} else {
			err = NameSpecies(err, species)
		}
		out.Err = err
		return out, err
	}
	return out, nil
}

// NameSpecies returns err with the species at fault named ("species
// \"ES\"") where the solver's *solve.StepError gives a component index;
// other errors are returned as they are.
func NameSpecies(err error, names []string) error {
	se, ok := err.(*solve.StepError)
	if !ok {
		return err
	}
	return namedError{err, se.Describe(func(i int) string {
		if i < 0 || i >= len(names) {
			return ""
		}
		return fmt.Sprintf("species %q", names[i])
	})}
}

// namedError is a solver error whose message names species; it unwraps to
// the solver's error.
type namedError struct {
	err error
	msg string
}

func (e namedError) Error() string { return e.msg }
func (e namedError) Unwrap() error { return e.err }

// MethodSummary describes in a few words the method or methods used, such
// as "Rosenbrock (RODAS4)", with the automatic choice's reason when there
// is one.
func (o *Outcome) MethodSummary() string {
	if o == nil {
		return ""
	}
	s := ""
	for i, m := range o.Stats.Methods {
		if i > 0 {
			s += " → "
		}
		s += MethodTitle(m)
	}
	if s == "" {
		s = "—"
	}
	return s
}

// WithEventRows returns the outcome with two rows at the time of each
// jump, the state just before and just after the events there, in time
// order; a grid row at that very time (which holds the state after) is
// replaced by the pair. Without jumps it returns o itself.
func (o *Outcome) WithEventRows() *Outcome {
	if len(o.Jumps) == 0 {
		return o
	}
	c := *o
	c.T, c.Y = nil, nil
	k := 0
	for i, t := range o.T {
		for k < len(o.Jumps) && o.Jumps[k].T <= t {
			j := o.Jumps[k]
			c.T = append(c.T, j.T, j.T)
			c.Y = append(c.Y, j.Before, j.After)
			k++
		}
		if len(c.T) > 0 && c.T[len(c.T)-1] == t {
			continue // the jump's pair stands for this row
		}
		c.T = append(c.T, t)
		c.Y = append(c.Y, o.Y[i])
	}
	return &c
}

// Amounts returns the outcome with each species' column in amounts: its
// concentration times the volume of its compartment in sys, the system
// the outcome was computed with, in the model's unit of volume
// (System.AmountVolume). Parameters carried in the state and assignments
// keep their values. A species column's unit becomes the amount's
// ("umol" for uM with volumes in L) when both units are known, and is
// left out otherwise.
func (o *Outcome) Amounts(sys *network.System) *Outcome {
	c := *o
	nsp := len(sys.Species()) - len(sys.StateParameters())
	c.Units = make([]string, len(o.Names))
	for j := range o.Names {
		c.Units[j] = o.ColumnUnit(j)
	}
	amount := amountUnit(o.AmountUnit, sys.VolumeUnit())
	for j := 0; j < nsp && j < len(c.Units); j++ {
		c.Units[j] = amount
	}
	scale := func(row []float64) []float64 {
		out := append([]float64(nil), row...)
		for i := 0; i < nsp && i < len(out); i++ {
			out[i] *= sys.AmountVolume(sys.SpeciesCompartment(i))
		}
		return out
	}
	c.Y = make([][]float64, len(o.Y))
	for i, row := range o.Y {
		c.Y[i] = scale(row)
	}
	c.Jumps = make([]solve.Jump, len(o.Jumps))
	for i, j := range o.Jumps {
		c.Jumps[i] = solve.Jump{T: j.T, Before: scale(j.Before), After: scale(j.After)}
	}
	return &c
}

// amountUnit writes the unit of concentration conc times volume vol: a
// symbol when one fits ("umol", "mg"), else "conc·vol"; "" when either
// is unknown.
func amountUnit(conc, vol string) string {
	c, err1 := units.Parse(conc)
	v, err2 := units.Parse(vol)
	if strings.TrimSpace(conc) == "" || strings.TrimSpace(vol) == "" || err1 != nil || err2 != nil {
		return ""
	}
	if s, ok := units.Symbol(c.Mul(v)); ok {
		return s
	}
	return conc + "·" + vol
}
