package expr

import "math"

// Diff returns the exact symbolic derivative ∂n/∂name, simplified. A
// derivative that is identically zero is the literal 0 (see Const).
//
// Powers x^y use the power rule y*x^(y-1)*x' when y does not depend on name,
// so x^2 differentiates to 2*x and is fine at x = 0; otherwise
// y*x^(y-1)*x' + x^y*log(x)*y'. The derivative of abs(x) is sign(x)*x', which
// is 0 at x = 0; min and max differentiate to the derivative of the branch
// they choose (on a tie, min follows its first argument and max its second),
// expressed with the function ifle(a, b, x, y) that yields x when a <= b
// and y otherwise (see Call).
//
// A tree with a problem that makes it meaningless (a missing node, an
// unknown operator or function, a wrong number of arguments; see Check) is
// returned unchanged, so that Check and Compile report the problem in the
// derivative too rather than it yielding a wrong number.
//
// The derivative shares subtrees with n and within itself (the derivative
// of a product u*v holds u and v), and each shared subtree of n is
// differentiated once, so the work and the size of the result grow in
// proportion to the distinct nodes; Compile evaluates a shared subtree
// once.
func Diff(n Node, name string) Node {
	if !wellFormed(n) {
		return n
	}
	d := &differ{name: name, deps: newMemo[bool](), memo: newMemo[Node]()}
	return d.diff(simplify(n))
}

// differ differentiates by one variable, remembering the derivative and
// the dependence of every shared subtree.
type differ struct {
	name string
	deps *memo[bool]
	memo *memo[Node]
}

// depends reports whether the variable occurs in n.
func (d *differ) depends(n Node) bool {
	switch n := n.(type) {
	case *Number:
		return false
	case *Variable:
		return n.Name == d.name
	}
	if v, ok := d.deps.get(n); ok {
		return v
	}
	v := false
	switch n := n.(type) {
	case *Unary:
		v = d.depends(n.X)
	case *Binary:
		v = d.depends(n.L) || d.depends(n.R)
	case *Call:
		for _, a := range n.Args {
			if d.depends(a) {
				v = true
				break
			}
		}
	}
	d.deps.set(n, v)
	return v
}

func (d *differ) diff(n Node) Node {
	if !d.depends(n) {
		return &Number{Value: 0}
	}
	if m, ok := d.memo.get(n); ok {
		return m
	}
	m := d.diffNode(n)
	d.memo.set(n, m)
	return m
}

func (d *differ) diffNode(n Node) Node {
	name := d.name
	diff := func(n Node, _ string) Node { return d.diff(n) }
	switch n := n.(type) {
	case *Variable:
		return &Number{Value: 1} // dependsOn guarantees n.name == name
	case *Unary:
		return neg(diff(n.X, name))
	case *Binary:
		u, v := n.L, n.R
		switch n.Op {
		case OpAdd:
			return add(diff(u, name), diff(v, name))
		case OpSub:
			return sub(diff(u, name), diff(v, name))
		case OpMul:
			return add(mul(diff(u, name), v), mul(u, diff(v, name)))
		case OpDiv:
			du, dv := diff(u, name), diff(v, name)
			if isNum(dv, 0) {
				return div(du, v)
			}
			// (u/v)' = u'/v - u*v'/v^2
			return sub(div(du, v), div(mul(u, dv), pow(v, &Number{Value: 2})))
		case OpPow:
			return d.diffPow(u, v)
		}
	case *Call:
		return d.diffCall(n)
	}
	return &Number{Value: math.NaN()} // unreachable: n is well formed
}

func (d *differ) diffPow(u, v Node) Node {
	du := d.diff(u)
	if !d.depends(v) {
		// v*u^(v-1)*u'
		return mul(mul(v, pow(u, sub(v, &Number{Value: 1}))), du)
	}
	// u^v*log(u)*v', plus v*u^(v-1)*u' when the base depends on name too.
	dv := d.diff(v)
	r := mul(mul(pow(u, v), call(fnLog, u)), dv)
	if d.depends(u) {
		r = add(mul(mul(v, pow(u, sub(v, &Number{Value: 1}))), du), r)
	}
	return r
}

func (d *differ) diffCall(n *Call) Node {
	a := n.Args
	name := d.name
	diff := func(n Node, _ string) Node { return d.diff(n) }
	id, _ := funcByName(n.Func)
	switch id {
	case fnExp:
		return mul(n, diff(a[0], name))
	case fnLog:
		return div(diff(a[0], name), a[0])
	case fnLog10:
		return div(diff(a[0], name), mul(a[0], &Number{Value: math.Ln10}))
	case fnSqrt:
		return div(diff(a[0], name), mul(&Number{Value: 2}, n))
	case fnAbs:
		return mul(call(fnSign, a[0]), diff(a[0], name))
	case fnMin:
		return call(fnIfLE, a[0], a[1], diff(a[0], name), diff(a[1], name))
	case fnMax:
		return call(fnIfLE, a[0], a[1], diff(a[1], name), diff(a[0], name))
	case fnPow:
		return d.diffPow(a[0], a[1])
	case fnSign:
		return &Number{Value: 0}
	case fnIfLE:
		return call(fnIfLE, a[0], a[1], diff(a[2], name), diff(a[3], name))
	case fnFloor, fnCeil, fnFactorial:
		return &Number{Value: 0} // piecewise constant; 0 between its jumps
	}
	da := diff(a[0], name)
	one, two := &Number{Value: 1}, &Number{Value: 2}
	sq := func(x Node) Node { return pow(x, two) }
	switch id {
	case fnSin:
		return mul(call(fnCos, a[0]), da)
	case fnCos:
		return neg(mul(call(fnSin, a[0]), da))
	case fnTan:
		return div(da, sq(call(fnCos, a[0])))
	case fnAsin:
		return div(da, call(fnSqrt, sub(one, sq(a[0]))))
	case fnAcos:
		return neg(div(da, call(fnSqrt, sub(one, sq(a[0])))))
	case fnAtan:
		return div(da, add(one, sq(a[0])))
	case fnSinh:
		return mul(call(fnCosh, a[0]), da)
	case fnCosh:
		return mul(call(fnSinh, a[0]), da)
	case fnTanh:
		return mul(sub(one, sq(n)), da)
	case fnAsinh:
		return div(da, call(fnSqrt, add(sq(a[0]), one)))
	case fnAcosh:
		return div(da, call(fnSqrt, sub(sq(a[0]), one)))
	case fnAtanh:
		return div(da, sub(one, sq(a[0])))
	}
	return &Number{Value: math.NaN()} // unreachable: n is well formed
}
