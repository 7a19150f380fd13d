package explore

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"strconv"
	"strings"
)

// Design is a numbered set of points, each a vector of knob values.
type Design interface {
	// Len is the number of points.
	Len() int
	// Dim is the number of knobs, the length of every point.
	Dim() int
	// Point writes the knob values of point i, 0 ≤ i < Len(), into x.
	Point(i int, x []float64)
}

// Grid is the full factorial design over its axes, each a list of values of
// one knob. Points are numbered in row-major order: the last axis varies
// fastest, so with two axes of n1 and n2 values point i has
// x = (Axes[0][i/n2], Axes[1][i%n2]).
type Grid struct {
	Axes [][]float64
}

// Len implements Design. It returns -1 when the number of points does not
// fit in an int (Run refuses such a design).
func (g Grid) Len() int {
	if len(g.Axes) == 0 {
		return 0
	}
	n := 1
	for _, a := range g.Axes {
		if len(a) == 0 {
			return 0
		}
		if n > math.MaxInt/len(a) {
			return -1
		}
		n *= len(a)
	}
	return n
}

// Dim implements Design.
func (g Grid) Dim() int { return len(g.Axes) }

// Point implements Design.
func (g Grid) Point(i int, x []float64) {
	for k := len(g.Axes) - 1; k >= 0; k-- {
		a := g.Axes[k]
		x[k] = a[i%len(a)]
		i /= len(a)
	}
}

// Points is a design given point by point: Points[i] is point i.
type Points [][]float64

// Len implements Design.
func (p Points) Len() int { return len(p) }

// Dim implements Design: the length of the first point, 0 when empty.
func (p Points) Dim() int {
	if len(p) == 0 {
		return 0
	}
	return len(p[0])
}

// Point implements Design.
func (p Points) Point(i int, x []float64) { copy(x, p[i]) }

// check reports a point whose length differs from the first point's
// (Point would leave knobs of the previous point in place).
func (p Points) check() error {
	for i, x := range p {
		if len(x) != p.Dim() {
			return fmt.Errorf("point %d has %d knob values, expected %d like point 0", i, len(x), p.Dim())
		}
	}
	return nil
}

// Sampling is a way of drawing a population.
type Sampling string

// The sampling methods. The zero value is Random.
const (
	// Random draws every knob of every sample independently.
	Random Sampling = "random"
	// LatinHypercube splits each knob's probability range into Size
	// equal strata and puts exactly one sample in each, pairing the strata
	// of different knobs by independent random permutations (McKay,
	// Beckman and Conover 1979), with a random position inside the stratum.
	LatinHypercube Sampling = "latin_hypercube"
)

// Population describes a virtual population: Size samples, each with one
// value per knob drawn from that knob's distribution.
type Population struct {
	Vary     []Distribution // one per knob
	Size     int
	Seed     uint64   // random seed; the same seed gives the same population
	Sampling Sampling // default Random
}

// Sample draws the population. The result depends only on p: with Random
// sampling, sample i depends only on the seed, i and the distributions (so
// growing Size keeps the first samples); with LatinHypercube it depends on
// Size too. It never depends on workers or shards, which all call Sample.
//
// Every probability u in (0, 1) is made from 53 random bits of a PCG-DXSM
// generator (math/rand/v2) keyed by the seed and the sample, and turned into
// a knob value by the distribution's Quantile.
func (p Population) Sample() (Points, error) {
	t, err := p.Table()
	if err != nil {
		return nil, err
	}
	pts := make(Points, t.Len())
	for i := range pts {
		pts[i] = t.Values[i*t.Knobs : (i+1)*t.Knobs : (i+1)*t.Knobs]
	}
	return pts, nil
}

// Table is a design stored flat, Knobs values per point: point i is
// Values[i·Knobs : (i+1)·Knobs]. It holds 8 bytes per knob and point and
// nothing more, so a large population costs no memory beyond its values.
type Table struct {
	Knobs  int
	Values []float64
}

// Len implements Design.
func (t Table) Len() int {
	if t.Knobs <= 0 {
		return 0
	}
	return len(t.Values) / t.Knobs
}

// Dim implements Design.
func (t Table) Dim() int { return t.Knobs }

// Point implements Design.
func (t Table) Point(i int, x []float64) { copy(x, t.Values[i*t.Knobs:(i+1)*t.Knobs]) }

// Table draws the population as Sample does, stored flat.
func (p Population) Table() (Table, error) {
	if p.Size <= 0 {
		return Table{}, fmt.Errorf("population: size must be positive, got %d", p.Size)
	}
	for k, d := range p.Vary {
		if d == nil {
			return Table{}, fmt.Errorf("population: knob %d has no distribution", k)
		}
		if err := d.Validate(); err != nil {
			return Table{}, fmt.Errorf("population: knob %d: %w", k, err)
		}
	}
	switch p.Sampling {
	case "", Random, LatinHypercube:
	default:
		return Table{}, fmt.Errorf("population: unknown sampling %q (expected %q or %q)", p.Sampling, Random, LatinHypercube)
	}
	nk := len(p.Vary)
	back := make([]float64, p.Size*nk)
	for i := range p.Size {
		src := rand.NewPCG(p.Seed, mix64(uint64(i)))
		for k := range nk {
			back[i*nk+k] = unitOpen(src.Uint64())
		}
	}
	if p.Sampling == LatinHypercube {
		perm := make([]int, p.Size)
		for k := range nk {
			src := rand.NewPCG(p.Seed, mix64(uint64(k)^0x9e3779b97f4a7c15))
			shuffle(src, perm)
			n := float64(p.Size)
			for i := range p.Size {
				back[i*nk+k] = (float64(perm[i]) + back[i*nk+k]) / n
			}
		}
	}
	for i := range p.Size {
		for k, d := range p.Vary {
			back[i*nk+k] = d.Quantile(back[i*nk+k])
		}
	}
	return Table{Knobs: nk, Values: back}, nil
}

// unitOpen maps 64 random bits to a float64 in the open interval (0, 1).
func unitOpen(r uint64) float64 {
	// The largest value, 1 − 2⁻⁵⁴, rounds to 1: keep it below.
	return min((float64(r>>11)+0.5)/(1<<53), 1-0x1p-53)
}

// mix64 is the finalizer of SplitMix64; it decorrelates consecutive keys.
func mix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// shuffle sets perm to a uniformly random permutation of 0..len(perm)-1 by
// Fisher–Yates. It is written out here (not rand.Shuffle) so that the
// sequence is fixed by this code alone.
func shuffle(src *rand.PCG, perm []int) {
	for i := range perm {
		perm[i] = i
	}
	for i := len(perm) - 1; i > 0; i-- {
		j := int(below(src, uint64(i+1)))
		perm[i], perm[j] = perm[j], perm[i]
	}
}

// below returns a uniform integer in [0, n) by Lemire's multiply-and-reject.
func below(src *rand.PCG, n uint64) uint64 {
	hi, lo := bits.Mul64(src.Uint64(), n)
	if lo < n {
		thresh := -n % n
		for lo < thresh {
			hi, lo = bits.Mul64(src.Uint64(), n)
		}
	}
	return hi
}

// Shard selects the design points of one part of a run split into N parts:
// point i belongs to shard I when i mod N == I. The zero value selects every
// point.
type Shard struct {
	I, N int
}

// ParseShard parses "i/n" with 0 ≤ i < n.
func ParseShard(s string) (Shard, error) {
	a, b, ok := strings.Cut(s, "/")
	i, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if !ok || err1 != nil || err2 != nil || n < 1 || i < 0 || i >= n {
		return Shard{}, fmt.Errorf("shard %q: expected i/n with 0 ≤ i < n, e.g. 0/4", s)
	}
	if n > MaxShards {
		return Shard{}, fmt.Errorf("shard %q: at most %d shards, got %d", s, MaxShards, n)
	}
	return Shard{I: i, N: n}, nil
}

// String formats s as "i/n".
func (s Shard) String() string {
	if s.N <= 1 {
		return "0/1"
	}
	return fmt.Sprintf("%d/%d", s.I, s.N)
}

// Has reports whether point i belongs to s.
func (s Shard) Has(i int) bool {
	if s.N <= 1 {
		return true
	}
	return i%s.N == s.I
}

// validate checks 0 ≤ I < N (or the zero value).
func (s Shard) validate() error {
	if s.N == 0 && s.I == 0 {
		return nil
	}
	if s.N < 1 || s.I < 0 || s.I >= s.N {
		return fmt.Errorf("shard %d/%d: expected 0 ≤ i < n", s.I, s.N)
	}
	if s.N > MaxShards {
		return fmt.Errorf("shard %d/%d: at most %d shards", s.I, s.N, MaxShards)
	}
	return nil
}

// MaxShards is the largest number of shards of a run.
const MaxShards = 100_000
