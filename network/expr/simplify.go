package expr

import "math"

// Simplify returns an equivalent tree with constants folded and neutral
// terms removed: x+0, x-0, 0-x, x-x, x*1, x*0, x/1, 0/x, x^1, x^0, 1^x, -(-x),
// a + -b, a - -b, negations pulled out of products and quotients, and pow(a,b)
// written as a^b. Numeric constants in products are gathered in front.
// Folding is skipped where the result would be infinite or NaN, so 1/0 stays
// as written. Like common computer algebra, x*0 becomes 0 even though it is
// NaN for infinite x.
//
// A tree with a problem that makes it meaningless (a missing node, an
// unknown operator or function, a wrong number of arguments; see Check) is
// returned unchanged.
func Simplify(n Node) Node {
	if !wellFormed(n) {
		return n
	}
	return simplify(n)
}

// simplify is Simplify for a well-formed tree.
func simplify(n Node) Node { return simplifier{newMemo[Node]()}.do(n) }

// simplifier simplifies a tree or a DAG, each shared subtree once (so that
// the result shares it too): a derivative shares its parts, and
// simplifying it as a tree would take time in proportion to its size
// written out.
type simplifier struct{ m *memo[Node] }

func (s simplifier) do(n Node) Node {
	switch n.(type) {
	case *Unary, *Binary, *Call:
	default:
		return n
	}
	if m, ok := s.m.get(n); ok {
		return m
	}
	var m Node
	switch n := n.(type) {
	case *Unary:
		m = neg(s.do(n.X))
	case *Binary:
		l, r := s.do(n.L), s.do(n.R)
		m = build(n.Op, l, r)
		if b, ok := m.(*Binary); ok && b.Op == n.Op && b.L == l && b.R == r {
			if l == n.L && r == n.R {
				m = n // unchanged: keep the node (and any sharing)
			} else {
				b.Col = n.Col
			}
		}
	case *Call:
		args := make([]Node, len(n.Args))
		for i, a := range n.Args {
			args[i] = s.do(a)
		}
		id, _ := funcByName(n.Func)
		m = call(id, args...)
		if c, ok := m.(*Call); ok && len(args) > 0 && len(c.Args) == len(args) && &c.Args[0] == &args[0] {
			c.Col = n.Col // a new node, not a shared subtree
		}
	}
	s.m.set(n, m)
	return m
}

func build(op Op, l, r Node) Node {
	switch op {
	case OpAdd:
		return add(l, r)
	case OpSub:
		return sub(l, r)
	case OpMul:
		return mul(l, r)
	case OpDiv:
		return div(l, r)
	case OpPow:
		return pow(l, r)
	}
	return &Binary{Op: op, L: l, R: r}
}

// isNum reports whether n is the literal v.
func isNum(n Node, v float64) bool {
	m, ok := n.(*Number)
	return ok && m.Value == v
}

func numOf(n Node) (float64, bool) {
	m, ok := n.(*Number)
	if !ok {
		return 0, false
	}
	return m.Value, true
}

// fold returns the literal v if it is finite.
func fold(v float64) (Node, bool) {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return nil, false
	}
	return &Number{Value: v}, true
}

func foldBin(op Op, l, r Node) (Node, bool) {
	a, ok1 := numOf(l)
	b, ok2 := numOf(r)
	if !ok1 || !ok2 {
		return nil, false
	}
	return fold(binop(op, a, b))
}

func neg(x Node) Node {
	switch x := x.(type) {
	case *Number:
		return &Number{Value: -x.Value}
	case *Unary:
		return x.X
	case *Binary:
		if x.Op == OpSub {
			return sub(x.R, x.L)
		}
	}
	return &Unary{Op: OpSub, X: x}
}

func add(a, b Node) Node {
	if n, ok := foldBin(OpAdd, a, b); ok {
		return n
	}
	switch {
	case isNum(a, 0):
		return b
	case isNum(b, 0):
		return a
	}
	if x, ok := b.(*Unary); ok {
		return sub(a, x.X)
	}
	if v, ok := numOf(b); ok && v < 0 {
		return sub(a, &Number{Value: -v})
	}
	if x, ok := a.(*Unary); ok {
		return sub(b, x.X)
	}
	return &Binary{Op: OpAdd, L: a, R: b}
}

func sub(a, b Node) Node {
	if n, ok := foldBin(OpSub, a, b); ok {
		return n
	}
	switch {
	case isNum(b, 0):
		return a
	case isNum(a, 0):
		return neg(b)
	case Equal(a, b):
		return &Number{Value: 0}
	}
	if x, ok := b.(*Unary); ok {
		return add(a, x.X)
	}
	if v, ok := numOf(b); ok && v < 0 {
		return add(a, &Number{Value: -v})
	}
	return &Binary{Op: OpSub, L: a, R: b}
}

func mul(a, b Node) Node {
	if n, ok := foldBin(OpMul, a, b); ok {
		return n
	}
	switch {
	case isNum(a, 0) || isNum(b, 0):
		return &Number{Value: 0}
	case isNum(a, 1):
		return b
	case isNum(b, 1):
		return a
	case isNum(a, -1):
		return neg(b)
	case isNum(b, -1):
		return neg(a)
	}
	if x, ok := a.(*Unary); ok {
		return neg(mul(x.X, b))
	}
	if x, ok := b.(*Unary); ok {
		return neg(mul(a, x.X))
	}
	if v, ok := numOf(a); ok && v < 0 {
		return neg(mul(&Number{Value: -v}, b))
	}
	if v, ok := numOf(b); ok && v < 0 {
		return neg(mul(a, &Number{Value: -v}))
	}
	_, aNum := numOf(a)
	if _, ok := numOf(b); ok && !aNum {
		return mul(b, a) // constants first
	}
	if q, ok := b.(*Binary); ok && q.Op == OpDiv && isNum(q.L, 1) {
		return div(a, q.R) // a*(1/y) = a/y
	}
	if q, ok := a.(*Binary); ok && q.Op == OpDiv && isNum(q.L, 1) {
		return div(b, q.R)
	}
	if aNum {
		// c1*(c2*y) = (c1*c2)*y and c1*(c2/y) = (c1*c2)/y
		if q, ok := b.(*Binary); ok && (q.Op == OpMul || q.Op == OpDiv) {
			if c, ok := foldBin(OpMul, a, q.L); ok {
				return build(q.Op, c, q.R)
			}
		}
	}
	return &Binary{Op: OpMul, L: a, R: b}
}

func div(a, b Node) Node {
	if isNum(b, 0) {
		return &Binary{Op: OpDiv, L: a, R: b} // kept for Check and Eval to see
	}
	if n, ok := foldBin(OpDiv, a, b); ok {
		return n
	}
	switch {
	case isNum(a, 0):
		return &Number{Value: 0}
	case isNum(b, 1):
		return a
	case isNum(b, -1):
		return neg(a)
	}
	if x, ok := a.(*Unary); ok {
		return neg(div(x.X, b))
	}
	if x, ok := b.(*Unary); ok {
		return neg(div(a, x.X))
	}
	if v, ok := numOf(a); ok && v < 0 {
		return neg(div(&Number{Value: -v}, b))
	}
	if v, ok := numOf(b); ok && v < 0 {
		return neg(div(a, &Number{Value: -v}))
	}
	return &Binary{Op: OpDiv, L: a, R: b}
}

func pow(a, b Node) Node {
	if n, ok := foldBin(OpPow, a, b); ok {
		return n
	}
	switch {
	case isNum(b, 1):
		return a
	case isNum(b, 0), isNum(a, 1):
		return &Number{Value: 1}
	}
	return &Binary{Op: OpPow, L: a, R: b}
}

// call builds a simplified call of fn.
func call(fn fnID, args ...Node) Node {
	if fn == fnPow && len(args) == 2 {
		return pow(args[0], args[1])
	}
	if fn == fnIfLE && len(args) == 4 {
		if Equal(args[2], args[3]) {
			return args[2]
		}
		a, ok1 := numOf(args[0])
		b, ok2 := numOf(args[1])
		if ok1 && ok2 {
			if a <= b {
				return args[2]
			}
			return args[3]
		}
	}
	if int(fn) < len(funcs) && len(args) == funcs[fn].arity {
		vals := make([]float64, len(args))
		all := true
		for i, a := range args {
			v, ok := numOf(a)
			vals[i], all = v, all && ok
		}
		if all {
			if n, ok := fold(apply(fn, vals)); ok {
				return n
			}
		}
	}
	return &Call{Func: funcs[fn].name, Args: args}
}
