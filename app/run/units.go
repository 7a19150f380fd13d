package run

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"kinetarium/network"
	"kinetarium/network/units"
	"kinetarium/solve"
)

// Convert returns o with its times shown in the display unit d.Time and
// its concentrations in d.Concentration, converted from o's units
// (TimeUnit, AmountUnit and each column's Units); an empty field keeps
// o's unit. Times (output times, events, jumps, the end time) and species
// are converted; an assignment column only when its declared unit is a
// concentration of the display unit's kind — the others are left as they
// are, and a line of Notes says so. An assignment without a declared unit
// converts in the unit its expression comes out in (Inferred). Without any change it returns o
// itself; otherwise a new outcome that shares no rows with o. A unit that
// does not read or does not convert from o's is an error, and o is
// returned unchanged with it.
func (o *Outcome) Convert(d network.Display) (*Outcome, error) {
	units := make([]string, len(o.Names))
	for j := range o.Names {
		units[j] = o.ColumnUnit(j)
		if strings.TrimSpace(units[j]) == "" && j < len(o.Inferred) {
			units[j] = o.Inferred[j]
		}
	}
	sh, err := Show(o.TimeUnit, o.AmountUnit, o.Names, units, o.Species, d)
	if err != nil {
		return o, err
	}
	if sh == nil {
		return o, nil
	}
	c := *o
	c.Inferred = nil
	col := sh.Scales
	c.Units = sh.Units
	c.Notes = append(append([]string(nil), o.Notes...), sh.Notes...)
	c.AmountUnit, c.TimeUnit = sh.AmountUnit, sh.TimeUnit
	ft := sh.Time
	scaleRow := func(y []float64) []float64 {
		r := make([]float64, len(y))
		for j, v := range y {
			r[j] = col[j].Of(v)
		}
		return r
	}
	c.T = make([]float64, len(o.T))
	for i, t := range o.T {
		c.T[i] = ft.Of(t)
	}
	c.Y = make([][]float64, len(o.Y))
	for i, y := range o.Y {
		c.Y[i] = scaleRow(y)
	}
	c.Events = make([]solve.Firing, len(o.Events))
	for i, e := range o.Events {
		c.Events[i] = solve.Firing{T: ft.Of(e.T), Name: e.Name}
	}
	c.Jumps = make([]solve.Jump, len(o.Jumps))
	for i, j := range o.Jumps {
		c.Jumps[i] = solve.Jump{T: ft.Of(j.T), Before: scaleRow(j.Before), After: scaleRow(j.After)}
	}
	c.TEnd = ft.Of(o.TEnd)
	return &c, nil
}

// ColumnUnits returns the unit of each column of a result of m compiled
// as sys — the state (sys.Species()), then the assignments: the model's
// concentration unit for a species, the declared unit of a parameter
// carried in the state, and each assignment's unit, declared or inferred
// from its expression (network.System.AssignmentUnits); "" where none is
// known.
func ColumnUnits(m *network.Model, sys *network.System) []string {
	state, asg := sys.Species(), sys.AssignmentUnits()
	out := make([]string, 0, len(state)+len(asg))
	for i, n := range state {
		u := ""
		if i < len(m.Species) {
			u = m.Units.Amount
		} else {
			for _, p := range m.Parameters {
				if p.Name == n {
					u = p.Unit
				}
			}
		}
		out = append(out, u)
	}
	return append(out, asg...)
}

// Shown is how results computed in a model's units are shown in display
// units: the unit of time and of concentration shown, each column's unit
// and the scale from its model value to the shown value. Outcome.Convert
// and the studies (sweeps, populations) read their conversions from here.
type Shown struct {
	TimeUnit   string   `json:"time_unit"`
	AmountUnit string   `json:"amount_unit"`
	Units      []string `json:"units"` // per column; "" where no unit is known
	Time       Scale    `json:"time"`
	Scales     []Scale  `json:"scales"` // per column
	// Notes name the columns left as computed (an assignment without a
	// concentration unit).
	Notes []string `json:"notes,omitempty"`
}

// Show returns how columns named names with units colUnits (the first
// species of them species, in amountUnit; the rest assignments in their
// own units) and times in timeUnit are shown in the display units d: an
// empty field of d keeps the model's unit. An assignment converts only
// when its unit is a concentration of the display unit's kind; the others
// keep their unit and a note says so. It returns nil when d asks for no
// change. A unit that does not read or does not convert is an error.
func Show(timeUnit, amountUnit string, names, colUnits []string, species int, d network.Display) (*Shown, error) {
	d.Time, d.Concentration = strings.TrimSpace(d.Time), strings.TrimSpace(d.Concentration)
	ft, err := factor(timeUnit, d.Time, "times", true)
	if err != nil {
		return nil, err
	}
	fc, err := factor(amountUnit, d.Concentration, "concentrations", false)
	if err != nil {
		return nil, err
	}
	if ft.one() && fc.one() && (d.Time == "" || d.Time == timeUnit) && (d.Concentration == "" || d.Concentration == amountUnit) {
		return nil, nil
	}
	sh := &Shown{TimeUnit: timeUnit, AmountUnit: amountUnit, Time: ft,
		Units: append([]string(nil), colUnits...), Scales: make([]Scale, len(names))}
	for j := range sh.Scales {
		sh.Scales[j] = Scale{1, 1}
	}
	if d.Concentration != "" {
		to := units.MustParse(d.Concentration) // factor read it
		for j := range names {
			if j < species {
				sh.Units[j], sh.Scales[j] = d.Concentration, fc
				continue
			}
			own := colUnits[j]
			u, err := units.Parse(own)
			switch {
			case strings.TrimSpace(own) == "":
				sh.Notes = append(sh.Notes, fmt.Sprintf("%s declares no unit, so it is shown as computed, not converted to %s; give it a concentration unit to convert it", names[j], d.Concentration))
			case err == nil && u.Dimensionless():
				// A pure number has no unit to name in a header.
				sh.Units[j] = ""
				sh.Notes = append(sh.Notes, fmt.Sprintf("%s is a pure number, so it is shown as it is", names[j]))
			case err != nil || !u.SameDim(to):
				sh.Notes = append(sh.Notes, fmt.Sprintf("%s is in %s, not a concentration of the kind of %s, so it is shown as it is", names[j], own, d.Concentration))
			default:
				sh.Units[j], sh.Scales[j] = d.Concentration, scaleOf(u, to)
			}
		}
		sh.AmountUnit = d.Concentration
	}
	if d.Time != "" {
		sh.TimeUnit = d.Time
	}
	return sh, nil
}

// ColumnUnit returns the unit of column j: o.Units[j] when given, else the
// concentration unit for a species and "" for an assignment.
func (o *Outcome) ColumnUnit(j int) string {
	if j < len(o.Units) {
		return o.Units[j]
	}
	if j < o.Species {
		return o.AmountUnit
	}
	return ""
}

// UnitOf returns the unit of column j as people read it beside a value:
// ColumnUnit, else the unit inferred for an assignment, and "" for a pure
// number (see Dimensionless) or where none is known.
func (o *Outcome) UnitOf(j int) string {
	if o.Dimensionless(j) {
		return ""
	}
	if u := o.ColumnUnit(j); u != "" {
		return u
	}
	if j < len(o.Inferred) {
		return o.Inferred[j]
	}
	return ""
}

// Dimensionless reports whether column j is a pure number, such as a
// fraction: declared or inferred in the unit "1".
func (o *Outcome) Dimensionless(j int) bool {
	u := o.ColumnUnit(j)
	if u == "" && j < len(o.Inferred) {
		u = o.Inferred[j]
	}
	return u == "1"
}

// Scale converts values between two units: x·Mul/Div. One of Mul and
// Div is 1, and the other is the factor between the units rounded to 12
// significant digits where that makes it a whole number (1000 from uM to
// nM, a division by 3600 from s to h), so that exact ratios of the trade's
// units convert without a rounding error in the last digit.
type Scale struct {
	Mul float64 `json:"mul"`
	Div float64 `json:"div"`
}

// Of returns x in the unit converted to.
func (s Scale) Of(x float64) float64 { return x * s.Mul / s.Div }

// Times returns the scale of a product of quantities scaled by s and t
// (an area under a curve: concentration × time).
func (s Scale) Times(t Scale) Scale { return Scale{s.Mul * t.Mul, s.Div * t.Div} }

func (s Scale) one() bool { return s.Mul == 1 && s.Div == 1 }

// scaleOf returns the scale from u to v, units of one kind.
func scaleOf(u, v units.Unit) Scale {
	f := u.Factor / v.Factor
	whole := func(x float64) (float64, bool) {
		r, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 12, 64), 64)
		return r, err == nil && r >= 1 && r == math.Trunc(r) && r < 1e15
	}
	if m, ok := whole(f); ok {
		return Scale{m, 1}
	}
	if d, ok := whole(1 / f); ok {
		return Scale{1, d}
	}
	return Scale{f, 1}
}

// factor returns the scale from the unit text from to the unit text to
// (none when to is empty): both must read, be units of time (when time) or
// of concentration, and of one kind.
func factor(from, to, what string, time bool) (Scale, error) {
	if strings.TrimSpace(to) == "" {
		return Scale{1, 1}, nil
	}
	kind, ok := func(u units.Unit) bool { return u.IsConcentration() }, "a concentration"
	if time {
		kind, ok = func(u units.Unit) bool { return u.IsTime() }, "a unit of time"
	}
	v, err := units.Parse(to)
	if err != nil {
		return Scale{}, fmt.Errorf("cannot show %s in %q: %v", what, to, err)
	}
	if !kind(v) {
		return Scale{}, fmt.Errorf("cannot show %s in %s: it is %s, not %s", what, to, v.Kind(), ok)
	}
	u, err := units.Parse(from)
	if err != nil || !kind(u) {
		return Scale{}, fmt.Errorf("cannot show %s in %s: the model's unit %q is not %s to convert from", what, to, from, ok)
	}
	if _, err := u.To(v); err != nil {
		return Scale{}, fmt.Errorf("cannot show %s in %s: %v", what, to, err)
	}
	return scaleOf(u, v), nil
}
