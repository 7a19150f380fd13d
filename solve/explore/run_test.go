package explore

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"sync/atomic"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat/distuv"
)

// decaySim is first-order elimination dC/dt = −k·C in closed form,
// C(t) = C0·exp(−k·t), with knob 0 = k; the trajectory is exact, so the
// tests below check the statistics alone.
type decaySim struct {
	c0  float64
	tr  Trajectory
	bad float64 // k above bad fails, when bad > 0
}

func newDecaySim(times []float64, c0, bad float64) func() (Simulator, error) {
	return func() (Simulator, error) {
		s := &decaySim{c0: c0, bad: bad, tr: Trajectory{T: times, Y: make([][]float64, len(times))}}
		back := make([]float64, len(times))
		for i := range s.tr.Y {
			s.tr.Y[i] = back[i : i+1]
		}
		return s, nil
	}
}

func (s *decaySim) Simulate(ctx context.Context, x []float64) (Trajectory, error) {
	k := x[0]
	if s.bad > 0 && k > s.bad {
		return Trajectory{}, fmt.Errorf("rate %v too fast", k)
	}
	for i, t := range s.tr.T {
		s.tr.Y[i][0] = s.c0 * math.Exp(-k*t)
	}
	return s.tr, nil
}

func grid(n int, dt float64) []float64 {
	t := make([]float64, n)
	for i := range t {
		t[i] = float64(i) * dt
	}
	return t
}

func TestPopulationBandsMatchLogNormal(t *testing.T) {
	const (
		n      = 20000
		c0     = 10.0
		median = 0.5
		cv     = 0.4
	)
	times := grid(11, 1)
	pop := Population{Vary: []Distribution{LogNormal{Median: median, CVPercent: 100 * cv}}, Size: n, Seed: 2026}
	pts, err := pop.Sample()
	if err != nil {
		t.Fatal(err)
	}
	bands := NewBands([]int{0}, times)
	res, err := Run(context.Background(), pts, newDecaySim(times, c0, 0), Settings{Knobs: []string{"k"}, Bands: bands})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Samples) != n || res.Failed != 0 {
		t.Fatalf("%d samples, %d failed", len(res.Samples), res.Failed)
	}
	// k is log-normal with μ = ln(median), σ² = ln(1 + CV²); C(t) is a
	// decreasing function of k, so the p-quantile of C(t) is
	// C0·exp(−k_{1−p}·t) and P(C(t) ≤ c) = 1 − F_k(−ln(c/C0)/t), with F_k
	// from gonum's distuv.LogNormal.
	kd := distuv.LogNormal{Mu: math.Log(median), Sigma: math.Sqrt(math.Log1p(cv * cv))}
	for i, tm := range times {
		for _, p := range []float64{0.05, 0.25, 0.5, 0.75, 0.95} {
			q := bands.Quantile(0, i, p)
			if tm == 0 {
				if q != c0 {
					t.Errorf("t = 0: quantile %v = %v, want %v exactly", p, q, c0)
				}
				continue
			}
			cdf := func(c float64) float64 { return 1 - kd.CDF(-math.Log(c/c0)/tm) }
			// The empirical p-quantile has F(x̂) within 4 binomial standard
			// errors sqrt(p(1−p)/N) of p (normal approximation of the order
			// statistic's rank; common practice), and the band quantile is
			// within one bin, a factor 1 + QuantileRelError, of it.
			se := math.Sqrt(p * (1 - p) / n)
			lo, hi := cdf(q/(1+QuantileRelError)), cdf(q*(1+QuantileRelError))
			if p < lo-4*se || p > hi+4*se {
				t.Errorf("t = %v, p = %v: band quantile %.6g has F in [%.4f, %.4f], more than 4 se = %.4f from p",
					tm, p, q, lo, hi, 4*se)
			}
			exact := c0 * math.Exp(-kd.Quantile(1-p)*tm)
			if math.Abs(q-exact) > 0.1*exact {
				t.Errorf("t = %v, p = %v: band %.6g vs exact quantile %.6g", tm, p, q, exact)
			}
		}
	}
}

func TestZeroSpreadIsTheSingleRun(t *testing.T) {
	times := grid(21, 0.5)
	k := 0.3
	sim, _ := newDecaySim(times, 4, 0)()
	single, _ := sim.Simulate(context.Background(), []float64{k})
	ro := []Readout{{Name: "auc", Kind: AUC}, {Name: "half", Kind: CrossDown, Level: 2}, {Name: "c3", Kind: ValueAt, At: 3.3}}
	pts, err := Population{Vary: []Distribution{LogNormal{Median: k}}, Size: 50, Seed: 1, Sampling: LatinHypercube}.Sample()
	if err != nil {
		t.Fatal(err)
	}
	bands := NewBands([]int{0}, times)
	res, err := Run(context.Background(), pts, newDecaySim(times, 4, 0), Settings{Knobs: []string{"k"}, Readouts: ro, Bands: bands})
	if err != nil {
		t.Fatal(err)
	}
	for i := range times {
		for _, p := range []float64{0.05, 0.25, 0.5, 0.75, 0.95} {
			if got := bands.Quantile(0, i, p); got != single.Y[i][0] {
				t.Fatalf("t = %v p = %v: %v, single run %v", times[i], p, got, single.Y[i][0])
			}
		}
	}
	for _, s := range res.Samples {
		for r := range ro {
			if s.Readouts[r] != ro[r].Eval(single) {
				t.Fatalf("sample %d readout %s: %v vs %v", s.Index, ro[r].Name, s.Readouts[r], ro[r].Eval(single))
			}
		}
	}
}

// runDecay runs a small population with failures, readouts and bands.
func runDecay(t *testing.T, workers int, shard Shard) *Result {
	t.Helper()
	times := grid(9, 0.75)
	pts, err := Population{
		Vary: []Distribution{LogNormal{Median: 0.5, CVPercent: 60}, Uniform{0, 1}},
		Size: 997, Seed: 3, Sampling: LatinHypercube,
	}.Sample()
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), pts, newDecaySim(times, 2, 1.2), Settings{
		Knobs:    []string{"k", "unused"},
		Readouts: []Readout{{Name: "auc", Kind: AUC}, {Name: "t1", Kind: CrossDown, Level: 1}},
		Bands:    NewBands([]int{0}, times),
		Workers:  workers, Shard: shard,
		KeepTrajectories: true,
	})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func TestWorkersAndShardsBitForBit(t *testing.T) {
	one := runDecay(t, 1, Shard{})
	if one.Failed == 0 || len(one.Samples) == 0 {
		t.Fatalf("want both samples and failures, got %d and %d", len(one.Samples), one.Failed)
	}
	for _, w := range []int{2, 3} {
		if !runDecay(t, w, Shard{}).Equal(one) {
			t.Errorf("%d workers differ from 1 worker", w)
		}
	}
	// Shards written out as JSON, read back, merged in a shuffled order.
	var parts []*Result
	for _, i := range []int{2, 0, 1} {
		var buf bytes.Buffer
		if err := runDecay(t, 2, Shard{I: i, N: 3}).WriteJSON(&buf); err != nil {
			t.Fatal(err)
		}
		p, err := ReadJSON(&buf)
		if err != nil {
			t.Fatal(err)
		}
		parts = append(parts, p)
	}
	merged, err := Merge(parts...)
	if err != nil {
		t.Fatal(err)
	}
	if !merged.Equal(one) {
		t.Error("merged shards differ from the single run")
	}
	for i := range one.Bands.Cells {
		a, b := one.Bands.Cells[i], merged.Bands.Cells[i]
		if a.Quantile(0.05) != b.Quantile(0.05) || a.Quantile(0.95) != b.Quantile(0.95) || a.Min != b.Min || a.Max != b.Max {
			t.Fatalf("cell %d: quantiles differ", i)
		}
	}
	if merged.Points != one.Points || merged.Failed != one.Failed {
		t.Errorf("merged stats %+v vs %+v", merged.Stats, one.Stats)
	}
	if _, err := Merge(parts[0], parts[1]); err == nil {
		t.Error("merging 2 of 3 shards: no error")
	}
	if _, err := Merge(parts[0], parts[0], parts[1]); err == nil {
		t.Error("merging a shard twice: no error")
	}
}

func TestFailuresAreListed(t *testing.T) {
	res := runDecay(t, 2, Shard{})
	want := 0
	pts, _ := Population{
		Vary: []Distribution{LogNormal{Median: 0.5, CVPercent: 60}, Uniform{0, 1}},
		Size: 997, Seed: 3, Sampling: LatinHypercube,
	}.Sample()
	for _, p := range pts {
		if p[0] > 1.2 {
			want++
		}
	}
	if res.Failed != want || len(res.Failures) != want || len(res.Samples)+want != 997 {
		t.Fatalf("%d failures listed, %d counted, want %d", len(res.Failures), res.Failed, want)
	}
	for _, f := range res.Failures {
		if f.X[0] != pts[f.Index][0] || f.X[0] <= 1.2 || f.Err == "" {
			t.Errorf("failure %+v does not match its point %v", f, pts[f.Index])
		}
	}
	if res.Bands.Cells[0].N != uint64(len(res.Samples)) {
		t.Errorf("bands hold %d trajectories, want %d", res.Bands.Cells[0].N, len(res.Samples))
	}
	v := res.Values(0)
	for _, f := range res.Failures {
		if !math.IsNaN(v[f.Index]) {
			t.Errorf("Values: failed point %d is %v, want NaN", f.Index, v[f.Index])
		}
	}
}

// blowUp returns +Inf past its knob, as a diverging simulation might.
type blowUp struct{ tr Trajectory }

func (b *blowUp) Simulate(ctx context.Context, x []float64) (Trajectory, error) {
	for i, t := range b.tr.T {
		b.tr.Y[i][0] = 1 / (x[0] - t) // y' = y², y(0) = 1/x₀: infinite at t = x₀
		if t >= x[0] {
			b.tr.Y[i][0] = math.Inf(1)
		}
	}
	return b.tr, nil
}

func TestNonFiniteTrajectoryFails(t *testing.T) {
	times := grid(5, 1)
	newSim := func() (Simulator, error) {
		tr := Trajectory{T: times, Y: make([][]float64, len(times))}
		for i := range tr.Y {
			tr.Y[i] = make([]float64, 1)
		}
		return &blowUp{tr}, nil
	}
	res, err := Run(context.Background(), Grid{Axes: [][]float64{{2.5, 10}}}, newSim, Settings{
		Knobs: []string{"x0"}, Readouts: []Readout{{Name: "max", Kind: Max}},
	})
	if err != nil {
		t.Fatal(err)
	}
	if res.Failed != 1 || res.Failures[0].Index != 0 || len(res.Samples) != 1 {
		t.Fatalf("failures %+v, samples %d", res.Failures, len(res.Samples))
	}
	t.Logf("failure message: %s", res.Failures[0].Err)
}

func TestCancelAndProgress(t *testing.T) {
	times := grid(3, 1)
	ctx, cancel := context.WithCancel(context.Background())
	var fractions []float64
	res, err := Run(ctx, Grid{Axes: [][]float64{grid(1000, 0.001)}}, newDecaySim(times, 1, 0), Settings{
		Knobs: []string{"k"}, Workers: 1,
		Progress:      func(f float64) { fractions = append(fractions, f); cancel() },
		ProgressEvery: 1,
	})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want context.Canceled", err)
	}
	if res == nil || len(res.Samples) == 0 || len(res.Samples) >= 1000 {
		t.Fatalf("partial result not returned")
	}
	if len(fractions) == 0 || fractions[len(fractions)-1] >= 1 {
		t.Errorf("progress %v", fractions)
	}
	fractions = nil
	_, err = Run(context.Background(), Grid{Axes: [][]float64{{1, 2, 3}}}, newDecaySim(times, 1, 0), Settings{
		Knobs: []string{"k"}, Progress: func(f float64) { fractions = append(fractions, f) },
	})
	if err != nil || len(fractions) == 0 || fractions[len(fractions)-1] != 1 {
		t.Errorf("progress %v, error %v", fractions, err)
	}
}

func TestRunChecksSettings(t *testing.T) {
	times := grid(3, 1)
	g := Grid{Axes: [][]float64{{1, 2}, {3}}}
	if _, err := Run(context.Background(), g, newDecaySim(times, 1, 0), Settings{Knobs: []string{"k"}}); err == nil || !strings.Contains(err.Error(), "2 knobs") {
		t.Errorf("knob count mismatch: %v", err)
	}
	if _, err := Run(context.Background(), g, newDecaySim(times, 1, 0), Settings{Knobs: []string{"k", "j"}, Readouts: []Readout{{Name: "r", Kind: "mean"}}}); err == nil || !strings.Contains(err.Error(), `"r"`) {
		t.Errorf("bad readout: %v", err)
	}
	if _, err := Run(context.Background(), g, newDecaySim(times, 1, 0), Settings{Knobs: []string{"k", "j"}, Shard: Shard{I: 2, N: 2}}); err == nil {
		t.Error("bad shard: no error")
	}
}

// TestRunRefusesOverflowingGrid checks that a grid of 256⁸ = 2⁶⁴ points,
// which wraps an int to 0, is refused rather than run as an empty design.
func TestRunRefusesOverflowingGrid(t *testing.T) {
	axis := make([]float64, 256)
	for i := range axis {
		axis[i] = float64(i + 1)
	}
	var g Grid
	knobs := make([]string, 8)
	for i := range knobs {
		g.Axes = append(g.Axes, axis)
		knobs[i] = fmt.Sprintf("k%d", i)
	}
	if n := g.Len(); n != -1 {
		t.Errorf("Len of 256^8 points = %d, want -1", n)
	}
	_, err := Run(context.Background(), g, newDecaySim(grid(3, 1), 1, 0), Settings{Knobs: knobs})
	if err == nil || !strings.Contains(err.Error(), "more points than can be counted") {
		t.Errorf("Run on 256^8 points: error %v, want a refusal", err)
	}
	if n := (Grid{Axes: [][]float64{{1, 2}, {}}}).Len(); n != 0 {
		t.Errorf("Len with an empty axis = %d, want 0", n)
	}
}

// TestReadJSONRejectsBadParts checks that a part file with a negative size,
// or a failure outside its shard, is refused with a message instead of
// being accepted (a negative size made Result.Values panic).
func TestReadJSONRejectsBadParts(t *testing.T) {
	for _, tc := range []struct{ name, json, want string }{
		{"negative size", `{"format":"` + PartFormat + `","size":-1,"shard":"0/1","knobs":["k"],"readouts":["r"],"samples":[],"failures":[],"points":0,"failed":0,"wall_ns":0}`, "size is -1"},
		// Issue 17: a part with a point deleted or repeated used to merge,
		// reporting the original count.
		{"point deleted", `{"format":"` + PartFormat + `","size":4,"shard":"0/2","knobs":["k"],"readouts":["r"],"samples":[{"i":0,"x":[1],"r":[1]}],"failures":[],"points":1,"failed":0,"wall_ns":0}`, "should hold 2 points, but holds 1"},
		{"point repeated", `{"format":"` + PartFormat + `","size":4,"shard":"0/2","knobs":["k"],"readouts":["r"],"samples":[{"i":0,"x":[1],"r":[1]},{"i":0,"x":[1],"r":[1]}],"failures":[],"points":2,"failed":0,"wall_ns":0}`, "point 0 appears twice"},
		{"counts disagree", `{"format":"` + PartFormat + `","size":4,"shard":"0/2","knobs":["k"],"readouts":["r"],"samples":[{"i":0,"x":[1],"r":[1]}],"failures":[],"points":2,"failed":0,"wall_ns":0}`, "says 2 points"},
		{"huge shard count", `{"format":"` + PartFormat + `","size":4,"shard":"0/1000000000000","knobs":["k"],"readouts":["r"],"samples":[],"failures":[],"points":0,"failed":0,"wall_ns":0}`, "at most 100000 shards"},
		{"failure outside shard", `{"format":"` + PartFormat + `","size":4,"shard":"0/2","knobs":["k"],"readouts":["r"],"samples":[],"failures":[{"i":1,"x":[1],"error":"e"}],"points":1,"failed":1,"wall_ns":0}`, "failure 0"},
	} {
		r, err := ReadJSON(strings.NewReader(tc.json))
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want one containing %q", tc.name, err, tc.want)
			if r != nil {
				func() {
					defer func() {
						if p := recover(); p != nil {
							t.Errorf("%s: Values panics: %v", tc.name, p)
						}
					}()
					r.Values(0)
				}()
			}
		}
	}
}

// TestRunRefusesRaggedPoints checks that a Points design whose points have
// different lengths is refused: a short point used to keep the previous
// point's value for its missing knob.
func TestRunRefusesRaggedPoints(t *testing.T) {
	d := Points{{1, 2}, {3}}
	_, err := Run(context.Background(), d, newDecaySim(grid(3, 1), 1, 0), Settings{Knobs: []string{"k", "j"}, Workers: 1})
	if err == nil || !strings.Contains(err.Error(), "point 1 has 1 knob values, expected 2") {
		t.Errorf("ragged points: error %v, want a refusal naming point 1", err)
	}
}

// slowSim waits up to wait for each point, or until its context ends.
type slowSim struct {
	wait  time.Duration
	calls *atomic.Int64
}

func (s slowSim) Simulate(ctx context.Context, x []float64) (Trajectory, error) {
	s.calls.Add(1)
	select {
	case <-ctx.Done():
		return Trajectory{}, ctx.Err()
	case <-time.After(s.wait):
		return Trajectory{}, fmt.Errorf("slow")
	}
}

// TestRunStopsWhenASimulatorCannotBeMade checks that when one worker cannot
// make its simulator, the other workers stop instead of running the whole
// design for a result that is thrown away.
func TestRunStopsWhenASimulatorCannotBeMade(t *testing.T) {
	var made, calls atomic.Int64
	newSim := func() (Simulator, error) {
		if made.Add(1) == 2 {
			return nil, fmt.Errorf("no licence for a second simulator")
		}
		return slowSim{wait: 100 * time.Millisecond, calls: &calls}, nil
	}
	pts := make(Points, 20)
	for i := range pts {
		pts[i] = []float64{float64(i)}
	}
	_, err := Run(context.Background(), pts, newSim, Settings{Knobs: []string{"k"}, Workers: 2})
	if err == nil || !strings.Contains(err.Error(), "no licence") {
		t.Errorf("error %v, want the simulator's set-up error", err)
	}
	if n := calls.Load(); n > 2 {
		t.Errorf("the working simulator ran %d points after the other failed, want at most 2", n)
	}
}

// panicSim panics at knob values above 5: a bug in a simulator.
type panicSim struct{}

func (panicSim) Simulate(ctx context.Context, x []float64) (Trajectory, error) {
	if x[0] > 5 {
		panic("index out of range in a test simulator")
	}
	return Trajectory{T: []float64{0, 1}, Y: [][]float64{{1}, {1}}}, nil
}

// A panic in a worker does not crash the program: Run returns a
// *PanicError naming the point (issue 17: internal errors get exit
// status 3, which needs the panic caught in the worker goroutine).
func TestRunCatchesPanics(t *testing.T) {
	newSim := func() (Simulator, error) { return panicSim{}, nil }
	_, err := Run(context.Background(), Grid{Axes: [][]float64{{1, 2, 7, 3}}}, newSim, Settings{Knobs: []string{"k"}, Workers: 2})
	var pe *PanicError
	if !errors.As(err, &pe) || pe.Point != 2 || !strings.Contains(pe.Error(), "index out of range") || len(pe.Stack) == 0 {
		t.Fatalf("error %v; want a PanicError at point 2 with a stack", err)
	}
}
