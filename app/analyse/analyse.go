// Package analyse applies the steady-state analyses of package
// solve/steady and the global sensitivity designs of solve/explore to
// network models: steady states with their stability, control
// coefficients, continuation in a knob with its bifurcation points,
// dose–response curves with a fitted Hill curve, and variance-based and
// screening sensitivity indices. It holds no widgets and builds without
// cgo, so the desktop window and the batch command share it.
package analyse

import (
	"context"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"

	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/solve/steady"
)

// Model is a network compiled for analysis: its system, and the
// conservation laws (and held species) as rows of Γ in concentrations.
type Model struct {
	Model *network.Model
	Net   *network.Net
	Sys   *network.System
	// Laws lists the conservation laws in words, one per row of Gamma
	// after the held species' rows.
	Laws  []network.ConservationLaw
	Gamma *mat.Dense
	// held is the number of rows of Gamma for held species (first).
	held int
	// Signed is true when the model lets concentrations go negative.
	Signed bool
	// Notes are things the user should know about what is ignored.
	Notes []string
}

// Prepare checks and compiles m for analysis. A model whose rates read
// the time t has no steady states, and is refused with a message.
func Prepare(m *network.Model) (*Model, error) {
	net, probs := network.Check(m)
	if err := probs.Err(); err != nil {
		return nil, fmt.Errorf("the model has errors: %w", err)
	}
	sys, err := net.Compile()
	if err != nil {
		return nil, fmt.Errorf("compiling the model: %w", err)
	}
	if !sys.Autonomous() {
		return nil, fmt.Errorf("a rate or assignment reads the time t: such a model has no steady state (rewrite the time dependence as a species or an event)")
	}
	a := &Model{Model: m, Net: net, Sys: sys, Signed: !m.Simulation.KeepNonNegative()}
	n := sys.Dim()
	var rows [][]float64
	for i := 0; i < n; i++ {
		if sys.Fixed(i) {
			r := make([]float64, n)
			r[i] = 1
			rows = append(rows, r)
		}
	}
	a.held = len(rows)
	for _, law := range net.ConservationLaws() {
		r := make([]float64, n)
		for _, lt := range law.Terms {
			i, w := lt.Species, lt.Weight
			r[i] = float64(w) * sys.AmountVolume(sys.SpeciesCompartment(i))
		}
		rows = append(rows, r)
		a.Laws = append(a.Laws, law)
	}
	if len(rows) > 0 {
		a.Gamma = mat.NewDense(len(rows), n, nil)
		for k, r := range rows {
			a.Gamma.SetRow(k, r)
		}
	}
	if len(m.Events) > 0 {
		a.Notes = append(a.Notes, "the model's events (doses, switches) are left out: a steady state is the state without them")
	}
	return a, nil
}

// Settings are the steady-state settings of the model: its laws, its
// sign convention and its integration settings for the fallback.
func (a *Model) Settings() (steady.Settings, error) {
	is, err := run.Settings(a.Model.Simulation)
	if err != nil {
		return steady.Settings{}, err
	}
	is.Times = nil
	return steady.Settings{Laws: a.Gamma, Signed: a.Signed, Integration: is}, nil
}

// name returns a function naming state components by species.
func (a *Model) name() func(int) string {
	sp := a.Sys.Species()
	return func(i int) string { return sp[i] }
}

// Total is a conserved total: the law in words and its value (in amounts:
// concentration × volume).
type Total struct {
	Law   string
	Value float64
}

// Steady is a steady state of a model with names attached.
type Steady struct {
	*steady.Result
	Species   []string
	Fixed     []bool
	Reactions []string
	Fluxes    []float64 // the rate of each reaction
	Totals    []Total
	// Verdict says in a sentence what the eigenvalues mean.
	Verdict string
	Notes   []string
	// Shown is set when the numbers are in display units (In); nil when
	// they are in the model's units.
	Shown *Shown
}

// FindSteady looks for a steady state from the model's initial state.
// When there is none, the error says why, naming species.
func (a *Model) FindSteady(ctx context.Context) (*Steady, error) {
	set, err := a.Settings()
	if err != nil {
		return nil, err
	}
	return a.steadyFrom(ctx, a.Sys, a.Sys.Initial(), set)
}

func (a *Model) steadyFrom(ctx context.Context, sys *network.System, y0 []float64, set steady.Settings) (*Steady, error) {
	r, err := steady.Find(ctx, sys, y0, set)
	if err != nil {
		if nf, ok := err.(*steady.NotFoundError); ok {
			return nil, fmt.Errorf("%s", nf.Describe(a.name()))
		}
		return nil, err
	}
	s := &Steady{Result: r, Species: sys.Species(), Reactions: sys.Reactions(), Notes: append([]string(nil), a.Notes...)}
	for i := range s.Species {
		s.Fixed = append(s.Fixed, sys.Fixed(i))
	}
	s.Fluxes = make([]float64, len(s.Reactions))
	sys.Rates(0, r.Y, s.Fluxes)
	for k, law := range a.Laws {
		s.Totals = append(s.Totals, Total{Law: law.Text, Value: r.Totals[a.held+k]})
	}
	s.Verdict = r.Stability.Describe()
	if r.Passed != nil {
		s.Notes = append(s.Notes, "Newton's method from the initial state found an unstable steady state; integrating from the initial state settles here instead")
	}
	if r.Unsettled != nil {
		s.Notes = append(s.Notes, "this steady state is unstable and the model does not settle there: integrating from the initial state, "+strings.TrimPrefix(r.Unsettled.Describe(a.name()), "no steady state: "))
	}
	return s, nil
}

// ControlTables are the scaled control coefficients of a steady state,
// by name.
type ControlTables struct {
	*steady.Control
	Species    []string // every species (columns of Elasticities)
	Free       []int    // the species that are not held (rows of concentration control)
	Reactions  []string
	Parameters []string
}

// Control computes the control coefficients at the steady state s.
func (a *Model) Control(s *Steady) (*ControlTables, error) {
	sys := a.Sys
	var n, e, ep mat.Dense
	sys.ConcentrationStoichiometry(&n)
	if len(s.Reactions) == 0 {
		return nil, fmt.Errorf("the model has no reactions: there is nothing to control")
	}
	sys.RateJacobian(0, s.Y, &e)
	var params []float64
	in := steady.ControlInput{N: &n, Rates: s.Fluxes, RateJac: &e}
	if len(sys.Parameters()) > 0 {
		sys.RateParamJacobian(0, s.Y, &ep)
		for i := range sys.Parameters() {
			params = append(params, sys.Parameter(i))
		}
		in.RateParamJac, in.Params = &ep, params
	}
	c, err := steady.ControlAnalysis(s.Result, in)
	if err != nil {
		return nil, err
	}
	t := &ControlTables{Control: c, Species: s.Species, Reactions: s.Reactions, Parameters: sys.Parameters()}
	for i := range s.Species {
		if !s.Fixed[i] {
			t.Free = append(t.Free, i)
		}
	}
	return t, nil
}

// FormatEigenvalue writes λ as "a ± bi" for a pair member, or "a".
func FormatEigenvalue(v complex128) string {
	if imag(v) == 0 {
		return fmt.Sprintf("%.6g", real(v))
	}
	sign := "+"
	if imag(v) < 0 {
		sign = "−"
	}
	return fmt.Sprintf("%.6g %s %.6gi", real(v), sign, math.Abs(imag(v)))
}

// Summary is the steady state in a few lines of text, for the window's
// status and for logs.
func (s *Steady) Summary() string {
	var b strings.Builder
	fmt.Fprintf(&b, "Steady state: %s (%s).\n", s.Class, s.Verdict)
	if !math.IsInf(s.SlowestTimeScale, 0) {
		fmt.Fprintf(&b, "Slowest time scale: %.4g%s.\n", s.SlowestTimeScale, s.Shown.unitAfter(s.Shown.TimeUnit()))
	}
	var rate string
	if s.Shown != nil {
		rate = s.Shown.unitAfter(s.Shown.RateUnit)
	}
	fmt.Fprintf(&b, "Largest rate of change left: %.3g%s.", s.Residual, rate)
	return b.String()
}
