package network

import "kinetarium/network/expr"

// michaelisMenten is the irreversible Michaelis–Menten law of one
// substrate S: vmax·S/(km + S), or kcat·E·S/(km + S) with the enzyme E a
// species. Its rate and derivatives have a fast path in System.
type michaelisMenten struct{}

func (michaelisMenten) Name() string  { return MichaelisMenten }
func (michaelisMenten) Title() string { return "Michaelis–Menten" }

func (michaelisMenten) Fields() []Field {
	return []Field{
		{Key: "vmax", Label: "Vmax", Kind: ParamField},
		{Key: "kcat", Label: "kcat", Kind: ParamField,
			Missing: "michaelis_menten with an enzyme needs kcat, the turnover number"},
		{Key: "enzyme", Label: "Enzyme", Kind: SpeciesField,
			Missing: "michaelis_menten with kcat needs enzyme, the species that catalyses the reaction"},
		{Key: "km", Label: "Km", Kind: ParamField, Positive: true},
	}
}

// UsesKcat reports whether r is written in the kcat·E form.
func usesKcat(r Rate) bool { return r.Arg("kcat").Set || r.Arg("enzyme").Set }

func (michaelisMenten) Check(c *LawCheck) []string {
	uses := []string{"km"}
	switch {
	case c.Rate.Arg("vmax").Set && usesKcat(c.Rate):
		c.Errorf("rate", "michaelis_menten takes either vmax, or kcat with enzyme, not both; remove one")
		uses = append(uses, "vmax", "kcat", "enzyme")
	case usesKcat(c.Rate):
		uses = append(uses, "kcat", "enzyme")
	default:
		uses = append(uses, "vmax")
	}
	if eq := c.Equation; eq != nil {
		if eq.Reversible {
			c.Errorf("equation", "michaelis_menten applies to irreversible reactions only; use \"->\", or michaelis_menten_reversible for a reversible step with one substrate and one product")
		}
		if len(eq.Reactants) != 1 || eq.Reactants[0].Coef != 1 {
			c.Errorf("equation", "michaelis_menten needs exactly one substrate with coefficient 1; use random_bi or ordered_bi for two substrates, or an expression law for other cases")
		}
	}
	return uses
}

func (michaelisMenten) Rate(r Rate, eq Equation) expr.Node {
	S := expr.Var(eq.Reactants[0].Species)
	var v expr.Node
	if usesKcat(r) {
		v = expr.Mul(valueNode(r.Arg("kcat")), valueNode(r.Arg("enzyme")))
	} else {
		v = valueNode(r.Arg("vmax"))
	}
	return expr.Div(expr.Mul(v, S), expr.Add(valueNode(r.Arg("km")), S))
}

func (michaelisMenten) Formula(r Rate, eq *Equation) string {
	if eq == nil {
		return ""
	}
	s := "?"
	if len(eq.Reactants) == 1 {
		s = eq.Reactants[0].Species
	}
	km := orPlaceholder(r.Arg("km"))
	if usesKcat(r) {
		return orPlaceholder(r.Arg("kcat")) + "·" + orPlaceholder(r.Arg("enzyme")) + "·" + s + "/(" + km + " + " + s + ")"
	}
	return orPlaceholder(r.Arg("vmax")) + "·" + s + "/(" + km + " + " + s + ")"
}

func (michaelisMenten) fieldUnits(Equation) map[string]dims {
	return map[string]dims{"vmax": dimRate, "kcat": dimPerTime, "km": dimConc}
}

// compileMichaelisMenten sets up the fast path.
func (b *builder) compileMichaelisMenten(r *rxn, cr *CheckedReaction) {
	r.kind = kindMM
	r.km = b.value(cr.Rate.Arg("km"))
	r.sub = b.s.spIx[cr.Equation.Reactants[0].Species]
	r.subSlot = b.depSlot(r, r.sub)
	if usesKcat(cr.Rate) {
		r.useKcat = true
		r.kcat = b.value(cr.Rate.Arg("kcat"))
		r.enz = b.s.spIx[cr.Rate.Arg("enzyme").Name]
		r.enzSlot = b.depSlot(r, r.enz)
		b.paramDep(r, r.kcat)
	} else {
		r.vmax = b.value(cr.Rate.Arg("vmax"))
		b.paramDep(r, r.vmax)
	}
	b.paramDep(r, r.km)
}

func (s *System) mmRate(r *rxn, y []float64) float64 {
	v := s.get(r.vmax)
	if r.useKcat {
		v = s.get(r.kcat) * y[r.enz]
	}
	S := y[r.sub]
	return v * S / (s.get(r.km) + S)
}

func (s *System) mmSpeciesDeriv(r *rxn, y []float64) {
	km := s.get(r.km)
	S := y[r.sub]
	den := km + S
	v := s.get(r.vmax)
	if r.useKcat {
		v = s.get(r.kcat) * y[r.enz]
		s.dr[r.enzSlot] += s.get(r.kcat) * S / den
	}
	s.dr[r.subSlot] += v * km / (den * den)
}

// mmParamDeriv writes ∂rate/∂(vmax or kcat) and ∂rate/∂km into the
// reaction's parameter slots.
func (s *System) mmParamDeriv(r *rxn, y []float64) {
	S := y[r.sub]
	den := s.get(r.km) + S
	v, dv := s.get(r.vmax), 1.0
	pv := r.vmax.p
	if r.useKcat {
		v, dv, pv = s.get(r.kcat)*y[r.enz], y[r.enz], r.kcat.p
	}
	if pv >= 0 {
		s.dp[s.pslot(r, pv)] += dv * S / den
	}
	if r.km.p >= 0 {
		s.dp[s.pslot(r, r.km.p)] -= v * S / (den * den)
	}
}
