package network

import "kinetarium/network/expr"

// inhibitionMode is the way an inhibitor acts on a Michaelis–Menten enzyme.
type inhibitionMode int

const (
	competitive    inhibitionMode = iota // binds the free enzyme only
	uncompetitive                        // binds the enzyme–substrate complex only
	noncompetitive                       // binds both, equally
	mixed                                // binds both, with Ki and αKi
)

// inhibited is Michaelis–Menten with an inhibitor I, a modifier species
// that is read, not consumed (Segel, Enzyme Kinetics, 1975, ch. 3,
// rapid-equilibrium forms; from memory):
//
//	competitive     Vmax·S/(Km·(1 + I/Ki) + S)
//	uncompetitive   Vmax·S/(Km + S·(1 + I/Ki))
//	noncompetitive  Vmax·S/((Km + S)·(1 + I/Ki))
//	mixed           Vmax·S/(Km·(1 + I/Ki) + S·(1 + I/αKi))
//
// The mixed law is competitive as αKi → ∞, uncompetitive as Ki → ∞ and
// noncompetitive when αKi = Ki.
type inhibited struct{ mode inhibitionMode }

// Names of the inhibited Michaelis–Menten laws.
const (
	CompetitiveInhibition    = "competitive_inhibition"
	UncompetitiveInhibition  = "uncompetitive_inhibition"
	NoncompetitiveInhibition = "noncompetitive_inhibition"
	MixedInhibition          = "mixed_inhibition"
)

func (l inhibited) Name() string {
	return [...]string{CompetitiveInhibition, UncompetitiveInhibition, NoncompetitiveInhibition, MixedInhibition}[l.mode]
}

func (l inhibited) Title() string {
	return "Michaelis–Menten, " + [...]string{"competitive", "uncompetitive", "noncompetitive", "mixed"}[l.mode] + " inhibitor"
}

func (l inhibited) Fields() []Field {
	fs := []Field{
		{Key: "vmax", Label: "Vmax", Kind: ParamField},
		{Key: "km", Label: "Km", Kind: ParamField, Positive: true},
		{Key: "inhibitor", Label: "Inhibitor", Kind: SpeciesField,
			Missing: l.Name() + " needs inhibitor, the species that inhibits the enzyme (it is read, not consumed)"},
		{Key: "ki", Label: "Ki", Kind: ParamField, Positive: true},
	}
	if l.mode == mixed {
		fs = append(fs, Field{Key: "alpha_ki", Label: "αKi (complex)", Kind: ParamField, Positive: true,
			Missing: "mixed_inhibition needs alpha_ki, the inhibitor's dissociation constant from the enzyme–substrate complex (αKi)"})
	}
	return fs
}

func (l inhibited) Check(c *LawCheck) []string {
	needOneSubstrate(c, l.Name())
	uses := []string{"vmax", "km", "inhibitor", "ki"}
	if l.mode == mixed {
		uses = append(uses, "alpha_ki")
	}
	return uses
}

func (l inhibited) Rate(r Rate, eq Equation) expr.Node {
	S := expr.Var(eq.Reactants[0].Species)
	km := arg(r, "km")
	I := arg(r, "inhibitor")
	f := func(k string) expr.Node { return expr.Add(one(), frac(I, arg(r, k))) } // 1 + I/K
	var den expr.Node
	switch l.mode {
	case competitive:
		den = expr.Add(expr.Mul(km, f("ki")), S)
	case uncompetitive:
		den = expr.Add(km, expr.Mul(S, f("ki")))
	case noncompetitive:
		den = expr.Mul(expr.Add(km, S), f("ki"))
	default:
		den = expr.Add(expr.Mul(km, f("ki")), expr.Mul(S, f("alpha_ki")))
	}
	return frac(expr.Mul(arg(r, "vmax"), S), den)
}

func (l inhibited) Formula(r Rate, eq *Equation) string {
	if eq == nil {
		return ""
	}
	s, km, i := substrate(eq, 0), txt(r, "km"), txt(r, "inhibitor")
	f := func(k string) string { return "(1 + " + i + "/" + txt(r, k) + ")" }
	var den string
	switch l.mode {
	case competitive:
		den = km + "·" + f("ki") + " + " + s
	case uncompetitive:
		den = km + " + " + s + "·" + f("ki")
	case noncompetitive:
		den = "(" + km + " + " + s + ")·" + f("ki")
	default:
		den = km + "·" + f("ki") + " + " + s + "·" + f("alpha_ki")
	}
	return txt(r, "vmax") + "·" + s + "/(" + den + ")"
}

func (l inhibited) fieldUnits(Equation) map[string]dims {
	return map[string]dims{"vmax": dimRate, "km": dimConc, "ki": dimConc, "alpha_ki": dimConc}
}
