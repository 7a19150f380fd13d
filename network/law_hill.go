package network

import "kinetarium/network/expr"

// hill is the Hill law of a regulator X, in its activation and repression
// forms (Hill, J. Physiol. 40, 1910; the forms as in Alon, An
// Introduction to Systems Biology, 2007, ch. 2; from memory):
//
//	activation  Vmax·(X/K)^n/(1 + (X/K)^n)  = Vmax·Xⁿ/(Kⁿ + Xⁿ)
//	repression  Vmax/(1 + (X/K)^n)          = Vmax·Kⁿ/(Kⁿ + Xⁿ)
//
// X is the regulator field, a modifier species read and not consumed;
// without one, activation reads the reaction's one substrate (with n = 1
// it is then Michaelis–Menten with Km = K). Repression needs a regulator.
type hill struct{ repress bool }

// Names of the Hill laws.
const (
	HillActivation = "hill_activation"
	HillRepression = "hill_repression"
)

func (l hill) Name() string {
	if l.repress {
		return HillRepression
	}
	return HillActivation
}

func (l hill) Title() string {
	if l.repress {
		return "Hill repression"
	}
	return "Hill activation"
}

func (l hill) Fields() []Field {
	reg := Field{Key: "regulator", Label: "Regulator", Kind: SpeciesField}
	if l.repress {
		reg.Missing = "hill_repression needs regulator, the species that represses the reaction (it is read, not consumed)"
	}
	return []Field{
		{Key: "vmax", Label: "Vmax", Kind: ParamField},
		{Key: "k_half", Label: "K (half effect)", Kind: ParamField, Positive: true},
		{Key: "n", Label: "Hill coefficient n", Kind: ParamField, Positive: true},
		reg,
	}
}

// regulated reports whether r names a regulator other than the substrate.
func regulated(r Rate) bool { return r.Arg("regulator").Set }

func (l hill) Check(c *LawCheck) []string {
	uses := []string{"vmax", "k_half", "n"}
	if l.repress || regulated(c.Rate) {
		uses = append(uses, "regulator")
	}
	eq := c.Equation
	if eq == nil {
		return uses
	}
	if eq.Reversible {
		c.Errorf("equation", "%s gives a one-way rate; use \"->\", or write the net rate as an expression", l.Name())
	}
	if !l.repress && !regulated(c.Rate) && (len(eq.Reactants) != 1 || eq.Reactants[0].Coef != 1) {
		c.Errorf("equation", "hill_activation without a regulator reads the reaction's one substrate, so it needs exactly one substrate with coefficient 1; name the regulator species otherwise")
	}
	return uses
}

func (l hill) regulator(r Rate, eq Equation) expr.Node {
	if regulated(r) {
		return arg(r, "regulator")
	}
	return expr.Var(eq.Reactants[0].Species)
}

func (l hill) Rate(r Rate, eq Equation) expr.Node {
	x := expr.Pow(frac(l.regulator(r, eq), arg(r, "k_half")), arg(r, "n")) // (X/K)^n
	den := expr.Add(one(), x)
	if l.repress {
		return frac(arg(r, "vmax"), den)
	}
	return frac(expr.Mul(arg(r, "vmax"), x), den)
}

func (l hill) Formula(r Rate, eq *Equation) string {
	if eq == nil {
		return ""
	}
	x := txt(r, "regulator")
	if !regulated(r) && !l.repress {
		x = substrate(eq, 0)
	}
	p := "(" + x + "/" + txt(r, "k_half") + ")^" + txt(r, "n")
	if l.repress {
		return txt(r, "vmax") + "/(1 + " + p + ")"
	}
	return txt(r, "vmax") + "·" + p + "/(1 + " + p + ")"
}

func (l hill) fieldUnits(Equation) map[string]dims {
	return map[string]dims{"vmax": dimRate, "k_half": dimConc, "n": dimNumber}
}
