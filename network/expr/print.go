package expr

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// The printer writes the fewest parentheses that make Parse rebuild the same
// tree: an operand is parenthesised when its precedence is below the least
// its place allows. A sum or difference on the right of + or - and a
// product or quotient on the right of * or / keep their parentheses, since
// the operators are left-associative, and the base of a power is an atom,
// since ^ is right-associative.

// Precedence levels used when printing.
const (
	precAdd   = 1 // + -
	precMul   = 2 // * /
	precUnary = 3 // unary minus, negative literals
	precPow   = 4 // ^
	precAtom  = 5 // numbers, names, calls, parenthesised expressions
)

func prec(n Node) int {
	if isNil(n) {
		return precAtom
	}
	switch n := n.(type) {
	case *Number:
		if math.Signbit(n.Value) {
			return precUnary
		}
	case *Unary:
		return precUnary
	case *Binary:
		switch n.Op {
		case OpAdd, OpSub:
			return precAdd
		case OpMul, OpDiv:
			return precMul
		case OpPow:
			return precPow
		}
		return precAdd // an unknown operator: parenthesise wherever possible
	}
	return precAtom
}

func (n *Number) String() string   { return toString(n) }
func (n *Variable) String() string { return toString(n) }
func (n *Unary) String() string    { return toString(n) }
func (n *Binary) String() string   { return toString(n) }
func (n *Call) String() string     { return toString(n) }

// formatNum formats v in the shortest form that reads back as v. Numbers
// that are not finite have no literal; they print as quotients that
// evaluate to them.
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

// write writes n in infix form. Parts of a tree that Check rejects print in
// a form Parse rejects: a missing node as <nil>, an unknown operator as
// Op(n).
func write(b *strings.Builder, n Node) {
	if isNil(n) {
		b.WriteString("<nil>")
		return
	}
	switch n := n.(type) {
	case *Number:
		b.WriteString(formatNum(n.Value))
	case *Variable:
		b.WriteString(n.Name)
	case *Unary:
		b.WriteString(n.Op.String())
		if x, ok := n.X.(*Number); ok && x != nil && x.Value >= 0 && !math.IsInf(x.Value, 0) {
			// -2 would read back as the literal -2, not as the
			// negation of 2.
			b.WriteByte('(')
			write(b, x)
			b.WriteByte(')')
			return
		}
		writeMin(b, n.X, precUnary)
	case *Binary:
		switch n.Op {
		case OpAdd, OpSub:
			writeMin(b, n.L, precAdd)
			b.WriteByte(' ')
			b.WriteByte(byte(n.Op))
			b.WriteByte(' ')
			writeMin(b, n.R, precMul)
		case OpMul, OpDiv:
			writeMin(b, n.L, precMul)
			b.WriteByte(byte(n.Op))
			writeMin(b, n.R, precUnary)
		case OpPow:
			writeMin(b, n.L, precAtom)
			b.WriteByte('^')
			writeMin(b, n.R, precUnary)
		default:
			writeMin(b, n.L, precAtom)
			b.WriteString(" " + n.Op.String() + " ")
			writeMin(b, n.R, precAtom)
		}
	case *Call:
		b.WriteString(n.Func)
		b.WriteByte('(')
		for i, a := range n.Args {
			if i > 0 {
				b.WriteString(", ")
			}
			write(b, a)
		}
		b.WriteByte(')')
	default:
		fmt.Fprintf(b, "<%T>", n)
	}
}
