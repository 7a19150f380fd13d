package stochastic

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/big"
	"math/bits"
	"runtime"
	"slices"
	"sort"
	"sync"
	"sync/atomic"
	"time"

	"kinetarium/solve/explore"
)

// EnsembleSettings control RunEnsemble. The zero value of every field but
// Times means a sensible default.
type EnsembleSettings struct {
	Runs int    // runs of the whole ensemble; default 1000
	Seed uint64 // the same seed gives the same ensemble
	// Workers is the number of goroutines; default runtime.GOMAXPROCS(0).
	// Results do not depend on it.
	Workers int
	// Shard restricts the ensemble to the runs i with i mod N == I;
	// default all. Merged shards equal the ensemble run at once.
	Shard explore.Shard
	T0    float64
	Times []float64 // output grid, ascending, ≥ T0
	Sim   Settings
	// Keep is the number of runs kept whole (runs 0 … Keep−1), to draw
	// single trajectories; default 10, negative keeps none.
	Keep int
	// HistTimes are indices into Times at which the counts of every
	// species are tallied exactly.
	HistTimes []int
	// Passages asks for first-passage times.
	Passages []Passage
	// Progress, when set, is called with the fraction of the shard's runs
	// done, at most every 100 ms and once at the end; calls never overlap.
	Progress func(fraction float64)
}

// DefaultRuns and DefaultKeep are the defaults of EnsembleSettings.
const (
	DefaultRuns = 1000
	DefaultKeep = 10
)

// Wide is an unsigned 128-bit integer: the exact sums of counts and of
// their squares.
type Wide struct{ Hi, Lo uint64 }

func (w *Wide) add(hi, lo uint64) {
	var c uint64
	w.Lo, c = bits.Add64(w.Lo, lo, 0)
	w.Hi, _ = bits.Add64(w.Hi, hi, c)
}

// Int returns w as a big.Int.
func (w Wide) Int() *big.Int {
	z := new(big.Int).SetUint64(w.Hi)
	z.Lsh(z, 64)
	return z.Or(z, new(big.Int).SetUint64(w.Lo))
}

// Histogram is the exact tally of whole-number counts: Counts[k] runs had
// Values[k] molecules; Values ascend.
type Histogram struct {
	Values []int64
	Counts []uint64
}

func (h *Histogram) merge(o Histogram) {
	m := map[int64]uint64{}
	for k, v := range h.Values {
		m[v] += h.Counts[k]
	}
	for k, v := range o.Values {
		m[v] += o.Counts[k]
	}
	h.fromMap(m)
}

func (h *Histogram) fromMap(m map[int64]uint64) {
	h.Values, h.Counts = h.Values[:0], h.Counts[:0]
	for v := range m {
		h.Values = append(h.Values, v)
	}
	slices.Sort(h.Values)
	for _, v := range h.Values {
		h.Counts = append(h.Counts, m[v])
	}
}

// N returns the number of values tallied.
func (h *Histogram) N() uint64 {
	var n uint64
	for _, c := range h.Counts {
		n += c
	}
	return n
}

// PassTime is the first-passage time of one run.
type PassTime struct {
	Run int
	T   []float64 // one per passage; +Inf when not reached by the end
}

// Kept is one run kept whole: Counts[i] are the counts at Times[i].
type Kept struct {
	Run    int
	Counts [][]float64
}

// Failure is a run that failed.
type Failure struct {
	Run int
	Err string
}

// Ensemble is the summary of many runs of one network on one output grid,
// or of one shard of them. Every summary is exact and independent of the
// order of the runs: sums of counts and of their squares in 128-bit
// integers, the band histograms of explore.Bands, exact tallies, and
// per-run values sorted by run. So the result does not depend on the
// number of workers, and merged shards equal the ensemble run at once.
type Ensemble struct {
	Species []string
	Times   []float64
	Method  Method
	Runs    int // runs of the whole ensemble
	Seed    uint64
	Shard   explore.Shard
	Done    int // runs summarised (failed runs excluded)

	// Sum and SumSq hold Σx and Σx² at Times[i] for species s at
	// i·len(Species)+s.
	Sum, SumSq []Wide
	// Bands summarises every species (component s) over the runs.
	Bands     *explore.Bands
	HistTimes []int       // indices into Times
	Hist      []Histogram // at HistTimes[h] for species s at h·len(Species)+s
	Passages  []Passage
	PassTimes []PassTime // by run
	Kept      []Kept     // by run
	Failures  []Failure  // by run
	Stats     Stats
	Wall      time.Duration
}

// Mean returns the ensemble mean of species s at Times[i] (NaN with no
// runs).
func (e *Ensemble) Mean(i, s int) float64 {
	if e.Done == 0 {
		return math.NaN()
	}
	q := new(big.Float).SetInt(e.Sum[i*len(e.Species)+s].Int())
	q.Quo(q, new(big.Float).SetInt64(int64(e.Done)))
	v, _ := q.Float64()
	return v
}

// Var returns the sample variance (denominator n − 1) of species s at
// Times[i], computed exactly from the integer sums and rounded once (NaN
// with fewer than two runs).
func (e *Ensemble) Var(i, s int) float64 {
	n := int64(e.Done)
	if n < 2 {
		return math.NaN()
	}
	k := i*len(e.Species) + s
	sum, sq := e.Sum[k].Int(), e.SumSq[k].Int()
	num := new(big.Int).Mul(big.NewInt(n), sq)
	num.Sub(num, new(big.Int).Mul(sum, sum))
	q := new(big.Float).SetInt(num)
	q.Quo(q, new(big.Float).SetInt64(n*(n-1)))
	v, _ := q.Float64()
	return v
}

// SD returns the sample standard deviation of species s at Times[i].
func (e *Ensemble) SD(i, s int) float64 { return math.Sqrt(e.Var(i, s)) }

// newEnsemble returns an empty summary.
func newEnsemble(net *Network, set EnsembleSettings) *Ensemble {
	ns, nt := len(net.Species), len(set.Times)
	comps := make([]int, ns)
	for i := range comps {
		comps[i] = i
	}
	return &Ensemble{
		Species: append([]string(nil), net.Species...), Times: append([]float64(nil), set.Times...),
		Method: set.Sim.withDefaults().Method, Runs: set.Runs, Seed: set.Seed, Shard: set.Shard,
		Sum: make([]Wide, nt*ns), SumSq: make([]Wide, nt*ns),
		Bands:     explore.NewBands(comps, set.Times),
		HistTimes: append([]int(nil), set.HistTimes...), Hist: make([]Histogram, len(set.HistTimes)*ns),
		Passages: append([]Passage(nil), set.Passages...),
	}
}

// accumulator is one worker's part of an ensemble.
type accumulator struct {
	e    *Ensemble
	hist []map[int64]uint64
}

func (a *accumulator) add(run int, out []float64, pass []float64, keep bool) {
	e := a.e
	ns, nt := len(e.Species), len(e.Times)
	for k, x := range out[:nt*ns] {
		v := uint64(x)
		e.Sum[k].add(0, v)
		hi, lo := bits.Mul64(v, v)
		e.SumSq[k].add(hi, lo)
	}
	for s := range ns {
		cells := e.Bands.Cells[s*nt : (s+1)*nt]
		for i := range nt {
			cells[i].Add(out[i*ns+s])
		}
	}
	for h, i := range e.HistTimes {
		for s := range ns {
			a.hist[h*ns+s][int64(out[i*ns+s])]++
		}
	}
	if len(e.Passages) > 0 {
		e.PassTimes = append(e.PassTimes, PassTime{Run: run, T: append([]float64(nil), pass...)})
	}
	if keep {
		c := make([][]float64, nt)
		for i := range c {
			c[i] = append([]float64(nil), out[i*ns:(i+1)*ns]...)
		}
		e.Kept = append(e.Kept, Kept{Run: run, Counts: c})
	}
	e.Done++
}

// RunEnsemble runs the runs of set.Shard in parallel and summarises them.
// Run i draws its random numbers from RunSeed(set.Seed, i) alone. A run
// that fails is listed in Failures and left out of the summaries; when
// ctx ends, the runs done so far are returned with ctx's error.
func RunEnsemble(ctx context.Context, net *Network, set EnsembleSettings) (*Ensemble, error) {
	start := time.Now()
	if set.Runs == 0 {
		set.Runs = DefaultRuns
	}
	if set.Keep == 0 {
		set.Keep = DefaultKeep
	}
	switch {
	case set.Runs < 0:
		return nil, fmt.Errorf("stochastic: %d runs; expected a positive number", set.Runs)
	case len(set.Times) == 0:
		return nil, errors.New("stochastic: no output times")
	case set.Shard.N < 0 || (set.Shard.N > 0 && (set.Shard.I < 0 || set.Shard.I >= set.Shard.N)):
		return nil, fmt.Errorf("stochastic: shard %d/%d: expected 0 ≤ i < n", set.Shard.I, set.Shard.N)
	}
	if set.Shard.N == 1 {
		set.Shard = explore.Shard{}
	}
	for _, h := range set.HistTimes {
		if h < 0 || h >= len(set.Times) {
			return nil, fmt.Errorf("stochastic: histogram time index %d out of range [0, %d)", h, len(set.Times))
		}
	}
	for _, p := range set.Passages {
		if p.Species < 0 || p.Species >= len(net.Species) {
			return nil, fmt.Errorf("stochastic: passage species %d out of range", p.Species)
		}
	}
	// One simulator per worker, made before any run so that setup errors
	// come first.
	var runs []int
	for i := range set.Runs {
		if set.Shard.Has(i) {
			runs = append(runs, i)
		}
	}
	workers := set.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, len(runs)))
	sims := make([]*Simulator, workers)
	for w := range sims {
		s, err := NewSimulator(net, set.Sim)
		if err != nil {
			return nil, err
		}
		sims[w] = s
	}
	ns := len(net.Species)
	accs := make([]*accumulator, workers)
	var (
		next     atomic.Int64
		done     atomic.Int64
		progMu   sync.Mutex
		lastProg time.Time
		wg       sync.WaitGroup
	)
	progress := func(final bool) {
		if set.Progress == nil {
			return
		}
		progMu.Lock()
		defer progMu.Unlock()
		if !final && time.Since(lastProg) < 100*time.Millisecond {
			return
		}
		lastProg = time.Now()
		if len(runs) == 0 {
			set.Progress(1)
			return
		}
		set.Progress(float64(done.Load()) / float64(len(runs)))
	}
	for w := range workers {
		acc := &accumulator{e: newEnsemble(net, set)}
		for range acc.e.Hist {
			acc.hist = append(acc.hist, map[int64]uint64{})
		}
		accs[w] = acc
		wg.Add(1)
		go func(sim *Simulator) {
			defer wg.Done()
			out := make([]float64, len(set.Times)*ns)
			pass := make([]float64, len(set.Passages))
			for {
				n := int(next.Add(1)) - 1
				if n >= len(runs) || ctx.Err() != nil {
					return
				}
				r := runs[n]
				st, err := sim.Run(ctx, set.Seed, r, set.T0, set.Times, out, set.Passages, pass)
				if err != nil {
					if ctx.Err() != nil {
						return
					}
					acc.e.Failures = append(acc.e.Failures, Failure{Run: r, Err: err.Error()})
				} else {
					acc.e.Stats.add(st)
					acc.add(r, out, pass, r < set.Keep)
				}
				done.Add(1)
				progress(false)
			}
		}(sims[w])
	}
	wg.Wait()
	progress(true)
	e := newEnsemble(net, set)
	for _, a := range accs {
		for k := range a.hist {
			var h Histogram
			h.fromMap(a.hist[k])
			a.e.Hist[k] = h
		}
		if err := e.add(a.e); err != nil {
			return nil, err
		}
	}
	e.sortRuns()
	if err := e.compact(); err != nil {
		return nil, err
	}
	e.Wall = time.Since(start)
	return e, ctx.Err()
}

// add adds the summaries of o (same network, grid and settings).
func (e *Ensemble) add(o *Ensemble) error {
	if !slices.Equal(e.Species, o.Species) || !slices.Equal(e.Times, o.Times) || len(e.Hist) != len(o.Hist) || len(e.Passages) != len(o.Passages) {
		return errors.New("stochastic: the parts summarise different species, output times, histograms or passages")
	}
	for k := range e.Sum {
		e.Sum[k].add(o.Sum[k].Hi, o.Sum[k].Lo)
		e.SumSq[k].add(o.SumSq[k].Hi, o.SumSq[k].Lo)
	}
	if err := e.Bands.Merge(o.Bands); err != nil {
		return err
	}
	for k := range e.Hist {
		e.Hist[k].merge(o.Hist[k])
	}
	e.PassTimes = append(e.PassTimes, o.PassTimes...)
	e.Kept = append(e.Kept, o.Kept...)
	e.Failures = append(e.Failures, o.Failures...)
	e.Stats.add(o.Stats)
	e.Done += o.Done
	e.Wall += o.Wall
	return nil
}

func (e *Ensemble) sortRuns() {
	sort.Slice(e.PassTimes, func(a, b int) bool { return e.PassTimes[a].Run < e.PassTimes[b].Run })
	sort.Slice(e.Kept, func(a, b int) bool { return e.Kept[a].Run < e.Kept[b].Run })
	sort.Slice(e.Failures, func(a, b int) bool { return e.Failures[a].Run < e.Failures[b].Run })
}

// compact gives the band histograms their canonical form (explore.Merge
// trims them), so that equal ensembles are equal field by field.
func (e *Ensemble) compact() error {
	r, err := explore.Merge(&explore.Result{Size: e.Runs, Bands: e.Bands})
	if err != nil {
		return err
	}
	e.Bands = r.Bands
	return nil
}

// Quantile returns the p-quantile of species s at Times[i] from the band
// summaries (within explore.QuantileRelError).
func (e *Ensemble) Quantile(i, s int, p float64) float64 { return e.Bands.Quantile(s, i, p) }
