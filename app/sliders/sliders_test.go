package sliders

import (
	"context"
	"errors"
	"math"
	"strings"
	"sync"
	"testing"
	"time"

	"kinetarium/app/run"
	"kinetarium/network"
)

// decayModel is A -> B with mass-action rate k·A in a compartment "cell".
func decayModel(k, a0 float64) *network.Model {
	return &network.Model{
		Title:        "decay",
		Compartments: []network.Compartment{{Name: "cell", Volume: 1}},
		Species:      []network.Species{{Name: "A", Initial: a0}, {Name: "B"}},
		Parameters:   []network.Parameter{{Name: "k", Value: k}},
		Reactions: []network.Reaction{{Name: "r", Equation: "A -> B",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: 5, Output: network.Output{Points: 51}, RTol: 1e-8, ATol: 1e-12},
	}
}

// checkDecay compares o with the closed form of first-order decay,
// A(t) = A0·exp(−k t), B = A0 − A (closed form, common practice).
func checkDecay(t *testing.T, o *run.Outcome, k, a0 float64) {
	t.Helper()
	if o == nil || len(o.T) != 51 {
		t.Fatalf("outcome %v has the wrong number of times", o)
	}
	for i, tt := range o.T {
		want := a0 * math.Exp(-k*tt)
		if got := o.Y[i][0]; math.Abs(got-want) > 1e-6*a0 {
			t.Fatalf("A(%g) = %.10g, want %.10g (k = %g, A0 = %g)", tt, got, want, k, a0)
		}
		if got := o.Y[i][1]; math.Abs(got-(a0-want)) > 1e-6*a0 {
			t.Fatalf("B(%g) = %.10g, want %.10g", tt, got, a0-want)
		}
	}
}

func TestDefaultRange(t *testing.T) {
	for _, c := range []struct{ v, ref, lo, hi float64 }{
		{2, 0, 0.2, 20},
		{0, 0, 0, 1},
		{0, 50, 0, 50},
		{-3, 0, -30, -0.3},
	} {
		lo, hi := DefaultRange(c.v, c.ref)
		if math.Abs(lo-c.lo) > 1e-15 || math.Abs(hi-c.hi) > 1e-15 {
			t.Errorf("DefaultRange(%g, %g) = %g, %g; want %g, %g", c.v, c.ref, lo, hi, c.lo, c.hi)
		}
	}
}

func TestKnobScale(t *testing.T) {
	k := Knob{Kind: Parameter, Name: "k", Value: 1, Min: 0.1, Max: 10}
	if !k.Log() {
		t.Fatal("a positive range is not logarithmic")
	}
	// On a log scale the middle of 0.1..10 is their geometric mean, 1.
	if got := k.At(0.5); math.Abs(got-1) > 1e-15 {
		t.Errorf("At(0.5) = %g, want 1", got)
	}
	if got := k.Position(1); math.Abs(got-0.5) > 1e-15 {
		t.Errorf("Position(1) = %g, want 0.5", got)
	}
	for _, f := range []float64{0, 0.1, 0.37, 0.9, 1} {
		if got := k.Position(k.At(f)); math.Abs(got-f) > 1e-12 {
			t.Errorf("Position(At(%g)) = %g", f, got)
		}
	}
	if k.At(-1) != 0.1 || k.At(2) != 10 || k.Position(1000) != 1 || k.Position(0) != 0 {
		t.Error("positions outside 0..1 are not clamped")
	}
	lin := Knob{Kind: Initial, Name: "B", Min: 0, Max: 4}
	if lin.Log() || lin.At(0.25) != 1 || lin.Position(3) != 0.75 {
		t.Errorf("linear knob: At(0.25) = %g, Position(3) = %g", lin.At(0.25), lin.Position(3))
	}
}

func TestKnobSetWidensAndChecks(t *testing.T) {
	k := Knob{Kind: Initial, Name: "A", Model: 1, Value: 1, Min: 0.1, Max: 10}
	if err := k.Set(50); err != nil || k.Max != 50 || k.Min != 0.1 || k.Value != 50 {
		t.Errorf("Set(50): %v, range %g..%g", err, k.Min, k.Max)
	}
	if err := k.Set(0); err != nil || k.Min != 0 || k.Log() {
		t.Errorf("Set(0): %v, range %g..%g, log %v", err, k.Min, k.Max, k.Log())
	}
	err := k.Set(-1)
	if err == nil || !strings.Contains(err.Error(), "A initial") || !strings.Contains(err.Error(), "must be ≥ 0") {
		t.Errorf("Set(-1) on an initial concentration: %v", err)
	}
	if k.Value != 0 {
		t.Errorf("a refused value changed the knob to %g", k.Value)
	}
	v := Knob{Kind: Volume, Name: "cell", Value: 1, Min: 0.1, Max: 10}
	if err := v.Set(0); err == nil {
		t.Error("a zero volume was accepted")
	}
	if err := v.Set(math.NaN()); err == nil {
		t.Error("NaN was accepted")
	}
	if err := v.SetRange(0, 5); err != nil || !(v.Min > 0) {
		t.Errorf("volume range from 0: %v, min %g", err, v.Min)
	}
	if err := v.SetRange(3, 2); err == nil || !strings.Contains(err.Error(), "lower end") {
		t.Errorf("an empty range: %v", err)
	}
	p := Knob{Kind: Parameter, Name: "k", Value: 1, Min: 0.1, Max: 10}
	if err := p.SetRange(2, 4); err != nil || p.Value != 2 {
		t.Errorf("narrowing the range past the value: %v, value %g", err, p.Value)
	}
}

func TestCandidatesLookupWriteBack(t *testing.T) {
	m := decayModel(0.7, 2)
	ks := Candidates(m)
	var labels []string
	for _, k := range ks {
		labels = append(labels, k.Label())
	}
	if got, want := strings.Join(labels, ","), "k,A initial,B initial,cell volume"; got != want {
		t.Fatalf("candidates %s, want %s", got, want)
	}
	// B starts at zero: linear, up to the largest initial concentration.
	if b := ks[2]; b.Min != 0 || b.Max != 2 || b.Log() {
		t.Errorf("B's range %g..%g", b.Min, b.Max)
	}
	ks[0].Value, ks[1].Value, ks[3].Value = 0.25, 3, 2.5
	before := m.Clone()
	if n := WriteBack(m, ks); n != 4 {
		t.Errorf("WriteBack found %d values, want 4", n)
	}
	if m.Parameters[0].Value != 0.25 || m.Species[0].Initial != 3 || m.Compartments[0].Volume != 2.5 {
		t.Errorf("written model: %+v", m)
	}
	if v, ok := Lookup(before, Initial, "A"); !ok || v != 2 {
		t.Errorf("Lookup A = %g, %v", v, ok)
	}
	if _, ok := Lookup(before, Parameter, "nope"); ok {
		t.Error("Lookup found a parameter that does not exist")
	}
}

// A session re-simulates with a changed rate constant and initial
// concentration without compiling again, and matches the closed form each
// time; with no knobs it is back at the model's values.
func TestSessionMatchesClosedForm(t *testing.T) {
	m := decayModel(0.7, 2)
	s, err := NewSession(m)
	if err != nil {
		t.Fatal(err)
	}
	k := Knob{Kind: Parameter, Name: "k", Value: 0.7, Min: 0.07, Max: 7}
	a := Knob{Kind: Initial, Name: "A", Value: 2, Min: 0.2, Max: 20}
	for _, c := range []struct{ k, a0 float64 }{{0.7, 2}, {1.9, 2}, {0.2, 5}, {3.5, 0.5}} {
		k.Value, a.Value = c.k, c.a0
		if err := s.Set([]Knob{k, a}); err != nil {
			t.Fatal(err)
		}
		o, err := s.Run(context.Background())
		if err != nil {
			t.Fatal(err)
		}
		checkDecay(t, o, c.k, c.a0)
	}
	if err := s.Set(nil); err != nil {
		t.Fatal(err)
	}
	o, err := s.Run(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	checkDecay(t, o, 0.7, 2)
}

// Setting a volume on the compiled model gives the same result as
// compiling the model with that volume.
func TestSessionVolumeAgreesWithCompiling(t *testing.T) {
	m := &network.Model{
		Compartments: []network.Compartment{{Name: "blood", Volume: 5}, {Name: "tissue", Volume: 20}},
		Species:      []network.Species{{Name: "Cb", Initial: 10, Compartment: "blood"}, {Name: "Ct", Compartment: "tissue"}},
		Parameters:   []network.Parameter{{Name: "q", Value: 0.3}},
		Reactions: []network.Reaction{{Name: "move", Equation: "Cb -> Ct",
			Rate: network.NewRate(network.MassAction, "k", network.Named("q"))}},
		Simulation: network.Simulation{TEnd: 10, Output: network.Output{Points: 11}},
	}
	s, err := NewSession(m)
	if err != nil {
		t.Fatal(err)
	}
	if err := s.Set([]Knob{{Kind: Volume, Name: "tissue", Value: 2}}); err != nil {
		t.Fatal(err)
	}
	got, err := s.Run(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	m2 := m.Clone()
	m2.Compartments[1].Volume = 2
	want, err := run.Run(context.Background(), m2, nil)
	if err != nil {
		t.Fatal(err)
	}
	base, err := run.Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	last := len(want.T) - 1
	if want.Y[last][1] == base.Y[last][1] {
		t.Fatal("the volume makes no difference to this model; the check is void")
	}
	for i := range want.T {
		for j := range want.Names {
			if got.Y[i][j] != want.Y[i][j] {
				t.Fatalf("%s at t = %g: %g with the volume set, %g compiled", want.Names[j], want.T[i], got.Y[i][j], want.Y[i][j])
			}
		}
	}
}

func TestSessionRefusesBadKnobs(t *testing.T) {
	s, err := NewSession(decayModel(0.7, 2))
	if err != nil {
		t.Fatal(err)
	}
	err = s.Set([]Knob{{Kind: Parameter, Name: "kk", Value: 1}})
	if err == nil || !strings.Contains(err.Error(), `no parameter called "kk"`) {
		t.Errorf("unknown parameter: %v", err)
	}
	err = s.Set([]Knob{{Kind: Volume, Name: "cell", Value: -1}})
	if err == nil || !strings.Contains(err.Error(), "cell volume") {
		t.Errorf("negative volume: %v", err)
	}
	if _, err := NewSession(&network.Model{Species: []network.Species{{Name: "A", Initial: -1}}}); err == nil {
		t.Error("a model with mistakes compiled")
	}
}

// Setting values on the compiled model allocates nothing.
func TestSessionSetAllocatesNothing(t *testing.T) {
	s, err := NewSession(decayModel(0.7, 2))
	if err != nil {
		t.Fatal(err)
	}
	knobs := []Knob{{Kind: Parameter, Name: "k", Value: 1.5}, {Kind: Initial, Name: "A", Value: 3}, {Kind: Volume, Name: "cell", Value: 2}}
	if a := testing.AllocsPerRun(50, func() { _ = s.Set(knobs) }); a != 0 {
		t.Errorf("Set allocates %v times", a)
	}
}

func TestMailboxLatestWins(t *testing.T) {
	var m Mailbox[int]
	if _, _, ok := m.TryTake(); ok {
		t.Fatal("an empty mailbox gave a value")
	}
	m.Put(10)
	m.Put(20)
	g := m.Put(30)
	if g != 3 || m.Latest() != 3 || !m.Current(3) || m.Current(2) {
		t.Errorf("generation %d, latest %d", g, m.Latest())
	}
	v, gen, ok := m.TryTake()
	if !ok || v != 30 || gen != 3 {
		t.Errorf("took %d (generation %d, %v), want 30 (3)", v, gen, ok)
	}
	if _, _, ok := m.TryTake(); ok {
		t.Error("a value was taken twice")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Millisecond)
	defer cancel()
	if _, _, err := m.Take(ctx); !errors.Is(err, context.DeadlineExceeded) {
		t.Errorf("Take on an empty mailbox: %v", err)
	}
}

// A slow reader of a fast writer sees an increasing subsequence of the
// values, ending with the last one, and never a value twice.
func TestMailboxSlowReader(t *testing.T) {
	var m Mailbox[int]
	const n = 2000
	var got []int
	done := make(chan struct{})
	go func() {
		defer close(done)
		for {
			v, _, err := m.Take(context.Background())
			if err != nil {
				return
			}
			got = append(got, v)
			if v == n {
				return
			}
			time.Sleep(100 * time.Microsecond)
		}
	}()
	for i := 1; i <= n; i++ {
		m.Put(i)
	}
	<-done
	if len(got) == 0 || got[len(got)-1] != n {
		t.Fatalf("the reader did not end with the last value: %v", got)
	}
	for i := 1; i < len(got); i++ {
		if got[i] <= got[i-1] {
			t.Fatalf("values out of order or repeated: %d after %d", got[i], got[i-1])
		}
	}
	if len(got) == n {
		t.Log("the reader kept up with every value; nothing was dropped this time")
	}
}

// With a slow solve and several requests while it runs, only the newest
// request is solved next and only its result is delivered: the first
// request's result is dropped and the ones in between are never solved.
func TestRunnerDropsStaleResults(t *testing.T) {
	started := make(chan float64, 10)
	release := make(chan struct{})
	var mu sync.Mutex
	var shown []float64
	delivered := make(chan struct{}, 10)
	r := &Runner{
		Solve: func(ctx context.Context, req Request) (*run.Outcome, error) {
			v := req.Knobs[0].Value
			started <- v
			if v == 1 {
				<-release // a slow solve, which ignores cancellation
			}
			return &run.Outcome{Names: []string{"A"}, T: []float64{0}, Y: [][]float64{{v}}}, nil
		},
		OnResult: func(gen int, req Request, o *run.Outcome, err error) {
			mu.Lock()
			shown = append(shown, o.Y[0][0])
			mu.Unlock()
			delivered <- struct{}{}
		},
	}
	defer r.Close()
	req := func(v float64) int {
		return r.Request(Request{Knobs: []Knob{{Kind: Parameter, Name: "k", Value: v}}})
	}
	req(1)
	if v := <-started; v != 1 {
		t.Fatalf("first solve of %g", v)
	}
	for _, v := range []float64{2, 3, 4, 5} {
		req(v)
	}
	close(release)
	select {
	case <-delivered:
	case <-time.After(10 * time.Second):
		t.Fatal("no result delivered")
	}
	if v := <-started; v != 5 {
		t.Errorf("second solve was of %g, want the newest value 5", v)
	}
	// Let anything else that would wrongly run show itself.
	time.Sleep(50 * time.Millisecond)
	mu.Lock()
	defer mu.Unlock()
	if len(shown) != 1 || shown[0] != 5 {
		t.Errorf("delivered results %v, want only [5]", shown)
	}
	if len(started) != 0 {
		t.Errorf("%d more solves started", len(started))
	}
	if solved, n := r.Counts(); solved != 2 || n != 1 {
		t.Errorf("counts: %d solved, %d shown; want 2 and 1", solved, n)
	}
}

// A solve in progress is cancelled when a newer request arrives.
func TestRunnerCancelsOvertakenSolve(t *testing.T) {
	started := make(chan struct{}, 10)
	cancelled := make(chan struct{})
	r := &Runner{
		Solve: func(ctx context.Context, req Request) (*run.Outcome, error) {
			started <- struct{}{}
			if req.Knobs[0].Value == 1 {
				<-ctx.Done()
				close(cancelled)
				return nil, ctx.Err()
			}
			return &run.Outcome{}, nil
		},
	}
	defer r.Close()
	r.Request(Request{Knobs: []Knob{{Value: 1}}})
	<-started
	r.Request(Request{Knobs: []Knob{{Value: 2}}})
	select {
	case <-cancelled:
	case <-time.After(10 * time.Second):
		t.Fatal("the overtaken solve was not cancelled")
	}
}

// The default Runner compiles once per model and solves with the knobs'
// values: moving k matches the closed form for the new k.
func TestRunnerSolvesWithSession(t *testing.T) {
	m := decayModel(0.7, 2)
	got := make(chan *run.Outcome, 1)
	r := &Runner{OnResult: func(gen int, req Request, o *run.Outcome, err error) {
		if err != nil {
			t.Error(err)
		}
		got <- o
	}}
	defer r.Close()
	for _, k := range []float64{0.7, 2.4} {
		r.Request(Request{Model: m, Knobs: []Knob{{Kind: Parameter, Name: "k", Value: k}}})
		select {
		case o := <-got:
			checkDecay(t, o, k, 2)
		case <-time.After(10 * time.Second):
			t.Fatal("no result")
		}
	}
	first := r.session
	r.Request(Request{Model: m, Knobs: nil})
	<-got
	if r.session != first {
		t.Error("the model was compiled again although it did not change")
	}
}

// A knob's name in studies reads back to the same knob, for each kind;
// the forms are those of the spec files (README, "Sweeps and populations").
func TestRefRoundTrip(t *testing.T) {
	for ref, want := range map[string]Knob{
		"kcat":        {Kind: Parameter, Name: "kcat"},
		"init:S":      {Kind: Initial, Name: "S"},
		"volume:cell": {Kind: Volume, Name: "cell"},
	} {
		got := ParseRef(ref)
		if got != want || got.Ref() != ref {
			t.Errorf("ParseRef(%q) = %+v (Ref %q), want %+v", ref, got, got.Ref(), want)
		}
	}
}

// Event quantities are slider candidates and knobs: a bolus at t = 1 whose
// amount is moved from 3 to 8 raises A just after the dose by 8 (volume 1;
// A(t) = A0·e^(−kt) before it, common practice); resetting the knobs brings
// back the model's 3, and writing back stores 8 in the event.
func TestEventKnob(t *testing.T) {
	m := decayModel(0.5, 2)
	m.Events = []network.Event{{Name: "bolus", At: network.Number(1), Add: []network.Change{{Target: "A", Value: "3"}}}}
	var k Knob
	for _, c := range Candidates(m) {
		if c.Kind == Event && c.Name == "bolus.add.A" {
			k = c
		}
	}
	if k.Name == "" || k.Model != 3 || k.Label() != "bolus: amount of A" || k.Ref() != "event:bolus.add.A" {
		t.Fatalf("candidate %+v", k)
	}
	s, err := NewSession(m)
	if err != nil {
		t.Fatal(err)
	}
	after := func(amount float64) {
		t.Helper()
		o, err := s.Run(context.Background())
		if err != nil {
			t.Fatal(err)
		}
		j := o.Jumps[0]
		before := 2 * math.Exp(-0.5)
		if math.Abs(j.Before[0]-before) > 1e-6 || math.Abs(j.After[0]-before-amount) > 1e-6 {
			t.Errorf("jump %v -> %v, want %g -> %g", j.Before[0], j.After[0], before, before+amount)
		}
	}
	k.Value = 8
	if err := s.Set([]Knob{k}); err != nil {
		t.Fatal(err)
	}
	after(8)
	if err := s.Set(nil); err != nil {
		t.Fatal(err)
	}
	after(3)
	if n := WriteBack(m, []Knob{k}); n != 1 || m.Events[0].Add[0].Value != "8" {
		t.Errorf("write back: %d values, event %+v", n, m.Events[0])
	}
	k.Value = -1
	if err := s.Set([]Knob{k}); err == nil {
		t.Error("a negative amount was accepted")
	}
}
