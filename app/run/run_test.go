package run

import (
	"bytes"
	"context"
	"errors"
	"image/color"
	"math"
	"strings"
	"sync"
	"testing"
	"time"

	"kinetarium/examples"
	"kinetarium/network"
)

// decayModel is A -> B with mass-action rate k·A.
func decayModel(k, a0, tEnd float64) *network.Model {
	return &network.Model{
		Title:      "decay",
		Species:    []network.Species{{Name: "A", Initial: a0}, {Name: "B"}},
		Parameters: []network.Parameter{{Name: "k", Value: k}},
		Reactions: []network.Reaction{{Name: "r", Equation: "A -> B",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: tEnd, Output: network.Output{Points: 51}, RTol: 1e-8, ATol: 1e-12},
	}
}

func TestRunMatchesFirstOrderDecay(t *testing.T) {
	o, err := Run(context.Background(), decayModel(0.7, 2, 5), nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(o.T) != 51 || len(o.Names) != 2 {
		t.Fatalf("got %d times, names %v", len(o.T), o.Names)
	}
	for i, tt := range o.T {
		// Closed form of first-order decay, A(t) = A0·exp(−k t), B = A0 − A
		// (common practice).
		a := 2 * math.Exp(-0.7*tt)
		if d := math.Abs(o.Y[i][0] - a); d > 1e-6 {
			t.Fatalf("A(%g) = %g, want %g", tt, o.Y[i][0], a)
		}
		if d := math.Abs(o.Y[i][1] - (2 - a)); d > 1e-6 {
			t.Fatalf("B(%g) = %g, want %g", tt, o.Y[i][1], 2-a)
		}
	}
	if o.Stats.Steps == 0 || o.MethodSummary() == "" {
		t.Errorf("stats not reported: %+v", o.Stats)
	}
}

func TestRunReportsModelErrors(t *testing.T) {
	m := decayModel(1, 1, 1)
	m.Reactions[0].Equation = "A -> Q"
	o, err := Run(context.Background(), m, nil)
	if err == nil || o != nil {
		t.Fatalf("Run of a broken model: outcome %v, error %v", o, err)
	}
	if !strings.Contains(err.Error(), "Q") {
		t.Errorf("error %q does not name the unknown species", err)
	}
}

func TestWriteCSVLayout(t *testing.T) {
	o := &Outcome{Names: []string{"A", "B"}, T: []float64{0, 0.5}, Y: [][]float64{{1, 0}, {0.1, 1e-20}}}
	var b bytes.Buffer
	if err := WriteCSV(&b, o); err != nil {
		t.Fatal(err)
	}
	// The batch command's layout: header time,<species>; strconv 'g' -1.
	want := "time,A,B\n0,1,0\n0.5,0.1,1e-20\n"
	if b.String() != want {
		t.Fatalf("CSV:\n%s\nwant\n%s", b.String(), want)
	}
}

// A run overtaken by a newer one never reaches OnDone.
func TestControllerDropsStaleResults(t *testing.T) {
	release := make(chan struct{})
	var mu sync.Mutex
	var done []int
	var titles []string
	finished := make(chan struct{}, 2)
	c := &Controller{
		Run: func(ctx context.Context, m *network.Model, _ func(float64)) (*Outcome, error) {
			if m.Title == "slow" {
				<-release // the first run finishes only after the second
			}
			defer func() { finished <- struct{}{} }()
			return &Outcome{Title: m.Title}, nil
		},
		OnDone: func(gen int, o *Outcome, err error) {
			mu.Lock()
			done = append(done, gen)
			titles = append(titles, o.Title)
			mu.Unlock()
		},
	}
	g1 := c.Start(&network.Model{Title: "slow"})
	g2 := c.Start(&network.Model{Title: "fast"})
	<-finished
	close(release)
	<-finished
	mu.Lock()
	defer mu.Unlock()
	if g2 != g1+1 {
		t.Errorf("generations %d, %d", g1, g2)
	}
	if len(done) != 1 || done[0] != g2 || titles[0] != "fast" {
		t.Fatalf("delivered generations %v (%v), want only %d", done, titles, g2)
	}
}

func TestControllerCancelDeliversPartial(t *testing.T) {
	got := make(chan error, 1)
	c := &Controller{
		Run: func(ctx context.Context, m *network.Model, _ func(float64)) (*Outcome, error) {
			<-ctx.Done()
			return &Outcome{}, ctx.Err()
		},
		OnDone: func(gen int, o *Outcome, err error) { got <- err },
	}
	c.Start(&network.Model{})
	c.Cancel()
	select {
	case err := <-got:
		if !errors.Is(err, context.Canceled) {
			t.Fatalf("error %v, want cancellation", err)
		}
	case <-time.After(5 * time.Second):
		t.Fatal("cancelled run never delivered")
	}
}

func TestControllerChangedDebouncesAndSkipsSlowModels(t *testing.T) {
	var mu sync.Mutex
	runs := 0
	ran := make(chan struct{}, 10)
	c := &Controller{Debounce: 20 * time.Millisecond, QuickRun: time.Hour,
		Run: func(ctx context.Context, m *network.Model, _ func(float64)) (*Outcome, error) {
			mu.Lock()
			runs++
			mu.Unlock()
			ran <- struct{}{}
			return &Outcome{}, nil
		}}
	snap := func() *network.Model { return &network.Model{} }
	for i := 0; i < 5; i++ {
		if !c.Changed(snap) {
			t.Fatal("quick model not scheduled for a re-run")
		}
	}
	<-ran
	time.Sleep(60 * time.Millisecond)
	mu.Lock()
	if runs != 1 {
		t.Errorf("%d runs after a burst of 5 changes, want 1", runs)
	}
	mu.Unlock()
	c.QuickRun = time.Nanosecond
	if c.Changed(snap) {
		t.Error("re-run scheduled although the last run was slower than QuickRun")
	}
}

// The frame maps data to the pixels where plotting draws them: a
// horizontal line at a known value is found in the rendered image where
// ToPixel says.
func TestFrameFindsDrawnLine(t *testing.T) {
	o := &Outcome{Names: []string{"A"}}
	for i := 0; i <= 100; i++ {
		o.T = append(o.T, float64(i)/10)
		o.Y = append(o.Y, []float64{3})
	}
	v := View{Zoom: &Range{XMin: 0, XMax: 10, YMin: 0, YMax: 6}}
	img, fr, err := Render(o, v, 600, 400)
	if err != nil {
		t.Fatal(err)
	}
	px, py, ok := fr.ToPixel(5, 3)
	if !ok {
		t.Fatal("ToPixel failed")
	}
	coloured := func(c color.Color) bool {
		r, g, b, _ := c.RGBA()
		return max(r, g, b)-min(r, g, b) > 0x2000 // not grey, white or black
	}
	found := false
	for dy := -2; dy <= 2; dy++ {
		if coloured(img.At(int(px), int(py)+dy)) {
			found = true
		}
	}
	if !found {
		t.Errorf("no coloured line at pixel (%.0f, %.0f) of the data point", px, py)
	}
	for dy := 15; dy <= 25; dy++ {
		if coloured(img.At(int(px), int(py)+dy)) {
			t.Errorf("coloured pixel %d px below the line", dy)
		}
	}
	x, y, inside := fr.ToData(px, py)
	if !inside || math.Abs(x-5) > 1e-9 || math.Abs(y-3) > 1e-9 {
		t.Errorf("ToData(ToPixel(5, 3)) = %g, %g, %v", x, y, inside)
	}
	p, ok := Nearest(o, v, fr, px+3, py-4, 10)
	if !ok || p.Species != 0 || p.Dist > 10 || math.Abs(p.T-5) > 0.15 {
		t.Errorf("Nearest = %+v, %v", p, ok)
	}
}

func loadExample(tb testing.TB, name string) *network.Model {
	tb.Helper()
	b, err := examples.Open(name)
	if err != nil {
		tb.Fatal(err)
	}
	m, err := network.Read(bytes.NewReader(b), name)
	if err != nil {
		tb.Fatal(err)
	}
	return m
}

func TestExamplesRun(t *testing.T) {
	for _, name := range examples.Names() {
		m := loadExample(t, name)
		o, err := Run(context.Background(), m, nil)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if _, _, err := Render(o, View{LogX: true}, 400, 300); err != nil {
			t.Errorf("%s: render: %v", name, err)
		}
	}
}

// BenchmarkResimulateRedraw50 is the work of one re-run after an edit of
// the 50-species example: compile, solve and draw at a typical plot size.
func BenchmarkResimulateRedraw50(b *testing.B) {
	m := loadExample(b, "signalling-cascade-50.json")
	b.ReportAllocs()
	for b.Loop() {
		o, err := Run(context.Background(), m, nil)
		if err != nil {
			b.Fatal(err)
		}
		if _, _, err := Render(o, View{LogX: true}, 800, 500); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSolve50 is the compile and solve part alone.
func BenchmarkSolve50(b *testing.B) {
	m := loadExample(b, "signalling-cascade-50.json")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Run(context.Background(), m, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkRender50 is the drawing part alone.
func BenchmarkRender50(b *testing.B) {
	m := loadExample(b, "signalling-cascade-50.json")
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := Render(o, View{LogX: true}, 800, 500); err != nil {
			b.Fatal(err)
		}
	}
}

// Nearest runs on every pointer move: it must not allocate.
func TestNearestAllocatesNothing(t *testing.T) {
	m := loadExample(t, "signalling-cascade-50.json")
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	v := View{LogX: true, Hidden: map[string]bool{o.Names[0]: true}}
	_, fr, err := Render(o, v, 800, 500)
	if err != nil {
		t.Fatal(err)
	}
	allocs := testing.AllocsPerRun(20, func() { Nearest(o, v, fr, 400, 250, 20) })
	if allocs != 0 {
		t.Errorf("Nearest allocates %v times per call", allocs)
	}
}

// A Cancel that comes after the re-run's timer fired, but before its
// delivery ran, still stops the re-run.
func TestControllerCancelStopsFiredRerun(t *testing.T) {
	var queued []func()
	var mu sync.Mutex
	started := 0
	c := &Controller{
		Debounce: time.Millisecond,
		Deliver: func(f func()) {
			mu.Lock()
			queued = append(queued, f)
			mu.Unlock()
		},
		OnStart: func(int) { started++ },
	}
	c.Changed(func() *network.Model { return &network.Model{} })
	for {
		mu.Lock()
		n := len(queued)
		mu.Unlock()
		if n > 0 {
			break
		}
		time.Sleep(time.Millisecond)
	}
	c.Cancel()
	mu.Lock()
	f := queued[0]
	mu.Unlock()
	f()
	if started != 0 {
		t.Errorf("a re-run started after Cancel")
	}
}

// Assignments are columns of the outcome after the species, in the table
// too, and a rate may read one. With A -> B at rate k·A the closed form is
// A(t) = A0·exp(−k t) (common practice); the assignment frac = A/(A + B)
// is then exp(−k t), and a second step B -> C at rate kb·frac·B reads it.
func TestRunAddsAssignments(t *testing.T) {
	m := decayModel(0.7, 2, 5)
	m.Species = append(m.Species, network.Species{Name: "C"})
	m.Parameters = append(m.Parameters, network.Parameter{Name: "kb", Value: 0})
	m.Assignments = []network.Assignment{{Name: "total", Expression: "A + B + C"}, {Name: "frac", Expression: "A/total"}}
	m.Reactions = append(m.Reactions, network.Reaction{Name: "on", Equation: "B -> C",
		Rate: network.Rate{Law: network.Expression, Expression: "kb*frac*B"}})
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"A", "B", "C", "total", "frac"}; strings.Join(o.Names, ",") != strings.Join(want, ",") || o.Species != 3 {
		t.Fatalf("names %v (species %d), want %v (3)", o.Names, o.Species, want)
	}
	for i, tt := range o.T {
		if d := math.Abs(o.Y[i][3] - 2); d > 1e-9 {
			t.Fatalf("total(%g) = %g, want 2 (conserved)", tt, o.Y[i][3])
		}
		if d := math.Abs(o.Y[i][4] - math.Exp(-0.7*tt)); d > 1e-6 {
			t.Fatalf("frac(%g) = %g, want %g", tt, o.Y[i][4], math.Exp(-0.7*tt))
		}
	}
	var b bytes.Buffer
	if err := WriteCSV(&b, o); err != nil {
		t.Fatal(err)
	}
	if head, _, _ := strings.Cut(b.String(), "\n"); head != "time,A,B,C,total,frac" {
		t.Errorf("CSV header %q", head)
	}
}

// Doses are events: the outcome lists them, its figure series and its
// event rows carry the state just before and after each dose. One bolus of
// 10 (concentration units) at t = 1 into A, which decays at k = 0.7: just
// before it A = 2·e^(−0.7), just after A = 2·e^(−0.7) + 10 (first-order
// decay, common practice).
func TestRunEventRows(t *testing.T) {
	m := decayModel(0.7, 2, 5)
	m.Events = []network.Event{{Name: "bolus", At: network.Number(1), Add: []network.Change{{Target: "A", Value: "10"}}}}
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(o.Events) != 1 || o.Events[0].Name != "bolus" || o.Events[0].T != 1 {
		t.Fatalf("events %v", o.Events)
	}
	e := o.WithEventRows()
	if len(e.T) != len(o.T)+1 { // t = 1 is on the grid: its row becomes the pair
		t.Fatalf("%d rows with events, %d without", len(e.T), len(o.T))
	}
	before := 2 * math.Exp(-0.7)
	for i := range e.T {
		if e.T[i] == 1 {
			if math.Abs(e.Y[i][0]-before) > 1e-6 || math.Abs(e.Y[i+1][0]-before-10) > 1e-6 || e.T[i+1] != 1 {
				t.Errorf("rows at t = 1: %v then %v, want A = %g then %g", e.Y[i], e.Y[i+1], before, before+10)
			}
			break
		}
		if i > 0 && e.T[i] < e.T[i-1] {
			t.Fatalf("times out of order at row %d", i)
		}
	}
	if tr := o.Trajectories(); len(tr.Times) != len(e.T) {
		t.Errorf("figure series has %d points, want the %d with event rows", len(tr.Times), len(e.T))
	}
}

// A dose at t = 0 gives two rows at t = 0, as at any other time: the
// state before it (the initial state) and after it; the grid's first row,
// which holds the state after, is not repeated.
func TestRunEventRowsAtStart(t *testing.T) {
	m := decayModel(0.7, 2, 5)
	m.Events = []network.Event{{Name: "bolus", At: network.Number(0), Add: []network.Change{{Target: "A", Value: "10"}}}}
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	e := o.WithEventRows()
	if len(e.T) != len(o.T)+1 {
		t.Fatalf("%d rows with events, %d without; want one more (the row before the dose)", len(e.T), len(o.T))
	}
	if e.T[0] != 0 || e.T[1] != 0 || e.T[2] == 0 || e.Y[0][0] != 2 || e.Y[1][0] != 12 {
		t.Errorf("first rows %v at %v; want A = 2 then 12 at t = 0, then a later time", e.Y[:3], e.T[:3])
	}
}

// An event's mark on the time axis is found under the pointer, and not
// away from it.
func TestEventNearMark(t *testing.T) {
	m := decayModel(0.7, 2, 5)
	m.Events = []network.Event{{Name: "bolus", At: network.Number(2), Add: []network.Change{{Target: "A", Value: "1"}}}}
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	_, f, err := Render(o, View{}, 800, 500)
	if err != nil {
		t.Fatal(err)
	}
	px, _, _ := f.ToPixel(2, 1)
	bottom := float64(f.Area.Max.Y) - 3
	if e, ok := EventNear(o, f, px+2, bottom, 6); !ok || e.Name != "bolus" {
		t.Errorf("no event under the pointer at its mark: %v %v", e, ok)
	}
	if _, ok := EventNear(o, f, px+40, bottom, 6); ok {
		t.Error("an event found 40 pixels from its mark")
	}
	if _, ok := EventNear(o, f, px, float64(f.Area.Min.Y)+5, 6); ok {
		t.Error("an event found at the top of the plot")
	}
}
