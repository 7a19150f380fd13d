package analyse

import (
	"strings"

	"kinetarium/app/run"
	"kinetarium/app/study"
	"kinetarium/network/units"
	"kinetarium/solve/steady"
)

// Shown is how an analysis shows its results when the model chooses
// display units (network.Display, the Run settings' units of results):
// concentrations in the display concentration unit, times in the display
// time unit, rates (fluxes) in concentration per display time, and
// eigenvalues per display time. Knob values stay in the model's units.
// The tables name every unit in their headers only then; a nil *Shown
// shows the results as computed, the tables as they always were.
type Shown struct {
	// Columns converts the state (species, then parameters carried in
	// the state) and then the assignments, as run.Show does for a run.
	Columns *run.Shown
	// Rate converts a concentration per time (a flux), and PerTime a
	// rate constant or eigenvalue (1/time).
	Rate, PerTime         run.Scale
	RateUnit, PerTimeUnit string
	// TotalUnit is the unit of a conserved total: the shown concentration
	// times the model's unit of volume, when it has one.
	TotalUnit string
	// Total converts a conserved total.
	Total run.Scale
}

// Show works out how a's results are shown in the model's display units:
// nil when it chooses none. A display unit that does not convert from
// the model's units is an error.
func (a *Model) Show() (*Shown, error) {
	m, sys := a.Model, a.Sys
	d := m.Simulation.Display
	if strings.TrimSpace(d.Time) == "" && strings.TrimSpace(d.Concentration) == "" {
		return nil, nil
	}
	names := append(append([]string(nil), sys.Species()...), sys.Assignments()...)
	cols, err := run.Show(m.Units.Time, m.Units.Amount, names, run.ColumnUnits(m, sys), len(m.Species), d)
	if err != nil || cols == nil {
		return nil, err
	}
	conc := run.Scale{Mul: 1, Div: 1}
	if strings.TrimSpace(d.Concentration) != "" {
		// The model's concentration unit against the shown one: the
		// scale of every species column.
		c, err := run.Show(m.Units.Time, m.Units.Amount, []string{"c"}, []string{m.Units.Amount}, 1, d)
		if err != nil {
			return nil, err
		}
		conc = c.Scales[0]
	}
	perTime := run.Scale{Mul: cols.Time.Div, Div: cols.Time.Mul}
	sh := &Shown{Columns: cols, Rate: conc.Times(perTime), PerTime: perTime, Total: conc,
		RateUnit:    units.Compose(cols.AmountUnit, 1, cols.TimeUnit, -1),
		PerTimeUnit: units.Compose(cols.AmountUnit, 0, cols.TimeUnit, -1),
		TotalUnit:   cols.AmountUnit}
	if v := sys.VolumeUnit(); v != "" && len(a.Laws) > 0 {
		sh.TotalUnit = cols.AmountUnit + "·" + v
	}
	return sh, nil
}

// Header writes a column name with its unit when results are shown in
// display units; the name alone otherwise, as the tables always were.
func (sh *Shown) Header(name, unit string) string {
	if sh == nil || unit == "" {
		return name
	}
	return name + " (" + unit + ")"
}

// col returns the scale and unit of column c (state, then assignments).
func (sh *Shown) col(c int) (run.Scale, string) {
	if sh == nil || c < 0 || c >= len(sh.Columns.Scales) {
		return run.Scale{Mul: 1, Div: 1}, ""
	}
	return sh.Columns.Scales[c], sh.Columns.Units[c]
}

// Unit returns the unit column c (state, then assignments) is shown in,
// "" when no display units are chosen or none is known.
func (sh *Shown) Unit(c int) string { _, u := sh.col(c); return u }

// TimeUnit returns the display time unit, "" without display units.
func (sh *Shown) TimeUnit() string {
	if sh == nil {
		return ""
	}
	return sh.Columns.TimeUnit
}

// perTime converts an eigenvalue.
func (sh *Shown) eigenvalue(v complex128) complex128 {
	f := sh.PerTime.Of(1)
	return complex(real(v)*f, imag(v)*f)
}

// stability converts the stability's eigenvalues, largest real part,
// time scale and period.
func (sh *Shown) stability(s steady.Stability) steady.Stability {
	ev := make([]complex128, len(s.Eigenvalues))
	for k, v := range s.Eigenvalues {
		ev[k] = sh.eigenvalue(v)
	}
	s.Eigenvalues = ev
	s.MaxReal = sh.PerTime.Of(s.MaxReal)
	s.SlowestTimeScale = sh.Columns.Time.Of(s.SlowestTimeScale)
	s.Period = sh.Columns.Time.Of(s.Period)
	return s
}

// verdict is Stability.Describe with the period's unit.
func (sh *Shown) verdict(s steady.Stability) string {
	v := s.Describe()
	if sh != nil && (s.Class == steady.StableFocus || s.Class == steady.UnstableFocus) && strings.HasSuffix(v, ")") {
		v = strings.TrimSuffix(v, ")") + " " + sh.TimeUnit() + ")"
	}
	return v
}

// In returns s shown as sh says: a copy with its concentrations, fluxes,
// totals, eigenvalues, time scales and largest rate of change left
// converted, and Shown set so that tables name the units. With a nil sh
// it returns s itself.
func (s *Steady) In(sh *Shown) *Steady {
	if sh == nil || s == nil {
		return s
	}
	r := *s.Result
	c := *s
	c.Result, c.Shown = &r, sh
	c.Y = make([]float64, len(s.Y))
	for i, v := range s.Y {
		sc, _ := sh.col(i)
		c.Y[i] = sc.Of(v)
	}
	if s.Passed != nil {
		c.Passed = make([]float64, len(s.Passed))
		for i, v := range s.Passed {
			sc, _ := sh.col(i)
			c.Passed[i] = sc.Of(v)
		}
	}
	c.Fluxes = make([]float64, len(s.Fluxes))
	for j, v := range s.Fluxes {
		c.Fluxes[j] = sh.Rate.Of(v)
	}
	c.Totals = make([]Total, len(s.Totals))
	for k, t := range s.Totals {
		c.Totals[k] = Total{Law: t.Law, Value: sh.Total.Of(t.Value)}
	}
	r.Residual = sh.Rate.Of(s.Residual)
	r.Stability = sh.stability(s.Stability)
	c.Verdict = sh.verdict(r.Stability)
	return &c
}

// In returns d shown as sh says: a copy whose quantities are in their
// display units, whose largest real eigenvalue part is per display time
// and whose Hopf periods are in the display time unit, with Units naming
// each quantity's unit. The knob keeps the model's unit (KnobUnit). With
// a nil sh it returns d itself.
func (d *Diagram) In(sh *Shown) *Diagram {
	if sh == nil || d == nil {
		return d
	}
	c := *d
	br := *d.Branch
	c.Branch, c.Shown, c.raw = &br, sh, d
	scales := make([]run.Scale, len(d.Quantities))
	c.scales = scales
	c.Units = make([]string, len(d.Quantities))
	for q, i := range d.columns {
		scales[q], c.Units[q] = sh.col(i)
	}
	conv := func(rows [][]float64) [][]float64 {
		out := make([][]float64, len(rows))
		for k, row := range rows {
			out[k] = make([]float64, len(row))
			for q, v := range row {
				out[k][q] = scales[q].Of(v)
			}
		}
		return out
	}
	c.Values, c.SpecialValues = conv(d.Values), conv(d.SpecialValues)
	br.Points = make([]steady.Point, len(d.Points))
	for k, p := range d.Points {
		p.Stability = sh.stability(p.Stability)
		br.Points[k] = p
	}
	br.Specials = make([]steady.Special, len(d.Specials))
	for k, s := range d.Specials {
		s.Period = sh.Columns.Time.Of(s.Period)
		s.Omega = sh.PerTime.Of(s.Omega)
		br.Specials[k] = s
	}
	return &c
}

// knobUnit is the model's unit of a knob for headers ("" when none is
// known).
func (a *Model) knobUnit(ref string) string { return study.KnobUnit(a.Model, ref) }

// unitAfter writes " unit" after a number when results are shown in
// display units, "" otherwise.
func (sh *Shown) unitAfter(unit string) string {
	if sh == nil || unit == "" {
		return ""
	}
	return " " + unit
}
