package expr

import "math"

// Simplify returns an equivalent tree with constants folded and neutral
// terms removed: x+0, x-0, 0-x, x-x, x*1, x*0, x/1, 0/x, x^1, x^0, 1^x, -(-x),
// a + -b, a - -b, negations pulled out of products and quotients, and pow(a,b)
// written as a^b. Numeric constants in products are gathered in front.
// Folding is skipped where the result would be infinite or NaN, so 1/0 stays
// as written. Like common computer algebra, x*0 becomes 0 even though it is
// NaN for infinite x.
func Simplify(n Node) Node {
	switch n := n.(type) {
	case *negNode:
		return neg(Simplify(n.x))
	case *binNode:
		l, r := Simplify(n.l), Simplify(n.r)
		m := build(n.op, l, r)
		if b, ok := m.(*binNode); ok && b.op == n.op && b.l == l && b.r == r {
			b.col = n.col
		}
		return m
	case *callNode:
		args := make([]Node, len(n.args))
		for i, a := range n.args {
			args[i] = Simplify(a)
		}
		m := call(n.fn, args...)
		if c, ok := m.(*callNode); ok && len(args) > 0 && len(c.args) == len(args) && &c.args[0] == &args[0] {
			c.col = n.col // a new node, not a shared subtree
		}
		return m
	}
	return n
}

func build(op byte, l, r Node) Node {
	switch op {
	case '+':
		return add(l, r)
	case '-':
		return sub(l, r)
	case '*':
		return mul(l, r)
	case '/':
		return div(l, r)
	case '^':
		return pow(l, r)
	}
	return &binNode{op: op, l: l, r: r}
}

// isNum reports whether n is the literal v.
func isNum(n Node, v float64) bool {
	m, ok := n.(*numNode)
	return ok && m.v == v
}

func numOf(n Node) (float64, bool) {
	m, ok := n.(*numNode)
	if !ok {
		return 0, false
	}
	return m.v, true
}

// fold returns the literal v if it is finite.
func fold(v float64) (Node, bool) {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return nil, false
	}
	return &numNode{v: v}, true
}

func foldBin(op byte, l, r Node) (Node, bool) {
	a, ok1 := numOf(l)
	b, ok2 := numOf(r)
	if !ok1 || !ok2 {
		return nil, false
	}
	return fold(binop(op, a, b))
}

func neg(x Node) Node {
	switch x := x.(type) {
	case *numNode:
		return &numNode{v: -x.v}
	case *negNode:
		return x.x
	case *binNode:
		if x.op == '-' {
			return sub(x.r, x.l)
		}
	}
	return &negNode{x: x}
}

func add(a, b Node) Node {
	if n, ok := foldBin('+', a, b); ok {
		return n
	}
	switch {
	case isNum(a, 0):
		return b
	case isNum(b, 0):
		return a
	}
	if x, ok := b.(*negNode); ok {
		return sub(a, x.x)
	}
	if v, ok := numOf(b); ok && v < 0 {
		return sub(a, &numNode{v: -v})
	}
	if x, ok := a.(*negNode); ok {
		return sub(b, x.x)
	}
	return &binNode{op: '+', l: a, r: b}
}

func sub(a, b Node) Node {
	if n, ok := foldBin('-', a, b); ok {
		return n
	}
	switch {
	case isNum(b, 0):
		return a
	case isNum(a, 0):
		return neg(b)
	case equal(a, b):
		return &numNode{v: 0}
	}
	if x, ok := b.(*negNode); ok {
		return add(a, x.x)
	}
	if v, ok := numOf(b); ok && v < 0 {
		return add(a, &numNode{v: -v})
	}
	return &binNode{op: '-', l: a, r: b}
}

func mul(a, b Node) Node {
	if n, ok := foldBin('*', a, b); ok {
		return n
	}
	switch {
	case isNum(a, 0) || isNum(b, 0):
		return &numNode{v: 0}
	case isNum(a, 1):
		return b
	case isNum(b, 1):
		return a
	case isNum(a, -1):
		return neg(b)
	case isNum(b, -1):
		return neg(a)
	}
	if x, ok := a.(*negNode); ok {
		return neg(mul(x.x, b))
	}
	if x, ok := b.(*negNode); ok {
		return neg(mul(a, x.x))
	}
	if v, ok := numOf(a); ok && v < 0 {
		return neg(mul(&numNode{v: -v}, b))
	}
	if v, ok := numOf(b); ok && v < 0 {
		return neg(mul(a, &numNode{v: -v}))
	}
	_, aNum := numOf(a)
	if _, ok := numOf(b); ok && !aNum {
		return mul(b, a) // constants first
	}
	if q, ok := b.(*binNode); ok && q.op == '/' && isNum(q.l, 1) {
		return div(a, q.r) // a*(1/y) = a/y
	}
	if q, ok := a.(*binNode); ok && q.op == '/' && isNum(q.l, 1) {
		return div(b, q.r)
	}
	if aNum {
		// c1*(c2*y) = (c1*c2)*y and c1*(c2/y) = (c1*c2)/y
		if q, ok := b.(*binNode); ok && (q.op == '*' || q.op == '/') {
			if c, ok := foldBin('*', a, q.l); ok {
				return build(q.op, c, q.r)
			}
		}
	}
	return &binNode{op: '*', l: a, r: b}
}

func div(a, b Node) Node {
	if isNum(b, 0) {
		return &binNode{op: '/', l: a, r: b} // kept for Check and Eval to see
	}
	if n, ok := foldBin('/', a, b); ok {
		return n
	}
	switch {
	case isNum(a, 0):
		return &numNode{v: 0}
	case isNum(b, 1):
		return a
	case isNum(b, -1):
		return neg(a)
	}
	if x, ok := a.(*negNode); ok {
		return neg(div(x.x, b))
	}
	if x, ok := b.(*negNode); ok {
		return neg(div(a, x.x))
	}
	if v, ok := numOf(a); ok && v < 0 {
		return neg(div(&numNode{v: -v}, b))
	}
	if v, ok := numOf(b); ok && v < 0 {
		return neg(div(a, &numNode{v: -v}))
	}
	return &binNode{op: '/', l: a, r: b}
}

func pow(a, b Node) Node {
	if n, ok := foldBin('^', a, b); ok {
		return n
	}
	switch {
	case isNum(b, 1):
		return a
	case isNum(b, 0), isNum(a, 1):
		return &numNode{v: 1}
	}
	return &binNode{op: '^', l: a, r: b}
}

// call builds a simplified call of fn.
func call(fn fnID, args ...Node) Node {
	if fn == fnPow && len(args) == 2 {
		return pow(args[0], args[1])
	}
	if fn == fnIfLE && len(args) == 4 {
		if equal(args[2], args[3]) {
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
	return &callNode{fn: fn, args: args}
}
