package explore

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"runtime/debug"
	"sync"
	"sync/atomic"
	"time"
)

// Simulator computes one trajectory for one set of knob values. A Simulator
// is used by one goroutine at a time; the trajectory it returns may be
// overwritten by its next call.
type Simulator interface {
	Simulate(ctx context.Context, x []float64) (Trajectory, error)
}

// Settings control Run. The zero value of every field means a sensible
// default.
type Settings struct {
	// Knobs names the knobs, in the order of the design's coordinates; the
	// names are carried into the Result for files and merging.
	Knobs []string
	// Readouts are computed on every trajectory.
	Readouts []Readout
	// Bands, when not nil, is filled with the trajectories' summaries; make
	// it with NewBands. Every trajectory must have the output grid
	// Bands.Times, else its point counts as failed.
	Bands *Bands
	// KeepTrajectories keeps a copy of every trajectory in the Result (for
	// sweeps; populations keep only readouts and bands).
	KeepTrajectories bool
	// Spill, when not nil, receives every finished point, in order of
	// index, instead of the Result's Samples and Failures, which stay
	// empty: read the points back with EachSample and EachFailure. Memory
	// then does not grow with the number of points. It cannot be combined
	// with KeepTrajectories.
	Spill *Spill

	// Workers is the number of goroutines; default runtime.GOMAXPROCS(0).
	// Results do not depend on it.
	Workers int
	// Shard restricts the run to one part of the design; default all.
	Shard Shard

	// Progress, when set, is called with the fraction of the shard's points
	// done, at most every ProgressEvery (default 100 ms) and once at the
	// end. Calls never overlap.
	Progress      func(fraction float64)
	ProgressEvery time.Duration
}

// Sample is the outcome of one design point that succeeded.
type Sample struct {
	Index    int         // point number in the design
	X        []float64   // knob values
	Readouts []float64   // one per Settings.Readouts; NaN where undefined
	Traj     *Trajectory // a copy of the trajectory, when kept
}

// Failure is a design point whose simulation failed.
type Failure struct {
	Index int       // point number in the design
	X     []float64 // knob values
	Err   string    // what went wrong
}

// Stats report the work of a run.
type Stats struct {
	Points int           // points of the shard attempted
	Failed int           // of which failed
	Wall   time.Duration // wall time
}

// Result is the outcome of a run, or of a shard of one, or of merged shards.
type Result struct {
	Size     int      // number of points of the whole design
	Shard    Shard    // the part of the design covered; zero value: all
	Knobs    []string // knob names
	Readouts []string // readout names
	Samples  []Sample // successful points, by increasing Index; empty when spilled
	Failures []Failure
	Bands    *Bands // nil when not requested
	Stats

	// sections hold the points instead of Samples and Failures when the
	// result was spilled (Settings.Spill, ReadPart).
	sections []*section
}

// Spilled reports whether the points of r are held in a spill file (read
// them with EachSample and EachFailure) rather than in Samples and
// Failures.
func (r *Result) Spilled() bool { return len(r.sections) > 0 }

// EachSample calls f for every successful point of r in increasing order
// of index, from memory or from the spill file, and stops at f's first
// error. The Sample passed may be reused for the next call: copy what is
// kept.
func (r *Result) EachSample(f func(*Sample) error) error {
	if r.Spilled() {
		return eachRecord(r.sections, f, nil)
	}
	for i := range r.Samples {
		if err := f(&r.Samples[i]); err != nil {
			return err
		}
	}
	return nil
}

// EachFailure calls f for every failed point of r in increasing order of
// index, as EachSample does for samples.
func (r *Result) EachFailure(f func(*Failure) error) error {
	if r.Spilled() {
		return eachRecord(r.sections, nil, f)
	}
	for i := range r.Failures {
		if err := f(&r.Failures[i]); err != nil {
			return err
		}
	}
	return nil
}

// errStop ends an iteration early.
var errStop = errors.New("stop")

// FirstFailures returns copies of up to n failures of r with the lowest
// indices.
func (r *Result) FirstFailures(n int) ([]Failure, error) {
	var out []Failure
	if n <= 0 {
		return nil, nil
	}
	err := r.EachFailure(func(f *Failure) error {
		out = append(out, Failure{Index: f.Index, X: append([]float64(nil), f.X...), Err: f.Err})
		if len(out) == n {
			return errStop
		}
		return nil
	})
	if err != nil && err != errStop {
		return out, err
	}
	return out, nil
}

// Values returns readout r for every design point, indexed by point number,
// with NaN for points that failed or were not run. For a two-axis Grid of
// n1 × n2 points, element i1·n2 + i2 belongs to (Axes[0][i1], Axes[1][i2]).
func (r *Result) Values(readout int) []float64 {
	v := make([]float64, r.Size)
	for i := range v {
		v[i] = math.NaN()
	}
	// Errors come only from a spill file that cannot be read; the points
	// not read stay NaN.
	_ = r.EachSample(func(s *Sample) error {
		v[s.Index] = s.Readouts[readout]
		return nil
	})
	return v
}

// Run simulates every point of the design (or of the shard s.Shard) with
// simulators made by newSim, one per worker, and gathers readouts, bands
// and failures. A point fails when its simulation returns an error or a
// readout or band value is not finite where it must be; failures are listed
// in the Result with their knob values, never dropped. Readouts that are
// undefined by their definition (a threshold never crossed) are NaN and do
// not make a point fail.
//
// The Result is the same for any number of workers. When ctx is cancelled,
// Run stops and returns the points done so far with ctx's error.
func Run(ctx context.Context, d Design, newSim func() (Simulator, error), s Settings) (*Result, error) {
	start := time.Now()
	if err := s.Shard.validate(); err != nil {
		return nil, err
	}
	if d.Len() < 0 {
		return nil, fmt.Errorf("explore: the design has more points than can be counted (%d knobs); use fewer values per knob", d.Dim())
	}
	if t, ok := d.(Table); ok && (t.Knobs < 0 || (t.Knobs > 0 && len(t.Values)%t.Knobs != 0)) {
		return nil, fmt.Errorf("explore: a table of %d values does not hold whole points of %d knobs", len(t.Values), t.Knobs)
	}
	if p, ok := d.(Points); ok {
		if err := p.check(); err != nil {
			return nil, fmt.Errorf("explore: %w", err)
		}
	}
	if d.Dim() != len(s.Knobs) {
		return nil, fmt.Errorf("explore: the design has %d knobs but Settings.Knobs names %d", d.Dim(), len(s.Knobs))
	}
	for _, r := range s.Readouts {
		if err := r.Validate(math.MaxInt); err != nil {
			return nil, fmt.Errorf("explore: %w", err)
		}
	}
	if s.Spill != nil && s.KeepTrajectories {
		return nil, errors.New("explore: trajectories cannot be kept in a spill file")
	}
	sh := s.Shard
	if sh.N <= 1 {
		sh = Shard{I: 0, N: 1}
	}
	// Point k of the shard is design point sh.I + k·sh.N.
	npts := 0
	if sh.I < d.Len() {
		npts = (d.Len()-sh.I-1)/sh.N + 1
	}
	res := &Result{
		Size:  d.Len(),
		Shard: s.Shard,
		Knobs: append([]string(nil), s.Knobs...),
		Bands: s.Bands,
	}
	for _, r := range s.Readouts {
		res.Readouts = append(res.Readouts, r.Name)
	}
	workers := s.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, npts))
	every := s.ProgressEvery
	if every <= 0 {
		every = 100 * time.Millisecond
	}

	// Finished points are delivered in order of k: to the spill, or to
	// the Result. Those that finish before an earlier one wait in a ring
	// of window slots; a worker does not start point k before point
	// k − window has been delivered, so the ring never overflows and
	// memory does not grow with the number of points.
	var sec *section
	if s.Spill != nil {
		var err error
		if sec, err = s.Spill.begin(); err != nil {
			return nil, err
		}
		defer s.Spill.end()
		res.sections = []*section{sec}
	}
	type outcome struct {
		sample  *Sample
		failure *Failure
	}
	window := max(64, 16*workers)
	ring := make([]outcome, window)
	// runCtx also stops the other workers when one cannot make a simulator.
	runCtx, cancel := context.WithCancel(ctx)
	defer cancel()
	var (
		next      atomic.Int64
		done      atomic.Int64
		mu        sync.Mutex // guards s.Bands, progress, the ring and delivery
		ready     = sync.NewCond(&mu)
		delivered int // points k < delivered have been delivered or skipped
		lastProg  time.Time
		wg        sync.WaitGroup
		setupErr  error
		errOnce   sync.Once
	)
	stopWaiting := context.AfterFunc(runCtx, func() {
		mu.Lock()
		ready.Broadcast()
		mu.Unlock()
	})
	defer stopWaiting()
	fail := func(err error) {
		errOnce.Do(func() { setupErr = err })
		cancel()
	}
	// deliver hands point k's outcome on; mu is held.
	deliver := func(o outcome) {
		var err error
		switch {
		case o.sample != nil && sec != nil:
			err = s.Spill.addSample(o.sample)
		case o.failure != nil && sec != nil:
			err = s.Spill.addFailure(o.failure)
		case o.sample != nil:
			res.Samples = append(res.Samples, *o.sample)
		case o.failure != nil:
			res.Failures = append(res.Failures, *o.failure)
		default:
			return
		}
		if err != nil {
			fail(err)
			return
		}
		if o.failure != nil {
			res.Failed++
		}
		res.Points++
	}
	progress := func(final bool) {
		if s.Progress == nil {
			return
		}
		mu.Lock()
		defer mu.Unlock()
		now := time.Now()
		if final || now.Sub(lastProg) >= every {
			lastProg = now
			if npts == 0 {
				s.Progress(1)
			} else {
				s.Progress(float64(done.Load()) / float64(npts))
			}
		}
	}
	nk := len(s.Knobs)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			point := -1
			defer func() {
				// A panic is a bug, not a failed point: stop the run and
				// report it with the point that caused it.
				if r := recover(); r != nil {
					fail(&PanicError{Value: r, Point: point, Stack: debug.Stack()})
				}
			}()
			sim, err := newSim()
			if err != nil {
				fail(fmt.Errorf("explore: making a simulator: %w", err))
				return
			}
			x := make([]float64, nk)
			for runCtx.Err() == nil {
				k := int(next.Add(1) - 1)
				if k >= npts {
					return
				}
				mu.Lock()
				for k >= delivered+window && runCtx.Err() == nil {
					ready.Wait()
				}
				mu.Unlock()
				if runCtx.Err() != nil {
					return
				}
				i := sh.I + k*sh.N
				point = i
				d.Point(i, x)
				tr, err := sim.Simulate(runCtx, x)
				if err == nil {
					err = checkTrajectory(tr, s.Readouts)
				}
				var vals []float64
				if err == nil {
					vals = make([]float64, len(s.Readouts))
					for r, ro := range s.Readouts {
						vals[r] = ro.Eval(tr)
					}
				}
				if err == nil && s.Bands != nil {
					if err = s.Bands.Check(tr); err == nil {
						mu.Lock()
						_ = s.Bands.Add(tr) // checked above
						mu.Unlock()
					}
				}
				xc := append([]float64(nil), x...)
				var o outcome
				if err != nil {
					if runCtx.Err() != nil && errors.Is(err, runCtx.Err()) {
						return // cancelled: the point was not done
					}
					o.failure = &Failure{Index: i, X: xc, Err: err.Error()}
				} else {
					o.sample = &Sample{Index: i, X: xc, Readouts: vals}
					if s.KeepTrajectories {
						o.sample.Traj = copyTrajectory(tr)
					}
				}
				mu.Lock()
				ring[k%window] = o
				for delivered < npts {
					slot := &ring[delivered%window]
					if slot.sample == nil && slot.failure == nil {
						break
					}
					deliver(*slot)
					*slot = outcome{}
					delivered++
				}
				ready.Broadcast()
				mu.Unlock()
				done.Add(1)
				progress(false)
			}
		}()
	}
	wg.Wait()
	if setupErr != nil {
		return nil, setupErr
	}
	// After a cancellation, points after one that was not done may be
	// waiting in the ring: deliver them in order.
	for k := delivered; k < min(npts, delivered+window); k++ {
		deliver(ring[k%window])
	}
	if setupErr != nil {
		return nil, setupErr
	}
	res.Wall = time.Since(start)
	progress(true)
	if err := ctx.Err(); err != nil {
		return res, fmt.Errorf("explore: stopped after %d of %d points: %w", res.Points, npts, err)
	}
	return res, nil
}

// PanicError reports a panic in a simulation or readout: a bug in the
// program, not a failed point. Run returns it instead of crashing.
type PanicError struct {
	Value any    // what was passed to panic
	Point int    // the design point being run, or -1
	Stack []byte // the goroutine's stack
}

func (e *PanicError) Error() string {
	return fmt.Sprintf("internal error at design point %d: %v", e.Point, e.Value)
}

// checkTrajectory rejects a trajectory that readouts cannot use.
func checkTrajectory(tr Trajectory, ro []Readout) error {
	if len(tr.T) == 0 || len(tr.Y) != len(tr.T) {
		return fmt.Errorf("trajectory has %d times and %d states", len(tr.T), len(tr.Y))
	}
	for i, y := range tr.Y {
		for _, r := range ro {
			if r.Component >= len(y) {
				return fmt.Errorf("readout %q: component %d out of range [0, %d)", r.Name, r.Component, len(y))
			}
			if v := y[r.Component]; math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("component %d is %v at t = %v", r.Component, v, tr.T[i])
			}
		}
	}
	return nil
}

// copyTrajectory returns a deep copy of tr with one backing array.
func copyTrajectory(tr Trajectory) *Trajectory {
	c := &Trajectory{T: append([]float64(nil), tr.T...), Y: make([][]float64, len(tr.Y))}
	n := 0
	for _, y := range tr.Y {
		n += len(y)
	}
	back := make([]float64, 0, n)
	for i, y := range tr.Y {
		back = append(back, y...)
		c.Y[i] = back[len(back)-len(y) : len(back) : len(back)]
	}
	return c
}
