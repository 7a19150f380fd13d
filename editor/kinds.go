package editor

import (
	"fmt"
	"slices"
	"strings"

	"kinetarium/network"
)

var reactionKind = rowKind{
	section: "reactions", noun: "reaction", newName: "r",
	emptyTip: "No reactions yet. Press “Add reaction” and type an equation such as “A + B -> C”.",
	count:    func(m *network.Model) int { return len(m.Reactions) },
	name:     func(m *network.Model, i int) string { return m.Reactions[i].Name },
	summary:  func(m *network.Model, i int) string { return m.Reactions[i].Equation },
	add: func(d *Document, m *network.Model, at int) {
		r := network.Reaction{Name: freshIn(m, "r"), Rate: network.Rate{Law: network.MassAction}}
		m.Reactions = slices.Insert(m.Reactions, at, r)
	},
	dup: func(m *network.Model, i int, name string) {
		r := m.Reactions[i]
		r.Name = name
		m.Reactions = slices.Insert(m.Reactions, i+1, r)
	},
	remove: func(m *network.Model, i int) { m.Reactions = slices.Delete(m.Reactions, i, i+1) },
	swap:   func(m *network.Model, i, j int) { m.Reactions[i], m.Reactions[j] = m.Reactions[j], m.Reactions[i] },
}

var speciesKind = rowKind{
	section: "species", noun: "species", newName: "X",
	emptyTip: "No species yet. Press “Add species”, or type an equation under Reactions and declare its species in one click.",
	count:    func(m *network.Model) int { return len(m.Species) },
	name:     func(m *network.Model, i int) string { return m.Species[i].Name },
	summary: func(m *network.Model, i int) string {
		s := m.Species[i]
		t := "start " + formatNumber(s.Initial)
		if u := strings.TrimSpace(m.Units.Amount); u != "" {
			t += " " + u // as parameters and compartments name theirs
		}
		if s.Fixed {
			t += ", held constant"
		}
		return t
	},
	add: func(d *Document, m *network.Model, at int) {
		m.Species = slices.Insert(m.Species, at, network.Species{Name: freshIn(m, "X")})
	},
	dup: func(m *network.Model, i int, name string) {
		s := m.Species[i]
		s.Name = name
		m.Species = slices.Insert(m.Species, i+1, s)
	},
	remove: func(m *network.Model, i int) { m.Species = slices.Delete(m.Species, i, i+1) },
	swap:   func(m *network.Model, i, j int) { m.Species[i], m.Species[j] = m.Species[j], m.Species[i] },
}

var parameterKind = rowKind{
	section: "parameters", noun: "parameter", newName: "k",
	emptyTip: "No parameters yet. Rate laws may use numbers directly, or names of parameters added here.",
	count:    func(m *network.Model) int { return len(m.Parameters) },
	name:     func(m *network.Model, i int) string { return m.Parameters[i].Name },
	summary: func(m *network.Model, i int) string {
		p := m.Parameters[i]
		if p.Unit != "" {
			return formatNumber(p.Value) + " " + p.Unit
		}
		return formatNumber(p.Value)
	},
	add: func(d *Document, m *network.Model, at int) {
		m.Parameters = slices.Insert(m.Parameters, at, network.Parameter{Name: freshIn(m, "k"), Value: 1})
	},
	dup: func(m *network.Model, i int, name string) {
		p := m.Parameters[i]
		p.Name = name
		m.Parameters = slices.Insert(m.Parameters, i+1, p)
	},
	remove: func(m *network.Model, i int) { m.Parameters = slices.Delete(m.Parameters, i, i+1) },
	swap:   func(m *network.Model, i, j int) { m.Parameters[i], m.Parameters[j] = m.Parameters[j], m.Parameters[i] },
}

var assignmentKind = rowKind{
	section: "assignments", noun: "assignment", newName: "q",
	emptyTip: "No assignments yet. An assignment names a quantity computed from species and parameters, such as E_total = E + ES; it is plotted and exported beside the species and can be used in rate expressions.",
	count:    func(m *network.Model) int { return len(m.Assignments) },
	name:     func(m *network.Model, i int) string { return m.Assignments[i].Name },
	summary:  func(m *network.Model, i int) string { return "= " + m.Assignments[i].Expression },
	add: func(d *Document, m *network.Model, at int) {
		m.Assignments = slices.Insert(m.Assignments, at, network.Assignment{Name: freshIn(m, "q")})
	},
	dup: func(m *network.Model, i int, name string) {
		a := m.Assignments[i]
		a.Name = name
		m.Assignments = slices.Insert(m.Assignments, i+1, a)
	},
	remove: func(m *network.Model, i int) { m.Assignments = slices.Delete(m.Assignments, i, i+1) },
	swap: func(m *network.Model, i, j int) {
		m.Assignments[i], m.Assignments[j] = m.Assignments[j], m.Assignments[i]
	},
}

var compartmentKind = rowKind{
	section: "compartments", noun: "compartment", newName: "cell",
	emptyTip: "No compartments: every species lives in one implicit compartment of volume 1. Add compartments to give species different volumes.",
	count:    func(m *network.Model) int { return len(m.Compartments) },
	name:     func(m *network.Model, i int) string { return m.Compartments[i].Name },
	summary: func(m *network.Model, i int) string {
		c := m.Compartments[i]
		if u := strings.TrimSpace(c.Unit); u != "" {
			return "volume " + formatNumber(c.Volume) + " " + u
		}
		return "volume " + formatNumber(c.Volume)
	},
	add: func(d *Document, m *network.Model, at int) {
		m.Compartments = slices.Insert(m.Compartments, at, network.Compartment{Name: freshIn(m, "comp"), Volume: 1})
	},
	dup: func(m *network.Model, i int, name string) {
		c := m.Compartments[i]
		c.Name = name
		m.Compartments = slices.Insert(m.Compartments, i+1, c)
	},
	remove: func(m *network.Model, i int) { m.Compartments = slices.Delete(m.Compartments, i, i+1) },
	swap: func(m *network.Model, i, j int) {
		m.Compartments[i], m.Compartments[j] = m.Compartments[j], m.Compartments[i]
	},
}

// freshIn returns prefix followed by the smallest number ≥ 1 that names
// nothing in m.
func freshIn(m *network.Model, prefix string) string {
	d := Document{model: m}
	return d.FreshName(prefix)
}

// Undeclared returns the species named in the equation of reaction i that
// the checked model does not declare as anything, in order of appearance.
// It returns nil when the equation cannot be read.
func Undeclared(net *network.Net, i int) []string {
	cr := net.Reactions[i]
	if !cr.EqOK {
		return nil
	}
	eq := cr.Equation
	d := Document{model: net.Model}
	var out []string
	for _, side := range [][]network.Term{eq.Reactants, eq.Products} {
		for _, t := range side {
			if _, taken := d.NameTaken(t.Species); !taken && !slices.Contains(out, t.Species) {
				out = append(out, t.Species)
			}
		}
	}
	return out
}

// UndeclaredParameters returns the names that the rate-law fields of
// reaction i in use give as parameters but that the checked model declares
// as nothing, in form order.
func UndeclaredParameters(net *network.Net, i int) []string {
	cr := net.Reactions[i]
	if cr.Law == nil {
		return nil
	}
	d := Document{model: net.Model}
	uses := net.FieldsInUse(i)
	var out []string
	for _, f := range cr.Law.Fields() {
		v := cr.Rate.Arg(f.Key)
		if f.Kind != network.ParamField || v.Name == "" || !slices.Contains(uses, f.Key) || slices.Contains(out, v.Name) {
			continue
		}
		if _, taken := d.NameTaken(v.Name); !taken {
			out = append(out, v.Name)
		}
	}
	return out
}

// declareParameters adds parameters with the given names, value 1 as a
// new parameter row has, at the end of m's parameters.
func declareParameters(m *network.Model, names []string) {
	for _, n := range names {
		m.Parameters = append(m.Parameters, network.Parameter{Name: n, Value: 1})
	}
}

func addParameterLabel(names []string) string {
	if len(names) == 1 {
		return "Add parameter " + names[0]
	}
	return "Add parameters " + strings.Join(names, ", ")
}

// declareSpecies adds species with the given names, initial concentration
// zero, at the end of m's species.
func declareSpecies(m *network.Model, names []string) {
	for _, n := range names {
		m.Species = append(m.Species, network.Species{Name: n})
	}
}

func declareLabel(names []string) string {
	s := "Declare "
	for i, n := range names {
		if i > 0 {
			s += ", "
		}
		s += n
	}
	if len(names) == 1 {
		return s + " as a species"
	}
	return s + fmt.Sprintf(" as species (%d)", len(names))
}
