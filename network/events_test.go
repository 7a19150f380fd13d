package network

import (
	"context"
	"math"
	"strings"
	"testing"

	"kinetarium/solve"
)

// pkModel is one compartment of volume V with first-order elimination
// (k = CL/V) written as a reaction on the concentration C.
func pkModel(events ...Event) *Model {
	return &Model{
		Compartments: []Compartment{{Name: "body", Volume: 10}},
		Species:      []Species{{Name: "C", Compartment: "body"}, {Name: "Out", Compartment: "body"}},
		Parameters:   []Parameter{{Name: "k", Value: 0.1}, {Name: "dose", Value: 100}, {Name: "tau", Value: 12}, {Name: "R0", Value: 5}},
		Reactions:    []Reaction{{Name: "elim", Equation: "C -> Out", Rate: NewRate(MassAction, "k", "k")}},
		Events:       events,
	}
}

func solveModel(t *testing.T, m *Model, tEnd float64, times []float64) *solve.Result {
	t.Helper()
	sys := mustCompile(t, m)
	res, err := solve.Solve(context.Background(), sys, 0, tEnd, sys.Initial(),
		solve.Settings{RTol: 1e-10, ATol: 1e-14, Times: times, NonNegative: true})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// Repeated IV bolus, D = 100 into V = 10, CL = 1, every 12 h (Gibaldi &
// Perrier, Pharmacokinetics, 2nd ed. 1982; from memory, worked values in
// shared/reference/analytic-checks.md): 5 h after the 3rd dose
// C = 8.4423740382; the amount added equals the amount present plus the
// amount eliminated (mass balance, to round-off).
func TestEventRepeatedBolus(t *testing.T) {
	m := pkModel(Event{Name: "iv", At: Number(0), Every: Named("tau"), Count: 3, Add: []Change{{"C", "dose"}}})
	res := solveModel(t, m, 48, []float64{29, 48})
	if got, want := res.Y[0][0], 8.4423740382; math.Abs(got-want) > 1e-8*want {
		t.Errorf("C(29) = %.12g, want %.12g", got, want)
	}
	if total := (res.Y[1][0] + res.Y[1][1]) * 10; math.Abs(total-300) > 1e-9*300 {
		t.Errorf("amount present + eliminated = %.12g, want the 300 given", total)
	}
	if len(res.Events) != 3 || res.Events[2].T != 24 || res.Events[2].Name != "iv" {
		t.Errorf("firings %v", res.Events)
	}
}

// Constant-rate infusion R0 = 5 per h for 10 h into CL = 1: C(t) =
// (R0/CL)(1 − e^(−k t)), C(10) = 3.1606027941, then C(10)·e^(−k(t − 10))
// (same source).
func TestEventInfusion(t *testing.T) {
	m := pkModel(Event{Name: "drip", From: Number(0), To: Number(10), Infuse: []Change{{"C", "R0"}}})
	res := solveModel(t, m, 20, []float64{5, 10, 15})
	want := []float64{5 * (1 - math.Exp(-0.5)), 3.1606027941, 3.1606027941 * math.Exp(-0.5)}
	for i, w := range want {
		if got := res.Y[i][0]; math.Abs(got-w) > 1e-8*w {
			t.Errorf("C(%g) = %.12g, want %.12g", res.T[i], got, w)
		}
	}
	if len(res.Events) != 2 || res.Events[0].Name != "drip starts" || res.Events[1].T != 10 {
		t.Errorf("firings %v", res.Events)
	}
}

// A triggered washout: C decays from 10 (after a dose at 0) with k = 0.1;
// when it falls below 2 at t* = ln(10/2)/0.1 (first-order decay, common
// practice) the elimination is switched off ("set" k to 0), so C stays at
// 2; "once" keeps it from firing again. Parameters return to their values
// at the next run.
func TestEventTriggeredSet(t *testing.T) {
	m := pkModel(
		Event{Name: "dose", At: Number(0), Add: []Change{{"C", "dose"}}},
		Event{Name: "stop", When: "C < 2", Once: true, Set: []Change{{"k", "0"}}})
	sys := mustCompile(t, m)
	for run := 0; run < 2; run++ {
		res, err := solve.Solve(context.Background(), sys, 0, 40, sys.Initial(), solve.Settings{RTol: 1e-10, ATol: 1e-14, Times: []float64{10, 40}})
		if err != nil {
			t.Fatal(err)
		}
		ts := math.Log(5) / 0.1
		if len(res.Events) != 2 || math.Abs(res.Events[1].T-ts) > 1e-6*ts {
			t.Fatalf("run %d: firings %v, want stop at %.9g", run, res.Events, ts)
		}
		if got := res.Y[1][0]; math.Abs(got-2) > 1e-6 {
			t.Errorf("run %d: C(40) = %.9g, want 2 (elimination off)", run, got)
		}
		if want := 10 * math.Exp(-1); math.Abs(res.Y[0][0]-want) > 1e-8*want {
			t.Errorf("run %d: C(10) = %.12g, want %.12g (k back at 0.1)", run, res.Y[0][0], want)
		}
	}
}

func TestEventModelErrors(t *testing.T) {
	cases := []struct {
		e     Event
		field string
		want  string
	}{
		{Event{Name: "a", At: Number(1), Add: []Change{{"Q", "1"}}}, "add.Q", `unknown species "Q"`},
		{Event{Name: "b", At: Number(1)}, "", "no action"},
		{Event{Name: "c", At: Number(1), Every: Number(2), Add: []Change{{"C", "1"}}}, "count", `"every" needs "count"`},
		{Event{Name: "d", At: Number(-1), Add: []Change{{"C", "1"}}}, "at", "expected a time of 0 or later"},
		{Event{Name: "e", From: Number(5), To: Number(2), Infuse: []Change{{"C", "1"}}}, "to", "ends (to = 2) before it starts"},
		{Event{Name: "f", When: "C + 2", Add: []Change{{"C", "1"}}}, "when", "is not a comparison"},
		{Event{Name: "g", At: Number(1), Set: []Change{{"total", "1"}}}, "set.total", "is an assignment"},
		{Event{Name: "h", Add: []Change{{"C", "1"}}}, "", "exactly one timing"},
		{Event{Name: "i", At: Number(1), Add: []Change{{"k", "1"}}}, "add.k", "add takes species"},
		{Event{Name: "j", From: Number(0), To: Number(1), Infuse: []Change{{"C", "C"}}}, "infuse.C", "numbers and parameters only"},
		// A count the file reader refuses is refused by Check too, so that
		// a model edited in the window saves as a file that reads back.
		{Event{Name: "k", At: Number(0), Every: Number(1), Count: -1, Add: []Change{{"C", "1"}}}, "count", "count = -1 is not allowed"},
		{Event{Name: "l", At: Number(0), Every: Number(1), Count: MaxCount + 1, Add: []Change{{"C", "1"}}}, "count", "expected a whole number from 1 to 1000000"},
		{Event{Name: "m", At: Number(0), Every: Named("tauu"), Count: 2, Add: []Change{{"C", "1"}}}, "every", `unknown parameter "tauu"; did you mean "tau"?`},
	}
	for _, c := range cases {
		m := pkModel(c.e)
		m.Assignments = []Assignment{{Name: "total", Expression: "C + Out"}}
		_, l := Check(m)
		found := false
		for _, p := range l.Errors() {
			if p.Section == "events" && p.Item == c.e.Name && p.Field == c.field && strings.Contains(p.Message, c.want) {
				found = true
			}
		}
		if !found {
			t.Errorf("event %q: no error at %q containing %q; got %v", c.e.Name, c.field, c.want, l)
		}
	}

	// An unknown name in a time field is one error: it has no value for
	// a second message to judge (the value 0 of a name not declared, or
	// an infusion ending before it starts).
	for _, e := range []Event{
		{Name: "every", At: Number(0), Every: Named("tauu"), Count: 2, Add: []Change{{"C", "1"}}},
		{Name: "drip", From: Number(1), To: Named("t_stop"), Infuse: []Change{{"C", "1"}}},
	} {
		if _, l := Check(pkModel(e)); len(l.Errors()) != 1 {
			t.Errorf("event %s: %d errors, want 1: %v", e.Name, len(l.Errors()), l.Errors())
		}
	}
}

// Events survive a write and read of the model file, in order.
func TestEventRoundTrip(t *testing.T) {
	m := pkModel(Event{Name: "iv", Note: "twice a day", At: Number(0), Every: Named("tau"), Count: 14, Add: []Change{{"C", "dose"}, {"Out", "0.5"}}},
		Event{Name: "stop", When: "C < 2", Once: true, Set: []Change{{"k", "k/2"}}},
		Event{Name: "drip", From: Number(1), To: Named("tau"), Every: Number(24), Count: 2, Infuse: []Change{{"C", "R0"}}})
	var b strings.Builder
	if err := m.Write(&b); err != nil {
		t.Fatal(err)
	}
	m2, err := Read(strings.NewReader(b.String()), "ev.json")
	if err != nil {
		t.Fatalf("%v\n%s", err, b.String())
	}
	if len(m2.Events) != 3 || m2.Events[0].Add[1] != (Change{"Out", "0.5"}) || m2.Events[1].When != "C < 2" || !m2.Events[1].Once ||
		m2.Events[2].To != Named("tau") || m2.Events[2].Count != 2 || m2.Events[0].Note != "twice a day" {
		t.Errorf("events after a round trip: %+v", m2.Events)
	}
	if _, l := Check(m2); l.HasErrors() {
		t.Errorf("round-tripped events have errors: %v", l)
	}
}

// First-order absorption with repeated oral doses, by superposition
// (Gibaldi & Perrier, Pharmacokinetics, 2nd ed. 1982; from memory; worked
// values in shared/reference/analytic-checks.md): F = 0.8 of D = 100 reaches
// a gut depot (its own compartment of 10 L, so amounts divide as in the
// central one), absorbed at ka = 1 into V = 10 with k = 0.1; each dose adds
// F·D·ka/(V(ka − k))·(e^(−k s) − e^(−ka s)), s the time since it. Every
// method at rtol 1e-10 agrees to 1e-8 relative, and so does the first
// output after each dose (a restart is as accurate as the start).
func TestEventOralDosesEveryMethod(t *testing.T) {
	m := &Model{
		Compartments: []Compartment{{Name: "gut", Volume: 10}, {Name: "body", Volume: 10}},
		Species:      []Species{{Name: "G", Compartment: "gut"}, {Name: "C", Compartment: "body"}},
		Parameters:   []Parameter{{Name: "ka", Value: 1}, {Name: "k", Value: 0.1}},
		Reactions: []Reaction{{Name: "absorb", Equation: "G -> C", Rate: NewRate(MassAction, "k", "ka")},
			{Name: "elim", Equation: "C ->", Rate: NewRate(MassAction, "k", "k")}},
		Events: []Event{{Name: "oral", At: Number(0), Every: Number(12), Count: 3, Add: []Change{{"G", "0.8*100"}}}},
	}
	one := func(s float64) float64 {
		if s < 0 {
			return 0
		}
		return 0.8 * 100 * 1 / (10 * (1 - 0.1)) * (math.Exp(-0.1*s) - math.Exp(-s))
	}
	var times []float64
	for k := 0; k <= 96; k++ {
		times = append(times, 0.5*float64(k)+0.25)
	}
	for _, meth := range []solve.Method{solve.Auto, solve.Rosenbrock, solve.Radau, solve.BDF, solve.Explicit} {
		sys := mustCompile(t, m)
		res, err := solve.Solve(context.Background(), sys, 0, 48.5, sys.Initial(), solve.Settings{Method: meth, RTol: 1e-10, ATol: 1e-14, Times: times})
		if err != nil {
			t.Fatalf("%s: %v", meth, err)
		}
		worst := 0.0
		for i, tt := range res.T {
			want := one(tt) + one(tt-12) + one(tt-24)
			if d := math.Abs(res.Y[i][1]-want) / want; d > worst {
				worst = d
			}
		}
		if worst > 1e-8 {
			t.Errorf("%s: largest relative error %.3g, want ≤ 1e-8", meth, worst)
		}
		// Worked value: the single dose peaks at 6.1941094614 at 2.5584278811.
		if got := one(2.5584278811); math.Abs(got-6.1941094614) > 1e-9 {
			t.Errorf("closed form at tmax = %.10g, want 6.1941094614", got)
		}
	}
}

// An event's change that makes another event's condition true fires that
// event at the same time (a cascade), as README's "each time the comparison
// turns from false to true" says.
func TestEventCascade(t *testing.T) {
	m := pkModel(Event{Name: "raise", At: Number(5), Set: []Change{{"Out", "10"}}},
		Event{Name: "follow", When: "Out > 5", Set: []Change{{"k", "0"}}})
	m.Species[0].Initial = 1
	res := solveModel(t, m, 8, []float64{8})
	if len(res.Events) != 2 || res.Events[1].Name != "follow" || res.Events[1].T != 5 {
		t.Fatalf("firings %v; want raise and follow at 5", res.Events)
	}
	if want := math.Exp(-0.5); math.Abs(res.Y[0][0]-want) > 1e-8 {
		t.Errorf("C(8) = %v, want %v (elimination stopped at 5)", res.Y[0][0], want)
	}
}
