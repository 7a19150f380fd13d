package expr

import (
	"fmt"
	"math"
)

// Check returns the problems of n, in order of appearance.
//
// Semantic problems are division by a literal zero and a literal argument
// outside the domain of log, log10 or sqrt. The other problems can only
// occur in trees not made by Parse: a missing (nil) node, an operator that
// is not one of + - * / ^ (or - for a Unary), an unknown function, a wrong
// number of function arguments, a variable name that is not an identifier
// or is the name of a function, and a number that is not finite. A tree
// that has none of these prints to text that Parse reads back as an equal
// tree, unless it calls sign (see Call).
//
// Each problem carries the column of the offending node (the literal, the
// variable, the operator or the function name; for a missing node, its
// parent's), which is 0 for nodes built without a source position.
func Check(n Node) []*Error {
	return check(n, true)
}

// check returns the problems of n: all of them if all is set, otherwise only
// those that make n meaningless to Simplify, Diff and Compile (a missing
// node, an unknown operator or function, a wrong number of arguments and a
// node type of another package).
func check(n Node, all bool) []*Error {
	var errs []*Error
	report := func(col int, format string, args ...any) {
		errs = append(errs, &Error{Col: col, Msg: fmt.Sprintf(format, args...)})
	}
	if isNil(n) {
		report(0, "missing expression: the node is nil")
		return errs
	}
	Walk(n, func(m Node) bool {
		switch m := m.(type) {
		case *Number:
			if all && (math.IsInf(m.Value, 0) || math.IsNaN(m.Value)) {
				report(m.Col, "number %v is not finite; expected a finite literal", m.Value)
			}
		case *Variable:
			if all {
				if !isIdent(m.Name) {
					report(m.Col, "variable name %q is not a name of the form [A-Za-z_][A-Za-z0-9_]*", m.Name)
				} else if _, ok := lookupFunc(m.Name); ok {
					report(m.Col, "variable name %q is the name of a function; expected another name", m.Name)
				}
			}
		case *Unary:
			if m.Op != OpSub {
				report(m.Col, "unknown unary operator %v; expected - (negation)", m.Op)
			}
			if isNil(m.X) {
				report(m.Col, "negation has no operand (nil)")
			}
		case *Binary:
			if !m.Op.binary() {
				report(m.Col, "unknown operator %v; expected one of + - * / ^", m.Op)
			}
			if isNil(m.L) {
				report(m.Col, "operator %v has no left operand (nil)", m.Op)
			}
			if isNil(m.R) {
				report(m.Col, "operator %v has no right operand (nil)", m.Op)
			}
			if all && m.Op == OpDiv {
				if v, ok := Const(m.R); ok && v == 0 {
					report(colOf(m.R), "division by zero: the divisor is the literal 0; expected a nonzero divisor")
				}
			}
		case *Call:
			id, ok := funcByName(m.Func)
			if !ok {
				report(m.Col, "%s", unknownFuncMsg(m.Func))
				return true
			}
			f := funcs[id]
			if len(m.Args) != f.arity {
				report(m.Col, "%s", arityMsg(f.name, f.arity, len(m.Args)))
				return true
			}
			for i, a := range m.Args {
				if isNil(a) {
					report(m.Col, "%s", nilArgMsg(f.name, i))
				}
			}
			if !all {
				return true
			}
			v, ok := Const(m.Args[0])
			if !ok {
				return true
			}
			switch {
			case (id == fnLog || id == fnLog10) && v <= 0:
				report(colOf(m.Args[0]), "%s of %s is undefined; expected a positive argument", f.name, formatNum(v))
			case id == fnSqrt && v < 0:
				report(colOf(m.Args[0]), "sqrt of %s is undefined; expected a non-negative argument", formatNum(v))
			}
		default:
			report(0, "unsupported node type %T; expected a node of package expr", m)
		}
		return true
	})
	return errs
}

// wellFormed reports whether n has none of the problems that make it
// meaningless to Simplify, Diff and Compile. It visits each shared subtree
// of a DAG once, so a derivative with shared parts takes time in
// proportion to its distinct nodes.
func wellFormed(n Node) bool {
	return wellFormedSeen(n, newMemo[bool]())
}

// wellFormedSeen is wellFormed visiting each shared subtree of a DAG (such
// as a derivative) once.
func wellFormedSeen(n Node, seen *memo[bool]) bool {
	if isNil(n) {
		return false
	}
	switch n.(type) {
	case *Number, *Variable:
		return true
	}
	if _, ok := seen.get(n); ok {
		return true
	}
	seen.set(n, true)
	switch n := n.(type) {
	case *Unary:
		return n.Op == OpSub && wellFormedSeen(n.X, seen)
	case *Binary:
		return n.Op.binary() && wellFormedSeen(n.L, seen) && wellFormedSeen(n.R, seen)
	case *Call:
		id, ok := funcByName(n.Func)
		if !ok || len(n.Args) != funcs[id].arity {
			return false
		}
		for _, a := range n.Args {
			if !wellFormedSeen(a, seen) {
				return false
			}
		}
		return true
	}
	return false
}

// isIdent reports whether s has the form [A-Za-z_][A-Za-z0-9_]*.
func isIdent(s string) bool {
	if s == "" || isDigit(rune(s[0])) {
		return false
	}
	for _, c := range s {
		if !isNameRune(c) {
			return false
		}
	}
	return true
}

// colOf returns the source column of a node, or 0 if it has none.
func colOf(n Node) int {
	if isNil(n) {
		return 0
	}
	switch n := n.(type) {
	case *Number:
		return n.Col
	case *Variable:
		return n.Col
	case *Unary:
		return n.Col
	case *Binary:
		return n.Col
	case *Call:
		return n.Col
	}
	return 0
}
