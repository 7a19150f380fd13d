package network

import (
	"strings"

	"kinetarium/network/expr"
)

// dims is the unit a rate-law field must carry, as powers of the model's
// concentration and time units: Conc^C·Time^T (a Michaelis constant is
// {1, 0}, a limiting rate {1, -1}, a Hill coefficient {0, 0}).
type dims struct{ C, T float64 }

var (
	dimConc    = dims{1, 0}
	dimRate    = dims{1, -1}
	dimPerTime = dims{0, -1}
	dimNumber  = dims{0, 0}
)

// fieldUnitser is implemented by laws whose parameter fields have units
// fixed by the model's units of concentration and time; the unit check
// and the reaction form's hints read it. eq is the reaction's equation.
type fieldUnitser interface {
	fieldUnits(eq Equation) map[string]dims
}

// needOneSubstrate reports an error unless eq is irreversible with one
// substrate of coefficient 1. law is the law's name; other says which law
// fits a reversible reaction.
func needOneSubstrate(c *LawCheck, law string) {
	eq := c.Equation
	if eq == nil {
		return
	}
	if eq.Reversible {
		c.Errorf("equation", "%s applies to irreversible reactions only; use \"->\", or michaelis_menten_reversible for a reversible step with one substrate and one product", law)
	}
	if len(eq.Reactants) != 1 || eq.Reactants[0].Coef != 1 {
		c.Errorf("equation", "%s needs exactly one substrate with coefficient 1; use random_bi or ordered_bi for two substrates, or an expression law for other cases", law)
	}
}

// substrate returns the name of the first reactant of eq, or "?".
func substrate(eq *Equation, i int) string {
	if eq == nil || len(eq.Reactants) <= i {
		return "?"
	}
	return eq.Reactants[i].Species
}

// frac returns a/b.
func frac(a, b expr.Node) expr.Node { return expr.Div(a, b) }

// one is the number 1.
func one() expr.Node { return expr.Num(1) }

// arg returns the expression of field key of r.
func arg(r Rate, key string) expr.Node { return valueNode(r.Arg(key)) }

// txt returns the text of field key of r, or "?".
func txt(r Rate, key string) string { return orPlaceholder(r.Arg(key)) }

// sum joins terms with " + ".
func sum(terms ...string) string { return strings.Join(terms, " + ") }
