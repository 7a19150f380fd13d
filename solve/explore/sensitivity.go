package explore

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
)

// Saltelli is the design of a variance-based sensitivity analysis
// (Saltelli 2002; Saltelli et al., "Variance based sensitivity analysis
// of model output", Computer Physics Communications 181, 2010): two
// independent samples A and B of N points each, drawn from the knobs'
// distributions, and for each knob i the sample AB_i, which is A with
// knob i taken from B. The design holds N·(d+2) points in the order A,
// B, AB_1, …, AB_d; SobolIndices reads their outputs in that order.
//
// A and B are drawn as a Population with Random sampling and twice as
// many knobs (the first d columns give A, the last d give B), so that
// their points are independent, which the bootstrap intervals of
// SobolIndices assume.
type Saltelli struct {
	Vary []Distribution
	N    int
	Seed uint64
}

// Sample returns the design.
func (s Saltelli) Sample() (Points, error) {
	d := len(s.Vary)
	if d == 0 {
		return nil, fmt.Errorf("sensitivity: no knobs to vary")
	}
	if s.N < 2 {
		return nil, fmt.Errorf("sensitivity: at least 2 base samples are needed, got %d", s.N)
	}
	both := append(append([]Distribution(nil), s.Vary...), s.Vary...)
	ab, err := Population{Vary: both, Size: s.N, Seed: s.Seed}.Sample()
	if err != nil {
		return nil, err
	}
	back := make([]float64, s.N*(d+2)*d)
	pts := make(Points, s.N*(d+2))
	for i := range pts {
		pts[i] = back[i*d : (i+1)*d : (i+1)*d]
	}
	for j := 0; j < s.N; j++ {
		a, b := ab[j][:d], ab[j][d:]
		copy(pts[j], a)
		copy(pts[s.N+j], b)
		for i := 0; i < d; i++ {
			p := pts[(2+i)*s.N+j]
			copy(p, a)
			p[i] = b[i]
		}
	}
	return pts, nil
}

// SobolIndex is a knob's first-order and total sensitivity indices with
// their bootstrap intervals.
type SobolIndex struct {
	First, FirstLow, FirstHigh float64
	Total, TotalLow, TotalHigh float64
}

// IndexSettings control SobolIndices. The zero value of every field
// means a sensible default.
type IndexSettings struct {
	// Bootstrap is the number of resamples; default 1000.
	Bootstrap int
	// Level is the confidence of the intervals; default 0.95.
	Level float64
	// Seed keys the resampling.
	Seed uint64
}

// SobolIndices estimates the first-order and total indices of every knob
// from the outputs y of a Saltelli design of n base samples and d knobs
// (y in the design's order), with the estimators of Jansen (1999) as
// given in Saltelli et al. (2010, table 2):
//
//	V_i  = V − 1/(2n) Σ_j (f(B)_j − f(AB_i)_j)²   (first order: S_i = V_i/V)
//	VT_i = 1/(2n) Σ_j (f(A)_j − f(AB_i)_j)²       (total: ST_i = VT_i/V)
//
// with V the variance of f over A and B together. Intervals are
// bootstrap percentile intervals over the base samples j (Efron &
// Tibshirani 1993). A base sample with any output not finite (a failed
// run) is left out of every sum; dropped counts them.
func SobolIndices(y []float64, n, d int, set IndexSettings) (idx []SobolIndex, dropped int, err error) {
	if len(y) != n*(d+2) {
		return nil, 0, fmt.Errorf("sensitivity: %d outputs for a design of %d base samples and %d knobs (want %d)", len(y), n, d, n*(d+2))
	}
	if set.Bootstrap <= 0 {
		set.Bootstrap = 1000
	}
	if set.Level <= 0 || set.Level >= 1 {
		set.Level = 0.95
	}
	var keep []int
	for j := 0; j < n; j++ {
		ok := true
		for blk := 0; blk < d+2; blk++ {
			v := y[blk*n+j]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				ok = false
				break
			}
		}
		if ok {
			keep = append(keep, j)
		}
	}
	dropped = n - len(keep)
	if len(keep) < 2 {
		return nil, dropped, fmt.Errorf("sensitivity: only %d of %d base samples have every output", len(keep), n)
	}
	est := func(rows []int, out []SobolIndex) bool {
		m := float64(len(rows))
		mean := 0.0
		for _, j := range rows {
			mean += y[j] + y[n+j]
		}
		mean /= 2 * m
		v := 0.0
		for _, j := range rows {
			a, b := y[j]-mean, y[n+j]-mean
			v += a*a + b*b
		}
		v /= 2*m - 1
		// A variance within rounding of zero: the output does not vary.
		if !(v > 1e-20*(mean*mean+1e-300)) {
			return false
		}
		for i := 0; i < d; i++ {
			var s1, st float64
			for _, j := range rows {
				fa, fb, fab := y[j], y[n+j], y[(2+i)*n+j]
				s1 += (fb - fab) * (fb - fab)
				st += (fa - fab) * (fa - fab)
			}
			out[i].First = (v - s1/(2*m)) / v
			out[i].Total = st / (2 * m) / v
		}
		return true
	}
	idx = make([]SobolIndex, d)
	if !est(keep, idx) {
		return nil, dropped, fmt.Errorf("sensitivity: the output does not vary over the samples: every index is undefined")
	}
	src := rand.New(rand.NewPCG(set.Seed, 0x5a17e11))
	firsts := make([][]float64, d)
	totals := make([][]float64, d)
	rows := make([]int, len(keep))
	tmp := make([]SobolIndex, d)
	for b := 0; b < set.Bootstrap; b++ {
		for k := range rows {
			rows[k] = keep[src.IntN(len(keep))]
		}
		if !est(rows, tmp) {
			continue
		}
		for i := range tmp {
			firsts[i] = append(firsts[i], tmp[i].First)
			totals[i] = append(totals[i], tmp[i].Total)
		}
	}
	lo, hi := (1-set.Level)/2, (1+set.Level)/2
	for i := range idx {
		idx[i].FirstLow, idx[i].FirstHigh = percentile(firsts[i], lo), percentile(firsts[i], hi)
		idx[i].TotalLow, idx[i].TotalHigh = percentile(totals[i], lo), percentile(totals[i], hi)
	}
	return idx, dropped, nil
}

// percentile returns the p-quantile of v (sorted in place) by linear
// interpolation between order statistics; NaN for an empty v.
func percentile(v []float64, p float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	slices.Sort(v)
	x := p * float64(len(v)-1)
	i := int(x)
	if i+1 >= len(v) {
		return v[len(v)-1]
	}
	f := x - float64(i)
	return v[i]*(1-f) + v[i+1]*f
}

// Morris is the design of elementary-effects screening (Morris 1991;
// Campolongo, Cariboni & Saltelli 2007 for μ*): Trajectories random paths
// through a grid of Levels probability levels per knob, each path moving
// one knob at a time by half the levels. Levels are the midpoints
// (k + ½)/Levels, k = 0…Levels−1, so that unbounded distributions give
// finite values; a move changes a knob's probability by ±½.
type Morris struct {
	Vary         []Distribution
	Trajectories int // default 20
	Levels       int // even; default 4
	Seed         uint64
}

// MorrisStep is one move of a path: the knob moved and the change of its
// probability (+½ or −½).
type MorrisStep struct {
	Knob  int
	Delta float64
}

func (m *Morris) defaults() {
	if m.Trajectories <= 0 {
		m.Trajectories = 20
	}
	if m.Levels <= 0 {
		m.Levels = 4
	}
}

// Sample returns the design, Trajectories·(d+1) points in path order, and
// the moves: steps[t][s] leads from point t·(d+1)+s to the next.
func (m Morris) Sample() (Points, [][]MorrisStep, error) {
	m.defaults()
	d := len(m.Vary)
	switch {
	case d == 0:
		return nil, nil, fmt.Errorf("screening: no knobs to vary")
	case m.Levels%2 != 0 || m.Levels < 2:
		return nil, nil, fmt.Errorf("screening: the number of levels must be even and at least 2, got %d", m.Levels)
	}
	for k, dist := range m.Vary {
		if err := dist.Validate(); err != nil {
			return nil, nil, fmt.Errorf("screening: knob %d: %w", k, err)
		}
	}
	p := m.Levels
	pts := make(Points, 0, m.Trajectories*(d+1))
	steps := make([][]MorrisStep, m.Trajectories)
	level := make([]int, d)
	order := make([]int, d)
	point := func() []float64 {
		x := make([]float64, d)
		for k := range x {
			x[k] = m.Vary[k].Quantile((float64(level[k]) + 0.5) / float64(p))
		}
		return x
	}
	for t := 0; t < m.Trajectories; t++ {
		src := rand.NewPCG(m.Seed, mix64(uint64(t)^0x3c6ef372fe94f82b))
		for k := range level {
			level[k] = int(below(src, uint64(p)))
		}
		shuffle(src, order)
		pts = append(pts, point())
		for _, k := range order {
			delta := 0.5
			if level[k] >= p/2 {
				level[k] -= p / 2
				delta = -0.5
			} else {
				level[k] += p / 2
			}
			steps[t] = append(steps[t], MorrisStep{Knob: k, Delta: delta})
			pts = append(pts, point())
		}
	}
	return pts, steps, nil
}

// Effect summarises a knob's elementary effects: Mu is their mean,
// MuStar the mean of their absolute values (the ranking measure) and
// Sigma their standard deviation (non-linearity or interactions). N
// counts the effects used.
type Effect struct {
	Mu, MuStar, Sigma float64
	N                 int
}

// ElementaryEffects computes each knob's effects (y_next − y)/Delta from
// the outputs y of a Morris design, in its order. Moves with an output
// that is not finite are left out.
func ElementaryEffects(y []float64, steps [][]MorrisStep, d int) ([]Effect, error) {
	if len(y) != len(steps)*(d+1) {
		return nil, fmt.Errorf("screening: %d outputs for %d paths of %d knobs (want %d)", len(y), len(steps), d, len(steps)*(d+1))
	}
	ee := make([][]float64, d)
	for t, path := range steps {
		for s, st := range path {
			a, b := y[t*(d+1)+s], y[t*(d+1)+s+1]
			if math.IsNaN(a) || math.IsNaN(b) || math.IsInf(a, 0) || math.IsInf(b, 0) {
				continue
			}
			ee[st.Knob] = append(ee[st.Knob], (b-a)/st.Delta)
		}
	}
	out := make([]Effect, d)
	for k, e := range ee {
		n := float64(len(e))
		out[k].N = len(e)
		if len(e) == 0 {
			out[k].Mu, out[k].MuStar, out[k].Sigma = math.NaN(), math.NaN(), math.NaN()
			continue
		}
		for _, v := range e {
			out[k].Mu += v
			out[k].MuStar += math.Abs(v)
		}
		out[k].Mu /= n
		out[k].MuStar /= n
		if len(e) > 1 {
			for _, v := range e {
				out[k].Sigma += (v - out[k].Mu) * (v - out[k].Mu)
			}
			out[k].Sigma = math.Sqrt(out[k].Sigma / (n - 1))
		}
	}
	return out, nil
}
