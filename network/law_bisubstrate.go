package network

import "kinetarium/network/expr"

// randomBi is the rapid-equilibrium random-order law of two substrates A
// and B, irreversible, in Segel's parameterisation (Segel, Enzyme
// Kinetics, 1975, ch. 6, "rapid equilibrium random bi reactant system";
// from memory):
//
//	v = Vmax·A·B/(α·Ka·Kb + α·Kb·A + α·Ka·B + A·B)
//
// Ka and Kb are the dissociation constants of A and B from the free
// enzyme; α is the factor by which the binding of one changes the
// dissociation constant of the other. With α = 1 the substrates bind
// independently and v = Vmax·A/(Ka + A)·B/(Kb + B).
type randomBi struct{}

// orderedBi is the ordered law of two substrates, A binding first, in the
// absence of products (the ordered ternary-complex mechanism, steady
// state, irreversible; Cornish-Bowden, Fundamentals of Enzyme Kinetics,
// 4th ed., 2012, ch. 8, from memory; also Segel 1975, ch. 9):
//
//	v = Vmax·A·B/(Kia·Kmb + Kmb·A + Kma·B + A·B)
//
// Kma and Kmb are the Michaelis constants of A and B, Kia the
// dissociation constant of A from the free enzyme. At saturating B it is
// Michaelis–Menten in A with Km = Kma; at saturating A, in B with Km =
// Kmb.
type orderedBi struct{}

// Names of the two-substrate laws.
const (
	RandomBi  = "random_bi"
	OrderedBi = "ordered_bi"
)

func (randomBi) Name() string  { return RandomBi }
func (randomBi) Title() string { return "Two substrates, random order" }

func (randomBi) Fields() []Field {
	return []Field{
		{Key: "vmax", Label: "Vmax", Kind: ParamField},
		{Key: "ka", Label: "Ka (first substrate)", Kind: ParamField, Positive: true},
		{Key: "kb", Label: "Kb (second substrate)", Kind: ParamField, Positive: true},
		{Key: "alpha", Label: "α (interaction)", Kind: ParamField, Positive: true,
			Missing: "random_bi needs alpha, the factor by which one bound substrate changes the other's dissociation constant (1 when they bind independently)"},
	}
}

// needTwoSubstrates reports an error unless eq is irreversible with two
// different substrates of coefficient 1.
func needTwoSubstrates(c *LawCheck, law string) {
	eq := c.Equation
	if eq == nil {
		return
	}
	if eq.Reversible {
		c.Errorf("equation", "%s is written for the forward reaction only; use \"->\", or write the net rate as an expression", law)
	}
	if len(eq.Reactants) != 2 || eq.Reactants[0].Coef != 1 || eq.Reactants[1].Coef != 1 || eq.Reactants[0].Species == eq.Reactants[1].Species {
		c.Errorf("equation", "%s needs two different substrates with coefficient 1, such as \"A + B -> P + Q\"; use michaelis_menten for one substrate", law)
	}
}

func (randomBi) Check(c *LawCheck) []string {
	needTwoSubstrates(c, RandomBi)
	return []string{"vmax", "ka", "kb", "alpha"}
}

func (randomBi) Rate(r Rate, eq Equation) expr.Node {
	A, B := expr.Var(eq.Reactants[0].Species), expr.Var(eq.Reactants[1].Species)
	ka, kb, al := arg(r, "ka"), arg(r, "kb"), arg(r, "alpha")
	AB := expr.Mul(A, B)
	den := expr.Add(expr.Add(expr.Add(expr.Mul(expr.Mul(al, ka), kb), expr.Mul(expr.Mul(al, kb), A)), expr.Mul(expr.Mul(al, ka), B)), AB)
	return frac(expr.Mul(arg(r, "vmax"), AB), den)
}

func (randomBi) Formula(r Rate, eq *Equation) string {
	if eq == nil {
		return ""
	}
	a, b := substrate(eq, 0), substrate(eq, 1)
	ka, kb, al := txt(r, "ka"), txt(r, "kb"), txt(r, "alpha")
	return txt(r, "vmax") + "·" + a + "·" + b + "/(" + sum(al+"·"+ka+"·"+kb, al+"·"+kb+"·"+a, al+"·"+ka+"·"+b, a+"·"+b) + ")"
}

func (randomBi) fieldUnits(Equation) map[string]dims {
	return map[string]dims{"vmax": dimRate, "ka": dimConc, "kb": dimConc, "alpha": dimNumber}
}

func (orderedBi) Name() string  { return OrderedBi }
func (orderedBi) Title() string { return "Two substrates, ordered" }

func (orderedBi) Fields() []Field {
	return []Field{
		{Key: "vmax", Label: "Vmax", Kind: ParamField},
		{Key: "kia", Label: "Kia (A from free enzyme)", Kind: ParamField, Positive: true},
		{Key: "kma", Label: "Km of A (binds first)", Kind: ParamField, Positive: true},
		{Key: "kmb", Label: "Km of B (binds second)", Kind: ParamField, Positive: true},
	}
}

func (orderedBi) Check(c *LawCheck) []string {
	needTwoSubstrates(c, OrderedBi)
	return []string{"vmax", "kia", "kma", "kmb"}
}

func (orderedBi) Rate(r Rate, eq Equation) expr.Node {
	A, B := expr.Var(eq.Reactants[0].Species), expr.Var(eq.Reactants[1].Species)
	kia, kma, kmb := arg(r, "kia"), arg(r, "kma"), arg(r, "kmb")
	AB := expr.Mul(A, B)
	den := expr.Add(expr.Add(expr.Add(expr.Mul(kia, kmb), expr.Mul(kmb, A)), expr.Mul(kma, B)), AB)
	return frac(expr.Mul(arg(r, "vmax"), AB), den)
}

func (orderedBi) Formula(r Rate, eq *Equation) string {
	if eq == nil {
		return ""
	}
	a, b := substrate(eq, 0), substrate(eq, 1)
	kia, kma, kmb := txt(r, "kia"), txt(r, "kma"), txt(r, "kmb")
	return txt(r, "vmax") + "·" + a + "·" + b + "/(" + sum(kia+"·"+kmb, kmb+"·"+a, kma+"·"+b, a+"·"+b) + ")"
}

func (orderedBi) fieldUnits(Equation) map[string]dims {
	return map[string]dims{"vmax": dimRate, "kia": dimConc, "kma": dimConc, "kmb": dimConc}
}
