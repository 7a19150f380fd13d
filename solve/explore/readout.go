package explore

import (
	"fmt"
	"math"
	"strings"
)

// Trajectory is a solution sampled on an output grid.
type Trajectory struct {
	T []float64   // output times, ascending
	Y [][]float64 // Y[i][j] is component j at T[i]
}

// Kind names a readout.
type Kind string

// The readouts. Each is computed from one component y of a trajectory on its
// output grid t_0 < t_1 < … < t_n only: between grid points the trajectory is
// taken as the straight line joining them (no dense output is used), so the
// result is as fine as the grid.
const (
	// ValueAt is y at time At: the grid value when At is a grid time, else
	// the linear interpolation between the two grid points around it; NaN
	// when At lies outside [t_0, t_n].
	ValueAt Kind = "value_at"
	// Max is the largest grid value of y.
	Max Kind = "max"
	// TimeOfMax is the earliest grid time at which y equals its Max.
	TimeOfMax Kind = "time_of_max"
	// Min is the smallest grid value of y.
	Min Kind = "min"
	// TimeOfMin is the earliest grid time at which y equals its Min.
	TimeOfMin Kind = "time_of_min"
	// Final is y at the last grid time t_n.
	Final Kind = "final"
	// AUC is the area under y over [t_0, t_n] by the trapezoidal rule on the
	// grid: Σ (t_{i+1} − t_i)·(y_i + y_{i+1})/2. Negative values count
	// negatively.
	AUC Kind = "auc"
	// CrossUp is the first time y rises through Level: the first grid
	// interval with y_i < Level ≤ y_{i+1}, interpolated linearly,
	// t_i + (Level − y_i)/(y_{i+1} − y_i)·(t_{i+1} − t_i). A trajectory that
	// starts at or above Level has not crossed it until it has gone below
	// and come back. NaN when y never crosses.
	CrossUp Kind = "cross_up"
	// CrossDown is the first time y falls through Level: the first grid
	// interval with y_i > Level ≥ y_{i+1}, interpolated linearly as for
	// CrossUp. NaN when y never crosses.
	CrossDown Kind = "cross_down"
)

// Kinds lists every readout kind, in the order of the constants.
var Kinds = []Kind{ValueAt, Max, TimeOfMax, Min, TimeOfMin, Final, AUC, CrossUp, CrossDown}

// Readout is one scalar computed from one component of every trajectory.
type Readout struct {
	Name      string  // label in results and files
	Kind      Kind    // what is computed; see the Kind constants
	Component int     // index of the component in the state vector
	At        float64 // time, for ValueAt
	Level     float64 // threshold, for CrossUp and CrossDown
	// Window, when true, restricts every kind but ValueAt to the times
	// From to To: the trajectory there is its grid points strictly inside
	// with the values at From and To interpolated as for ValueAt, so "the
	// trough before the 10th dose" or "the AUC over the last interval" is
	// one readout. A window reaching outside the grid is cut to it.
	Window   bool
	From, To float64
}

// Validate reports whether r can be computed on a state of dim components.
func (r Readout) Validate(dim int) error {
	known := false
	for _, k := range Kinds {
		if r.Kind == k {
			known = true
		}
	}
	switch {
	case !known:
		names := make([]string, len(Kinds))
		for i, k := range Kinds {
			names[i] = string(k)
		}
		return fmt.Errorf("readout %q: unknown kind %q; expected one of %s", r.Name, r.Kind, strings.Join(names, ", "))
	case r.Component < 0 || r.Component >= dim:
		return fmt.Errorf("readout %q: component %d out of range [0, %d)", r.Name, r.Component, dim)
	case r.Kind == ValueAt && (math.IsNaN(r.At) || math.IsInf(r.At, 0)):
		return fmt.Errorf("readout %q: time must be finite, got %v", r.Name, r.At)
	case (r.Kind == CrossUp || r.Kind == CrossDown) && (math.IsNaN(r.Level) || math.IsInf(r.Level, 0)):
		return fmt.Errorf("readout %q: level must be finite, got %v", r.Name, r.Level)
	case r.Window && r.Kind == ValueAt:
		return fmt.Errorf("readout %q: value_at reads one time; a window (from, to) does not apply", r.Name)
	case r.Window && !(r.From < r.To) || r.Window && (math.IsInf(r.From, 0) || math.IsInf(r.To, 0)):
		return fmt.Errorf("readout %q: the window from %v to %v is empty; expected finite from < to", r.Name, r.From, r.To)
	}
	return nil
}

// Eval computes the readout on tr. It returns NaN for an empty trajectory or
// an unknown kind. It does not allocate.
func (r Readout) Eval(tr Trajectory) float64 {
	t, y, j := tr.T, tr.Y, r.Component
	n := len(t)
	if n == 0 || len(y) < n {
		return math.NaN()
	}
	if r.Kind == ValueAt {
		return valueAt(t, y, j, r.At)
	}
	w := series{t: t, y: y, j: j, lo: 0, hi: n - 1, t0: t[0], tn: t[n-1]}
	if r.Window {
		w.t0, w.tn = math.Max(r.From, t[0]), math.Min(r.To, t[n-1])
		if !(w.t0 < w.tn) {
			return math.NaN()
		}
		w.windowed = true
		for w.lo < n && t[w.lo] <= w.t0 {
			w.lo++
		}
		w.hi = w.lo
		for w.hi < n && t[w.hi] < w.tn {
			w.hi++
		}
		// Points: (t0, interpolated), t[lo:hi], (tn, interpolated).
		w.v0, w.vn = valueAt(t, y, j, w.t0), valueAt(t, y, j, w.tn)
	}
	m := w.len()
	switch r.Kind {
	case Max, TimeOfMax:
		at, best := w.at(0)
		for i := 1; i < m; i++ {
			if ti, v := w.at(i); v > best {
				best, at = v, ti
			}
		}
		if r.Kind == Max {
			return best
		}
		return at
	case Min, TimeOfMin:
		at, best := w.at(0)
		for i := 1; i < m; i++ {
			if ti, v := w.at(i); v < best {
				best, at = v, ti
			}
		}
		if r.Kind == Min {
			return best
		}
		return at
	case Final:
		_, v := w.at(m - 1)
		return v
	case AUC:
		var s float64
		ta, a := w.at(0)
		for i := 1; i < m; i++ {
			tb, b := w.at(i)
			s += (tb - ta) * (a + b) / 2
			ta, a = tb, b
		}
		return s
	case CrossUp, CrossDown:
		ta, a := w.at(0)
		for i := 1; i < m; i++ {
			tb, b := w.at(i)
			if r.Kind == CrossUp && a < r.Level && b >= r.Level || r.Kind == CrossDown && a > r.Level && b <= r.Level {
				return ta + (r.Level-a)/(b-a)*(tb-ta)
			}
			ta, a = tb, b
		}
		return math.NaN()
	}
	return math.NaN()
}

// series is component j of a trajectory, whole (grid points 0 to hi) or
// in a window (the interpolated value at t0, the grid points lo to hi−1,
// the interpolated value at tn).
type series struct {
	t        []float64
	y        [][]float64
	j        int
	windowed bool
	lo, hi   int
	t0, tn   float64
	v0, vn   float64
}

func (w *series) len() int {
	if !w.windowed {
		return w.hi + 1
	}
	return w.hi - w.lo + 2
}

func (w *series) at(i int) (float64, float64) {
	if !w.windowed {
		return w.t[i], w.y[i][w.j]
	}
	switch {
	case i == 0:
		return w.t0, w.v0
	case i == w.hi-w.lo+1:
		return w.tn, w.vn
	}
	k := w.lo + i - 1
	return w.t[k], w.y[k][w.j]
}

// valueAt interpolates component j linearly at time at.
func valueAt(t []float64, y [][]float64, j int, at float64) float64 {
	n := len(t)
	if at < t[0] || at > t[n-1] {
		return math.NaN()
	}
	// Binary search for the first grid time ≥ at.
	lo, hi := 0, n-1
	for lo < hi {
		mid := (lo + hi) / 2
		if t[mid] < at {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	if t[lo] == at || lo == 0 {
		return y[lo][j]
	}
	a, b := y[lo-1][j], y[lo][j]
	return a + (at-t[lo-1])/(t[lo]-t[lo-1])*(b-a)
}
