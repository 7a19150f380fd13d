package explore

import (
	"bytes"
	"context"
	"encoding/json"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// runDecaySpill is runDecay with the points in a spill file, without
// trajectories (a spill holds none).
func runDecaySpill(t testing.TB, sp *Spill, workers int, shard Shard) *Result {
	t.Helper()
	times := grid(9, 0.75)
	pts, err := Population{
		Vary: []Distribution{LogNormal{Median: 0.5, CVPercent: 60}, Uniform{0, 1}},
		Size: 2999, Seed: 3, Sampling: LatinHypercube,
	}.Sample()
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), pts, newDecaySim(times, 2, 1.2), Settings{
		Knobs:    []string{"k", "unused"},
		Readouts: []Readout{{Name: "auc", Kind: AUC}, {Name: "t1", Kind: CrossDown, Level: 1}},
		Bands:    NewBands([]int{0}, times),
		Workers:  workers, Shard: shard, Spill: sp,
	})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func newSpill(t *testing.T) *Spill {
	t.Helper()
	sp, err := NewSpill(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { sp.Close() })
	return sp
}

// A run whose points go to a spill file gives, read back, the same
// result bit for bit as the run held in memory, for any number of
// workers, and so do its shards written out, read back into a spill and
// merged (issue 17, item 8: populations held every sample in memory).
func TestSpilledRunIsTheRunInMemory(t *testing.T) {
	mem := runDecaySpill(t, nil, 1, Shard{})
	if mem.Spilled() || mem.Failed == 0 || len(mem.Samples) == 0 {
		t.Fatalf("in memory: want samples and failures held, got %d and %d", len(mem.Samples), mem.Failed)
	}
	for _, w := range []int{1, 2, 3} {
		sp := newSpill(t)
		res := runDecaySpill(t, sp, w, Shard{})
		if !res.Spilled() || len(res.Samples) != 0 || len(res.Failures) != 0 {
			t.Fatalf("%d workers: the spilled result holds %d samples in memory", w, len(res.Samples))
		}
		if sp.Size() == 0 {
			t.Fatalf("%d workers: nothing written to the spill file", w)
		}
		if res.Points != mem.Points || res.Failed != mem.Failed || !res.Equal(mem) {
			t.Errorf("%d workers: the spilled run differs from the run in memory", w)
		}
	}
	// Three spilled shards, written as parts, read back into one spill
	// file and merged in a shuffled order.
	out := newSpill(t)
	var parts []*Result
	for _, i := range []int{1, 2, 0} {
		sp := newSpill(t)
		var buf bytes.Buffer
		if err := runDecaySpill(t, sp, 2, Shard{I: i, N: 3}).WriteJSON(&buf); err != nil {
			t.Fatal(err)
		}
		p, err := DecodeJSON(json.NewDecoder(&buf), out)
		if err != nil {
			t.Fatal(err)
		}
		parts = append(parts, p)
	}
	merged, err := Merge(parts...)
	if err != nil {
		t.Fatal(err)
	}
	if !merged.Spilled() || !merged.Equal(mem) {
		t.Error("merged spilled shards differ from the run in memory")
	}
	first, err := merged.FirstFailures(3)
	if err != nil || len(first) != 3 || first[0].Index != mem.Failures[0].Index || first[2].Err != mem.Failures[2].Err {
		t.Errorf("FirstFailures = %v, %v; want the first three of %v", first, err, mem.Failures[:3])
	}
	// Values read from the spill.
	a, b := merged.Values(0), mem.Values(0)
	for i := range a {
		if a[i] != b[i] && !(a[i] != a[i] && b[i] != b[i]) {
			t.Fatalf("Values(0)[%d] = %v, want %v", i, a[i], b[i])
		}
	}
}

// The order-of-index buffer is bounded: while one point takes long, the
// other workers go on only until they are a window ahead of it, instead
// of running (and holding) the rest of the design.
func TestSpillReorderWindowIsBounded(t *testing.T) {
	const n, workers = 2000, 4
	var started, maxAhead atomic.Int64
	var once sync.Once
	release := make(chan struct{})
	newSim := func() (Simulator, error) {
		return simFunc(func(ctx context.Context, x []float64) (Trajectory, error) {
			if x[0] == 0 {
				// Point 0 holds back delivery until the others have
				// gone as far as they can, or 300 ms.
				select {
				case <-release:
				case <-time.After(300 * time.Millisecond):
				}
				maxAhead.Store(started.Load())
			} else {
				if started.Add(1) >= n-1 {
					once.Do(func() { close(release) })
				}
			}
			return Trajectory{T: []float64{0, 1}, Y: [][]float64{{x[0]}, {x[0]}}}, nil
		}), nil
	}
	pts := make(Points, n)
	for i := range pts {
		pts[i] = []float64{float64(i)}
	}
	sp := newSpill(t)
	res, err := Run(context.Background(), pts, newSim, Settings{Knobs: []string{"k"}, Workers: workers, Spill: sp})
	if err != nil {
		t.Fatal(err)
	}
	if res.Points != n {
		t.Fatalf("%d points done, want %d", res.Points, n)
	}
	// The window is max(64, 16·workers) points, point 0's included.
	if got, limit := maxAhead.Load(), int64(max(64, 16*workers)); got >= limit {
		t.Errorf("%d points ran while point 0 was pending; want fewer than the window of %d", got, limit)
	}
	k := -1
	err = res.EachSample(func(s *Sample) error {
		if s.Index != k+1 {
			t.Fatalf("sample %d follows %d", s.Index, k)
		}
		k = s.Index
		return nil
	})
	if err != nil || k != n-1 {
		t.Errorf("read %d samples back (%v), want %d in order", k+1, err, n)
	}
}

// simFunc adapts a function to Simulator.
type simFunc func(ctx context.Context, x []float64) (Trajectory, error)

func (f simFunc) Simulate(ctx context.Context, x []float64) (Trajectory, error) { return f(ctx, x) }

// A cancelled spilled run keeps the points done, in order, as the run in
// memory does.
func TestSpilledRunCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	var calls atomic.Int64
	newSim := func() (Simulator, error) {
		return simFunc(func(c context.Context, x []float64) (Trajectory, error) {
			if calls.Add(1) == 500 {
				cancel()
			}
			return Trajectory{T: []float64{0, 1}, Y: [][]float64{{1}, {1}}}, nil
		}), nil
	}
	pts := make(Points, 5000)
	for i := range pts {
		pts[i] = []float64{float64(i)}
	}
	res, err := Run(ctx, pts, newSim, Settings{Knobs: []string{"k"}, Workers: 3, Spill: newSpill(t)})
	if err == nil || res == nil {
		t.Fatalf("error %v, want a cancelled run with its points", err)
	}
	n, last := 0, -1
	if err := res.EachSample(func(s *Sample) error {
		if s.Index <= last {
			t.Fatalf("sample %d after %d", s.Index, last)
		}
		n, last = n+1, s.Index
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	if n != res.Points || n < 400 || n == 5000 {
		t.Errorf("%d samples read back, Points %d; want the ~500 done", n, res.Points)
	}
}

// wireResult is the wire form as encoding/json wrote it in one piece
// before WriteJSON wrote it a point at a time: the bytes must not change,
// so that parts written before and after merge alike.
type wireResult struct {
	Format   string        `json:"format"`
	Size     int           `json:"size"`
	Shard    string        `json:"shard"`
	Knobs    []string      `json:"knobs"`
	Readouts []string      `json:"readouts"`
	Samples  []wireSample  `json:"samples"`
	Failures []wireFailure `json:"failures"`
	Bands    *wireBands    `json:"bands,omitempty"`
	Points   int           `json:"points"`
	Failed   int           `json:"failed"`
	WallNS   int64         `json:"wall_ns"`
}

func TestWriteJSONBytesUnchanged(t *testing.T) {
	r := runDecay(t, 2, Shard{I: 1, N: 2})
	r.Knobs[1] = "a<b&c" // escaped alike
	var got bytes.Buffer
	if err := r.WriteJSON(&got); err != nil {
		t.Fatal(err)
	}
	w := wireResult{Format: PartFormat, Size: r.Size, Shard: r.Shard.String(), Knobs: r.Knobs, Readouts: r.Readouts,
		Samples: []wireSample{}, Failures: []wireFailure{}, Points: r.Points, Failed: r.Failed, WallNS: int64(r.Wall)}
	for _, s := range r.Samples {
		ws := wireSample{Index: s.Index, X: toNums(s.X), Readouts: toNums(s.Readouts), T: toNums(s.Traj.T)}
		for _, y := range s.Traj.Y {
			ws.Y = append(ws.Y, toNums(y))
		}
		w.Samples = append(w.Samples, ws)
	}
	for _, f := range r.Failures {
		w.Failures = append(w.Failures, wireFailure{Index: f.Index, X: toNums(f.X), Err: f.Err})
	}
	b := r.Bands
	w.Bands = &wireBands{Components: b.Components, Times: toNums(b.Times)}
	for k := range b.Cells {
		c := b.Cells[k]
		c.trim()
		w.Bands.Cells = append(w.Bands.Cells, wireCell{N: c.N, Min: num(c.Min), Max: num(c.Max), Offset: c.Offset, Counts: c.Counts})
	}
	var want bytes.Buffer
	if err := json.NewEncoder(&want).Encode(&w); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got.Bytes(), want.Bytes()) {
		t.Errorf("WriteJSON wrote %d bytes unlike the one-piece encoding's %d", got.Len(), want.Len())
	}
	if !strings.Contains(got.String(), `a\u003cb\u0026c`) {
		t.Error("knob name not escaped as encoding/json escapes it")
	}
}

// Keys in another order (a part rewritten by another program) read the
// same: points that come before the size and shard are checked after.
func TestDecodeJSONAnyKeyOrder(t *testing.T) {
	r := runDecaySpill(t, nil, 1, Shard{I: 0, N: 2})
	var buf bytes.Buffer
	if err := r.WriteJSON(&buf); err != nil {
		t.Fatal(err)
	}
	var m map[string]json.RawMessage
	if err := json.Unmarshal(buf.Bytes(), &m); err != nil {
		t.Fatal(err)
	}
	sorted, _ := json.Marshal(m) // keys in alphabetical order: failures first
	for _, sp := range []*Spill{nil, newSpill(t)} {
		back, err := DecodeJSON(json.NewDecoder(bytes.NewReader(sorted)), sp)
		if err != nil {
			t.Fatal(err)
		}
		if !back.Equal(r) {
			t.Errorf("spill %v: read back differs", sp != nil)
		}
	}
}

// FuzzDecodeJSON: any bytes read as a part, into memory or a spill file,
// give an error or a result that writes and reads back the same.
func FuzzDecodeJSON(f *testing.F) {
	var buf bytes.Buffer
	if err := runDecaySpill(f, nil, 1, Shard{I: 1, N: 300}).WriteJSON(&buf); err == nil {
		f.Add(buf.Bytes())
	}
	f.Add([]byte(`{"format":"` + PartFormat + `","size":4,"shard":"0/2","knobs":["k"],"readouts":["r"],"samples":[{"i":0,"x":[1],"r":["NaN"]}],"failures":[{"i":2,"x":[1],"error":"e"}],"points":2,"failed":1,"wall_ns":0}`))
	f.Add([]byte(`{"samples":[{"i":2,"x":[1],"r":[1]}],"size":3,"format":"` + PartFormat + `","shard":"0/1","knobs":["k"],"readouts":["r"],"failures":[{"i":0,"x":[1],"error":"e"},{"i":1,"x":[1],"error":"f"}],"points":3,"failed":2,"wall_ns":0}`))
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, data []byte) {
		sp, err := NewSpill(dir)
		if err != nil {
			t.Fatal(err)
		}
		defer sp.Close()
		for _, s := range []*Spill{nil, sp} {
			r, err := DecodeJSON(json.NewDecoder(bytes.NewReader(data)), s)
			if err != nil {
				continue
			}
			var out bytes.Buffer
			if err := r.WriteJSON(&out); err != nil {
				t.Fatalf("writing back: %v", err)
			}
			back, err := ReadJSON(&out)
			if err != nil {
				t.Fatalf("reading back what was written: %v", err)
			}
			if !back.Equal(r) {
				t.Fatal("read back differs")
			}
		}
	})
}

// A population drawn as a flat Table has the points Sample draws, bit
// for bit, for both samplings.
func TestTableIsSample(t *testing.T) {
	for _, s := range []Sampling{Random, LatinHypercube} {
		p := Population{Vary: []Distribution{LogNormal{Median: 2, CVPercent: 40}, Uniform{1, 3}, LogUniform{0.1, 10}}, Size: 1001, Seed: 9, Sampling: s}
		pts, err := p.Sample()
		if err != nil {
			t.Fatal(err)
		}
		tab, err := p.Table()
		if err != nil {
			t.Fatal(err)
		}
		if tab.Len() != len(pts) || tab.Dim() != 3 {
			t.Fatalf("%s: table of %d × %d, want %d × 3", s, tab.Len(), tab.Dim(), len(pts))
		}
		x := make([]float64, 3)
		for i, want := range pts {
			tab.Point(i, x)
			for k := range x {
				if x[k] != want[k] {
					t.Fatalf("%s: point %d knob %d: %v, Sample gives %v", s, i, k, x[k], want[k])
				}
			}
		}
	}
	_, err := Run(context.Background(), Table{Knobs: 2, Values: []float64{1, 2, 3}}, newDecaySim(grid(3, 1), 1, 0), Settings{Knobs: []string{"k", "j"}})
	if err == nil || !strings.Contains(err.Error(), "whole points") {
		t.Errorf("a ragged table: error %v", err)
	}
}
