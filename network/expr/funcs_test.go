package expr

import (
	"math"
	"testing"
)

// TestMoreFunctions checks the trigonometric, hyperbolic, rounding and
// switch functions against Go's math package (compiled and tree
// evaluation), their derivatives against central differences (common
// practice), and that they print and parse back.
func TestMoreFunctions(t *testing.T) {
	cases := []struct {
		src  string
		x    float64
		want float64
	}{
		{"sin(x)", 0.7, math.Sin(0.7)},
		{"cos(2*x)", 0.7, math.Cos(1.4)},
		{"tan(x)", 0.3, math.Tan(0.3)},
		{"asin(x/2)", 0.7, math.Asin(0.35)},
		{"acos(x/2)", 0.7, math.Acos(0.35)},
		{"atan(x^2)", 0.7, math.Atan(0.49)},
		{"sinh(x)", 0.7, math.Sinh(0.7)},
		{"cosh(x)", 0.7, math.Cosh(0.7)},
		{"tanh(3*x)", 0.7, math.Tanh(2.1)},
		{"asinh(x)", 0.7, math.Asinh(0.7)},
		{"acosh(1+x)", 0.7, math.Acosh(1.7)},
		{"atanh(x/2)", 0.7, math.Atanh(0.35)},
		{"floor(3*x)*x", 0.7, 2 * 0.7},
		{"ceil(3*x)*x", 0.7, 3 * 0.7},
		{"factorial(5*x)*x", 0.7, 6 * 0.7}, // 3! (5·0.7 = 3.5)
		{"ifle(x, 1, x^2, 5)", 0.7, 0.49},
		{"ifle(x, 0.5, x^2, 5*x)", 0.7, 3.5},
	}
	for _, c := range cases {
		n, err := Parse(c.src)
		if err != nil {
			t.Fatalf("%s: %v", c.src, err)
		}
		env := func(string) float64 { return c.x }
		if got := evalTree(n, env); math.Abs(got-c.want) > 1e-15*math.Max(1, math.Abs(c.want)) {
			t.Errorf("%s at %v: tree gives %v, want %v", c.src, c.x, got, c.want)
		}
		if got := evalAsCompiled(n, env); math.Abs(got-c.want) > 1e-15*math.Max(1, math.Abs(c.want)) {
			t.Errorf("%s at %v: program gives %v, want %v", c.src, c.x, got, c.want)
		}
		back, err := Parse(n.String())
		if err != nil || !Equal(back, n) {
			t.Errorf("%s prints as %q, which does not parse back (%v)", c.src, n.String(), err)
		}
		d := Diff(n, "x")
		f := func(x float64) float64 { return evalTree(n, func(string) float64 { return x }) }
		num := centralDiff(f, c.x)
		if got := evalAsCompiled(d, env); math.Abs(got-num) > 1e-7*math.Max(1, math.Abs(num)) {
			t.Errorf("d/dx %s at %v = %s gives %v; central differences give %v", c.src, c.x, d, got, num)
		}
	}
}
