package expr

import (
	"fmt"
	"math"
	"strings"
)

// fnID identifies a function, public or internal.
type fnID uint8

const (
	fnExp fnID = iota
	fnLog
	fnLog10
	fnSqrt
	fnAbs
	fnMin
	fnMax
	fnPow
	fnIfLE // ifle(a, b, x, y): x when a <= b, else y
	fnSin
	fnCos
	fnTan
	fnAsin
	fnAcos
	fnAtan
	fnSinh
	fnCosh
	fnTanh
	fnAsinh
	fnAcosh
	fnAtanh
	fnFloor
	fnCeil
	fnFactorial
	// Internal functions appear only in derivatives; Parse rejects them.
	fnSign // sign(x): -1, 0 or 1
	numFuncs
)

type funcInfo struct {
	name   string
	arity  int
	public bool
}

var funcs = [numFuncs]funcInfo{
	fnExp:       {"exp", 1, true},
	fnLog:       {"log", 1, true},
	fnLog10:     {"log10", 1, true},
	fnSqrt:      {"sqrt", 1, true},
	fnAbs:       {"abs", 1, true},
	fnMin:       {"min", 2, true},
	fnMax:       {"max", 2, true},
	fnPow:       {"pow", 2, true},
	fnIfLE:      {"ifle", 4, true},
	fnSin:       {"sin", 1, true},
	fnCos:       {"cos", 1, true},
	fnTan:       {"tan", 1, true},
	fnAsin:      {"asin", 1, true},
	fnAcos:      {"acos", 1, true},
	fnAtan:      {"atan", 1, true},
	fnSinh:      {"sinh", 1, true},
	fnCosh:      {"cosh", 1, true},
	fnTanh:      {"tanh", 1, true},
	fnAsinh:     {"asinh", 1, true},
	fnAcosh:     {"acosh", 1, true},
	fnAtanh:     {"atanh", 1, true},
	fnFloor:     {"floor", 1, true},
	fnCeil:      {"ceil", 1, true},
	fnFactorial: {"factorial", 1, true},
	fnSign:      {"sign", 1, false},
}

// lookupFunc returns the function called name that Parse accepts.
// IsFunction reports whether name is a function of the expression
// language (exp, log, ifle, …), which a bare name cannot stand for.
func IsFunction(name string) bool {
	_, ok := lookupFunc(name)
	return ok
}

func lookupFunc(name string) (fnID, bool) {
	id, ok := funcByName(name)
	return id, ok && funcs[id].public
}

// funcByName returns the function called name, public or internal.
func funcByName(name string) (fnID, bool) {
	for id, f := range funcs {
		if f.name == name {
			return fnID(id), true
		}
	}
	return 0, false
}

// knownFuncs lists the public function names, comma separated.
func knownFuncs() string {
	var names []string
	for _, f := range funcs {
		if f.public {
			names = append(names, f.name)
		}
	}
	return strings.Join(names, ", ")
}

// unknownFuncMsg is the message for a call of an unknown function in a tree.
func unknownFuncMsg(name string) string {
	return fmt.Sprintf("unknown function %q; known: %s, and in derivatives sign", name, knownFuncs())
}

func arityMsg(name string, want, got int) string {
	return fmt.Sprintf("%s takes %s, found %d", name, argWords(want), got)
}

func nilArgMsg(name string, i int) string {
	return fmt.Sprintf("argument %d of %s is missing (nil)", i+1, name)
}

func sign(x float64) float64 {
	switch {
	case x > 0:
		return 1
	case x < 0:
		return -1
	}
	return x // 0, -0 or NaN
}

// apply evaluates function fn at args; len(args) must equal its arity.
func apply(fn fnID, a []float64) float64 {
	switch fn {
	case fnExp:
		return math.Exp(a[0])
	case fnLog:
		return math.Log(a[0])
	case fnLog10:
		return math.Log10(a[0])
	case fnSqrt:
		return math.Sqrt(a[0])
	case fnAbs:
		return math.Abs(a[0])
	case fnMin:
		return math.Min(a[0], a[1])
	case fnMax:
		return math.Max(a[0], a[1])
	case fnPow:
		return math.Pow(a[0], a[1])
	case fnSign:
		return sign(a[0])
	case fnIfLE:
		if a[0] <= a[1] {
			return a[2]
		}
		return a[3]
	}
	return apply1(fn, a[0])
}

// apply1 evaluates the one-argument functions that have no opcode of
// their own (trigonometric, hyperbolic, floor and ceil); NaN for others.
func apply1(fn fnID, x float64) float64 {
	switch fn {
	case fnSin:
		return math.Sin(x)
	case fnCos:
		return math.Cos(x)
	case fnTan:
		return math.Tan(x)
	case fnAsin:
		return math.Asin(x)
	case fnAcos:
		return math.Acos(x)
	case fnAtan:
		return math.Atan(x)
	case fnSinh:
		return math.Sinh(x)
	case fnCosh:
		return math.Cosh(x)
	case fnTanh:
		return math.Tanh(x)
	case fnAsinh:
		return math.Asinh(x)
	case fnAcosh:
		return math.Acosh(x)
	case fnAtanh:
		return math.Atanh(x)
	case fnFloor:
		return math.Floor(x)
	case fnCeil:
		return math.Ceil(x)
	case fnFactorial:
		// n! of the whole part n of x (NaN below 0), as MathML defines
		// factorial on whole numbers; Γ(n+1) is exact up to 22!.
		if x < 0 {
			return math.NaN()
		}
		return math.Gamma(math.Floor(x) + 1)
	}
	return math.NaN()
}

// evalTree evaluates n directly, looking variables up with env. It is slow
// and used for constant folding and in tests; use Compile for speed. n must
// be well formed (see wellFormed).
func evalTree(n Node, env func(string) float64) float64 {
	switch n := n.(type) {
	case *Number:
		return n.Value
	case *Variable:
		return env(n.Name)
	case *Unary:
		return -evalTree(n.X, env)
	case *Binary:
		return binop(n.Op, evalTree(n.L, env), evalTree(n.R, env))
	case *Call:
		a := make([]float64, len(n.Args))
		for i, m := range n.Args {
			a[i] = evalTree(m, env)
		}
		id, _ := funcByName(n.Func)
		return apply(id, a)
	}
	return math.NaN()
}

func binop(op Op, a, b float64) float64 {
	switch op {
	case '+':
		return a + b
	case '-':
		return a - b
	case '*':
		return a * b
	case '/':
		return a / b
	case '^':
		return math.Pow(a, b)
	}
	return math.NaN()
}
