package analyse

import (
	"fmt"
	"math"
	"strconv"

	"kinetarium/app/study"
	"kinetarium/plotting"
	"kinetarium/solve/steady"
)

func num(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return study.FormatNumber(v)
}

// BranchRows lays out a diagram as branch.csv: parameter, each quantity,
// stable (true/false), max_real_eigenvalue. A diagram shown in display
// units (Diagram.In) names the units in the header: the knob's in the
// model, each quantity's, and 1/time for the eigenvalue.
func BranchRows(d *Diagram) [][]string {
	head := append([]string{d.Shown.Header("parameter", d.KnobUnit)}, d.quantityHeaders()...)
	head = append(head, "stable", d.Shown.Header("max_real_eigenvalue", d.perTimeUnit()))
	rows := [][]string{head}
	for k, p := range d.Points {
		row := []string{num(p.P)}
		for _, v := range d.Values[k] {
			row = append(row, num(v))
		}
		row = append(row, strconv.FormatBool(p.Stable), num(p.MaxReal))
		rows = append(rows, row)
	}
	return rows
}

// quantityHeaders are the quantities' names, with their units when the
// diagram is shown in display units.
func (d *Diagram) quantityHeaders() []string {
	h := make([]string, len(d.Quantities))
	for q, n := range d.Quantities {
		u := ""
		if q < len(d.Units) {
			u = d.Units[q]
		}
		h[q] = d.Shown.Header(n, u)
	}
	return h
}

func (d *Diagram) perTimeUnit() string {
	if d.Shown == nil {
		return ""
	}
	return d.Shown.PerTimeUnit
}

// AxisUnits returns the units of a diagram's figure axes: the knob's and
// the quantities' when they share one; both "" when it is not shown in
// display units, so the figures stay as they were.
func (d *Diagram) AxisUnits() (knob, quantity string) {
	if d.Shown == nil {
		return "", ""
	}
	for q, u := range d.Units {
		if q == 0 {
			quantity = u
		} else if u != quantity {
			quantity = ""
			break
		}
	}
	return d.KnobUnit, quantity
}

// PointRows lays out the special points as points.csv: kind ("fold" or
// "hopf"), parameter, each quantity; with units in the header as
// BranchRows has them.
func PointRows(d *Diagram) [][]string {
	head := append([]string{"kind", d.Shown.Header("parameter", d.KnobUnit)}, d.quantityHeaders()...)
	rows := [][]string{head}
	for k, s := range d.Specials {
		row := []string{s.Kind, num(s.P)}
		for _, v := range d.SpecialValues[k] {
			row = append(row, num(v))
		}
		rows = append(rows, row)
	}
	return rows
}

// PlotBranch gives the diagram to plotting.BifurcationPlot.
func PlotBranch(d *Diagram) plotting.Branch {
	b := plotting.Branch{Names: d.Quantities}
	b.Values = make([][]float64, len(d.Quantities))
	for k, p := range d.Points {
		b.P = append(b.P, p.P)
		b.Stable = append(b.Stable, p.Stable)
		for q := range d.Quantities {
			b.Values[q] = append(b.Values[q], d.Values[k][q])
		}
	}
	for k, s := range d.Specials {
		b.Marks = append(b.Marks, plotting.Mark{Kind: s.Kind, P: s.P, Values: d.SpecialValues[k]})
	}
	return b
}

// DescribeSpecial says what special point k is, in a line (with units
// when the diagram is shown in display units).
func DescribeSpecial(d *Diagram, k int) string {
	s := d.Specials[k]
	state := ""
	for q, n := range d.Quantities {
		u := ""
		if q < len(d.Units) {
			u = d.Units[q]
		}
		state += fmt.Sprintf(", %s = %.6g%s", n, d.SpecialValues[k][q], d.Shown.unitAfter(u))
	}
	knob := d.Shown.unitAfter(d.KnobUnit)
	if s.Kind == "hopf" {
		return fmt.Sprintf("Hopf point at %s = %.8g%s%s: oscillations begin with period %.6g%s", d.Knob, s.P, knob, state, s.Period, d.Shown.unitAfter(d.Shown.TimeUnit()))
	}
	return fmt.Sprintf("fold at %s = %.8g%s%s: the branch turns back", d.Knob, s.P, knob, state)
}

// Response returns the knob and quantity q along the branch.
func Response(d *Diagram, q int) (x, r []float64) {
	for k, p := range d.Points {
		x, r = append(x, p.P), append(r, d.Values[k][q])
	}
	return x, r
}

// HillRows lays out the Hill fit h of quantity q of d as hill.csv. With
// display units the header names the units: bottom and top in the
// response's, the half-effect dose in the knob's.
func HillRows(d *Diagram, q int, h steady.Hill) [][]string {
	half := "EC50"
	if h.Falling() {
		half = "IC50"
	}
	ru := d.unit(q)
	return [][]string{
		{"response", "knob", "kind", d.Shown.Header("bottom", ru), d.Shown.Header("top", ru), d.Shown.Header("half_effect", d.KnobUnit), "hill_coefficient", "r_squared", "points"},
		{d.Quantities[q], d.Knob, half, num(h.Bottom), num(h.Top), num(h.EC50), num(h.N), num(h.R2), strconv.Itoa(h.Points)},
	}
}

// QuantityUnit returns the unit quantity q is shown in: "" when the
// diagram is not shown in display units or none is known.
func (d *Diagram) QuantityUnit(q int) string { return d.unit(q) }

func (d *Diagram) unit(q int) string {
	if q < len(d.Units) {
		return d.Units[q]
	}
	return ""
}

// DescribeHill says the Hill fit h of quantity q of d in a line.
func DescribeHill(d *Diagram, q int, h steady.Hill) string {
	half := "EC50"
	if h.Falling() {
		half = "IC50"
	}
	ru := d.Shown.unitAfter(d.unit(q))
	ku := d.Shown.unitAfter(d.KnobUnit)
	s := fmt.Sprintf("Hill curve of %s against %s: %s = %.6g%s, Hill coefficient %.4g, from %.6g%s to %.6g%s (R² = %.6f)", d.Quantities[q], d.Knob, half, h.EC50, ku, h.N, h.Bottom, ru, h.Top, ru, h.R2)
	if h.Extrapolated() {
		s += fmt.Sprintf("; the %s lies outside the doses followed (%.6g%s to %.6g%s), so it and the far plateau are extrapolated, not measured by the branch: widen the range", half, h.DoseMin, ku, h.DoseMax, ku)
	}
	return s
}
