package network

import (
	"fmt"
	"kinetarium/network/expr"
	"math"
	"strings"
	"testing"
)

func baseModel() *Model {
	return &Model{
		Compartments: []Compartment{{Name: "cell", Volume: 1}},
		Species:      []Species{{Name: "E", Initial: 1}, {Name: "S", Initial: 5}, {Name: "ES"}, {Name: "P"}},
		Parameters:   []Parameter{{Name: "kon", Value: 1}, {Name: "koff", Value: 0.1}, {Name: "kcat", Value: 2}},
		Reactions: []Reaction{
			{Name: "bind", Equation: "E + S <=> ES", Rate: NewRate(MassAction, "k", Named("kon"), "k_reverse", Named("koff"))},
			{Name: "cut", Equation: "ES -> E + P", Rate: NewRate(MassAction, "k", Named("kcat"))},
		},
	}
}

func TestValidateClean(t *testing.T) {
	if ps := baseModel().Validate(); len(ps) != 0 {
		t.Errorf("clean model gives %v", ps)
	}
}

func TestValidateTable(t *testing.T) {
	cases := []struct {
		name    string
		edit    func(m *Model)
		section string
		item    string
		field   string
		col     int
		want    string
		sev     Severity
	}{
		{"unknown species", func(m *Model) { m.Reactions[0].Equation = "E + S <=> Q" }, "reactions", "bind", "equation", 11, `unknown species "Q"; declare it`, Error},
		{"equation syntax", func(m *Model) { m.Reactions[1].Equation = "ES => E" }, "reactions", "cut", "equation", 4, "unknown arrow", Error},
		{"parameter as species", func(m *Model) { m.Reactions[1].Equation = "ES -> kon" }, "reactions", "cut", "equation", 7, `"kon" is a parameter, not a species`, Error},
		{"duplicate across kinds", func(m *Model) {
			m.Parameters[0].Name = "S"
			m.Reactions[0].Rate = m.Reactions[0].Rate.With("k", Number(1))
		}, "parameters", "S", "name", 0, `already used by species 2`, Error},
		{"duplicate reaction", func(m *Model) { m.Reactions[1].Name = "bind" }, "reactions", "bind", "name", 0, "already used by reaction 1", Error},
		{"bad name", func(m *Model) { m.Species[3].Name = "P 2"; m.Reactions[1].Equation = "ES -> E" }, "species", "P 2", "name", 0, "not a valid name", Error},
		{"reserved t", func(m *Model) { m.Parameters = append(m.Parameters, Parameter{Name: "t", Value: 1}) }, "parameters", "t", "name", 0, "reserved for time", Error},
		// A species named like a function could never be read in an expression.
		{"function name", func(m *Model) { m.Species = append(m.Species, Species{Name: "exp", Initial: 1}) }, "species", "exp", "name", 0, "is a function of rate expressions", Error},
		{"negative initial", func(m *Model) { m.Species[1].Initial = -2 }, "species", "S", "initial", 0, "initial concentration -2", Error},
		{"zero volume", func(m *Model) { m.Compartments[0].Volume = 0 }, "compartments", "cell", "volume", 0, "expected a positive number", Error},
		{"unknown compartment", func(m *Model) { m.Species[0].Compartment = "nucleus" }, "species", "E", "compartment", 0, `unknown compartment "nucleus"; expected one of cell`, Error},
		{"missing k_reverse", func(m *Model) { m.Reactions[0].Rate = m.Reactions[0].Rate.With("k_reverse", Value{}) }, "reactions", "bind", "rate.k_reverse", 0, "mass_action on a reversible reaction needs k_reverse", Error},
		{"extra k_reverse", func(m *Model) { m.Reactions[1].Rate = m.Reactions[1].Rate.With("k_reverse", Number(1)) }, "reactions", "cut", "rate.k_reverse", 0, "reversible reactions only", Error},
		{"missing k", func(m *Model) { m.Reactions[1].Rate = m.Reactions[1].Rate.With("k", Value{}) }, "reactions", "cut", "rate.k", 0, "Rate constant is missing", Error},
		{"unknown parameter", func(m *Model) { m.Reactions[1].Rate = m.Reactions[1].Rate.With("k", Named("kk")) }, "reactions", "cut", "rate.k", 0, `unknown parameter "kk"`, Error},
		{"negative constant", func(m *Model) { m.Reactions[1].Rate = m.Reactions[1].Rate.With("k", Number(-1)) }, "reactions", "cut", "rate.k", 0, "Rate constant = -1 is not allowed; expected zero or a positive number", Error},
		{"unknown law", func(m *Model) { m.Reactions[1].Rate.Law = "hill" }, "reactions", "cut", "rate.law", 0, `unknown rate law "hill"; expected one of mass_action, michaelis_menten, michaelis_menten_reversible, competitive_inhibition, uncompetitive_inhibition, noncompetitive_inhibition, mixed_inhibition, hill_activation, hill_repression, random_bi, ordered_bi, saturable_transport, expression`, Error},
		{"missing law", func(m *Model) { m.Reactions[1].Rate = Rate{} }, "reactions", "cut", "rate.law", 0, "rate law is missing", Error},
		{"mm both", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", Number(1), "kcat", Named("kcat"), "enzyme", Named("E"), "km", Number(1))}
		}, "reactions", "cut", "rate", 0, "either vmax, or kcat with enzyme, not both", Error},
		{"mm reversible", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S <=> P", Rate: NewRate(MichaelisMenten, "vmax", Number(1), "km", Number(1))}
		}, "reactions", "cut", "equation", 0, "irreversible reactions only", Error},
		{"mm two substrates", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S + ES -> P", Rate: NewRate(MichaelisMenten, "vmax", Number(1), "km", Number(1))}
		}, "reactions", "cut", "equation", 0, "exactly one substrate", Error},
		{"mm enzyme not species", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "kcat", Named("kcat"), "enzyme", Named("kon"), "km", Number(1))}
		}, "reactions", "cut", "rate.enzyme", 0, `Enzyme "kon" is not a species`, Error},
		{"mm missing km", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", Number(1))}
		}, "reactions", "cut", "rate.km", 0, "Km is missing", Error},
		{"mm kcat no enzyme", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "kcat", Number(1), "km", Number(1))}
		}, "reactions", "cut", "rate.enzyme", 0, "needs enzyme", Error},
		{"mm extra k", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", Number(1), "km", Number(1), "k", Number(2))}
		}, "reactions", "cut", "rate.k", 0, "Rate constant is not used by the Michaelis–Menten law", Error},
		{"expr syntax", func(m *Model) { m.Reactions[1].Rate = Rate{Law: Expression, Expression: "kcat*(ES"} }, "reactions", "cut", "rate.expression", 6, "", Error},
		{"expr unknown name", func(m *Model) { m.Reactions[1].Rate = Rate{Law: Expression, Expression: "kcat*ESS"} }, "reactions", "cut", "rate.expression", 6, `unknown name "ESS"`, Error},
		{"expr divide by zero", func(m *Model) { m.Reactions[1].Rate = Rate{Law: Expression, Expression: "kcat*ES/0"} }, "reactions", "cut", "rate.expression", 0, "zero", Error},
		{"expr empty", func(m *Model) { m.Reactions[1].Rate = Rate{Law: Expression} }, "reactions", "cut", "rate.expression", 0, "needs an expression", Error},
		{"t_end", func(m *Model) { m.Simulation.TEnd = -5 }, "simulation", "", "t_end", 0, "expected a positive end time", Error},
		{"points cap", func(m *Model) { m.Simulation.Output.Points = MaxPoints + 1 }, "simulation", "", "output.points", 0, "at most 1000000", Error},
		{"output values cap", func(m *Model) {
			for i := range 60 {
				m.Species = append(m.Species, Species{Name: fmt.Sprintf("X%d", i)})
			}
			m.Simulation.Output.Points = MaxPoints
		}, "simulation", "", "output.points", 0, "more output than this program holds", Error},
		{"spacing", func(m *Model) { m.Simulation.Output.Spacing = "geometric" }, "simulation", "", "output.spacing", 0, `expected "linear" or "log"`, Error},
		{"method", func(m *Model) { m.Simulation.Method = "euler" }, "simulation", "", "method", 0, "expected one of auto, rosenbrock", Error},
		// A negative rate constant, Vmax or kcat, or a Km that is not
		// positive, given through a parameter, is an error at the
		// reaction's field (physical meaning of the constants, common
		// practice: rates of elementary steps and Michaelis constants are
		// not negative, and Km = 0 makes vmax·S/(Km + S) 0/0 at S = 0).
		{"negative parameter as k", func(m *Model) { m.Parameters[2].Value = -3 }, "reactions", "cut", "rate.k", 0, `Rate constant uses parameter "kcat" = -3`, Error},
		{"negative parameter as k_reverse", func(m *Model) { m.Parameters[1].Value = -0.1 }, "reactions", "bind", "rate.k_reverse", 0, `Reverse constant uses parameter "koff" = -0.1`, Error},
		{"negative parameter as vmax", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", Named("kcat"), "km", Number(1))}
			m.Parameters[2].Value = -2
		}, "reactions", "cut", "rate.vmax", 0, `Vmax uses parameter "kcat" = -2`, Error},
		{"negative parameter as kcat", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "kcat", Named("kcat"), "enzyme", Named("E"), "km", Number(1))}
			m.Parameters[2].Value = -2
		}, "reactions", "cut", "rate.kcat", 0, `kcat uses parameter "kcat" = -2`, Error},
		{"zero parameter as km", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", Number(1), "km", Named("kcat"))}
			m.Parameters[2].Value = 0
		}, "reactions", "cut", "rate.km", 0, `Km uses parameter "kcat" = 0, which is not allowed; expected a positive number`, Error},
		{"zero km", func(m *Model) {
			m.Reactions[1] = Reaction{Name: "cut", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", Number(1), "km", Number(0))}
		}, "reactions", "cut", "rate.km", 0, "Km = 0 is not allowed; expected a positive number", Error},
		// Used only in an expression, a negative parameter may be meant.
		{"negative parameter in expression", func(m *Model) {
			m.Reactions[1].Rate = Rate{Law: Expression, Expression: "-kcat*ES"}
			m.Parameters[2].Value = -2
		}, "parameters", "kcat", "value", 0, "negative", Warning},
		// A near miss (edit distance ≤ 2) is suggested.
		{"did you mean parameter", func(m *Model) { m.Reactions[1].Rate = m.Reactions[1].Rate.With("k", Named("kcta")) }, "reactions", "cut", "rate.k", 0, `unknown parameter "kcta"; did you mean "kcat"? Otherwise declare it`, Error},
		{"did you mean species", func(m *Model) { m.Reactions[1].Equation = "ES -> E + PP" }, "reactions", "cut", "equation", 11, `unknown species "PP"; did you mean "P"?`, Error},
		{"did you mean in expression", func(m *Model) { m.Reactions[1].Rate = Rate{Law: Expression, Expression: "kact*ES"} }, "reactions", "cut", "rate.expression", 1, `unknown name "kact"; did you mean "kcat"?`, Error},
		{"unused species", func(m *Model) { m.Species = append(m.Species, Species{Name: "Z"}) }, "species", "Z", "", 0, "takes part in no reaction", Warning},
		{"unused parameter", func(m *Model) { m.Parameters = append(m.Parameters, Parameter{Name: "spare", Value: 1}) }, "parameters", "spare", "", 0, "used by no rate law", Warning},
	}
	for _, c := range cases {
		m := baseModel()
		c.edit(m)
		ps := m.Validate()
		found := false
		for _, p := range ps {
			if p.Section == c.section && p.Item == c.item && p.Field == c.field && p.Severity == c.sev &&
				strings.Contains(p.Message, c.want) && (c.col == 0 || p.Col == c.col) {
				found = true
			}
		}
		if !found {
			t.Errorf("%s: want %s %q %s col %d %q; got %v", c.name, c.section, c.item, c.field, c.col, c.want, ps)
		}
	}
}

// A negative parameter used only in a rate expression is a warning, not
// an error: the model can still be simulated.
func TestNegativeParameterInExpressionOnlyWarns(t *testing.T) {
	m := baseModel()
	m.Reactions[1].Rate = Rate{Law: Expression, Expression: "-kcat*ES"}
	m.Parameters[2].Value = -2
	if errs := m.Validate().Errors(); len(errs) > 0 {
		t.Errorf("errors %v, want none", errs)
	}
	// The same parameter as a mass-action constant as well is an error at
	// that reaction, and no longer only a warning.
	m.Reactions[0].Rate = m.Reactions[0].Rate.With("k", Named("kcat"))
	l := m.Validate()
	if len(l.Errors()) != 1 || l.Errors()[0].Item != "bind" {
		t.Errorf("got %v, want one error, at reaction bind", l)
	}
	for _, p := range l.Warnings() {
		if p.Item == "kcat" {
			t.Errorf("warning %v besides the error", p)
		}
	}
}

// Edit distances of textbook pairs (Levenshtein's definition; "kitten" to
// "sitting" is 3, the standard example), and no suggestion for a name far
// from every declared one.
func TestEditDistance(t *testing.T) {
	for _, c := range []struct {
		a, b string
		d    int
	}{{"kitten", "sitting", 3}, {"kcta", "kcat", 2}, {"", "abc", 3}, {"Km", "Km", 0}, {"flaw", "lawn", 2}} {
		if got := editDistance(c.a, c.b); got != c.d {
			t.Errorf("editDistance(%q, %q) = %d, want %d", c.a, c.b, got, c.d)
		}
	}
	if s := didYouMean("zzzz", map[string]int{"kcat": 0}); s != "" {
		t.Errorf("suggestion %q for a name far from every other", s)
	}
}

func TestValidateCollectsAll(t *testing.T) {
	m := baseModel()
	m.Species[0].Initial = -1
	m.Compartments[0].Volume = -3
	m.Reactions[1].Equation = "ES -> X + Y"
	errs := 0
	for _, p := range m.Validate() {
		if p.Severity == Error {
			errs++
		}
	}
	if errs != 4 {
		t.Errorf("%d errors, want 4: %v", errs, m.Validate())
	}
}

func TestProblemString(t *testing.T) {
	p := Problem{Pos: Pos{Section: "reactions", Item: "bind", Field: "equation", Col: 9}, Message: `unknown species "Q"; declare it under species or fix the name`}
	want := `reaction "bind", equation, column 9: unknown species "Q"; declare it under species or fix the name`
	if p.String() != want {
		t.Errorf("String() = %q, want %q", p.String(), want)
	}
}

func TestParseEquation(t *testing.T) {
	cases := []struct {
		in   string
		want string // canonical form
	}{
		{"A + 2 B -> C", "A + 2 B -> C"},
		{"E + S <=> ES", "E + S <=> ES"},
		{"-> mRNA", "-> mRNA"},
		{"P ->", "P ->"},
		{"∅ → X", "-> X"},
		{"X ⇌ ∅", "X <=>"},
		{"2A+0.5 B→C_1", "2 A + 0.5 B -> C_1"},
		{"A + A -> B", "2 A -> B"},
		{"E + S -> E + P", "E + S -> E + P"},
		// A coefficient in exponent notation followed by a name, and a
		// coefficient stuck to a species whose name starts with e.
		{"1e3 A -> B", "1000 A -> B"},
		{"2.5E-1 A -> B", "0.25 A -> B"},
		{"2e3 -> B", "2 e3 -> B"},
		{"2e3+X -> B", "2 e3 + X -> B"},
	}
	for _, c := range cases {
		eq, err := ParseEquation(c.in)
		if err != nil {
			t.Errorf("ParseEquation(%q): %v", c.in, err)
			continue
		}
		if eq.String() != c.want {
			t.Errorf("ParseEquation(%q) = %q, want %q", c.in, eq.String(), c.want)
		}
	}
	eq, _ := ParseEquation("A + 2 B -> C")
	if eq.Reactants[1].Col != 5 || eq.Products[0].Col != 12 {
		t.Errorf("columns %+v %+v", eq.Reactants, eq.Products)
	}
	bad := []struct {
		in  string
		col int
		msg string
	}{
		{"", 1, "empty"},
		{"A + B", 6, "missing arrow"},
		{"A <-> B", 3, "unknown arrow"},
		{"A -> B -> C", 8, "second arrow"},
		{"A + -> B", 5, "expected a species after"},
		{"->", 1, "both sides are empty"},
		{"0 A -> B", 1, "must be positive"},
		{"A -> 3", 7, "expected a species name"},
		{"A -> B$", 7, `unexpected "$"`},
		{"1.2.3 A -> B", 1, "not a number"},
		{"Ä -> B", 1, "expected a species name"},
		// Review regressions: "∅ + A" was answered `unexpected "+"; expected
		// "+", ...`, and a 400-digit coefficient was called "not a number".
		{"∅ + A -> B", 3, "∅ stands for an empty side"},
		{"A -> ∅ B", 8, "∅ stands for an empty side"},
		{strings.Repeat("9", 400) + " A -> B", 1, "too large"},
	}
	for _, c := range bad {
		_, err := ParseEquation(c.in)
		se, ok := err.(Problem)
		if !ok {
			t.Errorf("ParseEquation(%q) error %v, want a Problem", c.in, err)
			continue
		}
		if se.Col != c.col || se.Field != "equation" || !strings.Contains(se.Message, c.msg) {
			t.Errorf("ParseEquation(%q) = %v, want column %d and %q", c.in, se, c.col, c.msg)
		}
	}
}

func FuzzParseEquation(f *testing.F) {
	for _, s := range []string{"A + 2 B -> C", "E + S <=> ES", "-> mRNA", "P ->", "∅ → X", "2A+0.5B⇌C", "A <-> B", "", "->", "A + + B -> C", "1e5 A -> B"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		eq, err := ParseEquation(s)
		if err != nil {
			if se, ok := err.(Problem); !ok || se.Col < 1 {
				t.Fatalf("error %v without a column", err)
			}
			return
		}
		// The canonical form parses to the same equation.
		eq2, err := ParseEquation(eq.String())
		if err != nil || eq2.String() != eq.String() {
			t.Fatalf("canonical form %q does not re-parse: %v", eq.String(), err)
		}
	})
}

func TestOutputTimes(t *testing.T) {
	lin := OutputTimes(10, Output{Points: 6})
	want := []float64{0, 2, 4, 6, 8, 10}
	for i := range want {
		if lin[i] != want[i] {
			t.Fatalf("linear grid %v, want %v", lin, want)
		}
	}
	lg := OutputTimes(1e4, Output{Points: 5, Spacing: "log", First: 1})
	wantLog := []float64{0, 1, 10, 100, 1000, 10000}
	if len(lg) != len(wantLog) {
		t.Fatalf("log grid %v, want %v", lg, wantLog)
	}
	for i := range wantLog {
		if d := lg[i] - wantLog[i]; d > 1e-9*wantLog[i] || -d > 1e-9*wantLog[i] {
			t.Fatalf("log grid %v, want %v", lg, wantLog)
		}
	}
	if lg[5] != 1e4 {
		t.Errorf("last time %v, want exactly 1e4", lg[5])
	}
	// Near the largest float64, tEnd·i overflowed to +Inf (issue 17: a
	// sweep with t_end 1e308 failed every run).
	huge := OutputTimes(1e308, Output{Points: 5})
	for i, x := range huge {
		if math.IsInf(x, 0) || (i > 0 && !(x > huge[i-1])) || huge[4] != 1e308 {
			t.Fatalf("grid to 1e308: %v", huge)
		}
	}
	tEnd := 50.0
	if d := OutputTimes(tEnd, Output{Spacing: "log"}); len(d) != 201 || d[1] != tEnd*1e-6 || d[200] != 50 {
		t.Errorf("default log grid: %d points from %v to %v", len(d), d[1], d[len(d)-1])
	}
}

// An equation that does not read gets its own message, and no follow-on
// message about k_reverse, whose use depends on the equation (a review
// found "k_reverse applies to reversible reactions only" beside a broken
// "<=>" equation).
func TestBrokenEquationNoFollowOn(t *testing.T) {
	m := baseModel()
	m.Reactions[0].Equation = "E + S <=> " + "+"
	var fields []string
	for _, p := range m.Validate().Errors() {
		if p.Item == "bind" {
			fields = append(fields, p.Field)
		}
	}
	if len(fields) != 1 || fields[0] != "equation" {
		t.Errorf("errors at %v, want only the equation's", fields)
	}
}

// FuzzOutputTimes checks the output grid for any end time and output
// settings Check accepts: it starts at 0, increases strictly (or at least
// never decreases for grids finer than float64 resolves), ends exactly at
// t_end, has the number of points asked for (plus t = 0 on a log grid),
// and holds finite numbers only.
func FuzzOutputTimes(f *testing.F) {
	f.Add(100.0, 200, "linear", 0.0)
	f.Add(5000.0, 200, "log", 0.01)
	f.Add(1e-300, 3, "log", 0.0)
	f.Add(1e300, 1000, "linear", 0.0)
	f.Add(1e308, 5, "linear", 0.0) // tEnd·i overflowed (issue 17)
	f.Add(1.0, 2, "log", 0.999999)
	f.Fuzz(func(t *testing.T, tEnd float64, points int, spacing string, first float64) {
		m := &Model{Simulation: Simulation{TEnd: tEnd, Output: Output{Points: points, Spacing: spacing, First: first}}}
		if _, errs := Check(m); errs.HasErrors() || points > 10_000 {
			return
		}
		sim := m.Simulation.WithDefaults()
		ts := OutputTimes(sim.TEnd, sim.Output)
		want := sim.Output.Points
		if sim.Output.Spacing == "log" {
			want++
		}
		if len(ts) != want || ts[0] != 0 || ts[len(ts)-1] != sim.TEnd {
			t.Fatalf("grid of %d times from %v to %v; want %d from 0 to %v", len(ts), ts[0], ts[len(ts)-1], want, sim.TEnd)
		}
		for i, x := range ts {
			if math.IsNaN(x) || math.IsInf(x, 0) || (i > 0 && x < ts[i-1]) {
				t.Fatalf("time %d is %v after %v", i, x, ts[max(0, i-1)])
			}
		}
	})
}

// usableInExpressions answers as the expression parser does (the parser
// is the reference) for every function name and for names that look like
// numbers or constants.
func TestUsableInExpressionsAgreesWithParser(t *testing.T) {
	names := []string{"e", "pi", "inf", "nan", "Inf", "NaN", "t", "E1", "e1", "_", "x_1", "ifle", "exp2", "logx", "1a", "a b", ""}
	for _, f := range funcs() {
		names = append(names, f, f+"_", strings.ToUpper(f))
	}
	for _, n := range names {
		_, err := expr.Parse(n)
		if got, want := usableInExpressions(n), err == nil; got != want {
			t.Errorf("usableInExpressions(%q) = %v, the parser says %v", n, got, want)
		}
	}
}

// funcs lists the function names the expression language knows, by
// probing the parser with common names (exp, log, …) and the names of
// README's function table.
func funcs() []string {
	var out []string
	for _, n := range []string{"exp", "log", "log10", "sqrt", "abs", "sin", "cos", "tan", "min", "max", "pow", "ifle", "hill", "floor", "ceil", "sign", "tanh", "atan", "asin", "acos", "sinh", "cosh", "ln"} {
		if expr.IsFunction(n) {
			out = append(out, n)
		}
	}
	return out
}

// A large model whose reactions all name unknown species is still checked
// in linear work: every reaction gets its located error, and only the
// first maxSuggestions of them search for a similar name.
func TestManyUnknownNamesBoundTheSuggestions(t *testing.T) {
	m := &Model{Parameters: []Parameter{{Name: "k", Value: 1}}}
	const n = 3000
	for i := range n {
		m.Species = append(m.Species, Species{Name: fmt.Sprintf("S%d", i)})
		m.Reactions = append(m.Reactions, Reaction{Name: fmt.Sprintf("r%d", i), Equation: fmt.Sprintf("X%d ->", i),
			Rate: NewRate(MassAction, "k", "k")})
	}
	_, probs := Check(m)
	unknown, suggested := 0, 0
	for _, p := range probs {
		if strings.Contains(p.Message, "unknown species") {
			unknown++
		}
		if strings.Contains(p.Message, "did you mean") {
			suggested++
		}
	}
	if unknown != n || suggested != maxSuggestions {
		t.Errorf("%d unknown-species errors with %d suggestions, want %d with %d", unknown, suggested, n, maxSuggestions)
	}
}
