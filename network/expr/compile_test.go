package expr

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// evalAsCompiled evaluates n as Compile defines it: the simplified tree,
// left to right, with the constant powers of emitPowConst (x^2 is x*x, x^0.5
// is sqrt(x), other small integer powers use repeated squaring). The fused
// instructions must give bit-identical results.
func evalAsCompiled(n Node, env func(string) float64) float64 {
	switch n := n.(type) {
	case *Number:
		return n.Value
	case *Variable:
		return env(n.Name)
	case *Unary:
		return -evalAsCompiled(n.X, env)
	case *Binary:
		l := evalAsCompiled(n.L, env)
		if e, ok := numOf(n.R); ok && n.Op == OpPow {
			switch {
			case e == 2:
				return l * l
			case e == 3:
				return l * l * l
			case e == -1:
				return 1 / l
			case e == 0.5:
				return math.Sqrt(l)
			case e == -0.5:
				return 1 / math.Sqrt(l)
			case e == math.Trunc(e) && math.Abs(e) <= 64:
				return powi(l, int(e))
			}
		}
		return binop(n.Op, l, evalAsCompiled(n.R, env))
	case *Call:
		a := make([]float64, len(n.Args))
		for i, m := range n.Args {
			a[i] = evalAsCompiled(m, env)
		}
		id, _ := funcByName(n.Func)
		return apply(id, a)
	}
	return math.NaN()
}

// randomExpr writes a random expression over x, y, z and w with at most
// depth levels, biased towards the sums of products and quotients found in
// rate laws.
func randomExpr(r *rand.Rand, depth int) string {
	leaf := func() string {
		if r.IntN(4) == 0 {
			return []string{"2", "0.5", "1.7", "3"}[r.IntN(4)]
		}
		return []string{"x", "y", "z", "w"}[r.IntN(4)]
	}
	if depth == 0 || r.IntN(5) == 0 {
		return leaf()
	}
	sub := func() string { return randomExpr(r, depth-1) }
	switch k := r.IntN(12); {
	case k < 3:
		return sub() + []string{" + ", " - "}[r.IntN(2)] + sub()
	case k < 6:
		return sub() + "*" + leaf() + "*" + leaf()
	case k < 8:
		return "(" + sub() + ")" + []string{"*", "/"}[r.IntN(2)] + "(" + sub() + ")"
	case k < 10:
		e := []string{"2", "3", "-1", "0.5", "-0.5", "4", "-3", "2.5", "y"}[r.IntN(9)]
		return leaf() + "^" + e
	case k < 11:
		return []string{"exp", "sqrt", "abs", "log"}[r.IntN(4)] + "(" + sub() + ")"
	default:
		return []string{"min", "max"}[r.IntN(2)] + "(" + sub() + ", " + sub() + ")"
	}
}

func sameFloat(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
}

// TestCompileBitIdentical checks that the fused instructions compute exactly
// what the unfused operations of the simplified tree compute.
func TestCompileBitIdentical(t *testing.T) {
	slot := func(name string) (int, bool) {
		i := strings.Index("xyzw", name)
		return i, len(name) == 1 && i >= 0
	}
	srcs := []string{
		"x*y*z - 2*w + y*z^2 - x*w*z + 3*x*y",
		"x*y/(z + w)", "x*y/(2 + z)", "x*y/(z + 0.5)", "1 + x*y/(z + w)", "0.5*x/(y + 1)", "x - y*z^2 + w*x^2", "x + 2*y*z - 3*w*x",
		"(x + y)*z*w + (x - y)*w", "w - x*y*z", "2*x - y*z - 0.5*w", "x*2*y + w",
		"x*y + z*w", "(x + y)*(z*w)", "x*y*z*w - 1", "3*x*y/(2*w)",
	}
	r := rand.New(rand.NewPCG(1, 2))
	for range 400 {
		srcs = append(srcs, randomExpr(r, 4))
	}
	points := [][]float64{{1.3, 0.7, 2.1, 0.4}, {0.2, 3.5, 0.9, 1e-3}, {4, 1, 0.25, 7.5}, {-1.5, 2.5, 1e-3, -0.3}}
	for _, src := range srcs {
		n, err := Parse(src)
		if err != nil {
			t.Fatalf("Parse(%q): %v", src, err)
		}
		p, err := Compile(n, slot)
		if err != nil {
			t.Fatalf("Compile(%q): %v", src, err)
		}
		simple := Simplify(n)
		for _, pt := range points {
			want := evalAsCompiled(simple, func(name string) float64 { i, _ := slot(name); return pt[i] })
			if got := p.Eval(pt); !sameFloat(got, want) {
				t.Errorf("%s at %v = %v, want %v exactly (difference %g)", src, pt, got, want, got-want)
			}
		}
	}
}

// TestProductShapes checks which products become fused instructions.
func TestProductShapes(t *testing.T) {
	slot := func(name string) (int, bool) {
		i := strings.Index("xyzw", name)
		return i, len(name) == 1 && i >= 0
	}
	tests := []struct {
		src   string
		shape shape
	}{
		{"x*y", prodVV}, {"x*y*z", prodVVV}, {"2*x", prodCV}, {"x*2", prodCV}, {"2*x*y", prodCVV},
		{"x*2*y", prodCVV}, {"x*y^2", prodVSq},
		{"x", notProduct}, {"x*y*z*w", notProduct}, {"x*y*2", notProduct}, {"x^2*y", notProduct},
		{"2*x*y^2", notProduct}, {"x*(y*z)", notProduct}, {"x*y^3", notProduct}, {"(x + y)*z", notProduct},
	}
	for _, tt := range tests {
		n, err := Parse(tt.src)
		if err != nil {
			t.Fatal(err)
		}
		c := &compiler{slot: slot}
		pr, err := c.product(n)
		if err != nil {
			t.Fatal(err)
		}
		if pr.shape != tt.shape {
			t.Errorf("product(%s) has shape %d, want %d", tt.src, pr.shape, tt.shape)
		}
	}
	// The mass-action sum of the benchmarks takes a load for the first
	// term and one instruction for each further pair of terms.
	n, _ := Parse("x*y*z - 2*w + y*z^2 - x*w*z + 3*x*y")
	p, err := Compile(n, slot)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.code) != 3 {
		t.Errorf("%s compiles to %d instructions, want 3", n, len(p.code))
	}
}

// TestTwoTerms checks every pair of term kinds and signs: w ± t1 ± t2
// compiles to a load and one instruction, and gives exactly what the unfused
// operations give, also at signed zeros, infinities, NaN and values whose
// products round.
func TestTwoTerms(t *testing.T) {
	slot := func(name string) (int, bool) {
		i := strings.Index("xyzw", name)
		return i, len(name) == 1 && i >= 0
	}
	terms := []string{"0.3*x", "x*0.3", "y*z", "0.7*x*y", "x*1.1*z", "x*y*z", "y*z^2"}
	points := [][]float64{
		{1.3, 0.7, 2.1, 0.4}, {0.1, 0.2, 0.3, -0.6}, {1e308, 10, 1e-308, 1},
		{math.Copysign(0, -1), 0, 1, math.Copysign(0, -1)}, {0, math.Copysign(0, -1), -1, 0},
		{math.Inf(1), 0, 2, 1}, {math.Inf(-1), 1, math.Inf(1), math.Inf(1)}, {math.NaN(), 1, 2, 3},
		{1 + 0x1p-52, 1 - 0x1p-53, 3, -1},
	}
	for _, t1 := range terms {
		for _, t2 := range terms {
			for _, signs := range [][2]string{{"+", "+"}, {"+", "-"}, {"-", "+"}, {"-", "-"}} {
				src := "w " + signs[0] + " " + t1 + " " + signs[1] + " " + t2
				n, err := Parse(src)
				if err != nil {
					t.Fatalf("Parse(%q): %v", src, err)
				}
				p, err := Compile(n, slot)
				if err != nil {
					t.Fatalf("Compile(%q): %v", src, err)
				}
				if len(p.code) != 2 {
					t.Errorf("%s compiles to %d instructions, want 2", src, len(p.code))
				}
				simple := Simplify(n)
				for _, pt := range points {
					want := evalAsCompiled(simple, func(name string) float64 { i, _ := slot(name); return pt[i] })
					if got := p.Eval(pt); !sameFloat(got, want) {
						t.Errorf("%s at %v = %v, want %v exactly", src, pt, got, want)
					}
				}
			}
		}
	}
}
