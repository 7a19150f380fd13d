package network

import (
	"math"
	"slices"

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
	// The candidates are the species read or written on both sides (a
	// few), in model order: not a pass over every species of the model.
	var cands []int
	for name := range read {
		if j, ok := n.speciesIx[name]; ok {
			cands = append(cands, j)
		}
	}
	for name, w := range written {
		if j, ok := n.speciesIx[name]; ok && w == 3 && !read[name] {
			cands = append(cands, j)
		}
	}
	slices.Sort(cands)
	var out []Modifier
	for _, j := range cands {
		s := n.Model.Species[j]
		if net[s.Name] != 0 {
			continue
		}
		out = append(out, Modifier{Species: s.Name, Effect: n.effect(rate, s.Name)})
	}
	return out
}

// inlineAssignments writes the assignments out in e: only those e reads,
// directly or through others, each once.
func (n *Net) inlineAssignments(e expr.Node) expr.Node {
	if len(n.checkedAsg) == 0 {
		return e
	}
	done := map[string]expr.Node{}
	var sub func(name string) (expr.Node, bool)
	sub = func(name string) (expr.Node, bool) {
		if x, ok := done[name]; ok {
			return x, x != nil
		}
		k, ok := n.checkedAsg[name]
		if !ok || n.Assignments[k].Expr == nil {
			return nil, false
		}
		done[name] = nil // sound assignments have no cycles; this guards anyway
		x := expr.Substitute(n.Assignments[k].Expr, sub)
		done[name] = x
		return x, true
	}
	return expr.Substitute(e, sub)
}

// effect finds the sign of ∂rate/∂species at the states Modifiers
// describes.
func (n *Net) effect(rate expr.Node, species string) Effect {
	if rate == nil {
		return Modulates
	}
	m := n.Model
	// Slots for the names the derivative reads only, so that each call
	// costs the size of the rate, not of the model.
	d := expr.Simplify(expr.Diff(rate, species))
	names := expr.Vars(d)
	local := make(map[string]int, len(names)+1)
	for _, name := range names {
		local[name] = len(local)
	}
	tslot := len(local)
	slot := func(name string) (int, bool) {
		if name == TimeName {
			return tslot, true
		}
		_, sp := n.speciesIx[name]
		_, par := n.paramIx[name]
		k, ok := local[name]
		return k, ok && (sp || par) // anything else: the effect is not told
	}
	prog, err := expr.Compile(d, slot)
	if err != nil {
		return Modulates
	}
	vars := make([]float64, max(tslot+1, prog.Slots()))
	for _, name := range names {
		if j, ok := n.paramIx[name]; ok {
			vars[local[name]] = m.Parameters[j].Value
		}
	}
	pos, neg := false, false
	for state := 0; state < 3; state++ {
		for _, name := range names {
			j, ok := n.speciesIx[name]
			if !ok {
				continue
			}
			s := m.Species[j]
			switch {
			case state == 0:
				vars[local[name]] = s.Initial
			case state == 1 && s.Initial != 0:
				vars[local[name]] = s.Initial
			default:
				vars[local[name]] = 1
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
