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
// are, and a line of Notes says so. Without any change it returns o
// itself; otherwise a new outcome that shares no rows with o. A unit that
// does not read or does not convert from o's is an error, and o is
// returned unchanged with it.
func (o *Outcome) Convert(d network.Display) (*Outcome, error) {
	d.Time, d.Concentration = strings.TrimSpace(d.Time), strings.TrimSpace(d.Concentration)
	ft, err := factor(o.TimeUnit, d.Time, "times", true)
	if err != nil {
		return o, err
	}
	fc, err := factor(o.AmountUnit, d.Concentration, "concentrations", false)
	if err != nil {
		return o, err
	}
	if ft.one() && fc.one() && (d.Time == "" || d.Time == o.TimeUnit) && (d.Concentration == "" || d.Concentration == o.AmountUnit) {
		return o, nil
	}
	c := *o
	col := make([]scale, len(o.Names)) // the factor of each column
	c.Units = make([]string, len(o.Names))
	c.Notes = append([]string(nil), o.Notes...)
	for j := range o.Names {
		c.Units[j], col[j] = o.ColumnUnit(j), scale{1, 1}
	}
	if d.Concentration != "" {
		to := units.MustParse(d.Concentration) // factor read it
		for j := range o.Names {
			if j < o.Species {
				c.Units[j], col[j] = d.Concentration, fc
				continue
			}
			own := o.ColumnUnit(j)
			u, err := units.Parse(own)
			switch {
			case strings.TrimSpace(own) == "":
				c.Notes = append(c.Notes, fmt.Sprintf("%s declares no unit, so it is shown as computed, not converted to %s; give it a concentration unit to convert it", o.Names[j], d.Concentration))
			case err != nil || !u.SameDim(to):
				c.Notes = append(c.Notes, fmt.Sprintf("%s is in %s, not a concentration of the kind of %s, so it is shown as it is", o.Names[j], own, d.Concentration))
			default:
				c.Units[j], col[j] = d.Concentration, scaleOf(u, to)
			}
		}
		c.AmountUnit = d.Concentration
	}
	if d.Time != "" {
		c.TimeUnit = d.Time
	}
	scaleRow := func(y []float64) []float64 {
		r := make([]float64, len(y))
		for j, v := range y {
			r[j] = col[j].of(v)
		}
		return r
	}
	c.T = make([]float64, len(o.T))
	for i, t := range o.T {
		c.T[i] = ft.of(t)
	}
	c.Y = make([][]float64, len(o.Y))
	for i, y := range o.Y {
		c.Y[i] = scaleRow(y)
	}
	c.Events = make([]solve.Firing, len(o.Events))
	for i, e := range o.Events {
		c.Events[i] = solve.Firing{T: ft.of(e.T), Name: e.Name}
	}
	c.Jumps = make([]solve.Jump, len(o.Jumps))
	for i, j := range o.Jumps {
		c.Jumps[i] = solve.Jump{T: ft.of(j.T), Before: scaleRow(j.Before), After: scaleRow(j.After)}
	}
	c.TEnd = ft.of(o.TEnd)
	return &c, nil
}

// unitOf returns the unit of column j: o.Units[j] when given, else the
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

// scale converts values between two units: x·mul/div. One of mul and
// div is 1, and the other is the factor between the units rounded to 12
// significant digits where that makes it a whole number (1000 from uM to
// nM, a division by 3600 from s to h), so that exact ratios of the trade's
// units convert without a rounding error in the last digit.
type scale struct{ mul, div float64 }

func (s scale) of(x float64) float64 { return x * s.mul / s.div }
func (s scale) one() bool            { return s.mul == 1 && s.div == 1 }

// scaleOf returns the scale from u to v, units of one kind.
func scaleOf(u, v units.Unit) scale {
	f := u.Factor / v.Factor
	whole := func(x float64) (float64, bool) {
		r, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 12, 64), 64)
		return r, err == nil && r >= 1 && r == math.Trunc(r) && r < 1e15
	}
	if m, ok := whole(f); ok {
		return scale{m, 1}
	}
	if d, ok := whole(1 / f); ok {
		return scale{1, d}
	}
	return scale{f, 1}
}

// factor returns the scale from the unit text from to the unit text to
// (none when to is empty): both must read, be units of time (when time) or
// of concentration, and of one kind.
func factor(from, to, what string, time bool) (scale, error) {
	if strings.TrimSpace(to) == "" {
		return scale{1, 1}, nil
	}
	kind, ok := func(u units.Unit) bool { return u.IsConcentration() }, "a concentration"
	if time {
		kind, ok = func(u units.Unit) bool { return u.IsTime() }, "a unit of time"
	}
	v, err := units.Parse(to)
	if err != nil {
		return scale{}, fmt.Errorf("cannot show %s in %q: %v", what, to, err)
	}
	if !kind(v) {
		return scale{}, fmt.Errorf("cannot show %s in %s: it is %s, not %s", what, to, v.Kind(), ok)
	}
	u, err := units.Parse(from)
	if err != nil || !kind(u) {
		return scale{}, fmt.Errorf("cannot show %s in %s: the model's unit %q is not %s to convert from", what, to, from, ok)
	}
	if _, err := u.To(v); err != nil {
		return scale{}, fmt.Errorf("cannot show %s in %s: %v", what, to, err)
	}
	return scaleOf(u, v), nil
}
