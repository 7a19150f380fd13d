package network

import (
	"strings"

	"kinetarium/network/expr"
)

// expressionLaw is a rate written as any expression over species,
// parameters, assignments and t. It is compiled to bytecode with its
// exact symbolic derivatives.
type expressionLaw struct{}

func (expressionLaw) Name() string  { return Expression }
func (expressionLaw) Title() string { return "Custom expression" }

func (expressionLaw) Fields() []Field {
	return []Field{{Key: "expression", Label: "Rate expression", Kind: ExprField,
		Missing: "the expression law needs an expression, e.g. \"k1*A*B\""}}
}

func (expressionLaw) Check(c *LawCheck) []string { return []string{"expression"} }

// Rate returns nil: Check parses the expression once, with the names it
// may use, and keeps the tree in CheckedReaction.Expr.
func (expressionLaw) Rate(r Rate, eq Equation) expr.Node { return nil }

func (expressionLaw) Formula(r Rate, eq *Equation) string { return PrettyExpression(r.Expression) }

// PrettyExpression writes "*" as "·" and "-" as "−" for reading, leaving
// the exponent signs of numbers such as 1e-3 as they are.
func PrettyExpression(s string) string {
	var b strings.Builder
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c == '*':
			b.WriteString("·")
		case c == '-' && !(i > 1 && (s[i-1] == 'e' || s[i-1] == 'E') && isDigit(s[i-2]) && numberBefore(s, i-1)):
			b.WriteString("−")
		default:
			b.WriteByte(c)
		}
	}
	return b.String()
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

// numberBefore reports whether the 'e' at s[e] ends the digits of a number
// rather than a name such as "de".
func numberBefore(s string, e int) bool {
	i := e - 1
	for i >= 0 && (isDigit(s[i]) || s[i] == '.') {
		i--
	}
	return i < 0 || !isNameChar(rune(s[i]))
}
