package expr

// Substitute returns n with every variable for which f returns a tree
// replaced by that tree. n is not modified; unchanged subtrees are shared.
func Substitute(n Node, f func(name string) (Node, bool)) Node {
	switch m := n.(type) {
	case *varNode:
		if r, ok := f(m.name); ok {
			return r
		}
	case *negNode:
		if x := Substitute(m.x, f); x != m.x {
			return &negNode{x: x, col: m.col}
		}
	case *binNode:
		l, r := Substitute(m.l, f), Substitute(m.r, f)
		if l != m.l || r != m.r {
			return &binNode{op: m.op, l: l, r: r, col: m.col}
		}
	case *callNode:
		var args []Node
		for i, a := range m.args {
			if b := Substitute(a, f); b != a && args == nil {
				args = append([]Node(nil), m.args...)
				args[i] = b
			} else if args != nil {
				args[i] = b
			}
		}
		if args != nil {
			return &callNode{fn: m.fn, args: args, col: m.col}
		}
	}
	return n
}
