package expr

import "fmt"

// Check returns the semantic problems of n, in order of appearance: division
// by a literal zero, a literal argument outside the domain of log, log10 or
// sqrt, an unknown function and a wrong number of function arguments. The
// last two are already reported by Parse; Check repeats them for trees built
// by other means. Each problem carries the column of the offending literal or
// function name (0 for nodes built without a source position).
func Check(n Node) []*Error {
	var errs []*Error
	walk(n, func(m Node) {
		switch m := m.(type) {
		case *binNode:
			if m.op == '/' {
				if v, ok := Const(m.r); ok && v == 0 {
					errs = append(errs, &Error{Col: colOf(m.r), Msg: "division by zero: the divisor is the literal 0; expected a nonzero divisor"})
				}
			}
		case *callNode:
			if int(m.fn) >= len(funcs) {
				errs = append(errs, &Error{Col: m.col, Msg: fmt.Sprintf("unknown function; known: %s", knownFuncs())})
				return
			}
			f := funcs[m.fn]
			if len(m.args) != f.arity {
				errs = append(errs, &Error{Col: m.col, Msg: fmt.Sprintf("%s takes %s, found %d", f.name, argWords(f.arity), len(m.args))})
				return
			}
			v, ok := Const(m.args[0])
			if !ok {
				return
			}
			switch {
			case (m.fn == fnLog || m.fn == fnLog10) && v <= 0:
				errs = append(errs, &Error{Col: colOf(m.args[0]), Msg: fmt.Sprintf("%s of %s is undefined; expected a positive argument", f.name, formatNum(v))})
			case m.fn == fnSqrt && v < 0:
				errs = append(errs, &Error{Col: colOf(m.args[0]), Msg: fmt.Sprintf("sqrt of %s is undefined; expected a non-negative argument", formatNum(v))})
			}
		}
	})
	return errs
}

// colOf returns the source column of a node, or 0 if it has none.
func colOf(n Node) int {
	switch n := n.(type) {
	case *numNode:
		return n.col
	case *varNode:
		return n.col
	case *negNode:
		return n.col
	case *binNode:
		return n.col
	case *callNode:
		return n.col
	}
	return 0
}
