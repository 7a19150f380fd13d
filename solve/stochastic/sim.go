package stochastic

import (
	"context"
	"fmt"
	"math"
	"slices"
	"sort"
)

// Method is a simulation method.
type Method string

// The methods.
const (
	Direct       Method = "direct" // Gillespie's direct method (default)
	NextReaction Method = "next"   // Gibson and Bruck's next-reaction method
	TauLeap      Method = "tau"    // tau-leaping (Cao, Gillespie and Petzold 2006)
)

// Methods lists the methods in the order menus show them.
var Methods = []Method{Direct, NextReaction, TauLeap}

// ParseMethod reads a method's name ("" is Direct).
func ParseMethod(s string) (Method, error) {
	if s == "" {
		return Direct, nil
	}
	for _, m := range Methods {
		if string(m) == s {
			return m, nil
		}
	}
	return "", fmt.Errorf("method %q: expected direct, next or tau", s)
}

// Search is how the direct method picks the channel that fires.
type Search int

// The searches.
const (
	// SearchAuto picks a linear search for networks of fewer than
	// TreeThreshold channels and the partial-sums tree above.
	SearchAuto Search = iota
	// SearchLinear scans the propensities: O(channels) per firing, with
	// the smallest constant.
	SearchLinear
	// SearchTree descends a binary tree of partial sums: O(log channels)
	// per firing and per changed propensity.
	SearchTree
)

// TreeThreshold is the number of channels from which SearchAuto uses the
// partial-sums tree. Measured with BenchmarkSearch (bench/stochastic.md):
// on random networks with a few dependencies per channel the linear
// search is faster up to 32 channels (10.8 against 9.0 million firings per
// second), the two are even near 64, and the tree wins above (7.1 against
// 4.7 million at 128 channels, 4.8 against 0.74 million at 1,024).
const TreeThreshold = 64

// Settings control a simulator. The zero value is the direct method with
// the search chosen by size, and the leaping defaults of Cao, Gillespie
// and Petzold (2006).
type Settings struct {
	Method Method
	Search Search // direct method only
	// Epsilon bounds the expected relative change of the propensities in
	// one leap; default 0.03.
	Epsilon float64
	// Critical: a channel that can fire fewer than Critical more times
	// before a reactant runs out is critical and fires only exactly;
	// default 10.
	Critical int
	// ExactSteps: when the leap is shorter than ExactFactor/a0, the
	// leaping method does ExactSteps exact steps instead; defaults 100 and
	// 10.
	ExactSteps  int
	ExactFactor float64
}

func (s Settings) withDefaults() Settings {
	if s.Method == "" {
		s.Method = Direct
	}
	if s.Epsilon <= 0 {
		s.Epsilon = 0.03
	}
	if s.Critical <= 0 {
		s.Critical = 10
	}
	if s.ExactSteps <= 0 {
		s.ExactSteps = 100
	}
	if s.ExactFactor <= 0 {
		s.ExactFactor = 10
	}
	return s
}

// Passage asks for the first time the count of Species reaches Level:
// rises to it or above when the run starts below it, falls to it or below
// when the run starts above it; a run that starts at the level has passage
// time t0.
type Passage struct {
	Species int
	Level   float64
}

// Stats report the work of one run (or, summed, of an ensemble).
type Stats struct {
	Firings  int64 // reactions fired (a leap counts every firing in it)
	Leaps    int64 // leaps taken (tau-leaping)
	Rejected int64 // leaps rejected for a negative count and halved
	Exact    int64 // exact steps taken by the leaping method
	Events   int64 // events applied
}

func (s *Stats) add(o Stats) {
	s.Firings += o.Firings
	s.Leaps += o.Leaps
	s.Rejected += o.Rejected
	s.Exact += o.Exact
	s.Events += o.Events
}

// Simulator runs one network again and again with one method. It keeps
// its work space between runs and allocates nothing per firing. A
// Simulator is used by one goroutine at a time.
type Simulator struct {
	net *Network
	set Settings
	dyn Dynamic
	ns  int
	nc  int

	x    []float64 // counts
	a    []float64 // propensities
	c    []float64 // mass-action constants
	ch   []chanData
	rSp  []int32 // reactant species, by channel ranges
	rOrd []int32
	cSp  []int32 // changed species
	cDel []float64
	dep  []int32 // channels to recompute after each channel fires
	tdep []int32 // time-dependent channels, recomputed after every firing

	search Search
	tree   []float64 // partial sums (SearchTree); leaves at tree[size+j]
	size   int
	heap   iheap     // next-reaction method
	tnext  []float64 // putative firing times (next-reaction method)

	// leaping
	hor    []int32 // highest order of a channel a species is a reactant of
	horN   []int32 // the species' own order in such a channel (largest)
	prop   []float64
	crit   []bool
	kfire  []float64
	mu, s2 []float64
	isReac []bool // species that are reactants of some channel

	g, gPrev []float64 // conditions
	rose     []bool
	passages []Passage
	pUp      []bool
	pTime    []float64

	rng   *rng
	stats Stats
}

type chanData struct {
	r0, r1, c0, c1, d0, d1 int32
	general, timeDep       bool
}

// NewSimulator prepares a simulator for net.
func NewSimulator(net *Network, set Settings) (*Simulator, error) {
	if err := net.Check(); err != nil {
		return nil, err
	}
	set = set.withDefaults()
	if _, err := ParseMethod(string(set.Method)); err != nil {
		return nil, fmt.Errorf("stochastic: %w", err)
	}
	ns, nc := len(net.Species), len(net.Channels)
	s := &Simulator{net: net, set: set, ns: ns, nc: nc,
		x: make([]float64, ns), a: make([]float64, nc), c: make([]float64, nc),
		ch: make([]chanData, nc), rng: newRNG()}
	if net.NewDynamic != nil {
		s.dyn = net.NewDynamic()
	}
	readers := make([][]int32, ns) // channels reading each species
	for j := range net.Channels {
		ch := &net.Channels[j]
		d := &s.ch[j]
		d.general, d.timeDep = ch.General, ch.General && ch.TimeDependent
		s.c[j] = ch.C
		d.r0 = int32(len(s.rSp))
		if !ch.General {
			for _, t := range ch.Reactants {
				s.rSp = append(s.rSp, int32(t.Species))
				s.rOrd = append(s.rOrd, int32(t.N))
			}
		}
		d.r1 = int32(len(s.rSp))
		d.c0 = int32(len(s.cSp))
		for _, t := range ch.Change {
			s.cSp = append(s.cSp, int32(t.Species))
			s.cDel = append(s.cDel, float64(t.N))
		}
		d.c1 = int32(len(s.cSp))
		for _, sp := range ch.reads() {
			if !slices.Contains(readers[sp], int32(j)) {
				readers[sp] = append(readers[sp], int32(j))
			}
		}
		if d.timeDep {
			s.tdep = append(s.tdep, int32(j))
		}
	}
	for j := range net.Channels {
		d := &s.ch[j]
		set := map[int32]bool{}
		for _, t := range net.Channels[j].Change {
			for _, k := range readers[t.Species] {
				if !s.ch[k].timeDep {
					set[k] = true
				}
			}
		}
		list := make([]int32, 0, len(set))
		for k := range set {
			list = append(list, k)
		}
		sort.Slice(list, func(a, b int) bool { return list[a] < list[b] })
		d.d0 = int32(len(s.dep))
		s.dep = append(s.dep, list...)
		d.d1 = int32(len(s.dep))
	}
	s.search = set.Search
	if s.search == SearchAuto {
		s.search = SearchLinear
		if nc >= TreeThreshold {
			s.search = SearchTree
		}
	}
	switch set.Method {
	case Direct:
		if s.search == SearchTree {
			s.size = 1
			for s.size < nc {
				s.size *= 2
			}
			s.tree = make([]float64, 2*s.size)
		}
	case NextReaction:
		s.tnext = make([]float64, nc)
		s.heap = newIHeap(nc)
	case TauLeap:
		s.prepareLeap()
	}
	if s.dyn != nil {
		k := s.dyn.Conditions()
		s.g, s.gPrev, s.rose = make([]float64, k), make([]float64, k), make([]bool, k)
	}
	return s, nil
}

// Network returns the simulated network.
func (s *Simulator) Network() *Network { return s.net }

// Settings returns the settings in use, defaults filled in.
func (s *Simulator) Settings() Settings { return s.set }

// UsesTree reports whether the direct method searches a partial-sums tree.
func (s *Simulator) UsesTree() bool { return s.tree != nil }

// propensity computes the propensity of channel j at time t.
func (s *Simulator) propensity(j int, t float64) float64 {
	d := &s.ch[j]
	if d.general {
		return s.dyn.Propensity(j, t, s.x)
	}
	a := s.c[j]
	for k := d.r0; k < d.r1; k++ {
		x := s.x[s.rSp[k]]
		switch s.rOrd[k] {
		case 1:
			a *= x
		case 2:
			a *= x * (x - 1)
		default:
			for m := int32(0); m < s.rOrd[k]; m++ {
				a *= x - float64(m)
			}
		}
	}
	if a <= 0 { // also −0 from a count below the order
		return 0
	}
	return a
}

// badPropensity reports a general propensity that is negative or not a
// number.
func (s *Simulator) badPropensity(j int, t, v float64) error {
	return fmt.Errorf("reaction %s: propensity %v at t = %v; a stochastic simulation needs a finite rate ≥ 0 (write a reversible rate as two reactions)",
		s.net.Channels[j].Name, v, t)
}

// checkProp returns an error for an unusable propensity of channel j.
func (s *Simulator) checkProp(j int, t, v float64) error {
	if v >= 0 && v <= math.MaxFloat64 {
		return nil
	}
	return s.badPropensity(j, t, v)
}

// recomputeAll computes every propensity at time t.
func (s *Simulator) recomputeAll(t float64) error {
	for j := range s.a {
		v := s.propensity(j, t)
		if err := s.checkProp(j, t, v); err != nil {
			return err
		}
		s.a[j] = v
	}
	return nil
}

// apply changes the counts by one firing of channel j.
func (s *Simulator) apply(j int) {
	d := &s.ch[j]
	for k := d.c0; k < d.c1; k++ {
		s.x[s.cSp[k]] += s.cDel[k]
	}
}

// Run simulates one run from the counts of the network at t0 to the last
// of times (ascending, all ≥ t0) with the generator of run number run of
// an ensemble with the given seed, and writes the counts at each time
// into out (len(times)·species, row by time: the counts after every
// firing at or before that time). Passage times (+Inf when not reached)
// go into passTimes, one per passage.
func (s *Simulator) Run(ctx context.Context, seed uint64, run int, t0 float64, times []float64, out []float64, passages []Passage, passTimes []float64) (Stats, error) {
	if len(out) < len(times)*s.ns {
		return Stats{}, fmt.Errorf("stochastic: output has room for %d values, need %d", len(out), len(times)*s.ns)
	}
	for i, t := range times {
		if !(t >= t0) || (i > 0 && t < times[i-1]) || math.IsInf(t, 0) {
			return Stats{}, fmt.Errorf("stochastic: output time %d is %v; times must be finite, ascending and ≥ t0 = %v", i, t, t0)
		}
	}
	s.rng.seed(seed, run)
	s.stats = Stats{}
	copy(s.x, s.net.Initial)
	copy(s.c, s.cInit())
	s.passages, s.pTime = passages, passTimes
	s.pUp = s.pUp[:0]
	for k, p := range passages {
		s.pUp = append(s.pUp, s.x[p.Species] < p.Level)
		s.pTime[k] = math.Inf(1)
	}
	s.checkPassages(t0)
	if s.dyn != nil {
		s.dyn.ResetEvents(t0)
		s.dyn.Constants(s.c)
		if len(s.g) > 0 {
			s.dyn.Watch(t0, s.x, s.gPrev)
		}
	}
	if len(times) == 0 {
		return s.stats, nil
	}
	var err error
	switch s.set.Method {
	case NextReaction:
		err = s.runNext(ctx, t0, times, out)
	case TauLeap:
		err = s.runLeap(ctx, t0, times, out)
	default:
		err = s.runDirect(ctx, t0, times, out)
	}
	return s.stats, err
}

// cInit returns the constants of the mass-action channels as given.
func (s *Simulator) cInit() []float64 {
	for j := range s.net.Channels {
		s.c[j] = s.net.Channels[j].C
	}
	return s.c
}

// record writes the counts into the output rows of times[k] < until
// (≤ until when incl), from k on, and returns the next k.
func (s *Simulator) record(times, out []float64, k int, until float64, incl bool) int {
	for k < len(times) && (times[k] < until || incl && times[k] == until) {
		copy(out[k*s.ns:(k+1)*s.ns], s.x)
		k++
	}
	return k
}

// checkPassages records the passages reached at time t.
func (s *Simulator) checkPassages(t float64) {
	for k, p := range s.passages {
		if !math.IsInf(s.pTime[k], 1) {
			continue
		}
		x := s.x[p.Species]
		if x == p.Level || (s.pUp[k] && x >= p.Level) || (!s.pUp[k] && x <= p.Level) {
			s.pTime[k] = t
		}
	}
}

// nextStop returns the time of the next scheduled event, or +Inf.
func (s *Simulator) nextStop(t float64) float64 {
	if s.dyn == nil {
		return math.Inf(1)
	}
	return s.dyn.NextEvent(t)
}

// events applies the events due at t (scheduled ones, and triggered ones
// whose condition rose when triggered is true) and reports whether any
// fired.
func (s *Simulator) events(t float64, triggered bool) (bool, error) {
	var rose []bool
	if triggered {
		if len(s.g) == 0 {
			return false, nil
		}
		s.dyn.Watch(t, s.x, s.g)
		any := false
		for k := range s.g {
			s.rose[k] = s.gPrev[k] < 0 && s.g[k] >= 0
			any = any || s.rose[k]
		}
		copy(s.gPrev, s.g)
		if !any {
			return false, nil
		}
		rose = s.rose
	}
	names := s.dyn.Fire(t, s.x, rose)
	if len(names) == 0 {
		return false, nil
	}
	s.stats.Events += int64(len(names))
	for i, x := range s.x {
		if !(x >= 0) || x != math.Trunc(x) || x > MaxCount {
			return true, fmt.Errorf("event at t = %v left species %q at %v molecules; counts must be whole numbers ≥ 0", t, s.net.Species[i], x)
		}
	}
	s.dyn.Constants(s.c)
	if len(s.g) > 0 {
		s.dyn.Watch(t, s.x, s.gPrev)
	}
	s.checkPassages(t)
	return true, nil
}

// afterFiring does what follows every firing at time t: the count limit,
// passages and triggered events. It reports whether events fired (so that
// every propensity must be recomputed).
func (s *Simulator) afterFiring(j int, t float64) (bool, error) {
	if len(s.passages) > 0 {
		s.checkPassages(t)
	}
	if len(s.g) > 0 {
		return s.events(t, true)
	}
	return false, nil
}

// checkLimit reports a count beyond MaxCount.
func (s *Simulator) checkLimit(t float64) error {
	for i, x := range s.x {
		if x > MaxCount {
			return fmt.Errorf("species %q passed 2^53 molecules at t = %v; the counts grow without bound", s.net.Species[i], t)
		}
	}
	return nil
}

// canceled checks ctx every so many firings.
func canceled(ctx context.Context, n int64) error {
	if n&0xffff == 0 {
		if err := ctx.Err(); err != nil {
			return err
		}
	}
	return nil
}
