package units

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode"
)

// Error is a mistake in a unit expression: its 1-based column (in
// characters) and a sentence saying what is wrong and what is expected.
type Error struct {
	Col int
	Msg string
}

func (e *Error) Error() string { return fmt.Sprintf("column %d: %s", e.Col, e.Msg) }

// symbols maps each unit symbol to its unit in SI base units.
var symbols = map[string]Unit{}

func init() {
	def := func(u Unit, names ...string) {
		for _, n := range names {
			symbols[n] = u
		}
	}
	sec := func(f float64) Unit { return Unit{Factor: f, Dim: Dim{Time: 1}} }
	mol := func(f float64) Unit { return Unit{Factor: f, Dim: Dim{Amount: 1}} }
	kg := func(f float64) Unit { return Unit{Factor: f, Dim: Dim{Mass: 1}} }
	vol := func(f float64) Unit { return Unit{Factor: f, Dim: Dim{Length: 3}} }
	// 1 M = 1 mol/L = 1000 mol/m³.
	molar := func(f float64) Unit { return Unit{Factor: 1000 * f, Dim: Dim{Amount: 1, Length: -3}} }
	def(sec(1), "s")
	def(sec(1e-3), "ms")
	def(sec(60), "min")
	def(sec(3600), "h")
	def(sec(86400), "day")
	def(mol(1), "mol")
	def(mol(1e-3), "mmol")
	def(mol(1e-6), "umol", "µmol", "μmol")
	def(mol(1e-9), "nmol")
	def(mol(1e-12), "pmol")
	def(mol(1e-15), "fmol")
	def(molar(1), "M")
	def(molar(1e-3), "mM")
	def(molar(1e-6), "uM", "µM", "μM")
	def(molar(1e-9), "nM")
	def(molar(1e-12), "pM")
	def(molar(1e-15), "fM")
	def(kg(1), "kg")
	def(kg(1e-3), "g")
	def(kg(1e-6), "mg")
	def(kg(1e-9), "ug", "µg", "μg")
	def(kg(1e-12), "ng")
	def(vol(1e-3), "L")
	def(vol(1e-6), "mL")
	def(vol(1e-9), "uL", "µL", "μL")
	def(vol(1e-12), "nL")
	def(vol(1e-18), "fL")
	def(Unit{Factor: 1, Dim: Dim{Length: 1}}, "m")
}

// Symbols lists the unit symbols Parse knows, sorted.
func Symbols() []string {
	out := make([]string, 0, len(symbols))
	for s := range symbols {
		out = append(out, s)
	}
	sort.Strings(out)
	return out
}

const symbolList = "s, min, h, day; mol, mmol, umol, nmol, pmol; M, mM, uM, nM, pM; g, mg, ug, ng; L, mL, uL, nL, fL"

// Parse reads a unit expression: symbols and positive numbers combined
// with "*" (or "·"), "/" and "^" (a number, possibly negative, as the
// power), with parentheses, such as "1/(uM*s)", "mg/L", "L/h" or "m^3".
// "/" and "*" group from the left, so "mg/L/h" is mg per litre per hour.
// A mistake is an *Error with its column.
func Parse(src string) (Unit, error) {
	p := &uparser{src: []rune(src)}
	p.skip()
	if p.i == len(p.src) {
		return Unit{}, &Error{Col: 1, Msg: "the unit is empty; expected a unit such as uM, 1/s or mg/L"}
	}
	u, err := p.product()
	if err != nil {
		return Unit{}, err
	}
	if p.i < len(p.src) {
		return Unit{}, p.unexpected()
	}
	for _, d := range u.Dim {
		if math.Abs(d) > 100 {
			return Unit{}, &Error{Col: 1, Msg: "the unit's powers are too large; expected powers between -100 and 100"}
		}
	}
	if math.IsInf(u.Factor, 0) || u.Factor == 0 || math.IsNaN(u.Factor) {
		return Unit{}, &Error{Col: 1, Msg: "the unit's size is out of range; use a smaller power or factor"}
	}
	return u, nil
}

// MustParse is Parse for units known to be right; it panics on a mistake.
func MustParse(src string) Unit {
	u, err := Parse(src)
	if err != nil {
		panic("units.MustParse(" + strconv.Quote(src) + "): " + err.Error())
	}
	return u
}

type uparser struct {
	src   []rune
	i     int
	depth int
}

func (p *uparser) skip() {
	for p.i < len(p.src) && unicode.IsSpace(p.src[p.i]) {
		p.i++
	}
}

func (p *uparser) errf(col int, format string, args ...any) *Error {
	return &Error{Col: col, Msg: fmt.Sprintf(format, args...)}
}

// unexpected describes the character at p.i where an operator or the end
// was expected.
func (p *uparser) unexpected() *Error {
	c := p.src[p.i]
	if c == ')' {
		return p.errf(p.i+1, "this \")\" has no matching \"(\"")
	}
	if !isSymbolRune(c) && !unicode.IsDigit(c) && c != '(' && c != '.' {
		return p.errf(p.i+1, "%q cannot appear in a unit; expected symbols such as uM, numbers, *, /, ^ and parentheses", string(c))
	}
	return p.errf(p.i+1, "expected \"*\", \"/\" or \"^\" before %q; write products as uM*s", string(c))
}

func (p *uparser) product() (Unit, error) {
	u, err := p.power()
	if err != nil {
		return Unit{}, err
	}
	for p.i < len(p.src) {
		c := p.src[p.i]
		if c != '*' && c != '·' && c != '/' {
			break
		}
		opCol := p.i + 1
		p.i++
		p.skip()
		if p.i == len(p.src) || strings.ContainsRune(")*/·^", p.src[p.i]) {
			return Unit{}, p.errf(opCol, "%q needs a unit after it", string(c))
		}
		v, err := p.power()
		if err != nil {
			return Unit{}, err
		}
		if c == '/' {
			u = u.Div(v)
		} else {
			u = u.Mul(v)
		}
	}
	return u, nil
}

func (p *uparser) power() (Unit, error) {
	u, err := p.atom()
	if err != nil {
		return Unit{}, err
	}
	if p.i < len(p.src) && p.src[p.i] == '^' {
		opCol := p.i + 1
		p.i++
		p.skip()
		neg := false
		if p.i < len(p.src) && (p.src[p.i] == '-' || p.src[p.i] == '+') {
			neg = p.src[p.i] == '-'
			p.i++
		}
		start := p.i
		x, ok := p.number()
		if !ok {
			return Unit{}, p.errf(opCol, "\"^\" needs a number after it, such as m^3 or s^-1")
		}
		if neg {
			x = -x
		}
		if math.Abs(x) > 100 {
			return Unit{}, p.errf(start+1, "the power %v is too large; expected a power between -100 and 100", x)
		}
		p.skip()
		u = u.Pow(x)
	}
	return u, nil
}

// number reads an unsigned decimal number at p.i.
func (p *uparser) number() (float64, bool) {
	start := p.i
	digits := func() int {
		n := 0
		for p.i < len(p.src) && p.src[p.i] >= '0' && p.src[p.i] <= '9' {
			p.i++
			n++
		}
		return n
	}
	n := digits()
	if p.i < len(p.src) && p.src[p.i] == '.' {
		p.i++
		n += digits()
	}
	if n == 0 {
		p.i = start
		return 0, false
	}
	if p.i < len(p.src) && (p.src[p.i] == 'e' || p.src[p.i] == 'E') {
		save := p.i
		p.i++
		if p.i < len(p.src) && (p.src[p.i] == '-' || p.src[p.i] == '+') {
			p.i++
		}
		if digits() == 0 {
			p.i = save
		}
	}
	x, err := strconv.ParseFloat(string(p.src[start:p.i]), 64)
	if err != nil && !math.IsInf(x, 0) {
		p.i = start
		return 0, false
	}
	return x, true
}

func isSymbolRune(c rune) bool { return unicode.IsLetter(c) }

func (p *uparser) atom() (Unit, error) {
	p.skip()
	if p.i == len(p.src) {
		return Unit{}, p.errf(p.i+1, "the unit ends too early; expected a unit")
	}
	c := p.src[p.i]
	col := p.i + 1
	switch {
	case c == '(':
		p.depth++
		if p.depth > 50 {
			return Unit{}, p.errf(col, "too many nested parentheses")
		}
		p.i++
		p.skip()
		if p.i < len(p.src) && p.src[p.i] == ')' {
			return Unit{}, p.errf(col, "empty parentheses; expected a unit inside")
		}
		u, err := p.product()
		if err != nil {
			return Unit{}, err
		}
		if p.i == len(p.src) {
			return Unit{}, p.errf(col, "this \"(\" is not closed; add \")\"")
		}
		if p.src[p.i] != ')' {
			return Unit{}, p.unexpected()
		}
		p.i++
		p.depth--
		p.skip()
		return u, nil
	case c >= '0' && c <= '9' || c == '.':
		x, ok := p.number()
		if !ok {
			return Unit{}, p.errf(col, "%q is not a number or a unit", string(c))
		}
		if x == 0 || math.IsInf(x, 0) {
			return Unit{}, p.errf(col, "the factor %s is not allowed; expected a positive number such as 1000", string(p.src[col-1:p.i]))
		}
		p.skip()
		return Unit{Factor: x}, nil
	case isSymbolRune(c):
		for p.i < len(p.src) && isSymbolRune(p.src[p.i]) {
			p.i++
		}
		name := string(p.src[col-1 : p.i])
		u, ok := symbols[name]
		if !ok {
			return Unit{}, p.errf(col, "unknown unit %q;%s expected one of %s, or products, quotients and powers of them such as 1/(uM*s)", name, suggest(name), symbolList)
		}
		p.skip()
		return u, nil
	case c == '*' || c == '/' || c == '·' || c == '^':
		return Unit{}, p.errf(col, "%q needs a unit before it", string(c))
	case c == ')':
		return Unit{}, p.errf(col, "this \")\" has no matching \"(\"")
	}
	return Unit{}, p.errf(col, "%q cannot appear in a unit; expected symbols such as uM, numbers, *, /, ^ and parentheses", string(c))
}

// suggest returns ` did you mean "X"?` for a symbol that differs from
// name only in letter case, or "".
func suggest(name string) string {
	for _, s := range Symbols() {
		if strings.EqualFold(s, name) {
			return fmt.Sprintf(" did you mean %q?", s)
		}
	}
	return ""
}
