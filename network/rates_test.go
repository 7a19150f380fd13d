package network

import (
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"kinetarium/solve"
)

// rateModel: A decays by mass action with a rate constant k that itself
// decays, dk/dt = −b·k, and a fixed species X read by no reaction rises at
// the constant rate r.
func rateModel() *Model {
	return &Model{
		Compartments: []Compartment{{Name: "cell", Volume: 2}},
		Species:      []Species{{Name: "A", Initial: 3, Compartment: "cell"}, {Name: "B", Compartment: "cell"}, {Name: "X", Initial: 1, Fixed: true}},
		Parameters:   []Parameter{{Name: "k", Value: 0.8}, {Name: "b", Value: 0.5}, {Name: "r", Value: 0.25}},
		Reactions:    []Reaction{{Name: "decay", Equation: "A -> B", Rate: NewRate(MassAction, "k", "k")}},
		Rates:        []RateRule{{Name: "k", Expression: "-b*k"}, {Name: "X", Expression: "r"}},
	}
}

// TestRatesClosedForm: with k(t) = k0·e^(−bt), A(t) = A0·exp(−(k0/b)(1 −
// e^(−bt))) (separation of variables, common practice), and X(t) = 1 + r·t.
func TestRatesClosedForm(t *testing.T) {
	m := rateModel()
	sys := mustCompile(t, m)
	if got := strings.Join(sys.Species(), ","); got != "A,B,X,k" {
		t.Fatalf("state names %s, want A,B,X,k", got)
	}
	times := []float64{1, 4, 10}
	res, err := solve.Solve(context.Background(), sys, 0, 10, sys.Initial(), solve.Settings{RTol: 1e-10, ATol: 1e-14, Times: times, NonNegative: true})
	if err != nil {
		t.Fatal(err)
	}
	for i, tt := range times {
		k := 0.8 * math.Exp(-0.5*tt)
		a := 3 * math.Exp(-(0.8/0.5)*(1-math.Exp(-0.5*tt)))
		want := []float64{a, 3 - a, 1 + 0.25*tt, k}
		for j, w := range want {
			if got := res.Y[i][j]; math.Abs(got-w) > 1e-8*math.Max(1, w) {
				t.Errorf("t=%v %s = %.12g, want %.12g", tt, sys.Species()[j], got, w)
			}
		}
	}
	// A parameter with a rate may go negative although species are kept ≥ 0.
	m.Rates[1].Name = "b"
	m.Rates[1].Expression = "-r"
	sys = mustCompile(t, m)
	res, err = solve.Solve(context.Background(), sys, 0, 4, sys.Initial(), solve.Settings{RTol: 1e-8, Times: []float64{4}, NonNegative: true})
	if err != nil {
		t.Fatalf("a parameter with a rate that turns negative: %v", err)
	}
	if got := res.Y[0][4]; math.Abs(got-(0.5-1)) > 1e-9 {
		t.Errorf("b(4) = %v, want −0.5", got)
	}
}

// TestRatesJacobian compares both Jacobians of a model with rates with
// finite differences, and the parameter's value follows SetParameter.
func TestRatesJacobian(t *testing.T) {
	m := rateModel()
	m.Rates[1].Expression = "r*A/(1 + X^2) - k*X"
	sys := mustCompile(t, m)
	rng := rand.New(rand.NewPCG(3, 4))
	for range 5 {
		checkJacobianFD(t, "rates", sys, randomState(rng, sys))
	}
	i, _ := sys.ParameterIndex("k")
	sys.SetParameter(i, 1.5)
	if got := sys.Initial()[3]; got != 1.5 {
		t.Errorf("initial k after SetParameter = %v, want 1.5", got)
	}
}

func TestRatesErrors(t *testing.T) {
	cases := []struct {
		rate RateRule
		want string
	}{
		{RateRule{Name: "Q", Expression: "1"}, `unknown species or parameter "Q"`},
		{RateRule{Name: "A", Expression: "1"}, `has a rate and takes part in reaction "decay"; mark it fixed`},
		{RateRule{Name: "total", Expression: "1"}, "is an assignment"},
		{RateRule{Name: "cell", Expression: "1"}, "is a compartment"},
		{RateRule{Name: "b", Expression: "1 +"}, "expression"},
		{RateRule{Name: "k", Expression: "2"}, "already has a rate"},
	}
	for _, c := range cases {
		m := rateModel()
		m.Assignments = []Assignment{{Name: "total", Expression: "A + B"}}
		m.Rates = append(m.Rates, c.rate)
		_, l := Check(m)
		found := false
		for _, p := range l.Errors() {
			if p.Section == "rates" && strings.Contains(p.String(), c.want) {
				found = true
			}
		}
		if !found {
			t.Errorf("rate of %q: no error containing %q; got %v", c.rate.Name, c.want, l)
		}
	}
}

// Rates survive a write and read of the model file, with file positions
// for their problems.
func TestRatesRoundTrip(t *testing.T) {
	m := rateModel()
	m.Rates[1].Note = "a slow input"
	var b strings.Builder
	if err := m.Write(&b); err != nil {
		t.Fatal(err)
	}
	m2, err := Read(strings.NewReader(b.String()), "r.json")
	if err != nil {
		t.Fatalf("%v\n%s", err, b.String())
	}
	if len(m2.Rates) != 2 || m2.Rates[0] != m.Rates[0] || m2.Rates[1] != m.Rates[1] {
		t.Errorf("rates after a round trip: %+v", m2.Rates)
	}
	m2.Rates[1].Expression = "r*"
	_, l := Check(m2)
	if !l.HasErrors() || l.Errors()[0].Pos.Line == 0 {
		t.Errorf("a bad rate's problem has no file line: %v", l)
	}
}

// An event that sets a parameter carries it in the state, so the output
// shows its value over time (here: k halves at t = 5).
func TestEventSetParameterInState(t *testing.T) {
	m := pkModel(Event{Name: "halve", At: Number(5), Set: []Change{{"k", "k/2"}}})
	m.Species[0].Initial = 10
	res := solveModel(t, m, 10, []float64{4, 6})
	sys := mustCompile(t, m)
	if got := strings.Join(sys.StateParameters(), ","); got != "k" {
		t.Fatalf("state parameters %q, want k", got)
	}
	if res.Y[0][2] != 0.1 || res.Y[1][2] != 0.05 {
		t.Errorf("k at 4 and 6: %v, %v; want 0.1 and 0.05", res.Y[0][2], res.Y[1][2])
	}
	want := 10 * math.Exp(-0.1*5-0.05*1)
	if got := res.Y[1][0]; math.Abs(got-want) > 1e-8*want {
		t.Errorf("C(6) = %.12g, want %.12g", got, want)
	}
}
