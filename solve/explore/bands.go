package explore

import (
	"fmt"
	"math"
)

// The fixed histogram of a Summary: magnitudes in [histLow, histHigh) fall
// into histBins log-spaced bins (histBins/24 ≈ 83 per decade), the same for
// every Summary, so that summaries can always be merged.
const (
	histBins  = 2000
	histLow   = 1e-12
	histHigh  = 1e12
	histLogLo = -12.0
	histDecs  = 24.0
	// Layout of a bin index, in ascending order of value:
	//   0               v ≤ −histHigh
	//   1 … histBins    negative log bins, largest magnitude first
	//   histBins+1      |v| < histLow (zero bin)
	//   histBins+2 …    positive log bins, smallest magnitude first
	//   2·histBins+2    v ≥ histHigh
	histZero = histBins + 1
	histTop  = 2*histBins + 2
)

// QuantileRelError is the bound on the relative error of Summary.Quantile
// for values of magnitude in [1e-12, 1e12): 10^(24/2000) − 1 ≈ 2.8 %. Values
// of smaller magnitude are resolved to within 2e-12 absolute.
var QuantileRelError = math.Pow(10, histDecs/histBins) - 1

// Summary is a mergeable, order-independent summary of a set of finite
// values: their count, exact minimum and maximum, and the counts in a fixed
// histogram of log-spaced bins, mirrored for negative values, with a zero bin
// for magnitudes below 1e-12 and two end bins for magnitudes of 1e12 or
// more. Memory is at most about 16 KB (one uint32 per bin, kept only between
// the lowest and highest bin used), whatever the count.
//
// Adding the same values in any order, or adding parts and merging them,
// gives identical summaries: counts are integers and min and max are exact.
// The zero value is an empty summary.
type Summary struct {
	N        uint64   // number of values
	Min, Max float64  // exact extremes; meaningless when N == 0
	Offset   int      // bin index of Counts[0]
	Counts   []uint32 // counts of bins Offset, Offset+1, …
}

// binOf returns the bin index of a finite v.
func binOf(v float64) int {
	a := math.Abs(v)
	switch {
	case a < histLow:
		return histZero
	case a >= histHigh:
		if v < 0 {
			return 0
		}
		return histTop
	}
	m := int((math.Log10(a) - histLogLo) * (histBins / histDecs))
	m = max(0, min(histBins-1, m))
	if v < 0 {
		return histBins - m
	}
	return histZero + 1 + m
}

// edge returns 10^(−12 + 24·m/2000), the lower magnitude of log bin m.
func edge(m int) float64 {
	return math.Pow(10, histLogLo+histDecs*float64(m)/histBins)
}

// Add adds the finite value v. Non-finite values are ignored and reported
// as false.
func (s *Summary) Add(v float64) bool {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return false
	}
	if s.N == 0 {
		s.Min, s.Max = v, v
	} else {
		s.Min = min(s.Min, v)
		s.Max = max(s.Max, v)
	}
	s.N++
	s.addCount(binOf(v), 1)
	return true
}

// addCount adds c to bin b, growing Counts as needed.
func (s *Summary) addCount(b int, c uint32) {
	if len(s.Counts) == 0 {
		s.Offset = b
		s.Counts = append(s.Counts[:0], 0)
	}
	if b < s.Offset {
		grow := max(s.Offset-b, len(s.Counts)/2)
		grow = min(grow, s.Offset)
		n := make([]uint32, len(s.Counts)+grow)
		copy(n[grow:], s.Counts)
		s.Counts, s.Offset = n, s.Offset-grow
	}
	if end := s.Offset + len(s.Counts); b >= end {
		grow := max(b-end+1, len(s.Counts)/2)
		grow = min(grow, histTop+1-end)
		s.Counts = append(s.Counts, make([]uint32, grow)...)
	}
	s.Counts[b-s.Offset] += c
}

// Merge adds the values summarised by o to s.
func (s *Summary) Merge(o *Summary) {
	if o.N == 0 {
		return
	}
	if s.N == 0 {
		s.Min, s.Max = o.Min, o.Max
	} else {
		s.Min = min(s.Min, o.Min)
		s.Max = max(s.Max, o.Max)
	}
	s.N += o.N
	for i, c := range o.Counts {
		if c != 0 {
			s.addCount(o.Offset+i, c)
		}
	}
}

// trim drops empty bins at both ends of Counts, giving a canonical form.
func (s *Summary) trim() {
	lo, hi := 0, len(s.Counts)
	for lo < hi && s.Counts[lo] == 0 {
		lo++
	}
	for hi > lo && s.Counts[hi-1] == 0 {
		hi--
	}
	s.Offset += lo
	s.Counts = s.Counts[lo:hi]
	if len(s.Counts) == 0 {
		s.Offset, s.Counts = 0, nil
	}
}

// bounds returns the value range [lo, hi] of bin b.
func (s *Summary) bounds(b int) (lo, hi float64) {
	switch {
	case b == 0:
		return s.Min, -histHigh
	case b == histTop:
		return histHigh, s.Max
	case b == histZero:
		return -histLow, histLow
	case b < histZero:
		m := histBins - b
		return -edge(m + 1), -edge(m)
	default:
		m := b - histZero - 1
		return edge(m), edge(m + 1)
	}
}

// Quantile estimates the p-quantile, 0 ≤ p ≤ 1, of the summarised values,
// or returns NaN when there are none.
//
// With r = p·N, the estimate lies in the bin that holds the k-th smallest
// value, k = max(1, ⌈r⌉) (the empirical quantile, the inverse of the
// empirical CDF), at the fraction (r − C)/c of the way through it, where C
// counts the values in lower bins and c those in the bin; the position is
// interpolated geometrically in log bins and linearly in the zero and end
// bins, then clamped to [Min, Max]. So the estimate is within
// QuantileRelError (relative) of the empirical quantile, and it is exact
// when all values are equal.
func (s *Summary) Quantile(p float64) float64 {
	if s.N == 0 || math.IsNaN(p) {
		return math.NaN()
	}
	p = max(0, min(1, p))
	r := p * float64(s.N)
	var cum float64
	for i, c := range s.Counts {
		if c == 0 {
			continue
		}
		fc := float64(c)
		if cum+fc >= r {
			f := max(0, min(1, (r-cum)/fc))
			b := s.Offset + i
			lo, hi := s.bounds(b)
			var v float64
			if b == 0 || b == histZero || b == histTop {
				v = lo + f*(hi-lo)
			} else { // log bin, of either sign: geometric
				v = lo * math.Pow(hi/lo, f)
			}
			return max(s.Min, min(s.Max, v))
		}
		cum += fc
	}
	return s.Max
}

// Bands summarises chosen components of many trajectories on one output
// grid: one Summary per (component, time). Memory is
// O(components × times × bins), independent of the number of trajectories.
type Bands struct {
	Components []int     // indices of the summarised components
	Times      []float64 // the output grid every trajectory must have
	// Cells[c·len(Times)+i] summarises component Components[c] at Times[i].
	Cells []Summary
}

// NewBands returns empty bands for the given components and output grid.
func NewBands(components []int, times []float64) *Bands {
	return &Bands{
		Components: append([]int(nil), components...),
		Times:      append([]float64(nil), times...),
		Cells:      make([]Summary, len(components)*len(times)),
	}
}

// Check reports whether tr can be added: same output grid as b, enough
// components, finite values.
func (b *Bands) Check(tr Trajectory) error {
	if len(tr.T) != len(b.Times) || len(tr.Y) != len(b.Times) {
		return fmt.Errorf("bands: trajectory has %d output times, expected %d", len(tr.T), len(b.Times))
	}
	for i, t := range tr.T {
		if t != b.Times[i] {
			return fmt.Errorf("bands: output time %d is %v, expected %v", i, t, b.Times[i])
		}
		for _, j := range b.Components {
			if j < 0 || j >= len(tr.Y[i]) {
				return fmt.Errorf("bands: component %d out of range [0, %d)", j, len(tr.Y[i]))
			}
			if v := tr.Y[i][j]; math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("bands: component %d is %v at t = %v", j, v, t)
			}
		}
	}
	return nil
}

// Add adds one trajectory, after Check.
func (b *Bands) Add(tr Trajectory) error {
	if err := b.Check(tr); err != nil {
		return err
	}
	nt := len(b.Times)
	for c, j := range b.Components {
		for i := range b.Times {
			b.Cells[c*nt+i].Add(tr.Y[i][j])
		}
	}
	return nil
}

// Merge adds the trajectories summarised by o, which must have the same
// components and output grid.
func (b *Bands) Merge(o *Bands) error {
	if len(o.Components) != len(b.Components) || len(o.Times) != len(b.Times) {
		return fmt.Errorf("bands: cannot merge %d components × %d times into %d × %d",
			len(o.Components), len(o.Times), len(b.Components), len(b.Times))
	}
	for c := range b.Components {
		if b.Components[c] != o.Components[c] {
			return fmt.Errorf("bands: component %d is %d in one part and %d in another", c, b.Components[c], o.Components[c])
		}
	}
	for i := range b.Times {
		if b.Times[i] != o.Times[i] {
			return fmt.Errorf("bands: output time %d is %v in one part and %v in another", i, b.Times[i], o.Times[i])
		}
	}
	for k := range b.Cells {
		b.Cells[k].Merge(&o.Cells[k])
	}
	return nil
}

// Quantile returns the p-quantile of component Components[c] at Times[i].
func (b *Bands) Quantile(c, i int, p float64) float64 {
	return b.Cells[c*len(b.Times)+i].Quantile(p)
}
