package expr

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"
)

func TestRoundTrip(t *testing.T) {
	tests := []struct{ in, want string }{
		{"a+b*c", "a + b*c"},
		{"(a+b)*c", "(a + b)*c"},
		{"a-(b-c)", "a - (b - c)"},
		{"a-b-c", "a - b - c"},
		{"a/(b*c)", "a/(b*c)"},
		{"a/b*c", "a/b*c"},
		{"2^3^2", "2^3^2"},
		{"(2^3)^2", "(2^3)^2"},
		{"-2^2", "-2^2"},
		{"(-2)^2", "(-2)^2"},
		{"2*-3", "2*-3"},
		{"a - -b", "a - -b"},
		{"+x", "x"},
		{"--x", "--x"},
		{"-(a+b)", "-(a + b)"},
		{"x^-y^2", "x^-y^2"},
		{"x^(-y)^2", "x^(-y)^2"},
		{"1.5e-3 + .5 + 2E+4", "0.0015 + 0.5 + 20000"},
		{"1e21*k", "1e+21*k"},
		{"pow(a, b+1)", "pow(a, b + 1)"},
		{"min(a,max(b,c))", "min(a, max(b, c))"},
		{"exp(-k*t)*log10(x)", "exp(-k*t)*log10(x)"},
		{"sqrt(abs(x)) / log(y)", "sqrt(abs(x))/log(y)"},
		{"a1/(1 + (V/K)^n)", "a1/(1 + (V/K)^n)"},
		{" \tVmax * S\n/ (Km + S) ", "Vmax*S/(Km + S)"},
		{"_x1 + A_2", "_x1 + A_2"},
	}
	for _, tt := range tests {
		n, err := Parse(tt.in)
		if err != nil {
			t.Errorf("Parse(%q): %v", tt.in, err)
			continue
		}
		if got := n.String(); got != tt.want {
			t.Errorf("Parse(%q).String() = %q, want %q", tt.in, got, tt.want)
		}
		m, err := Parse(n.String())
		if err != nil {
			t.Errorf("re-parse of %q: %v", n, err)
			continue
		}
		if !Equal(n, m) {
			t.Errorf("re-parse of %q gives a different tree %q", n, m)
		}
	}
}

// evalString parses, compiles and evaluates src with the given variables.
func evalString(t *testing.T, src string, env map[string]float64) float64 {
	t.Helper()
	n, err := Parse(src)
	if err != nil {
		t.Fatalf("Parse(%q): %v", src, err)
	}
	names := Vars(n)
	p, err := Compile(n, func(name string) (int, bool) {
		i := slices.Index(names, name)
		return i, i >= 0
	})
	if err != nil {
		t.Fatalf("Compile(%q): %v", src, err)
	}
	vals := make([]float64, len(names))
	for i, name := range names {
		v, ok := env[name]
		if !ok {
			t.Fatalf("%q: no value for %s", src, name)
		}
		vals[i] = v
	}
	return p.Eval(vals)
}

func TestPrecedence(t *testing.T) {
	// Expected values follow the usual conventions of mathematical notation
	// (common practice): ^ is right-associative and binds tighter than unary
	// minus; * and / bind tighter than + and -; all but ^ are left-associative.
	tests := []struct {
		in   string
		want float64
	}{
		{"2^3^2", 512},
		{"(2^3)^2", 64},
		{"-2^2", -4},
		{"(-2)^2", 4},
		{"2*-3", -6},
		{"2^-1", 0.5},
		{"2^-1^2", 0.5}, // 2^(-(1^2))
		{"2-3-4", -5},
		{"2/4/2", 0.25},
		{"2+3*4", 14},
		{"2*3^2", 18},
		{"-x^2", -9},
		{"--3", 3},
		{"+3", 3},
		{"- -3 - -3", 6},
		{".5 + 1.5e-3 + 2E+4", 20000.5015},
		{"pow(2, 10)", 1024},
		{"x^3", 27},
		{"min(x, 2) + max(x, 2)", 5},
	}
	env := map[string]float64{"x": 3}
	for _, tt := range tests {
		if got := evalString(t, tt.in, env); math.Abs(got-tt.want) > 1e-12*math.Abs(tt.want) {
			t.Errorf("%s = %v, want %v", tt.in, got, tt.want)
		}
	}
}

func TestParseErrors(t *testing.T) {
	tests := []struct {
		in   string
		col  int
		want string
	}{
		{"", 1, "expected an expression, found end of input"},
		{"   ", 4, "expected an expression"},
		{"2 3", 3, `expected an operator (+ - * / ^) after "2", found number "3"`},
		{"3x", 2, `after "3", found name "x"`},
		{"exp(", 5, `expected a number, name or "(" after "(", found end of input`},
		{"a*", 3, `expected a number, name or "(" after "*", found end of input`},
		{"a + * b", 5, `expected a number, name or "(" after "+", found "*"`},
		{"(a+b", 1, `unclosed "("`},
		{"x*(a+(b", 6, `unclosed "("`},
		{"exp(x", 4, `unclosed "("`},
		{"(a b)", 4, `expected an operator or ")" after "a", found name "b"`},
		{"a)", 2, `unmatched ")"`},
		{"()", 2, `found ")"`},
		{"a,b", 2, `commas only separate the arguments`},
		{"(a,b)", 3, `commas only separate the arguments`},
		{"foo(x)", 1, "unknown function foo; known: exp, log, log10, sqrt, abs, min, max, pow"},
		{"2*sign(x)", 3, "unknown function sign"},
		{"exp(x, y)", 1, "exp takes 1 argument, found 2"},
		{"min(x)", 1, "min takes 2 arguments, found 1"},
		{"k*max()", 3, "max takes 2 arguments, found 0"},
		{"log + 1", 1, `log is a function; expected "("`},
		{"a $ b", 3, `unexpected character '$'`},
		{"αβ", 1, `unexpected character 'α'`},
		{"é + 1 + #", 1, `unexpected character 'é'`},
		{"x + é", 5, `unexpected character 'é'`}, // columns count runes, not bytes
		{"2e", 1, `malformed number "2e": expected digits in the exponent`},
		{"1.5e+", 1, `malformed number "1.5e+"`},
		{".", 1, `a lone "." is not a number`},
		{"1e999", 1, "number 1e999 is too large"},
		{"1.2.3", 4, `found number ".3"`},
		{strings.Repeat("(", 600) + "x" + strings.Repeat(")", 600), 501, "nested too deeply"},
	}
	for _, tt := range tests {
		n, err := Parse(tt.in)
		var e *Error
		if !errors.As(err, &e) {
			t.Errorf("Parse(%q) = %v, %v; want an *Error", tt.in, n, err)
			continue
		}
		if e.Col != tt.col || !strings.Contains(e.Msg, tt.want) {
			t.Errorf("Parse(%q) error = %q at column %d; want column %d and %q", tt.in, e.Msg, e.Col, tt.col, tt.want)
		}
		if !strings.HasPrefix(err.Error(), "column ") {
			t.Errorf("Parse(%q) error %q lacks the column prefix", tt.in, err)
		}
	}
}

func TestCheck(t *testing.T) {
	tests := []struct {
		in   string
		cols []int
		want string
	}{
		{"k*A/(1+B)", nil, ""},
		{"1/0", []int{3}, "division by zero"},
		{"x/(0.0) + y/-0", []int{4, 13}, "division by zero"},
		{"log(0) + log10(-2)", []int{5, 16}, "expected a positive argument"},
		{"sqrt(-1)", []int{6}, "expected a non-negative argument"},
		{"1/(2-2)", nil, ""}, // only literal zeros are reported
	}
	for _, tt := range tests {
		n, err := Parse(tt.in)
		if err != nil {
			t.Fatalf("Parse(%q): %v", tt.in, err)
		}
		errs := Check(n)
		var cols []int
		for _, e := range errs {
			cols = append(cols, e.Col)
			if !strings.Contains(e.Msg, tt.want) {
				t.Errorf("Check(%q): message %q lacks %q", tt.in, e.Msg, tt.want)
			}
		}
		if !slices.Equal(cols, tt.cols) {
			t.Errorf("Check(%q) columns = %v, want %v (%v)", tt.in, cols, tt.cols, errs)
		}
	}
	// Trees not made by Parse can hold bad calls; Check reports them.
	bad := Add(Var("x"), &Call{Func: "min", Args: []Node{Var("x")}, Col: 5})
	if errs := Check(bad); len(errs) != 1 || errs[0].Col != 5 || !strings.Contains(errs[0].Msg, "min takes 2 arguments") {
		t.Errorf("Check of min with one argument = %v", errs)
	}
	if errs := Check(&Call{Func: "foo", Args: []Node{Var("x")}}); len(errs) != 1 || !strings.Contains(errs[0].Msg, "unknown function") {
		t.Errorf("Check of unknown function = %v", errs)
	}
}

func TestVars(t *testing.T) {
	n, err := Parse("k2*B + k1*A*B - exp(-t/tau)*k2 + min(A, C)")
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"k2", "B", "k1", "A", "t", "tau", "C"}
	if got := Vars(n); !slices.Equal(got, want) {
		t.Errorf("Vars = %v, want %v", got, want)
	}
}

func TestBuilders(t *testing.T) {
	n := Div(Mul(Var("Vmax"), Var("S")), Add(Var("Km"), Var("S")))
	if got, want := n.String(), "Vmax*S/(Km + S)"; got != want {
		t.Errorf("built %q, want %q", got, want)
	}
	m := Sub(Neg(Pow(Var("x"), Num(-2))), Num(1.5))
	if got, want := m.String(), "-x^-2 - 1.5"; got != want {
		t.Errorf("built %q, want %q", got, want)
	}
	if v, ok := Const(Neg(Num(2))); !ok || v != -2 {
		t.Errorf("Const(-(2)) = %v, %v", v, ok)
	}
	if _, ok := Const(Var("x")); ok {
		t.Error("Const(x) reports a constant")
	}
}
