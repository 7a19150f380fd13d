package solve

import "math"

// LinearTimes returns n equally spaced times from t0 to t1, both included
// exactly. It returns nil when n < 1 or a bound is not finite; for n == 1 it
// returns [t0].
func LinearTimes(t0, t1 float64, n int) []float64 {
	if n < 1 || math.IsNaN(t0) || math.IsNaN(t1) || math.IsInf(t0, 0) || math.IsInf(t1, 0) {
		return nil
	}
	ts := make([]float64, n)
	ts[0] = t0
	for i := 1; i < n; i++ {
		ts[i] = t0 + (t1-t0)*float64(i)/float64(n-1)
	}
	if n > 1 {
		ts[n-1] = t1
	}
	return ts
}

// LogTimes returns n logarithmically spaced times from first to last, both
// included exactly; 0 < first < last. It returns nil for invalid arguments.
// Prepend 0 yourself when the solve starts there.
func LogTimes(first, last float64, n int) []float64 {
	if n < 1 || !(first > 0) || !(last > first) || math.IsInf(last, 0) {
		return nil
	}
	ts := make([]float64, n)
	ts[0] = first
	// Base 10, so that decade grids come out exact.
	lf, ll := math.Log10(first), math.Log10(last)
	for i := 1; i < n; i++ {
		ts[i] = math.Pow(10, lf+(ll-lf)*float64(i)/float64(n-1))
	}
	if n > 1 {
		ts[n-1] = last
	}
	return ts
}
