package network

import "kinetarium/network/expr"

// reversibleMM is the reversible Michaelis–Menten law of one substrate S
// and one product P (Haldane's form; Segel, Enzyme Kinetics, 1975, and
// Cornish-Bowden, Fundamentals of Enzyme Kinetics, both from memory):
//
//	v = (Vf·S/Kms − Vr·P/Kmp) / (1 + S/Kms + P/Kmp)
//
// or, with the equilibrium constant Keq instead of Vr through the Haldane
// relationship Keq = Vf·Kmp/(Vr·Kms),
//
//	v = (Vf/Kms)·(S − P/Keq) / (1 + S/Kms + P/Kmp).
type reversibleMM struct{}

// MichaelisMentenReversible is the name of the reversible
// Michaelis–Menten law.
const MichaelisMentenReversible = "michaelis_menten_reversible"

func (reversibleMM) Name() string  { return MichaelisMentenReversible }
func (reversibleMM) Title() string { return "Reversible Michaelis–Menten" }

func (reversibleMM) Fields() []Field {
	return []Field{
		{Key: "vf", Label: "Vf (forward limit)", Kind: ParamField},
		{Key: "vr", Label: "Vr (reverse limit)", Kind: ParamField,
			Missing: "michaelis_menten_reversible needs either vr, the reverse limiting rate, or keq, the equilibrium constant (then vr follows from the Haldane relationship)"},
		{Key: "keq", Label: "Keq (equilibrium constant)", Kind: ParamField, Positive: true},
		{Key: "kms", Label: "Km of substrate", Kind: ParamField, Positive: true},
		{Key: "kmp", Label: "Km of product", Kind: ParamField, Positive: true},
	}
}

func usesKeq(r Rate) bool { return r.Arg("keq").Set }

func (reversibleMM) Check(c *LawCheck) []string {
	uses := []string{"vf", "kms", "kmp"}
	switch {
	case usesKeq(c.Rate) && c.Rate.Arg("vr").Set:
		c.Errorf("rate", "michaelis_menten_reversible takes either vr or keq, not both (the Haldane relationship ties them: Keq = Vf·Kmp/(Vr·Kms)); remove one")
		uses = append(uses, "vr", "keq")
	case usesKeq(c.Rate):
		uses = append(uses, "keq")
	default:
		uses = append(uses, "vr")
	}
	if eq := c.Equation; eq != nil {
		if !eq.Reversible {
			c.Errorf("equation", "michaelis_menten_reversible needs a reversible equation such as \"S <=> P\"; use michaelis_menten for an irreversible step")
		}
		if len(eq.Reactants) != 1 || eq.Reactants[0].Coef != 1 || len(eq.Products) != 1 || eq.Products[0].Coef != 1 {
			c.Errorf("equation", "michaelis_menten_reversible needs one substrate and one product, each with coefficient 1, such as \"S <=> P\"; use an expression law for other cases")
		}
	}
	return uses
}

func (reversibleMM) Rate(r Rate, eq Equation) expr.Node {
	S, P := expr.Var(eq.Reactants[0].Species), expr.Var(eq.Products[0].Species)
	kms, kmp := arg(r, "kms"), arg(r, "kmp")
	den := expr.Add(expr.Add(one(), frac(S, kms)), frac(P, kmp))
	var num expr.Node
	if usesKeq(r) {
		num = expr.Mul(frac(arg(r, "vf"), kms), expr.Sub(S, frac(P, arg(r, "keq"))))
	} else {
		num = expr.Sub(frac(expr.Mul(arg(r, "vf"), S), kms), frac(expr.Mul(arg(r, "vr"), P), kmp))
	}
	return frac(num, den)
}

func (reversibleMM) Formula(r Rate, eq *Equation) string {
	if eq == nil {
		return ""
	}
	s, p := substrate(eq, 0), "?"
	if len(eq.Products) > 0 {
		p = eq.Products[0].Species
	}
	kms, kmp := txt(r, "kms"), txt(r, "kmp")
	den := "(" + sum("1", s+"/"+kms, p+"/"+kmp) + ")"
	if usesKeq(r) {
		return txt(r, "vf") + "/" + kms + "·(" + s + " − " + p + "/" + txt(r, "keq") + ")/" + den
	}
	return "(" + txt(r, "vf") + "·" + s + "/" + kms + " − " + txt(r, "vr") + "·" + p + "/" + kmp + ")/" + den
}

func (reversibleMM) fieldUnits(Equation) map[string]dims {
	return map[string]dims{"vf": dimRate, "vr": dimRate, "keq": dimNumber, "kms": dimConc, "kmp": dimConc}
}
