package expr

import (
	"math"
	"strings"
	"sync"
	"testing"
)

// xyzSlot maps x, y, z to slots 0, 1, 2.
func xyzSlot(name string) (int, bool) {
	i := strings.Index("xyz", name)
	return i, len(name) == 1 && i >= 0
}

// TestEvalAgainstGo compares compiled programs with the same formulas written
// as Go code using the standard math package (the reference).
func TestEvalAgainstGo(t *testing.T) {
	tests := []struct {
		src string
		fn  func(x, y, z float64) float64
	}{
		{"x + y*z", func(x, y, z float64) float64 { return x + y*z }},
		{"x - y - z", func(x, y, z float64) float64 { return x - y - z }},
		{"x/y/z", func(x, y, z float64) float64 { return x / y / z }},
		{"2 - x", func(x, y, z float64) float64 { return 2 - x }},
		{"2/x", func(x, y, z float64) float64 { return 2 / x }},
		{"x - 2", func(x, y, z float64) float64 { return x - 2 }},
		{"x/3", func(x, y, z float64) float64 { return x / 3 }},
		{"y - x*z", func(x, y, z float64) float64 { return y - x*z }},
		{"y/(x*z)", func(x, y, z float64) float64 { return y / (x * z) }},
		{"x^y", func(x, y, z float64) float64 { return math.Pow(x, y) }},
		{"y^x", func(x, y, z float64) float64 { return math.Pow(y, x) }},
		{"(x+z)^(y*z)", func(x, y, z float64) float64 { return math.Pow(x+z, y*z) }},
		{"x^2.5 + 2^x + 1.5^(x+y)", func(x, y, z float64) float64 {
			return math.Pow(x, 2.5) + math.Pow(2, x) + math.Pow(1.5, x+y)
		}},
		{"x^2 + y^3 - z^-1 + x^-2 + y^7 + z^-5 + x^0.5 + y^-0.5", func(x, y, z float64) float64 {
			return x*x + y*y*y - 1/z + 1/(x*x) + math.Pow(y, 7) + math.Pow(z, -5) + math.Sqrt(x) + 1/math.Sqrt(y)
		}},
		{"-x^2", func(x, y, z float64) float64 { return -(x * x) }},
		{"exp(-x*y) + log(z) + log10(x*z) + sqrt(y)", func(x, y, z float64) float64 {
			return math.Exp(-x*y) + math.Log(z) + math.Log10(x*z) + math.Sqrt(y)
		}},
		{"abs(x - y) + min(x, y*z) - max(z, x)", func(x, y, z float64) float64 {
			return math.Abs(x-y) + math.Min(x, y*z) - math.Max(z, x)
		}},
		{"pow(x, y) - pow(2, z)", func(x, y, z float64) float64 { return math.Pow(x, y) - math.Pow(2, z) }},
		{"x*y/(1 + x + y^2/z)", func(x, y, z float64) float64 { return x * y / (1 + x + y*y/z) }},
		{"(x + 1)*(y + 2)*(z + 3) - (x - y)*(y - z)", func(x, y, z float64) float64 {
			return (x+1)*(y+2)*(z+3) - (x-y)*(y-z)
		}},
		{"3*(2*x)/4 + 0*y + 1*z - (-(-x))", func(x, y, z float64) float64 { return 3*(2*x)/4 + z - x }},
		{"2^3^2*x", func(x, y, z float64) float64 { return 512 * x }},
		{"min(max(x, y), z)^2", func(x, y, z float64) float64 { m := math.Min(math.Max(x, y), z); return m * m }},
	}
	points := [][3]float64{{1.3, 0.7, 2.1}, {0.2, 3.5, 0.9}, {4, 1, 0.25}, {2.5, 2.5, 1e-3}}
	for _, tt := range tests {
		n, err := Parse(tt.src)
		if err != nil {
			t.Fatalf("Parse(%q): %v", tt.src, err)
		}
		p, err := Compile(n, xyzSlot)
		if err != nil {
			t.Fatalf("Compile(%q): %v", tt.src, err)
		}
		for _, pt := range points {
			want := tt.fn(pt[0], pt[1], pt[2])
			got := p.Eval(pt[:])
			if math.Abs(got-want) > 1e-14*math.Max(1, math.Abs(want)) {
				t.Errorf("%s at %v = %v, want %v", tt.src, pt, got, want)
			}
			// The tree walker used for constant folding must agree too.
			tree := evalTree(n, func(name string) float64 { i, _ := xyzSlot(name); return pt[i] })
			if math.Abs(tree-want) > 1e-14*math.Max(1, math.Abs(want)) {
				t.Errorf("evalTree(%s) at %v = %v, want %v", tt.src, pt, tree, want)
			}
		}
	}
}

func TestIntegerPowers(t *testing.T) {
	// Repeated squaring against math.Pow for integer exponents.
	for n := -12; n <= 12; n++ {
		for _, x := range []float64{-2.5, -1, 0.3, 1.7, 3} {
			want := math.Pow(x, float64(n))
			if got := powi(x, n); math.Abs(got-want) > 4e-16*float64(abs(n)+1)*math.Abs(want) {
				t.Errorf("powi(%v, %d) = %v, want %v", x, n, got, want)
			}
		}
	}
	// x^2 at x = 0 and 0^-1 follow IEEE arithmetic as math.Pow does.
	p, _ := Compile(Pow(Var("x"), Num(-1)), xyzSlot)
	if got := p.Eval([]float64{0}); !math.IsInf(got, 1) {
		t.Errorf("0^-1 = %v, want +Inf", got)
	}
}

func abs(n int) int {
	if n < 0 {
		return -n
	}
	return n
}

func TestCompileErrors(t *testing.T) {
	n, _ := Parse("k*A + kb*B")
	_, err := Compile(n, func(name string) (int, bool) { return 0, name == "k" || name == "A" })
	if err == nil || !strings.Contains(err.Error(), `unknown variable "kb" at column 7`) {
		t.Errorf("Compile with an unknown variable: %v", err)
	}
	_, err = Compile(n, func(string) (int, bool) { return -1, true })
	if err == nil || !strings.Contains(err.Error(), "invalid slot -1") {
		t.Errorf("Compile with a negative slot: %v", err)
	}
	n, _ = Parse("x^2")
	if _, err := Compile(n, func(string) (int, bool) { return 0, false }); err == nil {
		t.Error("Compile of x^2 with unknown x succeeded")
	}
}

func TestEvalShortVars(t *testing.T) {
	n, _ := Parse("x + z")
	p, err := Compile(n, xyzSlot)
	if err != nil {
		t.Fatal(err)
	}
	if p.Slots() != 3 {
		t.Errorf("Slots() = %d, want 3", p.Slots())
	}
	if got := p.Eval([]float64{1, 2}); !math.IsNaN(got) {
		t.Errorf("Eval with too few values = %v, want NaN", got)
	}
}

func TestEvalNoAllocs(t *testing.T) {
	n, _ := Parse("a1/(1 + (V/K)^n) + min(V, K)*exp(-K) - abs(V - n)^3 + pow(K, V)")
	d := Diff(n, "V") // uses the internal sign and ifle functions too
	slot := func(name string) (int, bool) {
		i := strings.Index("a1 V  K  n", name)
		return i / 3, i >= 0
	}
	for _, e := range []Node{n, d} {
		p, err := Compile(e, slot)
		if err != nil {
			t.Fatal(err)
		}
		vars := []float64{2, 0.7, 1.3, 2.2}
		var sum float64
		if a := testing.AllocsPerRun(100, func() { sum += p.Eval(vars) }); a != 0 {
			t.Errorf("Eval of %s allocates %v times per call", e, a)
		}
		if math.IsNaN(sum) {
			t.Errorf("Eval of %s is NaN", e)
		}
	}
}

func TestClone(t *testing.T) {
	n, _ := Parse("(x + y)*(y + z)*(z + x)")
	p, err := Compile(n, xyzSlot)
	if err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	for g := range 4 {
		q := p.Clone()
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range 1000 {
				x, y, z := float64(g), float64(i), 0.5
				if got, want := q.Eval([]float64{x, y, z}), (x+y)*(y+z)*(z+x); got != want {
					t.Errorf("clone %d: got %v, want %v", g, got, want)
					return
				}
			}
		}()
	}
	wg.Wait()
}
