package sbml

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"kinetarium/network"
	"kinetarium/network/expr"
)

// Names that MathML's symbols take in the trees the reader builds before
// the SBML identifiers are replaced by the model's names. They cannot be
// SBML identifiers, which are letters, digits and _.
const (
	timeVar = "%time"
)

// avogadro is the value of the avogadro csymbol, as SBML Level 3 defines
// it (the 2006 CODATA value).
const avogadro = 6.02214179e23

// mval is the value of a MathML expression: a number, or a truth value
// (relations, logic, true and false) given as a selector that yields x
// when it holds and y otherwise. Truth values become numbers through
// nested ifle calls, so that piecewise functions, relations and logic
// need nothing beyond the expression language.
type mval struct {
	num expr.Node
	sel func(x, y expr.Node) expr.Node
}

// mathReader turns MathML into expression trees whose variables are SBML
// identifiers, with function definitions inlined.
type mathReader struct {
	file  string
	funcs map[string]*node // lambda of each function definition
	depth int
	warn  func(n *node, format string, args ...any) // nil: no warnings
}

// mathProblem is an error at a MathML element.
func (r *mathReader) fail(n *node, format string, args ...any) error {
	return problem(r.file, n.Line, n.Col, "", format, args...)
}

// root returns the expression inside a <math> element.
func (r *mathReader) root(m *node) (*node, error) {
	if m == nil {
		return nil, nil
	}
	if len(m.Kids) != 1 {
		return nil, r.fail(m, "<math> holds %d elements; expected one expression", len(m.Kids))
	}
	return unwrap(m.Kids[0]), nil
}

// unwrap skips <semantics> wrappers (their first child is the content).
func unwrap(n *node) *node {
	for n.Name == "semantics" && len(n.Kids) > 0 {
		n = n.Kids[0]
	}
	return n
}

// maxNodes bounds the size of a formula once written out: logic and
// function calls share subtrees, which writing out repeats.
const maxNodes = 200000

// number reads a <math> element's expression as a number.
func (r *mathReader) number(m *node) (expr.Node, error) {
	e, err := r.root(m)
	if err != nil || e == nil {
		return nil, err
	}
	t, err := r.num(e, nil)
	if err != nil {
		return nil, err
	}
	return t, r.checkSize(e, t)
}

// checkSize refuses a formula with more than maxNodes nodes.
func (r *mathReader) checkSize(at *node, t expr.Node) error {
	count := 0
	expr.Walk(t, func(expr.Node) bool {
		count++
		return count <= maxNodes
	})
	if count > maxNodes {
		return r.fail(at, "the formula has more than %d terms once its functions and logic are written out", maxNodes)
	}
	return nil
}

func (r *mathReader) num(n *node, env map[string]mval) (expr.Node, error) {
	v, err := r.value(n, env)
	if err != nil {
		return nil, err
	}
	if v.num != nil {
		return v.num, nil
	}
	return v.sel(expr.Num(1), expr.Num(0)), nil
}

func (r *mathReader) truth(n *node, env map[string]mval) (func(x, y expr.Node) expr.Node, error) {
	v, err := r.value(n, env)
	if err != nil {
		return nil, err
	}
	if v.sel != nil {
		return v.sel, nil
	}
	// A number as a truth value: true unless it is 0.
	a := v.num
	return func(x, y expr.Node) expr.Node { return ifle(a, expr.Num(0), ifle(expr.Num(0), a, y, x), x) }, nil
}

func ifle(a, b, x, y expr.Node) expr.Node {
	return &expr.Call{Func: "ifle", Args: []expr.Node{a, b, x, y}}
}

func call(name string, args ...expr.Node) expr.Node {
	return &expr.Call{Func: name, Args: args}
}

// relation returns the selector of a op b.
func relation(op string, a, b expr.Node) func(x, y expr.Node) expr.Node {
	switch op {
	case "leq":
		return func(x, y expr.Node) expr.Node { return ifle(a, b, x, y) }
	case "geq":
		return func(x, y expr.Node) expr.Node { return ifle(b, a, x, y) }
	case "lt":
		return func(x, y expr.Node) expr.Node { return ifle(b, a, y, x) }
	case "gt":
		return func(x, y expr.Node) expr.Node { return ifle(a, b, y, x) }
	case "eq":
		return func(x, y expr.Node) expr.Node { return ifle(a, b, ifle(b, a, x, y), y) }
	default: // neq
		return func(x, y expr.Node) expr.Node { return ifle(a, b, ifle(b, a, y, x), x) }
	}
}

var unary = map[string]func(x expr.Node) expr.Node{
	"abs":       func(x expr.Node) expr.Node { return call("abs", x) },
	"exp":       func(x expr.Node) expr.Node { return call("exp", x) },
	"ln":        func(x expr.Node) expr.Node { return call("log", x) },
	"floor":     func(x expr.Node) expr.Node { return call("floor", x) },
	"ceiling":   func(x expr.Node) expr.Node { return call("ceil", x) },
	"factorial": func(x expr.Node) expr.Node { return call("factorial", x) },
	"sin":       func(x expr.Node) expr.Node { return call("sin", x) },
	"cos":       func(x expr.Node) expr.Node { return call("cos", x) },
	"tan":       func(x expr.Node) expr.Node { return call("tan", x) },
	"sec":       func(x expr.Node) expr.Node { return expr.Div(expr.Num(1), call("cos", x)) },
	"csc":       func(x expr.Node) expr.Node { return expr.Div(expr.Num(1), call("sin", x)) },
	"cot":       func(x expr.Node) expr.Node { return expr.Div(expr.Num(1), call("tan", x)) },
	"sinh":      func(x expr.Node) expr.Node { return call("sinh", x) },
	"cosh":      func(x expr.Node) expr.Node { return call("cosh", x) },
	"tanh":      func(x expr.Node) expr.Node { return call("tanh", x) },
	"sech":      func(x expr.Node) expr.Node { return expr.Div(expr.Num(1), call("cosh", x)) },
	"csch":      func(x expr.Node) expr.Node { return expr.Div(expr.Num(1), call("sinh", x)) },
	"coth":      func(x expr.Node) expr.Node { return expr.Div(expr.Num(1), call("tanh", x)) },
	"arcsin":    func(x expr.Node) expr.Node { return call("asin", x) },
	"arccos":    func(x expr.Node) expr.Node { return call("acos", x) },
	"arctan":    func(x expr.Node) expr.Node { return call("atan", x) },
	"arcsec":    func(x expr.Node) expr.Node { return call("acos", expr.Div(expr.Num(1), x)) },
	"arccsc":    func(x expr.Node) expr.Node { return call("asin", expr.Div(expr.Num(1), x)) },
	"arccot":    func(x expr.Node) expr.Node { return call("atan", expr.Div(expr.Num(1), x)) },
	"arcsinh":   func(x expr.Node) expr.Node { return call("asinh", x) },
	"arccosh":   func(x expr.Node) expr.Node { return call("acosh", x) },
	"arctanh":   func(x expr.Node) expr.Node { return call("atanh", x) },
	"arcsech":   func(x expr.Node) expr.Node { return call("acosh", expr.Div(expr.Num(1), x)) },
	"arccsch":   func(x expr.Node) expr.Node { return call("asinh", expr.Div(expr.Num(1), x)) },
	"arccoth":   func(x expr.Node) expr.Node { return call("atanh", expr.Div(expr.Num(1), x)) },
}

// trunc is x rounded toward zero.
func trunc(x expr.Node) expr.Node {
	return ifle(expr.Num(0), x, call("floor", x), call("ceil", x))
}

// value converts one MathML element.
func (r *mathReader) value(n *node, env map[string]mval) (mval, error) {
	r.depth++
	defer func() { r.depth-- }()
	if r.depth > maxDepth {
		return mval{}, r.fail(n, "the formula is nested more than %d deep (or a function calls itself)", maxDepth)
	}
	n = unwrap(n)
	switch n.Name {
	case "cn":
		v, err := r.cn(n)
		return mval{num: expr.Num(v)}, err
	case "ci":
		name := strings.TrimSpace(n.Text)
		if v, ok := env[name]; ok {
			return v, nil
		}
		if !isSId(name) {
			return mval{}, r.fail(n, "<ci>%s</ci> is not an identifier; expected letters, digits and _", name)
		}
		if _, isFunc := r.funcs[name]; isFunc {
			return mval{}, r.fail(n, "the function %q is used without arguments; expected <apply><ci>%s</ci> …</apply>", name, name)
		}
		return mval{num: expr.Var(name)}, nil
	case "csymbol":
		url, _ := n.attr("definitionURL")
		switch symbolName(url) {
		case "time":
			return mval{num: expr.Var(timeVar)}, nil
		case "avogadro":
			return mval{num: expr.Num(avogadro)}, nil
		}
		return mval{}, r.fail(n, "the symbol %s is not supported (time and avogadro are)", url)
	case "true":
		return mval{sel: func(x, y expr.Node) expr.Node { return x }}, nil
	case "false":
		return mval{sel: func(x, y expr.Node) expr.Node { return y }}, nil
	case "pi":
		return mval{num: expr.Num(math.Pi)}, nil
	case "exponentiale":
		return mval{num: expr.Num(math.E)}, nil
	case "notanumber", "infinity":
		return mval{}, r.fail(n, "<%s/> is not supported; a model's values are finite numbers", n.Name)
	case "piecewise":
		return r.piecewise(n, env)
	case "apply":
		return r.apply(n, env)
	case "lambda":
		return mval{}, r.fail(n, "a <lambda> belongs in a function definition only")
	}
	return mval{}, r.fail(n, "the MathML element <%s> is not supported", n.Name)
}

// symbolName returns the last part of a csymbol's definition URL
// ("time" for http://www.sbml.org/sbml/symbols/time).
func symbolName(url string) string {
	url = strings.TrimSpace(url)
	return url[strings.LastIndexByte(url, '/')+1:]
}

// cn reads a number: real (default), integer, e-notation and rational.
func (r *mathReader) cn(n *node) (float64, error) {
	typ, _ := n.attr("type")
	parts := strings.Fields(n.Text)
	parse := func(s string) (float64, error) {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
			return 0, r.fail(n, "<cn>%s</cn> is not a finite number", n.Text)
		}
		return v, nil
	}
	switch typ {
	case "", "real", "integer", "double":
		if len(parts) != 1 {
			return 0, r.fail(n, "<cn>%s</cn> is not one number", n.Text)
		}
		return parse(parts[0])
	case "e-notation", "rational":
		if len(parts) != 2 || n.kid("sep") == nil {
			return 0, r.fail(n, "<cn type=%q> needs two numbers separated by <sep/>", typ)
		}
		a, err := parse(parts[0])
		if err != nil {
			return 0, err
		}
		b, err := parse(parts[1])
		if err != nil {
			return 0, err
		}
		if typ == "rational" {
			if b == 0 {
				return 0, r.fail(n, "a rational number with denominator 0")
			}
			return a / b, nil
		}
		v := a * math.Pow(10, b)
		if math.IsInf(v, 0) || math.IsNaN(v) {
			return 0, r.fail(n, "<cn> %s e %s is out of range", parts[0], parts[1])
		}
		return v, nil
	}
	return 0, r.fail(n, "<cn type=%q> is not supported; expected real, integer, e-notation or rational", typ)
}

func (r *mathReader) piecewise(n *node, env map[string]mval) (mval, error) {
	var rest expr.Node
	if o := n.kid("otherwise"); o != nil {
		if len(o.Kids) != 1 {
			return mval{}, r.fail(o, "<otherwise> needs one expression")
		}
		v, err := r.num(o.Kids[0], env)
		if err != nil {
			return mval{}, err
		}
		rest = v
	}
	var pieces []*node
	for _, k := range n.Kids {
		switch k.Name {
		case "piece":
			if len(k.Kids) != 2 {
				return mval{}, r.fail(k, "<piece> needs a value and a condition")
			}
			pieces = append(pieces, k)
		case "otherwise":
		default:
			return mval{}, r.fail(k, "<%s> inside <piecewise>; expected <piece> or <otherwise>", k.Name)
		}
	}
	if rest == nil {
		if len(pieces) == 0 {
			return mval{}, r.fail(n, "an empty <piecewise>")
		}
		// Without <otherwise> the value where no piece holds is undefined;
		// the last piece's value stands for it, and the import says so.
		if r.warn != nil {
			r.warn(n, "a <piecewise> without <otherwise> is undefined where no piece holds; the last piece's value is used there")
		}
		v, err := r.num(pieces[len(pieces)-1].Kids[0], env)
		if err != nil {
			return mval{}, err
		}
		rest = v
	}
	for i := len(pieces) - 1; i >= 0; i-- {
		v, err := r.num(pieces[i].Kids[0], env)
		if err != nil {
			return mval{}, err
		}
		c, err := r.truth(pieces[i].Kids[1], env)
		if err != nil {
			return mval{}, err
		}
		rest = c(v, rest)
	}
	return mval{num: rest}, nil
}

func (r *mathReader) apply(n *node, env map[string]mval) (mval, error) {
	if len(n.Kids) == 0 {
		return mval{}, r.fail(n, "an empty <apply>")
	}
	head := unwrap(n.Kids[0])
	args := n.Kids[1:]
	// Qualifiers (<degree>, <logbase>) are not operands.
	var qual *node
	var ops []*node
	for _, a := range args {
		if a.Name == "degree" || a.Name == "logbase" {
			qual = a
			continue
		}
		ops = append(ops, a)
	}
	nums := func() ([]expr.Node, error) {
		out := make([]expr.Node, len(ops))
		for i, a := range ops {
			v, err := r.num(a, env)
			if err != nil {
				return nil, err
			}
			out[i] = v
		}
		return out, nil
	}
	arity := func(k int) error {
		if len(ops) != k {
			return r.fail(head, "<%s/> takes %d argument(s), found %d", head.Name, k, len(ops))
		}
		return nil
	}
	switch head.Name {
	case "ci":
		return r.callFunc(head, ops, env)
	case "csymbol":
		url, _ := head.attr("definitionURL")
		return mval{}, r.fail(head, "the function %s is not supported (delay and rateOf are not)", symbolName(url))
	case "plus", "times", "max", "min":
		xs, err := nums()
		if err != nil {
			return mval{}, err
		}
		if len(xs) == 0 {
			switch head.Name {
			case "plus":
				return mval{num: expr.Num(0)}, nil
			case "times":
				return mval{num: expr.Num(1)}, nil
			}
			return mval{}, r.fail(head, "<%s/> needs arguments", head.Name)
		}
		acc := xs[0]
		for _, x := range xs[1:] {
			switch head.Name {
			case "plus":
				acc = expr.Add(acc, x)
			case "times":
				acc = expr.Mul(acc, x)
			default:
				acc = call(head.Name, acc, x)
			}
		}
		return mval{num: acc}, nil
	case "minus":
		xs, err := nums()
		if err != nil {
			return mval{}, err
		}
		switch len(xs) {
		case 1:
			return mval{num: expr.Neg(xs[0])}, nil
		case 2:
			return mval{num: expr.Sub(xs[0], xs[1])}, nil
		}
		return mval{}, r.fail(head, "<minus/> takes 1 or 2 arguments, found %d", len(xs))
	case "divide", "power", "rem", "quotient":
		if err := arity(2); err != nil {
			return mval{}, err
		}
		xs, err := nums()
		if err != nil {
			return mval{}, err
		}
		switch head.Name {
		case "divide":
			return mval{num: expr.Div(xs[0], xs[1])}, nil
		case "power":
			return mval{num: expr.Pow(xs[0], xs[1])}, nil
		case "quotient":
			return mval{num: trunc(expr.Div(xs[0], xs[1]))}, nil
		}
		return mval{num: expr.Sub(xs[0], expr.Mul(xs[1], trunc(expr.Div(xs[0], xs[1]))))}, nil
	case "root", "log":
		if err := arity(1); err != nil {
			return mval{}, err
		}
		xs, err := nums()
		if err != nil {
			return mval{}, err
		}
		var q expr.Node
		if qual != nil {
			if len(qual.Kids) != 1 {
				return mval{}, r.fail(qual, "<%s> needs one expression", qual.Name)
			}
			if q, err = r.num(qual.Kids[0], env); err != nil {
				return mval{}, err
			}
		}
		if head.Name == "root" {
			if q == nil || isNum(q, 2) {
				return mval{num: call("sqrt", xs[0])}, nil
			}
			return mval{num: expr.Pow(xs[0], expr.Div(expr.Num(1), q))}, nil
		}
		if q == nil || isNum(q, 10) {
			return mval{num: call("log10", xs[0])}, nil
		}
		return mval{num: expr.Div(call("log", xs[0]), call("log", q))}, nil
	case "eq", "neq", "gt", "lt", "geq", "leq":
		if len(ops) < 2 || (head.Name == "neq" && len(ops) != 2) {
			return mval{}, r.fail(head, "<%s/> needs two arguments, found %d", head.Name, len(ops))
		}
		xs, err := nums()
		if err != nil {
			return mval{}, err
		}
		sel := relation(head.Name, xs[0], xs[1])
		for i := 2; i < len(xs); i++ { // a < b < c: each pair
			more, prev := relation(head.Name, xs[i-1], xs[i]), sel
			sel = func(x, y expr.Node) expr.Node { return prev(more(x, y), y) }
		}
		return mval{sel: sel}, nil
	case "and", "or", "xor", "not", "implies":
		sels := make([]func(x, y expr.Node) expr.Node, len(ops))
		for i, a := range ops {
			s, err := r.truth(a, env)
			if err != nil {
				return mval{}, err
			}
			sels[i] = s
		}
		switch head.Name {
		case "not":
			if err := arity(1); err != nil {
				return mval{}, err
			}
			s := sels[0]
			return mval{sel: func(x, y expr.Node) expr.Node { return s(y, x) }}, nil
		case "implies":
			if err := arity(2); err != nil {
				return mval{}, err
			}
			a, b := sels[0], sels[1]
			return mval{sel: func(x, y expr.Node) expr.Node { return a(b(x, y), x) }}, nil
		}
		if head.Name == "xor" {
			// The parity of the operands' truth values (1 or 0), built
			// once: selecting both branches at each level would double
			// the work with every operand.
			var p expr.Node = expr.Num(0)
			for _, s := range sels {
				b := s(expr.Num(1), expr.Num(0))
				p = ifle(expr.Num(0.5), p, expr.Sub(expr.Num(1), b), b)
			}
			return mval{sel: func(x, y expr.Node) expr.Node { return ifle(expr.Num(0.5), p, x, y) }}, nil
		}
		sel := map[string]func(x, y expr.Node) expr.Node{
			"and": func(x, y expr.Node) expr.Node { return x },
			"or":  func(x, y expr.Node) expr.Node { return y },
		}[head.Name]
		for _, s := range sels {
			prev, s := sel, s
			if head.Name == "and" {
				sel = func(x, y expr.Node) expr.Node { return prev(s(x, y), y) }
			} else {
				sel = func(x, y expr.Node) expr.Node { return prev(x, s(x, y)) }
			}
		}
		return mval{sel: sel}, nil
	}
	if f, ok := unary[head.Name]; ok {
		if err := arity(1); err != nil {
			return mval{}, err
		}
		xs, err := nums()
		if err != nil {
			return mval{}, err
		}
		return mval{num: f(xs[0])}, nil
	}
	return mval{}, r.fail(head, "the MathML operator <%s/> is not supported", head.Name)
}

// callFunc inlines a call of a function definition.
func (r *mathReader) callFunc(head *node, ops []*node, env map[string]mval) (mval, error) {
	name := strings.TrimSpace(head.Text)
	lambda, ok := r.funcs[name]
	if !ok {
		return mval{}, r.fail(head, "%q is called as a function, but no function definition has that id", name)
	}
	var bvars []string
	var body *node
	for _, k := range lambda.Kids {
		k = unwrap(k)
		if k.Name == "bvar" {
			ci := k.kid("ci")
			if ci == nil {
				return mval{}, r.fail(k, "<bvar> needs a <ci> name")
			}
			bvars = append(bvars, strings.TrimSpace(ci.Text))
			continue
		}
		body = k
	}
	if body == nil {
		return mval{}, r.fail(lambda, "the function %q has no body", name)
	}
	if len(ops) != len(bvars) {
		return mval{}, r.fail(head, "the function %q takes %d argument(s), found %d", name, len(bvars), len(ops))
	}
	inner := map[string]mval{}
	for i, b := range bvars {
		v, err := r.value(ops[i], env)
		if err != nil {
			return mval{}, err
		}
		inner[b] = v
	}
	v, err := r.value(body, inner)
	if err != nil {
		if p, ok := err.(network.Problem); ok && !strings.Contains(p.Message, "(in function") {
			p.Message += fmt.Sprintf(" (in function %q)", name)
			return mval{}, p
		}
		return mval{}, err
	}
	return v, nil
}

func isNum(n expr.Node, v float64) bool {
	x, ok := expr.Const(n)
	return ok && x == v
}

// isSId reports whether s is an SBML identifier: a letter or _, then
// letters, digits and _.
func isSId(s string) bool {
	if s == "" {
		return false
	}
	for i, c := range s {
		switch {
		case c == '_', c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z':
		case i > 0 && c >= '0' && c <= '9':
		default:
			return false
		}
	}
	return true
}
