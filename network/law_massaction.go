package network

import "kinetarium/network/expr"

// massAction is the law of mass action: k·Π[reactant]^coef, minus
// k_reverse·Π[product]^coef for a reversible reaction. Its rate,
// derivatives by species and by its constants have a fast path in System
// (massActionRate and friends below).
type massAction struct{}

func (massAction) Name() string  { return MassAction }
func (massAction) Title() string { return "Mass action" }

func (massAction) Fields() []Field {
	return []Field{
		{Key: "k", Label: "Rate constant", Kind: ParamField},
		{Key: "k_reverse", Label: "Reverse constant", Kind: ParamField,
			Missing: "mass_action on a reversible reaction needs k_reverse, the rate constant of the reverse direction",
			Unused:  "k_reverse applies to reversible reactions only; remove it or write the equation with \"<=>\""},
	}
}

func (massAction) Check(c *LawCheck) []string {
	switch {
	case c.Equation != nil && c.Equation.Reversible:
		return []string{"k", "k_reverse"}
	case c.Equation == nil && c.Rate.Arg("k_reverse").Set:
		// The equation does not read, so whether it is reversible is not
		// known: its own message says what is wrong; say nothing of
		// k_reverse.
		return []string{"k", "k_reverse"}
	}
	return []string{"k"}
}

func (massAction) Rate(r Rate, eq Equation) expr.Node {
	f := productNode(valueNode(r.Arg("k")), eq.Reactants)
	if eq.Reversible {
		return expr.Sub(f, productNode(valueNode(r.Arg("k_reverse")), eq.Products))
	}
	return f
}

func (massAction) Formula(r Rate, eq *Equation) string {
	if eq == nil {
		return ""
	}
	f := productText(orPlaceholder(r.Arg("k")), eq.Reactants)
	if eq.Reversible || r.Arg("k_reverse").Set {
		f += " − " + productText(orPlaceholder(r.Arg("k_reverse")), eq.Products)
	}
	return f
}

// order returns the sum of the coefficients of a side of an equation.
func order(ts []Term) float64 {
	o := 0.0
	for _, t := range ts {
		o += t.Coef
	}
	return o
}

// fieldUnits: k of a step of order m is in Conc^(1−m)/Time.
func (massAction) fieldUnits(eq Equation) map[string]dims {
	return map[string]dims{"k": {1 - order(eq.Reactants), -1}, "k_reverse": {1 - order(eq.Products), -1}}
}

// compileMassAction sets up the fast path of a mass-action reaction.
func (b *builder) compileMassAction(r *rxn, cr *CheckedReaction) {
	r.kind = kindMassAction
	r.k = b.value(cr.Rate.Arg("k"))
	r.f0, r.f1 = b.addTerms(r, cr.Equation.Reactants)
	r.b0, r.b1 = r.f1, r.f1
	if cr.Equation.Reversible {
		r.reversible = true
		r.kr = b.value(cr.Rate.Arg("k_reverse"))
		r.b0, r.b1 = b.addTerms(r, cr.Equation.Products)
	}
	b.paramDep(r, r.k)
	if r.reversible {
		b.paramDep(r, r.kr)
	}
}

// prod returns Π y^coef over ts.
func prod(ts []term, y []float64) float64 {
	p := 1.0
	for _, tm := range ts {
		p *= pw(y[tm.sp], tm.coef)
	}
	return p
}

func (s *System) massActionRate(r *rxn, y []float64) float64 {
	terms := s.terms
	f := s.get(r.k)
	for i := r.f0; i < r.f1; i++ {
		tm := &terms[i]
		f *= pw(y[tm.sp], tm.coef)
	}
	if r.reversible {
		b := s.get(r.kr)
		for i := r.b0; i < r.b1; i++ {
			tm := &terms[i]
			b *= pw(y[tm.sp], tm.coef)
		}
		f -= b
	}
	return f
}

// massActionDeriv adds sign·∂(k·Π y^coef)/∂y into dr.
func (s *System) massActionDeriv(k float64, ts []term, y []float64, sign float64) {
	for j, tj := range ts {
		p := sign * k * dpw(y[tj.sp], tj.coef)
		for i, ti := range ts {
			if i != j {
				p *= pw(y[ti.sp], ti.coef)
			}
		}
		s.dr[tj.slot] += p
	}
}

func (s *System) massActionSpeciesDeriv(r *rxn, y []float64) {
	s.massActionDeriv(s.get(r.k), s.terms[r.f0:r.f1], y, 1)
	if r.reversible {
		s.massActionDeriv(s.get(r.kr), s.terms[r.b0:r.b1], y, -1)
	}
}

// massActionParamDeriv writes ∂rate/∂k and ∂rate/∂k_reverse into the
// reaction's parameter slots (in the order compileMassAction declared
// them; constants given as numbers have no slot).
func (s *System) massActionParamDeriv(r *rxn, y []float64) {
	if r.k.p >= 0 {
		s.dp[s.pslot(r, r.k.p)] += prod(s.terms[r.f0:r.f1], y)
	}
	if r.reversible && r.kr.p >= 0 {
		s.dp[s.pslot(r, r.kr.p)] -= prod(s.terms[r.b0:r.b1], y)
	}
}
