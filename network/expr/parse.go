package expr

import (
	"fmt"
	"math"
	"strconv"
	"unicode"
)

// Error is a problem found in an expression, located by column.
type Error struct {
	Col int    // 1-based column, counted in runes; one past the end for "end of input"
	Msg string // a plain sentence saying what is wrong and what is expected
}

// Error returns the message prefixed by the column, as in
// `column 7: expected a number, name or "(" after "*", found end of input`.
// A problem without a column (Col 0, in a tree built by hand) is the
// message alone.
func (e *Error) Error() string {
	if e.Col == 0 {
		return e.Msg
	}
	return fmt.Sprintf("column %d: %s", e.Col, e.Msg)
}

// maxDepth bounds the nesting of parentheses, unary signs and powers so that
// pathological input gets a message instead of exhausting the stack.
const maxDepth = 500

// MaxTerms bounds the terms of one sum (or difference) and the factors of
// one product (or quotient); MaxItems bounds the numbers, names and
// operators of a whole expression. Beyond them Parse reports an error at
// the column where the limit is passed, so that the work of Diff and
// Compile, and the depth of the tree, stay bounded.
const (
	MaxTerms = 100_000
	MaxItems = 500_000
)

type tokKind uint8

const (
	tokEOF tokKind = iota
	tokNum
	tokName
	tokOp // one of + - * / ^ ( ) ,
)

type token struct {
	kind tokKind
	text string
	op   rune
	num  float64
	col  int
}

// describe names a token for messages.
func (t token) describe() string {
	switch t.kind {
	case tokEOF:
		return "end of input"
	case tokNum:
		return fmt.Sprintf("number %q", t.text)
	case tokName:
		return fmt.Sprintf("name %q", t.text)
	}
	return fmt.Sprintf("%q", t.text)
}

type parser struct {
	src   []rune
	pos   int // index into src of the next unread rune
	tok   token
	prev  token // the token before tok, for "after ..." in messages
	depth int
	items int // numbers, names and operators read
}

// Parse parses src into an expression tree. A syntax error, an unknown
// function or a wrong number of function arguments is reported as an *Error.
func Parse(src string) (Node, error) {
	p := &parser{src: []rune(src)}
	if err := p.next(); err != nil {
		return nil, err
	}
	if p.tok.kind == tokEOF {
		return nil, &Error{Col: p.tok.col, Msg: "expected an expression, found end of input"}
	}
	n, err := p.expr()
	if err != nil {
		return nil, err
	}
	if p.tok.kind != tokEOF {
		return nil, p.unexpectedAfterOperand()
	}
	return n, nil
}

// unexpectedAfterOperand reports a token where an operator, ")" or the end
// of input was expected.
func (p *parser) unexpectedAfterOperand() *Error {
	t := p.tok
	switch {
	case t.kind == tokOp && t.op == ')':
		return &Error{Col: t.col, Msg: `unmatched ")": no "(" is open here; expected an operator or the end of the expression`}
	case t.kind == tokOp && t.op == ',':
		return &Error{Col: t.col, Msg: `unexpected ",": commas only separate the arguments of a function call`}
	}
	return &Error{Col: t.col, Msg: fmt.Sprintf("expected an operator (+ - * / ^) after %q, found %s", p.prev.text, t.describe())}
}

// next reads the following token into p.tok.
func (p *parser) next() error {
	p.prev = p.tok
	for p.pos < len(p.src) && unicode.IsSpace(p.src[p.pos]) {
		p.pos++
	}
	start := p.pos
	col := start + 1
	if p.pos >= len(p.src) {
		p.tok = token{kind: tokEOF, col: col}
		return nil
	}
	c := p.src[p.pos]
	if c != '(' && c != ')' && c != ',' {
		if p.items++; p.items > MaxItems {
			return &Error{Col: col, Msg: fmt.Sprintf("expression is too long: more than %d numbers, names and operators; expected at most %d (split it with assignments)", MaxItems, MaxItems)}
		}
	}
	switch {
	case c >= '0' && c <= '9' || c == '.':
		return p.number()
	case c == '_' || c >= 'A' && c <= 'Z' || c >= 'a' && c <= 'z':
		for p.pos < len(p.src) && isNameRune(p.src[p.pos]) {
			p.pos++
		}
		p.tok = token{kind: tokName, text: string(p.src[start:p.pos]), col: col}
		return nil
	}
	switch c {
	case '+', '-', '*', '/', '^', '(', ')', ',':
		p.pos++
		p.tok = token{kind: tokOp, op: c, text: string(c), col: col}
		return nil
	}
	return &Error{Col: col, Msg: fmt.Sprintf("unexpected character %q; expected a number, a name, an operator (+ - * / ^) or a parenthesis", c)}
}

func isNameRune(c rune) bool {
	return c == '_' || c >= 'A' && c <= 'Z' || c >= 'a' && c <= 'z' || c >= '0' && c <= '9'
}

func isDigit(c rune) bool { return c >= '0' && c <= '9' }

// number reads digits [. digits] [e|E [+|-] digits].
func (p *parser) number() error {
	start := p.pos
	col := start + 1
	digits := 0
	for p.pos < len(p.src) && isDigit(p.src[p.pos]) {
		p.pos++
		digits++
	}
	if p.pos < len(p.src) && p.src[p.pos] == '.' {
		p.pos++
		for p.pos < len(p.src) && isDigit(p.src[p.pos]) {
			p.pos++
			digits++
		}
	}
	if digits == 0 {
		return &Error{Col: col, Msg: `a lone "." is not a number; expected digits before or after the decimal point`}
	}
	if p.pos < len(p.src) && (p.src[p.pos] == 'e' || p.src[p.pos] == 'E') {
		p.pos++
		if p.pos < len(p.src) && (p.src[p.pos] == '+' || p.src[p.pos] == '-') {
			p.pos++
		}
		if p.pos >= len(p.src) || !isDigit(p.src[p.pos]) {
			return &Error{Col: col, Msg: fmt.Sprintf("malformed number %q: expected digits in the exponent after %q", string(p.src[start:p.pos]), string(p.src[p.pos-1]))}
		}
		for p.pos < len(p.src) && isDigit(p.src[p.pos]) {
			p.pos++
		}
	}
	text := string(p.src[start:p.pos])
	v, err := strconv.ParseFloat(text, 64)
	if err != nil && !math.IsInf(v, 0) {
		// Cannot happen for the accepted syntax; report rather than panic.
		return &Error{Col: col, Msg: fmt.Sprintf("malformed number %q", text)}
	}
	if math.IsInf(v, 0) {
		return &Error{Col: col, Msg: fmt.Sprintf("number %s is too large; expected a magnitude below about 1.8e308", text)}
	}
	p.tok = token{kind: tokNum, text: text, num: v, col: col}
	return nil
}

func (p *parser) isOp(op rune) bool { return p.tok.kind == tokOp && p.tok.op == op }

// expr := term (("+" | "-") term)*
func (p *parser) expr() (Node, error) {
	l, err := p.term()
	if err != nil {
		return nil, err
	}
	for terms := 1; p.isOp('+') || p.isOp('-'); terms++ {
		op := p.tok
		if terms == MaxTerms {
			return nil, &Error{Col: op.col, Msg: fmt.Sprintf("sum of more than %d terms; expected at most %d (split it with assignments)", MaxTerms, MaxTerms)}
		}
		if err := p.next(); err != nil {
			return nil, err
		}
		r, err := p.term()
		if err != nil {
			return nil, err
		}
		l = &Binary{Op: Op(op.op), L: l, R: r, Col: op.col}
	}
	return l, nil
}

// term := unary (("*" | "/") unary)*
func (p *parser) term() (Node, error) {
	l, err := p.unary()
	if err != nil {
		return nil, err
	}
	for factors := 1; p.isOp('*') || p.isOp('/'); factors++ {
		op := p.tok
		if factors == MaxTerms {
			return nil, &Error{Col: op.col, Msg: fmt.Sprintf("product of more than %d factors; expected at most %d (split it with assignments)", MaxTerms, MaxTerms)}
		}
		if err := p.next(); err != nil {
			return nil, err
		}
		r, err := p.unary()
		if err != nil {
			return nil, err
		}
		l = &Binary{Op: Op(op.op), L: l, R: r, Col: op.col}
	}
	return l, nil
}

// unary := ("-" | "+") unary | power
//
// A minus sign directly before a number whose literal is the whole operand,
// as in -2 or x^-1.5, gives a negative literal; -(2) and -2^2 give negations.
func (p *parser) unary() (Node, error) {
	p.depth++
	defer func() { p.depth-- }()
	if p.depth > maxDepth {
		return nil, &Error{Col: p.tok.col, Msg: fmt.Sprintf("expression is nested too deeply; expected at most %d levels of parentheses, signs and powers", maxDepth)}
	}
	if p.isOp('-') || p.isOp('+') {
		op := p.tok
		if err := p.next(); err != nil {
			return nil, err
		}
		numCol := -1
		if p.tok.kind == tokNum {
			numCol = p.tok.col
		}
		x, err := p.unary()
		if err != nil {
			return nil, err
		}
		if op.op == '+' {
			return x, nil
		}
		if lit, ok := x.(*Number); ok && lit.Col == numCol {
			return &Number{Value: -lit.Value, Col: op.col}, nil
		}
		return &Unary{Op: OpSub, X: x, Col: op.col}, nil
	}
	return p.power()
}

// power := atom ("^" unary)?
func (p *parser) power() (Node, error) {
	base, err := p.atom()
	if err != nil {
		return nil, err
	}
	if !p.isOp('^') {
		return base, nil
	}
	op := p.tok
	if err := p.next(); err != nil {
		return nil, err
	}
	exp, err := p.unary()
	if err != nil {
		return nil, err
	}
	return &Binary{Op: OpPow, L: base, R: exp, Col: op.col}, nil
}

// expectOperand is the error for a missing operand at p.tok.
func (p *parser) expectOperand() *Error {
	after := ""
	if p.prev.text != "" {
		after = fmt.Sprintf(" after %q", p.prev.text)
	}
	return &Error{Col: p.tok.col, Msg: fmt.Sprintf(`expected a number, name or "("%s, found %s`, after, p.tok.describe())}
}

// atom := number | name | name "(" args ")" | "(" expr ")"
func (p *parser) atom() (Node, error) {
	t := p.tok
	switch {
	case t.kind == tokNum:
		if err := p.next(); err != nil {
			return nil, err
		}
		return &Number{Value: t.num, Col: t.col}, nil
	case t.kind == tokName:
		if err := p.next(); err != nil {
			return nil, err
		}
		if p.isOp('(') {
			return p.call(t)
		}
		if id, ok := lookupFunc(t.text); ok {
			return nil, &Error{Col: t.col, Msg: fmt.Sprintf(`%s is a function; expected "(" and %s after it`, t.text, argWords(funcs[id].arity))}
		}
		return &Variable{Name: t.text, Col: t.col}, nil
	case p.isOp('('):
		if err := p.next(); err != nil {
			return nil, err
		}
		n, err := p.expr()
		if err != nil {
			return nil, err
		}
		if err := p.closeParen(t); err != nil {
			return nil, err
		}
		return n, nil
	}
	return nil, p.expectOperand()
}

// closeParen consumes the ")" matching the "(" token open.
func (p *parser) closeParen(open token) error {
	switch {
	case p.isOp(')'):
		return p.next()
	case p.tok.kind == tokEOF:
		return &Error{Col: open.col, Msg: `unclosed "(": expected a matching ")" before the end of input`}
	case p.isOp(','):
		return &Error{Col: p.tok.col, Msg: `unexpected ",": commas only separate the arguments of a function call`}
	}
	return &Error{Col: p.tok.col, Msg: fmt.Sprintf(`expected an operator or ")" after %q, found %s`, p.prev.text, p.tok.describe())}
}

func argWords(n int) string {
	if n == 1 {
		return "1 argument"
	}
	return fmt.Sprintf("%d arguments", n)
}

// call parses the argument list of the function named by name; p.tok is "(".
func (p *parser) call(name token) (Node, error) {
	id, ok := lookupFunc(name.text)
	if !ok {
		return nil, &Error{Col: name.col, Msg: fmt.Sprintf("unknown function %s; known: %s", name.text, knownFuncs())}
	}
	open := p.tok
	if err := p.next(); err != nil {
		return nil, err
	}
	var args []Node
	if !p.isOp(')') {
		for {
			a, err := p.expr()
			if err != nil {
				return nil, err
			}
			args = append(args, a)
			if !p.isOp(',') {
				break
			}
			if err := p.next(); err != nil {
				return nil, err
			}
		}
	}
	if err := p.closeParen(open); err != nil {
		return nil, err
	}
	if want := funcs[id].arity; len(args) != want {
		return nil, &Error{Col: name.col, Msg: fmt.Sprintf("%s takes %s, found %d", name.text, argWords(want), len(args))}
	}
	return &Call{Func: funcs[id].name, Args: args, Col: name.col}, nil
}
