package expr

import (
	"math"
	"strings"
	"testing"
)

func FuzzParse(f *testing.F) {
	for _, s := range []string{
		"a1/(1 + (V/K)^n)", "Vmax*S/(Km+S)", "k1*A*B - k2*C^2", "2^3^2", "-2^2", "2*-3",
		"exp(-k*t)*log10(x)", "min(a, max(b, c))", "pow(x, y) + sqrt(abs(z))", "1.5e-3 + .5 + 2E+4",
		"x^-2", "--x", "+x", "x/0", "1e308*10", "0^-1",
		"", "2 3", "exp(", "(a+b", "a)", "foo(x)", "min(x)", "a $ b", "2e", ".", "1e999", "αβ",
		"a,b", "()", "exp", strings.Repeat("(", 40) + "x" + strings.Repeat(")", 40), strings.Repeat("-", 600) + "x",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		n, err := Parse(src)
		if err != nil {
			e, ok := err.(*Error)
			if !ok || e.Col < 1 || e.Col > len([]rune(src))+1 || e.Msg == "" {
				t.Fatalf("Parse(%q): bad error %#v", src, err)
			}
			return
		}
		_ = Check(n)
		s := n.String()
		m, err := Parse(s)
		if err != nil {
			t.Fatalf("String %q of %q does not re-parse: %v", s, src, err)
		}
		if m.String() != s {
			t.Fatalf("round trip of %q: %q then %q", src, s, m.String())
		}
		if ss := Simplify(n).String(); true {
			if _, err := Parse(ss); err != nil {
				t.Fatalf("simplified %q of %q does not re-parse: %v", ss, src, err)
			}
		}
		all := func(string) (int, bool) { return 0, true }
		vars := []float64{1.3}
		p, err := Compile(n, all)
		if err != nil {
			t.Fatalf("Compile(%q): %v", src, err)
		}
		_ = p.Eval(vars)
		if names := Vars(n); len(names) > 0 {
			d := Diff(n, names[0])
			q, err := Compile(d, all)
			if err != nil {
				t.Fatalf("Compile(%s), derivative of %q: %v", d, src, err)
			}
			_ = q.Eval(vars)
		}
	})
}

// unshare copies a tree or DAG into a tree with no shared node.
func unshare(n Node) Node {
	switch n := n.(type) {
	case *Number:
		c := *n
		return &c
	case *Variable:
		c := *n
		return &c
	case *Unary:
		return &Unary{Op: n.Op, X: unshare(n.X), Col: n.Col}
	case *Binary:
		return &Binary{Op: n.Op, L: unshare(n.L), R: unshare(n.R), Col: n.Col}
	case *Call:
		args := make([]Node, len(n.Args))
		for i, a := range n.Args {
			args[i] = unshare(a)
		}
		return &Call{Func: n.Func, Args: args, Col: n.Col}
	}
	return n
}

// FuzzCompile checks compiling of first and second derivatives, whose
// shared subexpressions Compile keeps in temporaries: the program gives
// the same bits as the program of the same derivative copied into a tree
// with nothing shared, and evaluates without allocating.
func FuzzCompile(f *testing.F) {
	for _, s := range []string{
		"Vmax*S/(Km+S)", "(1+a*x)*(1+b*x)*(1+c*x)", "x^y*log(x)", "exp(-k*t)*x^3", "min(x, y*x)*max(x, 2)",
		"abs(x - y)/(x + y)^2", "pow(x, x)", "sqrt(x*y)/log10(x+1)", "x*x*x*x*x*x", "a1/(1 + (x/K)^n)",
	} {
		f.Add(s, 1.3, 0.7)
	}
	f.Fuzz(func(t *testing.T, src string, x, y float64) {
		n, err := Parse(src)
		if err != nil || len(src) > 2000 {
			return
		}
		names := append(Vars(n), "x", "y")
		slots := map[string]int{}
		vars := []float64{}
		for _, v := range names {
			if _, ok := slots[v]; !ok {
				slots[v] = len(vars)
				vars = append(vars, []float64{x, y, 1.7, 0.4}[len(vars)%4])
			}
		}
		slot := func(s string) (int, bool) { i, ok := slots[s]; return i, ok }
		for _, v := range names[:1] {
			d := Diff(n, v)
			for _, der := range []Node{d, Diff(d, v)} {
				p, err := Compile(der, slot)
				if err != nil {
					t.Fatalf("Compile(derivative of %q): %v", src, err)
				}
				q, err := Compile(unshare(der), slot)
				if err != nil {
					t.Fatalf("Compile(unshared derivative of %q): %v", src, err)
				}
				a, b := p.Eval(vars), q.Eval(vars)
				if !sameNumber(a, b) && !(math.IsNaN(a) && math.IsNaN(b)) {
					t.Fatalf("derivative of %q by %s: %v with shared parts, %v without", src, v, a, b)
				}
				if allocs := testing.AllocsPerRun(3, func() { p.Eval(vars) }); allocs != 0 {
					t.Fatalf("derivative of %q: %v allocations per Eval", src, allocs)
				}
			}
		}
	})
}
