package expr

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// centralDiff estimates df/dx by central differences with one Richardson
// extrapolation step, error O(h^4) (common practice).
func centralDiff(f func(float64) float64, x float64) float64 {
	h := 1e-3 * math.Max(1, math.Abs(x))
	d1 := (f(x+h) - f(x-h)) / (2 * h)
	d2 := (f(x+h/2) - f(x-h/2)) / h
	return (4*d2 - d1) / 3
}

// genPos returns a random expression over x, y, z that is positive and
// smooth wherever x, y, z lie in [0.5, 2].
func genPos(r *rand.Rand, depth int) Node {
	if depth == 0 || r.IntN(4) == 0 {
		if r.IntN(3) == 0 {
			return Num(0.5 + 2*r.Float64())
		}
		return Var([]string{"x", "y", "z"}[r.IntN(3)])
	}
	a := func() Node { return genPos(r, depth-1) }
	switch r.IntN(11) {
	case 0:
		return Add(a(), a())
	case 1:
		return Mul(a(), a())
	case 2:
		return Div(a(), a())
	case 3:
		return Pow(a(), Num(float64(r.IntN(7)-3))) // integer power
	case 4:
		return Pow(a(), genAny(r, depth-1)) // variable exponent
	case 5:
		return &Call{Func: "exp", Args: []Node{Div(genAny(r, depth-1), a())}}
	case 6:
		return &Call{Func: "sqrt", Args: []Node{a()}}
	case 7:
		return &Call{Func: "pow", Args: []Node{a(), Num(0.5 + r.Float64())}}
	case 8:
		return &Call{Func: "abs", Args: []Node{genAny(r, depth-1)}}
	case 9:
		return &Call{Func: "min", Args: []Node{a(), a()}}
	default:
		return &Call{Func: "max", Args: []Node{a(), a()}}
	}
}

// genAny returns a random expression that is smooth, of any sign, where
// x, y, z lie in [0.5, 2].
func genAny(r *rand.Rand, depth int) Node {
	if depth == 0 {
		return genPos(r, 0)
	}
	a := func() Node { return genPos(r, depth-1) }
	switch r.IntN(6) {
	case 0:
		return Sub(a(), a())
	case 1:
		return Neg(a())
	case 2:
		return &Call{Func: "log", Args: []Node{a()}}
	case 3:
		return &Call{Func: "log10", Args: []Node{a()}}
	case 4:
		return Mul(genAny(r, depth-1), a())
	default:
		return a()
	}
}

// nearKink reports whether some abs, min or max in n is within tol of the
// point where it switches branches.
func nearKink(n Node, env func(string) float64, tol float64) bool {
	near := false
	Walk(n, func(m Node) bool {
		c, ok := m.(*Call)
		if !ok {
			return true
		}
		switch c.Func {
		case "abs":
			near = near || math.Abs(evalTree(c.Args[0], env)) < tol
		case "min", "max":
			near = near || math.Abs(evalTree(c.Args[0], env)-evalTree(c.Args[1], env)) < tol
		}
		return true
	})
	return near
}

// TestDiffRandom checks symbolic derivatives of random expressions against
// central finite differences (common practice), relative accuracy 1e-6.
func TestDiffRandom(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	names := []string{"x", "y", "z"}
	checked, nonzero := 0, 0
	for trial := 0; trial < 600; trial++ {
		n := genAny(r, 1+r.IntN(4))
		pt := [3]float64{0.5 + 1.5*r.Float64(), 0.5 + 1.5*r.Float64(), 0.5 + 1.5*r.Float64()}
		env := func(name string) float64 { i, _ := xyzSlot(name); return pt[i] }
		f := evalTree(n, env)
		if math.IsNaN(f) || math.Abs(f) > 1e8 || nearKink(n, env, 1e-2) {
			continue
		}
		// The compiled program agrees with the tree walker.
		if p, err := Compile(n, xyzSlot); err != nil {
			t.Fatalf("Compile(%s): %v", n, err)
		} else if got := p.Eval(pt[:]); math.Abs(got-f) > 1e-12*math.Max(1, math.Abs(f)) {
			t.Errorf("compiled %s at %v = %v, tree walk gives %v", n, pt, got, f)
		}
		for k, name := range names {
			d := Diff(n, name)
			p, err := Compile(d, xyzSlot)
			if err != nil {
				t.Fatalf("Compile(%s): %v", d, err)
			}
			got := p.Eval(pt[:])
			q := pt
			fd := centralDiff(func(v float64) float64 {
				q[k] = v
				return evalTree(n, func(name string) float64 { i, _ := xyzSlot(name); return q[i] })
			}, pt[k])
			// Rounding in the difference quotient is about eps*|f|/h.
			tol := 1e-6*math.Abs(fd) + 1e-10*math.Max(1, math.Abs(f))
			if math.IsNaN(got) || math.Abs(got-fd) > tol {
				t.Errorf("d/d%s of %s at %v:\n got  %v (from %s)\n want %v (finite differences)", name, n, pt, got, d, fd)
				continue
			}
			checked++
			if got != 0 {
				nonzero++
			}
		}
	}
	if checked < 1000 || nonzero < checked/3 {
		t.Errorf("only %d derivatives checked, %d of them nonzero; the generator is too restrictive", checked, nonzero)
	}
	t.Logf("%d derivatives checked, %d nonzero", checked, nonzero)
}

// TestDiffRateLaws compares derivatives of common rate laws with their
// derivatives worked out by hand (common practice: quotient and power rules).
func TestDiffRateLaws(t *testing.T) {
	type env = map[string]float64
	tests := []struct {
		src, wrt string
		at       env
		want     func(v env) float64
	}{
		// Michaelis–Menten: d/dS Vmax*S/(Km+S) = Vmax*Km/(Km+S)^2.
		{"Vmax*S/(Km+S)", "S", env{"Vmax": 2.5, "S": 0.3, "Km": 0.8},
			func(v env) float64 { return v["Vmax"] * v["Km"] / math.Pow(v["Km"]+v["S"], 2) }},
		// d/dKm Vmax*S/(Km+S) = -Vmax*S/(Km+S)^2.
		{"Vmax*S/(Km+S)", "Km", env{"Vmax": 2.5, "S": 0.3, "Km": 0.8},
			func(v env) float64 { return -v["Vmax"] * v["S"] / math.Pow(v["Km"]+v["S"], 2) }},
		// Hill repression: d/dV a1/(1+(V/K)^n) = -a1*n*(V/K)^(n-1)/(K*(1+(V/K)^n)^2).
		{"a1/(1 + (V/K)^n)", "V", env{"a1": 3, "V": 0.6, "K": 0.9, "n": 2.7},
			func(v env) float64 {
				u := v["V"] / v["K"]
				return -v["a1"] * v["n"] * math.Pow(u, v["n"]-1) / (v["K"] * math.Pow(1+math.Pow(u, v["n"]), 2))
			}},
		// d/dn a1/(1+(V/K)^n) = -a1*(V/K)^n*ln(V/K)/(1+(V/K)^n)^2.
		{"a1/(1 + (V/K)^n)", "n", env{"a1": 3, "V": 0.6, "K": 0.9, "n": 2.7},
			func(v env) float64 {
				u := v["V"] / v["K"]
				return -v["a1"] * math.Pow(u, v["n"]) * math.Log(u) / math.Pow(1+math.Pow(u, v["n"]), 2)
			}},
		// Mass action: d/dA (k1*A^2*B - k2*C) = 2*k1*A*B.
		{"k1*A^2*B - k2*C", "A", env{"k1": 0.7, "A": 1.1, "B": 0.4, "k2": 3, "C": 2},
			func(v env) float64 { return 2 * v["k1"] * v["A"] * v["B"] }},
		// x^2 at x = 0 has derivative 0 by the power rule, not NaN from log(0).
		{"x^2", "x", env{"x": 0}, func(env) float64 { return 0 }},
		// abs has derivative 0 at 0 (a subgradient), and sign(x) elsewhere.
		{"abs(x)", "x", env{"x": 0}, func(env) float64 { return 0 }},
		{"abs(x)", "x", env{"x": -2}, func(env) float64 { return -1 }},
		// min and max differentiate along the branch they choose.
		{"min(3*x, y)", "x", env{"x": 1, "y": 5}, func(env) float64 { return 3 }},
		{"min(3*x, y)", "x", env{"x": 2, "y": 5}, func(env) float64 { return 0 }},
		{"max(3*x, y)", "x", env{"x": 2, "y": 5}, func(env) float64 { return 3 }},
		// exp(-k*t) decay: d/dk = -t*exp(-k*t).
		{"exp(-k*t)", "k", env{"k": 0.3, "t": 2}, func(v env) float64 { return -v["t"] * math.Exp(-v["k"]*v["t"]) }},
		// d/dx log10(x) = 1/(x ln 10); d/dx sqrt(x) = 1/(2 sqrt x).
		{"log10(x) + sqrt(x)", "x", env{"x": 2}, func(v env) float64 { return 1/(2*math.Ln10) + 1/(2*math.Sqrt(2)) }},
		// d/dx 2^x = 2^x ln 2; d/dx pow(x, 3) = 3x^2.
		{"2^x + pow(x, 3)", "x", env{"x": 1.5}, func(v env) float64 { return math.Pow(2, 1.5)*math.Ln2 + 3*1.5*1.5 }},
	}
	for _, tt := range tests {
		n, err := Parse(tt.src)
		if err != nil {
			t.Fatal(err)
		}
		d := Diff(n, tt.wrt)
		names := Vars(d)
		p, err := Compile(d, func(name string) (int, bool) {
			for i, m := range names {
				if m == name {
					return i, true
				}
			}
			return 0, false
		})
		if err != nil {
			t.Fatalf("Compile(%s): %v", d, err)
		}
		vals := make([]float64, len(names))
		for i, m := range names {
			vals[i] = tt.at[m]
		}
		got, want := p.Eval(vals), tt.want(tt.at)
		if math.Abs(got-want) > 1e-13*math.Max(1, math.Abs(want)) {
			t.Errorf("d/d%s %s at %v = %v (from %s), want %v", tt.wrt, tt.src, tt.at, got, d, want)
		}
	}
}

// size counts the nodes of n.
func size(n Node) int {
	k := 0
	Walk(n, func(Node) bool { k++; return true })
	return k
}

func TestDiffCompact(t *testing.T) {
	tests := []struct {
		src, wrt string
		max      int // node count of a hand-simplified derivative, plus slack
	}{
		{"Vmax*S/(Km+S)", "S", 15},    // Vmax/(Km + S) - Vmax*S/(Km + S)^2
		{"a1/(1 + (V/K)^n)", "V", 26}, // -(a1*(n*(V/K)^(n - 1)/K)/(1 + (V/K)^n)^2)
		{"k1*A*B - k2*C", "A", 3},     // k1*B
		{"k1*A*B - k2*C", "C", 2},     // -k2
		{"k1*A*B - k2*C", "D", 1},     // 0
		{"x^3", "x", 5},               // 3*x^2
	}
	for _, tt := range tests {
		n, _ := Parse(tt.src)
		d := Diff(n, tt.wrt)
		if size(d) > tt.max {
			t.Errorf("Diff(%s, %s) = %s has %d nodes, want at most %d", tt.src, tt.wrt, d, size(d), tt.max)
		}
	}
	n, _ := Parse("k1*A*B - k2*C")
	if v, ok := Const(Diff(n, "D")); !ok || v != 0 {
		t.Errorf("derivative with respect to an absent variable is not the literal 0")
	}
}

func TestSimplify(t *testing.T) {
	tests := []struct{ in, want string }{
		{"x + 0", "x"},
		{"0 + x", "x"},
		{"x - 0", "x"},
		{"0 - x", "-x"},
		{"x*1 + 1*y", "x + y"},
		{"x*0 + 0*y + z", "z"},
		{"x/1", "x"},
		{"0/x", "0"},
		{"x^1 + y^0", "x + 1"},
		{"1^x", "1"},
		{"-(-x)", "x"},
		{"a + -b", "a - b"},
		{"a - -b", "a + b"},
		{"-a + b", "b - a"},
		{"(-a)*b", "-(a*b)"},
		{"a/(-b)", "-(a/b)"},
		{"x*2*3", "6*x"},
		{"2*(3*x)", "6*x"},
		{"2*(3/x)", "6/x"},
		{"a*(1/b)", "a/b"},
		{"x - x", "0"},
		{"pow(x, 2)", "x^2"},
		{"2^3^2 + exp(0) + log10(100) + sqrt(16) + abs(-3) + min(1, 2) + max(1, 2)", "525"},
		{"1/0 + exp(1000)", "1/0 + exp(1000)"}, // not folded: infinite
		{"log(-1)", "log(-1)"},                 // not folded: NaN
	}
	for _, tt := range tests {
		n, err := Parse(tt.in)
		if err != nil {
			t.Fatal(err)
		}
		if got := Simplify(n).String(); got != tt.want {
			t.Errorf("Simplify(%s) = %s, want %s", tt.in, got, tt.want)
		}
	}
}

func ExampleDiff() {
	n, _ := Parse("Vmax*S/(Km + S)")
	fmt.Println(Diff(n, "S"))
	fmt.Println(Diff(n, "Vmax"))
	fmt.Println(Diff(n, "t"))
	// Output:
	// Vmax/(Km + S) - Vmax*S/(Km + S)^2
	// S/(Km + S)
	// 0
}

func ExampleParse() {
	_, err := Parse("k1*A*(B + ")
	fmt.Println(err)
	_, err = Parse("hill(S, K)")
	fmt.Println(strings.SplitN(err.Error(), ";", 2)[0])
	// Output:
	// column 11: expected a number, name or "(" after "+", found end of input
	// column 1: unknown function hill
}
