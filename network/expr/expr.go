// Package expr parses, differentiates, simplifies and compiles rate expressions.
//
// An expression is written in infix form with the operators + - * / and ^
// (power, right-associative, binding tighter than unary minus so that -x^2
// means -(x^2)), parentheses, numbers such as 2, .5, 1.5e-3 and 2E+4,
// variable names [A-Za-z_][A-Za-z0-9_]*, and calls of the functions
// exp, log (natural), log10, sqrt, abs, min, max and pow.
//
// Parse turns source text into a tree of Nodes; Check looks for semantic
// problems such as division by a literal zero; Diff forms exact symbolic
// derivatives; Simplify folds constants and removes neutral terms; Compile
// turns a tree into a Program whose Eval method evaluates it without
// allocating.
package expr

import (
	"math"
	"strconv"
	"strings"
)

// Node is an expression tree. Trees are immutable: functions in this package
// never modify a Node they are given, and subtrees may be shared.
//
// String returns the infix form. For a tree returned by Parse, or built from
// Num, Var and the arithmetic builders, the string parses back to a tree with
// the same String. Derivatives may contain internal helper functions
// (sign, ifle) that Parse does not accept; they print under those names.
type Node interface {
	String() string
	node() // restricts implementations to this package
}

type numNode struct {
	v   float64
	col int
}

type varNode struct {
	name string
	col  int
}

type negNode struct {
	x   Node
	col int
}

type binNode struct {
	op   byte // one of + - * / ^
	l, r Node
	col  int
}

type callNode struct {
	fn   fnID
	args []Node
	col  int
}

func (*numNode) node()  {}
func (*varNode) node()  {}
func (*negNode) node()  {}
func (*binNode) node()  {}
func (*callNode) node() {}

// Num returns a number literal. It should be finite for String to re-parse
// to the same string.
func Num(v float64) Node { return &numNode{v: v} }

// Var returns a reference to the variable name. The name should be an
// identifier of the form [A-Za-z_][A-Za-z0-9_]* for String to re-parse.
func Var(name string) Node { return &varNode{name: name} }

// Neg returns -x.
func Neg(x Node) Node { return &negNode{x: x} }

// Add returns a + b. Like the other builders it does not simplify.
func Add(a, b Node) Node { return &binNode{op: '+', l: a, r: b} }

// Sub returns a - b.
func Sub(a, b Node) Node { return &binNode{op: '-', l: a, r: b} }

// Mul returns a * b.
func Mul(a, b Node) Node { return &binNode{op: '*', l: a, r: b} }

// Div returns a / b.
func Div(a, b Node) Node { return &binNode{op: '/', l: a, r: b} }

// Pow returns a ^ b.
func Pow(a, b Node) Node { return &binNode{op: '^', l: a, r: b} }

// Const reports whether n is a number literal, and if so its value.
// A negated literal such as -(2) counts as the literal -2.
// After Simplify, a derivative that is identically zero is the literal 0.
func Const(n Node) (float64, bool) {
	switch n := n.(type) {
	case *numNode:
		return n.v, true
	case *negNode:
		if v, ok := Const(n.x); ok {
			return -v, true
		}
	}
	return 0, false
}

// Vars returns the distinct variable names of n in order of first appearance
// in the infix form.
func Vars(n Node) []string {
	var names []string
	seen := map[string]bool{}
	walk(n, func(m Node) {
		if v, ok := m.(*varNode); ok && !seen[v.name] {
			seen[v.name] = true
			names = append(names, v.name)
		}
	})
	return names
}

// walk calls f for every node of n in pre-order, left to right.
func walk(n Node, f func(Node)) {
	f(n)
	switch n := n.(type) {
	case *negNode:
		walk(n.x, f)
	case *binNode:
		walk(n.l, f)
		walk(n.r, f)
	case *callNode:
		for _, a := range n.args {
			walk(a, f)
		}
	}
}

// dependsOn reports whether the variable name occurs in n.
func dependsOn(n Node, name string) bool {
	switch n := n.(type) {
	case *varNode:
		return n.name == name
	case *negNode:
		return dependsOn(n.x, name)
	case *binNode:
		return dependsOn(n.l, name) || dependsOn(n.r, name)
	case *callNode:
		for _, a := range n.args {
			if dependsOn(a, name) {
				return true
			}
		}
	}
	return false
}

// equal reports whether a and b are structurally identical trees.
func equal(a, b Node) bool {
	switch a := a.(type) {
	case *numNode:
		b, ok := b.(*numNode)
		return ok && (a.v == b.v || math.IsNaN(a.v) && math.IsNaN(b.v)) && math.Signbit(a.v) == math.Signbit(b.v)
	case *varNode:
		b, ok := b.(*varNode)
		return ok && a.name == b.name
	case *negNode:
		b, ok := b.(*negNode)
		return ok && equal(a.x, b.x)
	case *binNode:
		b, ok := b.(*binNode)
		return ok && a.op == b.op && equal(a.l, b.l) && equal(a.r, b.r)
	case *callNode:
		b, ok := b.(*callNode)
		if !ok || a.fn != b.fn || len(a.args) != len(b.args) {
			return false
		}
		for i := range a.args {
			if !equal(a.args[i], b.args[i]) {
				return false
			}
		}
		return true
	}
	return false
}

// Precedence levels used when printing.
const (
	precAdd   = 1 // + -
	precMul   = 2 // * /
	precUnary = 3 // unary minus, negative literals
	precPow   = 4 // ^
	precAtom  = 5 // numbers, names, calls, parenthesised expressions
)

func prec(n Node) int {
	switch n := n.(type) {
	case *numNode:
		if math.Signbit(n.v) {
			return precUnary
		}
	case *negNode:
		return precUnary
	case *binNode:
		switch n.op {
		case '+', '-':
			return precAdd
		case '*', '/':
			return precMul
		case '^':
			return precPow
		}
	}
	return precAtom
}

func (n *numNode) String() string  { return formatNum(n.v) }
func (n *varNode) String() string  { return n.name }
func (n *negNode) String() string  { return toString(n) }
func (n *binNode) String() string  { return toString(n) }
func (n *callNode) String() string { return toString(n) }

func formatNum(v float64) string {
	switch {
	case math.IsInf(v, 1):
		return "(1/0)"
	case math.IsInf(v, -1):
		return "(-1/0)"
	case math.IsNaN(v):
		return "(0/0)"
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

func toString(n Node) string {
	var b strings.Builder
	write(&b, n)
	return b.String()
}

// writeMin writes n, in parentheses when its precedence is below min.
func writeMin(b *strings.Builder, n Node, min int) {
	if prec(n) < min {
		b.WriteByte('(')
		write(b, n)
		b.WriteByte(')')
		return
	}
	write(b, n)
}

func write(b *strings.Builder, n Node) {
	switch n := n.(type) {
	case *numNode:
		b.WriteString(formatNum(n.v))
	case *varNode:
		b.WriteString(n.name)
	case *negNode:
		b.WriteByte('-')
		writeMin(b, n.x, precUnary)
	case *binNode:
		switch n.op {
		case '+', '-':
			writeMin(b, n.l, precAdd)
			b.WriteByte(' ')
			b.WriteByte(n.op)
			b.WriteByte(' ')
			writeMin(b, n.r, precMul)
		case '*', '/':
			writeMin(b, n.l, precMul)
			b.WriteByte(n.op)
			writeMin(b, n.r, precUnary)
		case '^':
			writeMin(b, n.l, precAtom)
			b.WriteByte('^')
			writeMin(b, n.r, precUnary)
		}
	case *callNode:
		b.WriteString(funcs[n.fn].name)
		b.WriteByte('(')
		for i, a := range n.args {
			if i > 0 {
				b.WriteString(", ")
			}
			write(b, a)
		}
		b.WriteByte(')')
	}
}
