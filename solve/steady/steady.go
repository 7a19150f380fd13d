package steady

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve"
)

// Settings control Find. The zero value of every field means a sensible
// default.
type Settings struct {
	// Laws holds one row γ per conserved quantity γ·y (k×n; nil: none).
	// Rows must be independent. Variables held constant are laws too: a
	// row with a single 1.
	Laws *mat.Dense
	// Newton has converged when its step is within ATol + RTol·|y_i| for
	// every i. Defaults: RTol 1e-10, ATol 1e-12.
	RTol, ATol float64
	// MaxIter bounds Newton's iterations from one starting point;
	// default 100.
	MaxIter int
	// Signed lets variables change sign. By default a variable that
	// starts at zero or above stays there: Newton's steps are shortened
	// so that it does not cross zero, and the fallback integration keeps
	// it non-negative.
	Signed bool
	// NoIntegration turns off the fallback that integrates towards a
	// steady state when Newton's method fails from the starting point.
	NoIntegration bool
	// MaxTime is how far the fallback integrates at most, in the system's
	// time unit; default 1e9.
	MaxTime float64
	// Integration settings of the fallback (method, tolerances); its
	// Times and NonNegative are set by Find.
	Integration solve.Settings
	// NoEigenvalues skips the stability analysis (for large systems
	// where only the state is wanted).
	NoEigenvalues bool
	// Linear makes the linear solver for Newton's n×n systems; nil means
	// a solve.SparseLU for a solve.SparsePatternSystem of 100 or more
	// variables and the dense LU otherwise.
	Linear func(n int) solve.LinearSolver
}

func (s *Settings) defaults() {
	if s.RTol <= 0 {
		s.RTol = 1e-10
	}
	if s.ATol <= 0 {
		s.ATol = 1e-12
	}
	if s.MaxIter <= 0 {
		s.MaxIter = 100
	}
	if s.MaxTime <= 0 {
		s.MaxTime = 1e9
	}
}

// Stats report the work of Find.
type Stats struct {
	Iterations     int     // Newton iterations, all starts together
	RHSEvals       int     // evaluations of f by Newton
	JacobianEvals  int     // Jacobian evaluations by Newton
	Integrated     bool    // the fallback integration was used
	IntegratedTo   float64 // how far it integrated
	IntegrationRHS int     // evaluations of f by the integrator
	Wall           time.Duration
}

// Result is a steady state.
type Result struct {
	Y []float64 // the state
	// Residual is max_i |f_i(Y)|, in the units of f.
	Residual float64
	// Totals are Γ·Y, one per conservation law, as given by the start.
	Totals []float64
	// Jacobian is the full Jacobian at Y; Reduced the Jacobian of the
	// independent variables on the laws' surface (nil when there are
	// none); Independent their indices.
	Jacobian    *mat.Dense
	Reduced     *mat.Dense
	Independent []int
	// Link is L (n×(n−k)): dy = L·dy_I for changes that keep the totals.
	Link *mat.Dense
	Stability
	// When Newton's method from the start found an unstable state, Find
	// also integrates from the start: Passed is that unstable state when
	// the integration settled elsewhere (and Y is where it settled), and
	// Unsettled says why the integration did not settle when it did not
	// (and Y is the unstable state).
	Passed    []float64
	Unsettled *NotFoundError
	Stats
}

// NotFoundError says why no steady state was found.
type NotFoundError struct {
	// Reason is one of "diverging", "oscillating", "not settled" and
	// "integration failed".
	Reason string
	// Component is the variable that diverges or oscillates (−1 when
	// none in particular).
	Component int
	// T is the time the integration reached; Value the component's value
	// there; Period the oscillation's period.
	T, Value, Period float64
	// Newton says why Newton's method failed from the start.
	Newton string
	// Err is the integrator's error, for "integration failed".
	Err error
}

// Error implements error.
func (e *NotFoundError) Error() string { return e.Describe(nil) }

// Unwrap returns the integrator's error, if any.
func (e *NotFoundError) Unwrap() error { return e.Err }

// Describe writes the error with component names given by name (nil:
// "component i").
func (e *NotFoundError) Describe(name func(i int) string) string {
	who := func(i int) string {
		if name != nil {
			return name(i)
		}
		return fmt.Sprintf("component %d", i)
	}
	var s string
	switch e.Reason {
	case "diverging":
		s = fmt.Sprintf("no steady state: %s keeps growing (%.4g at t = %.4g and still rising)", who(e.Component), e.Value, e.T)
	case "oscillating":
		s = fmt.Sprintf("no steady state reached: %s keeps oscillating (period about %.4g, seen up to t = %.4g); the steady state, if any, is unstable", who(e.Component), e.Period, e.T)
	case "integration failed":
		s = fmt.Sprintf("no steady state: integrating towards one failed: %v", e.Err)
	default:
		s = fmt.Sprintf("no steady state: the state had not settled by t = %.4g", e.T)
		if e.Component >= 0 {
			s += fmt.Sprintf(" (%s was still changing)", who(e.Component))
		}
	}
	if e.Newton != "" {
		s += "; Newton's method from the start: " + e.Newton
	}
	return s
}

// newton is the work space of Newton's method on G(y) = [f_I(y); Γy − T].
type newton struct {
	sys    solve.System
	red    *reduction
	set    *Settings
	n      int
	jac    *mat.Dense
	a      []float64 // row-major iteration matrix
	ls     solve.LinearSolver
	f, g   []float64
	dy, yt []float64
	totals []float64
	stats  *Stats
}

func newNewton(sys solve.System, red *reduction, set *Settings, stats *Stats) *newton {
	n := sys.Dim()
	nw := &newton{sys: sys, red: red, set: set, n: n, stats: stats,
		jac: mat.NewDense(n, n, nil), a: make([]float64, n*n),
		f: make([]float64, n), g: make([]float64, n), dy: make([]float64, n), yt: make([]float64, n)}
	switch {
	case set.Linear != nil:
		nw.ls = set.Linear(n)
	case n >= 100:
		if ps, ok := sys.(solve.SparsePatternSystem); ok {
			rp, ci := augmentedPattern(ps, red)
			if lu, err := solve.NewSparseLU(n, rp, ci); err == nil {
				nw.ls = lu
			}
		}
	}
	if nw.ls == nil {
		nw.ls = solve.NewLU(n)
	}
	return nw
}

// augmentedPattern is the CSR pattern of [J_I rows; Γ rows].
func augmentedPattern(ps solve.SparsePatternSystem, red *reduction) (rowPtr, colIdx []int) {
	jr, jc := ps.JacobianPattern()
	n := red.n
	rowPtr = make([]int, n+1)
	for i := 0; i < n; i++ {
		if r := red.lawRow[i]; r >= 0 {
			for j := 0; j < n; j++ {
				if red.gamma.At(r, j) != 0 {
					colIdx = append(colIdx, j)
				}
			}
		} else {
			colIdx = append(colIdx, jc[jr[i]:jr[i+1]]...)
		}
		rowPtr[i+1] = len(colIdx)
	}
	return rowPtr, colIdx
}

// residual writes G(y) into g and returns its 2-norm; f(y) is left in f.
func (nw *newton) residual(y []float64) float64 {
	nw.sys.RHS(0, y, nw.f)
	nw.stats.RHSEvals++
	s := 0.0
	for i := 0; i < nw.n; i++ {
		if r := nw.red.lawRow[i]; r >= 0 {
			v := -nw.totals[r]
			for j, x := range y {
				v += nw.red.gamma.At(r, j) * x
			}
			nw.g[i] = v
		} else {
			nw.g[i] = nw.f[i]
		}
		s += nw.g[i] * nw.g[i]
	}
	return math.Sqrt(s)
}

// errFailed marks Newton's failures; the text says why.
type newtonError string

func (e newtonError) Error() string { return string(e) }

// solve runs damped Newton from y (changed in place) and reports how it
// ended.
func (nw *newton) solve(ctx context.Context, y []float64) error {
	set := nw.set
	n := nw.n
	norm := nw.residual(y)
	if bad := nonFinite(nw.g); bad >= 0 {
		return newtonError(fmt.Sprintf("the right-hand side is not finite at the start (component %d)", bad))
	}
	for it := 0; it < set.MaxIter; it++ {
		if ctx.Err() != nil {
			return ctx.Err()
		}
		nw.stats.Iterations++
		nw.sys.Jacobian(0, y, nw.jac)
		nw.stats.JacobianEvals++
		raw := nw.jac.RawMatrix()
		for i := 0; i < n; i++ {
			row := nw.a[i*n : (i+1)*n]
			if r := nw.red.lawRow[i]; r >= 0 {
				for j := range row {
					row[j] = nw.red.gamma.At(r, j)
				}
			} else {
				copy(row, raw.Data[i*raw.Stride:i*raw.Stride+n])
			}
		}
		if err := nw.ls.Factor(nw.a); err != nil {
			return newtonError("the Jacobian is singular (a conservation law may be missing, or the state has no unique steady state nearby)")
		}
		for i := range nw.dy {
			nw.dy[i] = -nw.g[i]
		}
		nw.ls.Solve(nw.dy)
		if bad := nonFinite(nw.dy); bad >= 0 {
			return newtonError("the Newton step is not finite")
		}
		// Keep variables that are ≥ 0 from crossing zero.
		lmax := 1.0
		if !set.Signed {
			for i, d := range nw.dy {
				if y[i] >= 0 && y[i]+d < 0 {
					lmax = math.Min(lmax, 0.9*y[i]/(-d))
				}
			}
		}
		converged := true
		for i, d := range nw.dy {
			if math.Abs(d) > set.ATol+set.RTol*math.Abs(y[i]) {
				converged = false
				break
			}
		}
		if converged {
			for i, d := range nw.dy {
				if y[i]+d >= 0 || set.Signed || y[i] < 0 {
					y[i] += d
				}
			}
			nw.residual(y)
			return nil
		}
		if lmax < 1e-12 {
			return newtonError("the steps would make a concentration negative")
		}
		// Backtracking on ‖G‖ (Armijo).
		lam := lmax
		for {
			for i := range y {
				nw.yt[i] = y[i] + lam*nw.dy[i]
			}
			nn := nw.residual(nw.yt)
			if nonFinite(nw.g) < 0 && nn <= (1-1e-4*lam)*norm {
				copy(y, nw.yt)
				norm = nn
				break
			}
			lam /= 2
			if lam < 1e-10 {
				nw.residual(y)
				return newtonError("the steps no longer reduce the residual (no steady state nearby)")
			}
		}
	}
	return newtonError(fmt.Sprintf("no convergence in %d iterations", set.MaxIter))
}

func nonFinite(v []float64) int {
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return i
		}
	}
	return -1
}

// Find looks for a steady state of sys on the surface of the conservation
// laws through y0 (the totals Γ·y0 are kept). It tries damped Newton from
// y0; when that fails it integrates from y0 over growing spans of time
// (1, 10, 100, … up to Settings.MaxTime), polishing with Newton after each,
// and stops early when the state diverges or keeps oscillating. The system
// must be autonomous; Find evaluates it at t = 0.
//
// When no steady state is found the error is a *NotFoundError that says
// why; cancelling ctx returns ctx's error.
func Find(ctx context.Context, sys solve.System, y0 []float64, set Settings) (*Result, error) {
	f, err := NewFinder(sys, set)
	if err != nil {
		return nil, err
	}
	return f.Find(ctx, y0)
}

// Finder finds steady states of one system from one starting point after
// another, keeping its work space from one call to the next: the analysis
// of the conservation laws, the Jacobian, and the linear solver with its
// ordering of the unknowns (for a sparse system, the larger part of the
// cost of one Find). A Finder is used by one goroutine at a time.
type Finder struct {
	sys solve.System
	set Settings
	red *reduction
	nw  *newton
}

// NewFinder prepares to find steady states of sys with settings set.
func NewFinder(sys solve.System, set Settings) (*Finder, error) {
	set.defaults()
	f := &Finder{sys: sys, set: set}
	red, err := newReduction(sys.Dim(), set.Laws)
	if err != nil {
		return nil, err
	}
	f.red = red
	f.nw = newNewton(sys, red, &f.set, nil)
	return f, nil
}

// Find looks for a steady state from y0, as the function Find does.
func (f *Finder) Find(ctx context.Context, y0 []float64) (*Result, error) {
	start := time.Now()
	sys, red, nw := f.sys, f.red, f.nw
	set := f.set
	n := sys.Dim()
	if len(y0) != n {
		return nil, fmt.Errorf("steady: the starting state has %d values; the system has %d variables", len(y0), n)
	}
	if i := nonFinite(y0); i >= 0 {
		return nil, fmt.Errorf("steady: starting value of component %d is %v; a finite number is expected", i, y0[i])
	}
	var err error
	res := &Result{}
	nw.stats = &res.Stats
	nw.totals = red.totals(y0)
	y := append([]float64(nil), y0...)
	nerr := nw.solve(ctx, y)
	if nerr != nil && ctx.Err() != nil {
		return nil, ctx.Err()
	}
	if nerr != nil {
		if set.NoIntegration {
			return nil, &NotFoundError{Reason: "not settled", Component: -1, Newton: nerr.Error()}
		}
		y, err = integrate(ctx, sys, nw, y0, &set, &res.Stats)
		if err != nil {
			var nf *NotFoundError
			if errors.As(err, &nf) {
				nf.Newton = nerr.Error()
			}
			return nil, err
		}
	}
	if err := res.finish(sys, red, nw, y, &set); err != nil {
		return nil, err
	}
	if nerr == nil && !set.NoEigenvalues && !set.NoIntegration && !res.Stable && res.Class != Marginal {
		// An unstable state is rarely where the system goes: see where
		// the dynamics from the start lead.
		y2, ierr := integrate(ctx, sys, nw, y0, &set, &res.Stats)
		var nf *NotFoundError
		switch {
		case ierr == nil && !close(y2, y, 0):
			passed := res.Y
			stats := res.Stats
			*res = Result{Stats: stats}
			if err := res.finish(sys, red, nw, y2, &set); err != nil {
				return nil, err
			}
			res.Passed = passed
		case errors.As(ierr, &nf):
			res.Unsettled = nf
		case ierr != nil && ctx.Err() != nil:
			return nil, ctx.Err()
		}
	}
	res.Wall = time.Since(start)
	return res, nil
}

// finish fills in the result at the steady state y.
func (res *Result) finish(sys solve.System, red *reduction, nw *newton, y []float64, set *Settings) error {
	res.Y = y
	nw.residual(y)
	res.Residual = 0
	for _, v := range nw.f {
		res.Residual = math.Max(res.Residual, math.Abs(v))
	}
	res.Totals = append([]float64(nil), nw.totals...)
	res.Jacobian = mat.NewDense(nw.n, nw.n, nil)
	sys.Jacobian(0, y, res.Jacobian)
	res.Independent = append([]int(nil), red.indep...)
	res.Link = red.linkMatrix()
	res.Reduced = red.reduced(res.Jacobian)
	if set.NoEigenvalues {
		return nil
	}
	st, err := Classify(res.Reduced)
	if err != nil {
		return err
	}
	res.Stability = st
	return nil
}

// integrate is Find's fallback: integrate from y0 over spans growing
// tenfold, trying Newton after each.
func integrate(ctx context.Context, sys solve.System, nw *newton, y0 []float64, set *Settings, stats *Stats) ([]float64, error) {
	stats.Integrated = true
	n := len(y0)
	is := set.Integration
	is.NonNegative = !set.Signed
	is.StopTimes, is.OnStop = nil, nil
	const samples = 400
	is.Times = make([]float64, samples)
	y := append([]float64(nil), y0...)
	for i := range y {
		if y[i] < 0 {
			is.NonNegative = false // a signed start: let it be
		}
	}
	scale := 0.0
	for _, v := range y0 {
		scale = math.Max(scale, math.Abs(v))
	}
	yn := make([]float64, n)
	t0 := 0.0
	oscPrev, oscPeriod := -1, 0.0
	var last *solve.Result
	span := 1.0
	for t0 < set.MaxTime {
		t1 := math.Min(t0+span, set.MaxTime)
		for k := range is.Times {
			is.Times[k] = t0 + (t1-t0)*float64(k+1)/samples
		}
		sv := solve.NewSolver(sys, is) // Times change with the span
		r, err := sv.Solve(ctx, t0, t1, y)
		if r != nil {
			stats.IntegrationRHS += r.RHSEvals
		}
		if err != nil {
			if ctx.Err() != nil {
				return nil, ctx.Err()
			}
			// Blow-up shows as non-finite values or a step size collapse.
			var se *solve.StepError
			if errors.As(err, &se) && r != nil && len(r.Y) > 0 {
				lastY := r.Y[len(r.Y)-1]
				if i := growing(r); i >= 0 {
					return nil, &NotFoundError{Reason: "diverging", Component: i, T: r.T[len(r.T)-1], Value: lastY[i]}
				}
			}
			return nil, &NotFoundError{Reason: "integration failed", Component: -1, T: t0, Err: err}
		}
		stats.IntegratedTo = t1
		last = r
		copy(y, r.Y[len(r.Y)-1])
		if i := nonFinite(y); i >= 0 {
			return nil, &NotFoundError{Reason: "diverging", Component: i, T: t1, Value: y[i]}
		}
		// Polish.
		copy(yn, y)
		if err := nw.solve(ctx, yn); err == nil && close(yn, y, scale) {
			return yn, nil
		} else if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		// Two spans in a row with sustained oscillations: the first,
		// finer sampled, gives the period.
		if c, period := oscillating(r); c >= 0 {
			if oscPrev >= 0 {
				return nil, &NotFoundError{Reason: "oscillating", Component: oscPrev, T: t1, Period: oscPeriod}
			}
			oscPrev, oscPeriod = c, period
		} else {
			oscPrev = -1
		}
		for _, v := range y {
			if math.Abs(v) > 1e15*(1+scale) {
				i := growing(r)
				if i < 0 {
					i = argmaxAbs(y)
				}
				return nil, &NotFoundError{Reason: "diverging", Component: i, T: t1, Value: y[i]}
			}
		}
		t0 = t1
		if oscPrev < 0 {
			// Spans grow tenfold; a span that oscillated is repeated at
			// the same length (and sampling) to confirm.
			span = 9 * t1
			if t1 == 1 {
				span = 9
			}
		}
	}
	if i := growing(last); i >= 0 {
		return nil, &NotFoundError{Reason: "diverging", Component: i, T: t0, Value: y[i]}
	}
	return nil, &NotFoundError{Reason: "not settled", Component: changing(last), T: t0}
}

// close reports whether Newton's polish stayed near the integrated state.
func close(a, b []float64, scale float64) bool {
	for i := range a {
		if math.Abs(a[i]-b[i]) > 0.05*(math.Abs(b[i])+1e-6*scale)+1e-12 {
			return false
		}
	}
	return true
}

func argmaxAbs(y []float64) int {
	k := 0
	for i, v := range y {
		if math.Abs(v) > math.Abs(y[k]) {
			k = i
		}
	}
	return k
}

// growing returns a component that rose over the whole of the last span,
// ending at least twice as far from zero as it was at its start and above
// its start by more than half its value: unbounded growth, linear or
// faster; −1 when none.
func growing(r *solve.Result) int {
	if r == nil || len(r.Y) < 3 {
		return -1
	}
	first, last := r.Y[0], r.Y[len(r.Y)-1]
	best, bestRatio := -1, 0.0
	for i := range last {
		if math.IsNaN(last[i]) {
			continue
		}
		if math.IsInf(last[i], 0) {
			return i
		}
		mono := true
		for k := 1; k < len(r.Y); k++ {
			if math.Abs(r.Y[k][i]) < math.Abs(r.Y[k-1][i]) {
				mono = false
				break
			}
		}
		a, b := math.Abs(first[i]), math.Abs(last[i])
		if mono && b >= 2*a && b > 0 {
			if ratio := b / math.Max(a, 1e-300); ratio > bestRatio {
				best, bestRatio = i, ratio
			}
		}
	}
	return best
}

// changing returns the component whose relative change over the last span
// is largest.
func changing(r *solve.Result) int {
	if r == nil || len(r.Y) < 2 {
		return -1
	}
	first, last := r.Y[0], r.Y[len(r.Y)-1]
	best, bv := -1, 0.0
	for i := range last {
		d := math.Abs(last[i]-first[i]) / (math.Abs(last[i]) + 1e-300)
		if d > bv {
			best, bv = i, d
		}
	}
	return best
}

// oscillating looks for a component with at least three local maxima in
// the span whose heights do not fall (the last at least 80% of the
// first, measured from the span's minimum) and whose swing is more than
// 1e-6 of its size; it returns the component and the mean spacing of the
// maxima, or −1.
func oscillating(r *solve.Result) (int, float64) {
	if r == nil || len(r.Y) < 5 {
		return -1, 0
	}
	n := len(r.Y[0])
	for i := 0; i < n; i++ {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, y := range r.Y {
			lo, hi = math.Min(lo, y[i]), math.Max(hi, y[i])
		}
		if !(hi-lo > 1e-6*math.Max(math.Abs(hi), math.Abs(lo))) {
			continue
		}
		var peaks []int
		for k := 1; k+1 < len(r.Y); k++ {
			if r.Y[k][i] > r.Y[k-1][i] && r.Y[k][i] >= r.Y[k+1][i] {
				peaks = append(peaks, k)
			}
		}
		if len(peaks) < 3 {
			continue
		}
		h0 := r.Y[peaks[0]][i] - lo
		h1 := r.Y[peaks[len(peaks)-1]][i] - lo
		if h0 > 0 && h1 >= 0.8*h0 && h1 > 0.05*(hi-lo) {
			period := (r.T[peaks[len(peaks)-1]] - r.T[peaks[0]]) / float64(len(peaks)-1)
			return i, period
		}
	}
	return -1, 0
}
