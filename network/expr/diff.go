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
func Diff(n Node, name string) Node {
	if !wellFormed(n) {
		return n
	}
	return diff(simplify(n), name)
}

func diff(n Node, name string) Node {
	if !dependsOn(n, name) {
		return &Number{Value: 0}
	}
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
			return diffPow(u, v, name)
		}
	case *Call:
		return diffCall(n, name)
	}
	return &Number{Value: math.NaN()} // unreachable: n is well formed
}

func diffPow(u, v Node, name string) Node {
	du := diff(u, name)
	if !dependsOn(v, name) {
		// v*u^(v-1)*u'
		return mul(mul(v, pow(u, sub(v, &Number{Value: 1}))), du)
	}
	// u^v*log(u)*v', plus v*u^(v-1)*u' when the base depends on name too.
	dv := diff(v, name)
	d := mul(mul(pow(u, v), call(fnLog, u)), dv)
	if dependsOn(u, name) {
		d = add(mul(mul(v, pow(u, sub(v, &Number{Value: 1}))), du), d)
	}
	return d
}

func diffCall(n *Call, name string) Node {
	a := n.Args
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
		return diffPow(a[0], a[1], name)
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
