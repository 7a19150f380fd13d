package explore

import (
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"testing"
)

func TestSummaryQuantileResolution(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	var vals []float64
	for range 5000 {
		switch rng.IntN(5) {
		case 0:
			vals = append(vals, 0)
		case 1:
			vals = append(vals, -math.Exp(rng.NormFloat64()*3))
		case 2:
			vals = append(vals, 1e13*rng.Float64()+1e12)
		default:
			vals = append(vals, math.Exp(rng.NormFloat64()*8))
		}
	}
	var s Summary
	for _, v := range vals {
		s.Add(v)
	}
	sorted := slices.Clone(vals)
	slices.Sort(sorted)
	n := len(sorted)
	for _, p := range []float64{0, 0.01, 0.05, 0.1, 0.2, 0.25, 0.3, 0.5, 0.65, 0.75, 0.9, 0.95, 0.99, 1} {
		// The empirical quantile: the k-th smallest value, k = max(1, ⌈p·n⌉).
		k := max(1, int(math.Ceil(p*float64(n))))
		want := sorted[k-1]
		got := s.Quantile(p)
		tol := QuantileRelError*math.Abs(want) + 2e-12
		if math.Abs(want) >= histHigh { // end bins: only bounded by the extremes
			tol = s.Max - histHigh
		}
		if math.Abs(got-want) > tol {
			t.Errorf("p = %v: got %.10g, empirical %.10g (tolerance %.3g)", p, got, want, tol)
		}
	}
	if s.Quantile(0) != sorted[0] || s.Quantile(1) != sorted[n-1] {
		t.Errorf("extremes: %v %v vs %v %v", s.Quantile(0), s.Quantile(1), sorted[0], sorted[n-1])
	}
	// Order independence and merging: two halves in either order.
	var a, b, ab, ba, rev Summary
	for i, v := range vals {
		if i%2 == 0 {
			a.Add(v)
		} else {
			b.Add(v)
		}
		rev.Add(vals[n-1-i])
	}
	ab.Merge(&a)
	ab.Merge(&b)
	ba.Merge(&b)
	ba.Merge(&a)
	for _, x := range []*Summary{&s, &ab, &ba, &rev} {
		x.trim()
	}
	if !reflect.DeepEqual(s, ab) || !reflect.DeepEqual(s, ba) || !reflect.DeepEqual(s, rev) {
		t.Error("summaries depend on the order of adding or merging")
	}
}

func TestSummaryConstantAndEmpty(t *testing.T) {
	var s Summary
	if !math.IsNaN(s.Quantile(0.5)) {
		t.Error("empty summary: quantile not NaN")
	}
	for _, v := range []float64{3.7, -2.5e-3, 0, 1e-13, 4e15} {
		var c Summary
		for range 7 {
			c.Add(v)
		}
		for _, p := range []float64{0, 0.05, 0.5, 0.95, 1} {
			if got := c.Quantile(p); got != v {
				t.Errorf("constant %v: quantile %v = %v", v, p, got)
			}
		}
	}
	if s.Add(math.NaN()) || s.Add(math.Inf(1)) || s.N != 0 {
		t.Error("non-finite values were added")
	}
}

func TestSummaryMemoryBounded(t *testing.T) {
	var s Summary
	for i := range 100000 {
		s.Add(math.Exp(float64(i%2000) / 20))
	}
	if len(s.Counts) > histTop+1 {
		t.Errorf("%d bins, more than the %d of the histogram", len(s.Counts), histTop+1)
	}
	a := testing.AllocsPerRun(1000, func() { s.Add(7) })
	if a != 0 {
		t.Errorf("Add inside the used range allocates %v times", a)
	}
}

func BenchmarkSummaryAdd(b *testing.B) {
	var s Summary
	rng := rand.New(rand.NewPCG(3, 4))
	vals := make([]float64, 1024)
	for i := range vals {
		vals[i] = math.Exp(rng.NormFloat64())
	}
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		s.Add(vals[i&1023])
		i++
	}
}

func BenchmarkSummaryQuantile(b *testing.B) {
	var s Summary
	rng := rand.New(rand.NewPCG(3, 4))
	for range 10000 {
		s.Add(math.Exp(rng.NormFloat64()))
	}
	b.ReportAllocs()
	for b.Loop() {
		_ = s.Quantile(0.95)
	}
}
