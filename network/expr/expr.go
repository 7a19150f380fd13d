// Package expr parses, prints, inspects, differentiates, simplifies and
// compiles rate expressions.
//
// # Syntax
//
// An expression is written in infix form with the operators + - * / and ^
// (power, right-associative, binding tighter than unary minus so that -x^2
// means -(x^2)), parentheses, numbers such as 2, .5, 1.5e-3 and 2E+4,
// variable names [A-Za-z_][A-Za-z0-9_]*, and calls of the functions
// exp, log (natural), log10, sqrt, abs, min, max, pow, the switch
// ifle(a, b, x, y) (x when a <= b, otherwise y), sin, cos, tan, asin, acos,
// atan, sinh, cosh, tanh, asinh, acosh, atanh, floor, ceil and factorial
// (of the whole part of its argument).
//
// # Trees
//
// Parse turns source text into a tree of Nodes. The tree is open: its node
// types [Number], [Variable], [Unary], [Binary] and [Call] are exported, so
// other packages can read a tree with a type switch and [Walk], rewrite it
// with [Substitute] or build one with the builders [Num], [Var], [Neg], [Add],
// [Sub], [Mul], [Div], [Pow] and [Apply], and compare trees with [Equal]. A
// node's String method prints it back in the syntax above; for every tree
// that Check accepts and that calls no derivative-only function (see [Call]),
// Parse of the printed text gives an Equal tree.
//
// # Analysis
//
// Check looks for problems such as division by a literal zero or, in trees
// built by hand, a missing operand; Diff forms exact symbolic derivatives;
// Simplify folds constants and removes neutral terms; Compile turns a tree
// into a Program whose Eval method evaluates it without allocating.
package expr

import (
	"math"
	"strconv"
)

// Node is an expression tree: one of *Number, *Variable, *Unary, *Binary or
// *Call. The set is closed so that Diff, Simplify and Compile handle every
// tree.
//
// Trees are immutable by convention: functions in this package never modify
// a Node they are given, and results may share subtrees with their
// arguments. Code that wants a changed tree builds new nodes (see
// Substitute) rather than assigning to fields of nodes it did not create.
//
// String returns the infix form; see the package documentation for when it
// parses back to an equal tree.
type Node interface {
	String() string
	node() // restricts implementations to this package
}

// A Number is a numeric literal. Parse gives a negative literal for a minus
// sign written directly before a number, as in -2 or x^-1.5, but not for
// -(2) or for -2^2, which is -(2^2).
type Number struct {
	Value float64
	Col   int // 1-based column of the literal (of its minus sign if negative); 0 if built
}

// A Variable is a reference to a named quantity.
type Variable struct {
	Name string // of the form [A-Za-z_][A-Za-z0-9_]*, not a function name
	Col  int    // 1-based column of the name; 0 if built
}

// A Unary is a unary operation. Negation (OpSub) is the only one; a unary
// plus in the source leaves no node.
type Unary struct {
	Op  Op
	X   Node
	Col int // 1-based column of the operator; 0 if built
}

// A Binary is a binary operation L Op R.
type Binary struct {
	Op   Op
	L, R Node
	Col  int // 1-based column of the operator; 0 if built
}

// A Call is a call of the function named Func with the arguments Args.
//
// Func is one of the functions of the syntax, exp, log, log10, sqrt, abs,
// sin, cos, tan, asin, acos, atan, sinh, cosh, tanh, asinh, acosh, atanh,
// floor, ceil and factorial (1 argument each), min, max and pow (2
// arguments each),
// and the switch ifle(a, b, x, y), x when a <= b and otherwise y (the
// derivatives of min and max choose their branch with it; floor, ceil,
// factorial and ifle differentiate to 0 and to the chosen branch's
// derivative, which is exact between their jumps), or the one function that derivatives use
// and Parse does not accept:
//
//	sign(x)          -1, 0 or 1 with the sign of x (0 for 0, NaN for NaN);
//	                 the derivative of abs(x) is sign(x)*x'
//
// Check, Diff, Simplify, Compile and Apply accept all of them.
type Call struct {
	Func string
	Args []Node
	Col  int // 1-based column of the function name; 0 if built
}

func (*Number) node()   {}
func (*Variable) node() {}
func (*Unary) node()    {}
func (*Binary) node()   {}
func (*Call) node()     {}

// Op is an arithmetic operator, written as its character.
type Op byte

// The operators. OpSub is also the operator of negation.
const (
	OpAdd Op = '+'
	OpSub Op = '-'
	OpMul Op = '*'
	OpDiv Op = '/'
	OpPow Op = '^'
)

// String returns the operator's character, or Op(n) for a byte that is not
// an operator.
func (op Op) String() string {
	if op.binary() {
		return string(rune(op))
	}
	return "Op(" + strconv.Itoa(int(op)) + ")"
}

// binary reports whether op is one of the binary operators.
func (op Op) binary() bool {
	switch op {
	case OpAdd, OpSub, OpMul, OpDiv, OpPow:
		return true
	}
	return false
}

// Num returns a number literal. It should be finite for String to re-parse
// to an equal tree (Check reports a literal that is not).
func Num(v float64) Node { return &Number{Value: v} }

// Var returns a reference to the variable name. The name should be an
// identifier of the form [A-Za-z_][A-Za-z0-9_]* and not a function name for
// String to re-parse (Check reports a name that is not).
func Var(name string) Node { return &Variable{Name: name} }

// Neg returns -x.
func Neg(x Node) Node { return &Unary{Op: OpSub, X: x} }

// Add returns a + b. Like the other builders it does not simplify.
func Add(a, b Node) Node { return &Binary{Op: OpAdd, L: a, R: b} }

// Sub returns a - b.
func Sub(a, b Node) Node { return &Binary{Op: OpSub, L: a, R: b} }

// Mul returns a * b.
func Mul(a, b Node) Node { return &Binary{Op: OpMul, L: a, R: b} }

// Div returns a / b.
func Div(a, b Node) Node { return &Binary{Op: OpDiv, L: a, R: b} }

// Pow returns a ^ b.
func Pow(a, b Node) Node { return &Binary{Op: OpPow, L: a, R: b} }

// Apply returns the call name(args...). It reports an error if name is not
// one of the functions listed at Call, if the number of arguments is not the
// function's, or if an argument is nil. It accepts the derivative-only
// function sign, so that any tree Diff returns can be rebuilt. The
// call keeps its own copy of args.
func Apply(name string, args ...Node) (Node, error) {
	id, ok := funcByName(name)
	if !ok {
		return nil, &Error{Msg: unknownFuncMsg(name)}
	}
	if want := funcs[id].arity; len(args) != want {
		return nil, &Error{Msg: arityMsg(name, want, len(args))}
	}
	for i, a := range args {
		if isNil(a) {
			return nil, &Error{Msg: nilArgMsg(name, i)}
		}
	}
	return &Call{Func: name, Args: append([]Node(nil), args...)}, nil
}

// Const reports whether n is a number literal, and if so its value.
// A negated literal such as -(2) counts as the literal -2.
// After Simplify, a derivative that is identically zero is the literal 0.
func Const(n Node) (float64, bool) {
	switch n := n.(type) {
	case *Number:
		if n != nil {
			return n.Value, true
		}
	case *Unary:
		if n != nil && n.Op == OpSub {
			if v, ok := Const(n.X); ok {
				return -v, true
			}
		}
	}
	return 0, false
}

// Vars returns the distinct variable names of n in order of first appearance
// in the infix form.
func Vars(n Node) []string {
	var names []string
	seen := map[string]bool{}
	Walk(n, func(m Node) bool {
		if v, ok := m.(*Variable); ok && !seen[v.Name] {
			seen[v.Name] = true
			names = append(names, v.Name)
		}
		return true
	})
	return names
}

// isNil reports whether n is missing: a nil interface or a nil pointer of
// one of the node types.
func isNil(n Node) bool {
	switch n := n.(type) {
	case nil:
		return true
	case *Number:
		return n == nil
	case *Variable:
		return n == nil
	case *Unary:
		return n == nil
	case *Binary:
		return n == nil
	case *Call:
		return n == nil
	}
	return false
}

// sameNumber reports whether a and b are the same float64 value: equal, with
// the same sign (so 0 and -0 differ), or both NaN.
func sameNumber(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return a == b && math.Signbit(a) == math.Signbit(b)
}
