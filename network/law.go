package network

import (
	"fmt"
	"strconv"
	"strings"

	"kinetarium/network/expr"
)

// A Law is a rate law. Each law lives in a file of its own (law_*.go) and
// owns its keys in model files, its checks, its rate as an expression tree
// (from which exact derivatives by species and parameters follow), and its
// formula for previews. Laws are registered in the table lawTable; adding
// one touches its file, that table, the editor's field list and README.
type Law interface {
	// Name is the law's name in model files, e.g. "mass_action".
	Name() string
	// Title is the law's name in menus, e.g. "Mass action".
	Title() string
	// Fields lists every key the law may read, in form order.
	Fields() []Field
	// Check returns the keys this reaction needs and reports any
	// condition beyond the fields themselves (such as the number of
	// substrates) through c. The generic checks of each key (set, a
	// known parameter or species, a valid expression) follow from the
	// keys returned.
	Check(c *LawCheck) (uses []string)
	// Rate returns the rate of a checked reaction as an expression over
	// species, parameter and assignment names and t, in the concentration
	// units of the reaction's compartment per time (net rate for a
	// reversible reaction).
	Rate(r Rate, eq Equation) expr.Node
	// Formula writes the rate out for reading, such as "kon·E·S − koff·ES",
	// with "?" for fields not yet filled in. eq is nil when the equation
	// does not read.
	Formula(r Rate, eq *Equation) string
}

// FieldKind says what a rate-law field holds.
type FieldKind int

// Field kinds.
const (
	ParamField   FieldKind = iota // a parameter name or a number ≥ 0 (> 0 when Positive)
	SpeciesField                  // a species name
	ExprField                     // expression text (Rate.Expression)
)

// Field is one key of a rate law.
type Field struct {
	Key   string    // key in model files, e.g. "k_reverse"
	Label string    // label in forms, e.g. "Reverse constant"
	Kind  FieldKind // what the field holds
	// Missing is the message when a reaction needs the field and lacks it;
	// "" gives a generic one.
	Missing string
	// Unused is the message when the field is given but this reaction does
	// not use it; "" gives a generic one.
	Unused string
	// Positive says that zero is not meaningful either: the value of a
	// ParamField, given as a number or through a parameter, must be
	// above zero (a Michaelis constant).
	Positive bool
}

// lawTable is the registry of rate laws, in the order menus show them.
var lawTable = []Law{
	massAction{}, michaelisMenten{}, reversibleMM{},
	inhibited{competitive}, inhibited{uncompetitive}, inhibited{noncompetitive}, inhibited{mixed},
	hill{}, hill{repress: true}, randomBi{}, orderedBi{}, transport{},
	expressionLaw{},
}

// Laws lists the rate law names in the order menus show them.
var Laws = func() []string {
	names := make([]string, len(lawTable))
	for i, l := range lawTable {
		names[i] = l.Name()
	}
	return names
}()

// LawNamed returns the law of the given name.
func LawNamed(name string) (Law, bool) {
	for _, l := range lawTable {
		if l.Name() == name {
			return l, true
		}
	}
	return nil, false
}

// rateKeys lists every key any law reads, in registry order, for the file
// reader.
func rateKeys() []string {
	keys := []string{"law"}
	seen := map[string]bool{"law": true}
	for _, l := range lawTable {
		for _, f := range l.Fields() {
			if !seen[f.Key] {
				seen[f.Key] = true
				keys = append(keys, f.Key)
			}
		}
	}
	return keys
}

// LawCheck is what a law's Check sees of a reaction.
type LawCheck struct {
	Rate     Rate
	Equation *Equation // nil when the equation does not read
	// Compartment returns the compartment of a declared species ("" for
	// the implicit one) and whether the species is declared.
	Compartment func(species string) (string, bool)
	report      func(field string, format string, args ...any)
}

// Errorf reports an error at field ("equation", "rate", "rate.km", …).
func (c *LawCheck) Errorf(field, format string, args ...any) { c.report(field, format, args...) }

// valueNode returns the expression of a field's value: a name or a
// number.
func valueNode(v Value) expr.Node {
	if v.Name != "" {
		return expr.Var(v.Name)
	}
	return expr.Num(v.Num)
}

// productNode returns k·Π term^coef.
func productNode(k expr.Node, ts []Term) expr.Node {
	n := k
	for _, t := range ts {
		var f expr.Node = expr.Var(t.Species)
		if t.Coef != 1 {
			f = expr.Pow(f, expr.Num(t.Coef))
		}
		n = expr.Mul(n, f)
	}
	return n
}

var superscripts = map[rune]rune{'0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹'}

// power writes name raised to coef, with a superscript when coef is a
// whole number other than 1.
func power(name string, coef float64) string {
	if coef == 1 {
		return name
	}
	s := strconv.FormatFloat(coef, 'g', -1, 64)
	var b strings.Builder
	b.WriteString(name)
	for _, r := range s {
		sup, ok := superscripts[r]
		if !ok {
			return name + "^" + s
		}
		b.WriteRune(sup)
	}
	return b.String()
}

// productText joins k and the terms with "·".
func productText(k string, terms []Term) string {
	parts := []string{k}
	for _, t := range terms {
		parts = append(parts, power(t.Species, t.Coef))
	}
	return strings.Join(parts, "·")
}

// orPlaceholder returns the value's text, or "?" when it is unset.
func orPlaceholder(v Value) string {
	if s := v.String(); s != "" {
		return s
	}
	return "?"
}

// Formula returns the rate of reaction i written out for reading, such
// as "kon·E·S − koff·ES" or "vmax·S/(km + S)". Fields not yet filled in
// show as "?". It returns "" when the law is unknown, or when the law needs
// the equation and it does not read.
func (n *Net) Formula(i int) string {
	cr := &n.Reactions[i]
	if cr.Law == nil {
		return ""
	}
	var eqp *Equation
	if cr.EqOK {
		eqp = &cr.Equation
	}
	return cr.Law.Formula(cr.Rate, eqp)
}

// FieldsInUse returns the keys of the law fields reaction i needs, as
// Check decided (nil when the law is unknown).
func (n *Net) FieldsInUse(i int) []string { return n.Reactions[i].uses }

// lawError is the message for an unknown or missing law.
func lawError(name string) string {
	if name == "" {
		return fmt.Sprintf("the rate law is missing; expected one of %s", strings.Join(Laws, ", "))
	}
	return fmt.Sprintf("unknown rate law %q; expected one of %s", name, strings.Join(Laws, ", "))
}
