package network

import (
	"math"

	"kinetarium/network/expr"
)

// Modifier is a species that acts on a reaction without being changed by
// it: an enzyme in the Michaelis–Menten kcat form, an inhibitor or
// activator read by a custom rate, a catalyst written on both sides of the
// equation.
type Modifier struct {
	Species string
	Effect  Effect
}

// Effect says which way a modifier moves its reaction's rate.
type Effect int

// Effects of a modifier, from the sign of the rate's derivative by the
// modifier's concentration.
const (
	// Modulates: the sign could not be told, or it differs between states.
	Modulates Effect = iota
	// Activates: the rate grows with the modifier's concentration.
	Activates
	// Inhibits: the rate falls as the modifier's concentration grows.
	Inhibits
)

// String names the effect: "modulates", "activates" or "inhibits".
func (e Effect) String() string {
	switch e {
	case Activates:
		return "activates"
	case Inhibits:
		return "inhibits"
	}
	return "modulates"
}

// Modifiers returns the modifiers of reaction i (its index in
// Model.Reactions) in model order of the species: each species with zero
// net stoichiometry in the reaction that its rate reads (directly, through
// an assignment, or as a species field of its law, such as the enzyme of
// the kcat form) or that its equation writes on both sides.
//
// Each modifier's Effect comes from the sign of ∂rate/∂[modifier] at three
// states: the initial concentrations, the same with zeros replaced by 1,
// and every concentration 1 (parameters at their values, t = 0). When the
// signs that are not zero agree, they give the effect; otherwise it is
// Modulates. A reaction with errors has no modifiers.
func (n *Net) Modifiers(i int) []Modifier {
	if i < 0 || i >= len(n.Reactions) {
		return nil
	}
	r := &n.Reactions[i]
	if !r.EqOK {
		return nil
	}
	net := map[string]float64{}
	written := map[string]int{} // 1 reactant, 2 product, 3 both
	for _, t := range r.Equation.Reactants {
		net[t.Species] -= t.Coef
		written[t.Species] |= 1
	}
	for _, t := range r.Equation.Products {
		net[t.Species] += t.Coef
		written[t.Species] |= 2
	}
	read := map[string]bool{}
	var rate expr.Node
	if r.Expr != nil {
		rate = n.inlineAssignments(r.Expr)
		for _, name := range expr.Vars(rate) {
			read[name] = true
		}
	}
	if r.Law != nil {
		for _, f := range r.Law.Fields() {
			if v := r.Rate.Arg(f.Key); f.Kind == SpeciesField && v.Name != "" {
				read[v.Name] = true
			}
		}
	}
	var out []Modifier
	for _, s := range n.Model.Species {
		if _, ok := n.speciesIx[s.Name]; !ok || net[s.Name] != 0 {
			continue
		}
		if !read[s.Name] && written[s.Name] != 3 {
			continue
		}
		out = append(out, Modifier{Species: s.Name, Effect: n.effect(rate, s.Name)})
	}
	return out
}

// inlineAssignments writes the assignments out in e.
func (n *Net) inlineAssignments(e expr.Node) expr.Node {
	byName := map[string]expr.Node{}
	for _, a := range n.Assignments { // each after those it reads
		if a.Expr == nil {
			continue
		}
		byName[a.Name] = expr.Substitute(a.Expr, func(name string) (expr.Node, bool) {
			x, ok := byName[name]
			return x, ok
		})
	}
	return expr.Substitute(e, func(name string) (expr.Node, bool) {
		x, ok := byName[name]
		return x, ok
	})
}

// effect finds the sign of ∂rate/∂species at the states Modifiers
// describes.
func (n *Net) effect(rate expr.Node, species string) Effect {
	if rate == nil {
		return Modulates
	}
	m := n.Model
	ns, np := len(m.Species), len(m.Parameters)
	slot := func(name string) (int, bool) {
		if name == TimeName {
			return ns + np, true
		}
		if j, ok := n.speciesIx[name]; ok {
			return j, true
		}
		if j, ok := n.paramIx[name]; ok {
			return ns + j, true
		}
		return 0, false
	}
	prog, err := expr.Compile(expr.Simplify(expr.Diff(rate, species)), slot)
	if err != nil {
		return Modulates
	}
	vars := make([]float64, max(ns+np+1, prog.Slots()))
	for j, p := range m.Parameters {
		vars[ns+j] = p.Value
	}
	pos, neg := false, false
	for state := 0; state < 3; state++ {
		for j, s := range m.Species {
			switch {
			case state == 0:
				vars[j] = s.Initial
			case state == 1 && s.Initial != 0:
				vars[j] = s.Initial
			default:
				vars[j] = 1
			}
		}
		d := prog.Eval(vars)
		switch {
		case math.IsNaN(d) || math.IsInf(d, 0):
		case d > 0:
			pos = true
		case d < 0:
			neg = true
		}
	}
	switch {
	case pos && !neg:
		return Activates
	case neg && !pos:
		return Inhibits
	}
	return Modulates
}
