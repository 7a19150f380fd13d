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
// stable (true/false), max_real_eigenvalue.
func BranchRows(d *Diagram) [][]string {
	head := append([]string{"parameter"}, d.Quantities...)
	head = append(head, "stable", "max_real_eigenvalue")
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

// PointRows lays out the special points as points.csv: kind ("fold" or
// "hopf"), parameter, each quantity.
func PointRows(d *Diagram) [][]string {
	head := append([]string{"kind", "parameter"}, d.Quantities...)
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

// DescribeSpecial says what special point k is, in a line.
func DescribeSpecial(d *Diagram, k int) string {
	s := d.Specials[k]
	state := ""
	for q, n := range d.Quantities {
		state += fmt.Sprintf(", %s = %.6g", n, d.SpecialValues[k][q])
	}
	if s.Kind == "hopf" {
		return fmt.Sprintf("Hopf point at %s = %.8g%s: oscillations begin with period %.6g", d.Knob, s.P, state, s.Period)
	}
	return fmt.Sprintf("fold at %s = %.8g%s: the branch turns back", d.Knob, s.P, state)
}

// Response returns the knob and quantity q along the branch.
func Response(d *Diagram, q int) (x, r []float64) {
	for k, p := range d.Points {
		x, r = append(x, p.P), append(r, d.Values[k][q])
	}
	return x, r
}

// HillRows lays out a Hill fit as hill.csv.
func HillRows(response, knob string, h steady.Hill) [][]string {
	half := "EC50"
	if h.Falling() {
		half = "IC50"
	}
	return [][]string{
		{"response", "knob", "kind", "bottom", "top", "half_effect", "hill_coefficient", "r_squared", "points"},
		{response, knob, half, num(h.Bottom), num(h.Top), num(h.EC50), num(h.N), num(h.R2), strconv.Itoa(h.Points)},
	}
}

// DescribeHill says the fit in a line.
func DescribeHill(response, knob string, h steady.Hill) string {
	half := "EC50"
	if h.Falling() {
		half = "IC50"
	}
	return fmt.Sprintf("Hill curve of %s against %s: %s = %.6g, Hill coefficient %.4g, from %.6g to %.6g (R² = %.6f)", response, knob, half, h.EC50, h.N, h.Bottom, h.Top, h.R2)
}
