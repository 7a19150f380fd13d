package editor

import (
	"strconv"
	"strings"

	"kinetarium/network"
)

// LawTitle returns the plain-words title of a rate law name, for menus.
func LawTitle(law string) string {
	switch law {
	case network.MassAction:
		return "Mass action"
	case network.MichaelisMenten:
		return "Michaelis–Menten"
	case network.Expression:
		return "Custom expression"
	}
	return law
}

// lawFromTitle is the inverse of LawTitle.
func lawFromTitle(title string) string {
	for _, l := range network.Laws {
		if LawTitle(l) == title {
			return l
		}
	}
	return title
}

var superscripts = map[rune]rune{'0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '.': '·'}

// power writes name raised to coef, with a superscript when coef is not 1.
func power(name string, coef float64) string {
	if coef == 1 {
		return name
	}
	s := strconv.FormatFloat(coef, 'g', -1, 64)
	var b strings.Builder
	b.WriteString(name)
	for _, r := range s {
		if sup, ok := superscripts[r]; ok && r != '.' {
			b.WriteRune(sup)
		} else {
			return name + "^" + s
		}
	}
	return b.String()
}

// product joins k and the terms with "·".
func product(k string, terms []network.Term) string {
	parts := []string{k}
	for _, t := range terms {
		parts = append(parts, power(t.Species, t.Coef))
	}
	return strings.Join(parts, "·")
}

// orPlaceholder returns the value's text, or placeholder when it is unset.
func orPlaceholder(v network.Value, placeholder string) string {
	if s := v.String(); s != "" {
		return s
	}
	return placeholder
}

// RateFormula returns the rate of reaction r written out for reading, such
// as "kon·E·S − koff·ES" or "Vmax·S/(Km + S)". Fields not yet filled in
// show as "?". When the equation cannot be read, it returns "".
func RateFormula(r network.Reaction) string {
	if r.Rate.Law == network.Expression {
		return prettyExpression(r.Rate.Expression)
	}
	eq, err := network.ParseEquation(r.Equation)
	if err != nil {
		return ""
	}
	switch r.Rate.Law {
	case network.MassAction:
		f := product(orPlaceholder(r.Rate.K, "?"), eq.Reactants)
		if eq.Reversible || r.Rate.KReverse.Set {
			f += " − " + product(orPlaceholder(r.Rate.KReverse, "?"), eq.Products)
		}
		return f
	case network.MichaelisMenten:
		s := "?"
		if len(eq.Reactants) == 1 {
			s = eq.Reactants[0].Species
		}
		km := orPlaceholder(r.Rate.Km, "?")
		if r.Rate.Kcat.Set || r.Rate.Enzyme.Set {
			return orPlaceholder(r.Rate.Kcat, "?") + "·" + orPlaceholder(r.Rate.Enzyme, "?") + "·" + s + "/(" + km + " + " + s + ")"
		}
		return orPlaceholder(r.Rate.Vmax, "?") + "·" + s + "/(" + km + " + " + s + ")"
	}
	return ""
}

// prettyExpression writes "*" as "·" and "-" as "−" for reading, leaving
// the exponent signs of numbers such as 1e-3 as they are.
func prettyExpression(s string) string {
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

// numberBefore reports whether the 'e' at s[e] ends the digits of a number
// rather than a name such as "de".
func numberBefore(s string, e int) bool {
	i := e - 1
	for i >= 0 && (isDigit(s[i]) || s[i] == '.') {
		i--
	}
	return i < 0 || !isNameChar(s[i])
}
