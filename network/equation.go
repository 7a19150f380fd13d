package network

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Equation is a parsed reaction equation.
type Equation struct {
	Reactants, Products []Term
	Reversible          bool
}

// Term is one species of an equation side with its stoichiometric
// coefficient. Col is the 1-based column (in characters) where the term
// starts. A species written twice on one side appears once, with the
// coefficients summed.
type Term struct {
	Coef    float64
	Species string
	Col     int
}

// ParseEquation parses a reaction equation such as "A + 2 B -> C",
// "E + S <=> ES", "-> mRNA" or "P ->". The arrows are "->" and "→"
// (irreversible) and "<=>" and "⇌" (reversible). An empty side may be left
// empty or written "∅". A term is an optional positive number followed by a
// species name ([A-Za-z_][A-Za-z0-9_]*), with or without a space between:
// "2 A" and "2A" mean the same. An error is a Problem whose Pos has Field
// "equation" and Col, the 1-based column (in characters) it points at.
func ParseEquation(s string) (Equation, error) {
	p := eqParser{src: []rune(s)}
	return p.parse()
}

type eqParser struct {
	src []rune
	pos int // index into src
}

func (p *eqParser) errf(pos int, format string, args ...any) error {
	return Problem{Pos: Pos{Field: "equation", Col: pos + 1}, Message: fmt.Sprintf(format, args...)}
}

func (p *eqParser) skipSpace() {
	for p.pos < len(p.src) && unicode.IsSpace(p.src[p.pos]) {
		p.pos++
	}
}

func (p *eqParser) hasPrefix(s string) bool {
	i := p.pos
	for _, r := range s {
		if i >= len(p.src) || p.src[i] != r {
			return false
		}
		i++
	}
	return true
}

// arrow reports the arrow at the current position: its length in runes
// and whether it is reversible; n is 0 when there is none.
func (p *eqParser) arrow() (n int, reversible bool) {
	switch {
	case p.hasPrefix("<=>"):
		return 3, true
	case p.hasPrefix("->"):
		return 2, false
	case p.hasPrefix("→"):
		return 1, false
	case p.hasPrefix("⇌"):
		return 1, true
	}
	return 0, false
}

func isNameStart(r rune) bool { return r == '_' || r < utf8.RuneSelf && unicode.IsLetter(r) }
func isNameChar(r rune) bool  { return isNameStart(r) || r >= '0' && r <= '9' }

func (p *eqParser) parse() (Equation, error) {
	var eq Equation
	p.skipSpace()
	if p.pos == len(p.src) {
		return eq, p.errf(0, "the equation is empty; expected something like \"A + B -> C\"")
	}
	lhs, err := p.side()
	if err != nil {
		return eq, err
	}
	p.skipSpace()
	arrowPos := p.pos
	n, rev := p.arrow()
	if n == 0 {
		if p.pos == len(p.src) {
			return eq, p.errf(p.pos, "missing arrow; expected \"->\" or \"<=>\" between reactants and products")
		}
		if p.hasPrefix("<->") || p.hasPrefix("<-") || p.hasPrefix("=>") || p.hasPrefix("=") || p.hasPrefix("<") || p.hasPrefix(">") {
			return eq, p.errf(p.pos, "unknown arrow; use \"->\" (or \"→\") for one direction and \"<=>\" (or \"⇌\") for both")
		}
		return eq, p.errf(p.pos, "unexpected %q; expected \"+\", \"->\" or \"<=>\"", string(p.src[p.pos]))
	}
	p.pos += n
	eq.Reversible = rev
	rhs, err := p.side()
	if err != nil {
		return eq, err
	}
	p.skipSpace()
	if p.pos < len(p.src) {
		if n, _ := p.arrow(); n > 0 {
			return eq, p.errf(p.pos, "a second arrow; an equation has exactly one")
		}
		return eq, p.errf(p.pos, "unexpected %q; expected \"+\" or the end of the equation", string(p.src[p.pos]))
	}
	if len(lhs) == 0 && len(rhs) == 0 {
		return eq, p.errf(arrowPos, "both sides are empty; a reaction needs at least one reactant or product")
	}
	eq.Reactants, eq.Products = lhs, rhs
	return eq, nil
}

// side parses a possibly empty sum of terms, stopping before an arrow or at
// the end.
func (p *eqParser) side() ([]Term, error) {
	var terms []Term
	p.skipSpace()
	if p.pos < len(p.src) && p.src[p.pos] == '∅' {
		p.pos++
		p.skipSpace()
		if !p.atSideEnd() {
			return nil, p.errf(p.pos, "unexpected %q after \"∅\"; ∅ stands for an empty side, so write it alone or list species instead", string(p.src[p.pos]))
		}
		return nil, nil
	}
	if p.atSideEnd() {
		return nil, nil
	}
	for {
		t, err := p.term()
		if err != nil {
			return nil, err
		}
		merged := false
		for i := range terms {
			if terms[i].Species == t.Species {
				terms[i].Coef += t.Coef
				merged = true
			}
		}
		if !merged {
			terms = append(terms, t)
		}
		p.skipSpace()
		if p.pos < len(p.src) && p.src[p.pos] == '+' {
			p.pos++
			p.skipSpace()
			if p.atSideEnd() {
				return nil, p.errf(p.pos, "expected a species after \"+\"")
			}
			continue
		}
		return terms, nil
	}
}

func (p *eqParser) atSideEnd() bool {
	if p.pos == len(p.src) {
		return true
	}
	n, _ := p.arrow()
	return n > 0
}

// term parses [number] name.
func (p *eqParser) term() (Term, error) {
	p.skipSpace()
	start := p.pos
	t := Term{Coef: 1, Col: start + 1}
	if p.pos < len(p.src) && (p.src[p.pos] >= '0' && p.src[p.pos] <= '9' || p.src[p.pos] == '.') {
		for p.pos < len(p.src) && (p.src[p.pos] >= '0' && p.src[p.pos] <= '9' || p.src[p.pos] == '.') {
			p.pos++
		}
		p.pos = p.exponent(p.pos)
		num := string(p.src[start:p.pos])
		v, err := strconv.ParseFloat(num, 64)
		if errors.Is(err, strconv.ErrRange) {
			return t, p.errf(start, "coefficient %.20s… is too large; expected a coefficient such as 2 or 0.5", num)
		}
		if err != nil {
			return t, p.errf(start, "%q is not a number; expected a coefficient such as 2 or 0.5", num)
		}
		if v <= 0 {
			return t, p.errf(start, "coefficient %s must be positive", num)
		}
		t.Coef = v
		p.skipSpace()
	}
	if p.pos == len(p.src) {
		return t, p.errf(p.pos, "expected a species name")
	}
	if !isNameStart(p.src[p.pos]) {
		if n, _ := p.arrow(); n > 0 {
			return t, p.errf(p.pos, "expected a species name before the arrow")
		}
		return t, p.errf(p.pos, "unexpected %q; expected a species name (letters, digits and _, starting with a letter or _)", string(p.src[p.pos]))
	}
	ns := p.pos
	for p.pos < len(p.src) && isNameChar(p.src[p.pos]) {
		p.pos++
	}
	t.Species = string(p.src[ns:p.pos])
	return t, nil
}

// exponent returns the end of an exponent such as "e3" or "E-2" starting at
// i, when it is one: digits after e, an optional sign, and then a space and
// a species name, as in "1e3 A". Otherwise it returns i, so that "2e3"
// followed by an arrow stays two of the species e3.
func (p *eqParser) exponent(i int) int {
	src := p.src
	if i >= len(src) || src[i] != 'e' && src[i] != 'E' {
		return i
	}
	j := i + 1
	if j < len(src) && (src[j] == '+' || src[j] == '-') {
		j++
	}
	d := j
	for j < len(src) && src[j] >= '0' && src[j] <= '9' {
		j++
	}
	if j == d || j >= len(src) || src[j] != ' ' && src[j] != '\t' {
		return i
	}
	k := j
	for k < len(src) && (src[k] == ' ' || src[k] == '\t') {
		k++
	}
	if k < len(src) && isNameStart(src[k]) {
		return j
	}
	return i
}

// String writes the equation in canonical form, e.g. "2 A + B <=> C".
func (eq Equation) String() string {
	var b strings.Builder
	side := func(ts []Term) {
		for i, t := range ts {
			if i > 0 {
				b.WriteString(" + ")
			}
			if t.Coef != 1 {
				b.WriteString(strconv.FormatFloat(t.Coef, 'f', -1, 64))
				b.WriteByte(' ')
			}
			b.WriteString(t.Species)
		}
	}
	side(eq.Reactants)
	if len(eq.Reactants) > 0 {
		b.WriteByte(' ')
	}
	if eq.Reversible {
		b.WriteString("<=>")
	} else {
		b.WriteString("->")
	}
	if len(eq.Products) > 0 {
		b.WriteByte(' ')
	}
	side(eq.Products)
	return b.String()
}
