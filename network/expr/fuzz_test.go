package expr

import (
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
