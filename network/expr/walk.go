package expr

// Walk traverses the tree n in depth-first pre-order, in the order the nodes
// appear in the infix form: it calls f(n), and if f returns true, walks each
// child of n in turn (the operand of a Unary; L, then R of a Binary; the
// arguments of a Call). Nil nodes, which only trees built by hand can hold,
// are skipped; Check reports them.
func Walk(n Node, f func(Node) bool) {
	if isNil(n) || !f(n) {
		return
	}
	switch n := n.(type) {
	case *Unary:
		Walk(n.X, f)
	case *Binary:
		Walk(n.L, f)
		Walk(n.R, f)
	case *Call:
		for _, a := range n.Args {
			Walk(a, f)
		}
	}
}

// Substitute returns n with every variable for which f reports true replaced
// by the node f returns for its name, for example to inline named quantities
// into a rate expression. The replacement nodes are used as they are, not
// substituted into again; to resolve names defined in terms of each other,
// substitute in dependency order or let f call Substitute.
//
// Substitute does not modify n: nodes on the path to a replaced variable are
// copied, with their columns, and the result shares every other subtree with
// n. If f replaces nothing, the result is n itself.
func Substitute(n Node, f func(name string) (Node, bool)) Node {
	m, _ := substitute(n, f)
	return m
}

// substitute is Substitute, also reporting whether anything was replaced.
func substitute(n Node, f func(string) (Node, bool)) (Node, bool) {
	if isNil(n) {
		return n, false
	}
	switch n := n.(type) {
	case *Variable:
		if m, ok := f(n.Name); ok {
			return m, true
		}
	case *Unary:
		if x, ok := substitute(n.X, f); ok {
			return &Unary{Op: n.Op, X: x, Col: n.Col}, true
		}
	case *Binary:
		l, okL := substitute(n.L, f)
		r, okR := substitute(n.R, f)
		if okL || okR {
			return &Binary{Op: n.Op, L: l, R: r, Col: n.Col}, true
		}
	case *Call:
		var args []Node
		for i, a := range n.Args {
			b, ok := substitute(a, f)
			if ok && args == nil {
				args = make([]Node, len(n.Args))
				copy(args, n.Args[:i])
			}
			if args != nil {
				args[i] = b
			}
		}
		if args != nil {
			return &Call{Func: n.Func, Args: args, Col: n.Col}, true
		}
	}
	return n, false
}

// Equal reports whether a and b are the same tree: nodes of the same types
// with the same operators, function names, variable names and numbers, in
// the same places. Columns are ignored. Numbers are the same if they are
// equal and have the same sign, so 0 and -0 differ, or if both are NaN. Two
// missing (nil) nodes are equal.
func Equal(a, b Node) bool {
	if isNil(a) || isNil(b) {
		return isNil(a) && isNil(b)
	}
	if a == b {
		return true // the same node (a NaN literal equals itself here too)
	}
	switch a := a.(type) {
	case *Number:
		b, ok := b.(*Number)
		return ok && sameNumber(a.Value, b.Value)
	case *Variable:
		b, ok := b.(*Variable)
		return ok && a.Name == b.Name
	case *Unary:
		b, ok := b.(*Unary)
		return ok && a.Op == b.Op && Equal(a.X, b.X)
	case *Binary:
		b, ok := b.(*Binary)
		return ok && a.Op == b.Op && Equal(a.L, b.L) && Equal(a.R, b.R)
	case *Call:
		b, ok := b.(*Call)
		if !ok || a.Func != b.Func || len(a.Args) != len(b.Args) {
			return false
		}
		for i := range a.Args {
			if !Equal(a.Args[i], b.Args[i]) {
				return false
			}
		}
		return true
	}
	return false
}
