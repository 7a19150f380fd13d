package solve

// Notes for stepper authors (added by the driver's author; the stepper
// interface itself is unchanged):
//   - The driver sets problem.tEnd (end of the current solve) and
//     problem.maxStep (Settings.MaxStep or |tEnd − t0|) before calling start,
//     so start can call p.initialStep(t, p.tEnd, ...).
//   - The driver counts Stats.Steps; steppers count Rejected, Factorizations,
//     LinearSolves and NonNegFixes, and evaluate f and J through p.rhs, p.jac.
//   - For a non-finite state use p.nonFiniteError(t, h, v); when the step
//     size underflows use p.tooSmallError(t, h). Both fill StepError.Component.
//   - The driver obtains steppers from newRosenbrock, newDopri, newRadau and
//     newBDF; a constructor that returns nil means "not available".

import (
	"fmt"
	"math"
)

// stepper is one integration method. The driver (Solver) owns the output
// grid, stop times, cancellation, progress and the Result; a stepper owns its
// step-size control, error estimate, non-negativity handling and dense
// output.
type stepper interface {
	// start begins integration at (t, y) with a trial step h; h == 0 means
	// choose one (problem.initialStep). It is called at the beginning and
	// after every stop time (y may have been changed there).
	start(t float64, y []float64, h float64) error
	// step advances by one accepted step, retrying rejected steps
	// internally. It never passes tLimit; when the step would pass it, it
	// lands exactly on tLimit. It returns a *StepError when the step size
	// underflows, the Newton iteration keeps failing or the state becomes
	// non-finite; the current point then stays at the last accepted step.
	step(tLimit float64) error
	// current returns the last accepted point. The caller must not modify y.
	current() (t float64, y []float64)
	// dense writes the continuous solution at t within the last accepted
	// step [tPrev, tCur] into out.
	dense(t float64, out []float64)
	// stepSize is the step proposed for the next step.
	stepSize() float64
}

// problem holds what every method needs: the system, tolerances, counters
// and shared work space.
type problem struct {
	sys     System
	n       int
	rtol    float64
	atol    []float64 // one per component
	nonneg  bool
	keep    []bool // components NonNegative keeps ≥ 0; nil for all
	maxStep float64
	stats   *Stats
	linear  func(n int) LinearSolver // nil: dense LU

	// sparse is the symbolic analysis of the Jacobian's pattern shared by
	// the steppers' sparse factorizations, or nil for dense LU; csr, when
	// not nil, is the system as a SparseJacobianSystem: the sparse path,
	// on which no n×n array exists.
	sparse *luSymbolic
	csr    SparseJacobianSystem
	// sparseLUs are the real sparse factorizations of the steppers, for
	// Stats.FactorNonzeros.
	sparseLUs []*SparseLU

	sens *sensWork // forward sensitivities, or nil

	tEnd       float64 // end of the current solve (set by the driver)
	autonomous bool    // f does not depend on t (AutonomousSystem)
}

// newProblem applies the defaults of s.
func newProblem(sys System, s Settings, stats *Stats) *problem {
	n := sys.Dim()
	p := &problem{sys: sys, n: n, rtol: s.RTol, nonneg: s.NonNegative, maxStep: s.MaxStep, stats: stats, linear: s.LinearSolver}
	p.setSystem(sys)
	if p.linear == nil {
		p.sparse = sparseFor(sys)
		if sj, ok := sys.(SparseJacobianSystem); ok && p.sparse != nil {
			p.csr = sj
		}
	}
	if p.rtol <= 0 {
		p.rtol = 1e-6
	}
	p.atol = make([]float64, n)
	for i := range p.atol {
		switch {
		case len(s.ATolVec) == n:
			p.atol[i] = s.ATolVec[i]
		case s.ATol > 0:
			p.atol[i] = s.ATol
		default:
			p.atol[i] = 1e-10
		}
	}
	return p
}

// setSystem switches to sys, which has the same dimension.
func (p *problem) setSystem(sys System) {
	p.sys = sys
	p.autonomous = false
	p.keep = nil
	if ps, ok := sys.(PartlyNonNegativeSystem); ok {
		p.keep = ps.NonNegativeComponents()
	}
	if a, ok := sys.(AutonomousSystem); ok {
		p.autonomous = a.Autonomous()
	}
	if p.csr != nil {
		p.csr = sys.(SparseJacobianSystem) // same pattern (Solver.SetSystem)
	}
}

// isSigned reports whether component i may be negative although
// non-negativity is asked for (see PartlyNonNegativeSystem).
func (p *problem) isSigned(i int) bool { return p.keep != nil && !p.keep[i] }

// rhs evaluates f and counts it.
func (p *problem) rhs(t float64, y, dy []float64) {
	p.stats.RHSEvals++
	p.sys.RHS(t, y, dy)
}

// errNorm is the weighted RMS norm of e with scale atol + rtol·max(|y0|, |y1|).
func (p *problem) errNorm(e, y0, y1 []float64) float64 {
	var sum float64
	for i, ei := range e {
		sc := p.atol[i] + p.rtol*math.Max(math.Abs(y0[i]), math.Abs(y1[i]))
		r := ei / sc
		sum += r * r
	}
	return math.Sqrt(sum / float64(len(e)))
}

// initialStep chooses a first step by Hairer's algorithm (Hairer, Nørsett &
// Wanner, Solving ODEs I, 1993, II.4), for a method of the given order.
// f0 holds f(t0, y0); y1 and f1 are work space of length n.
func (p *problem) initialStep(t0, tEnd float64, y0, f0 []float64, order int, y1, f1 []float64) float64 {
	var d0, d1 float64
	for i := range y0 {
		sc := p.atol[i] + p.rtol*math.Abs(y0[i])
		d0 += (y0[i] / sc) * (y0[i] / sc)
		d1 += (f0[i] / sc) * (f0[i] / sc)
	}
	n := float64(len(y0))
	d0, d1 = math.Sqrt(d0/n), math.Sqrt(d1/n)
	span := math.Abs(tEnd - t0)
	var h0 float64
	if d0 < 1e-5 || d1 < 1e-5 {
		h0 = 1e-6
	} else {
		h0 = 0.01 * d0 / d1
	}
	h0 = math.Min(h0, span)
	for i := range y0 {
		y1[i] = y0[i] + h0*f0[i]
	}
	p.rhs(t0+h0, y1, f1)
	var d2 float64
	for i := range y0 {
		sc := p.atol[i] + p.rtol*math.Abs(y0[i])
		r := (f1[i] - f0[i]) / sc
		d2 += r * r
	}
	d2 = math.Sqrt(d2/n) / h0
	var h1 float64
	if m := math.Max(d1, d2); m <= 1e-15 {
		h1 = math.Max(1e-6, h0*1e-3)
	} else {
		h1 = math.Pow(0.01/m, 1/float64(order+1))
	}
	h := math.Min(100*h0, h1)
	h = math.Min(h, span)
	if p.maxStep > 0 {
		h = math.Min(h, p.maxStep)
	}
	return h
}

// project keeps a candidate solution non-negative (Shampine, Thompson,
// Kierzenka & Byrne, "Non-negative solutions of ODEs", Appl. Math. Comput.
// 170, 2005): it sets negative components of yn to zero and adds the change
// to the error estimate e, so that a step that jumps past a component's
// depletion is rejected rather than accepted with the wrong sign. It
// reports whether anything changed.
func (p *problem) project(yn, e []float64) bool {
	clipped := false
	for i, v := range yn {
		if v < 0 && !p.isSigned(i) {
			yn[i] = 0
			e[i] = math.Abs(e[i]) - v
			clipped = true
		}
	}
	return clipped
}

// StepError reports why an integration stopped early.
type StepError struct {
	T float64 // time of the last accepted step
	H float64 // step size at failure
	// Component is the index of the state variable at fault (for example
	// the one that became NaN), or -1 when no single one is.
	Component int
	// Reason is the plain-language cause. When Component ≥ 0 it is the
	// predicate of a sentence whose subject is that component ("became NaN
	// at t = 2"), and never contains the index itself, so that Describe can
	// name the component in the caller's terms.
	Reason string
}

// Error describes the failure with its time, step size and cause, naming
// the component at fault by its index ("component 3").
func (e *StepError) Error() string { return e.Describe(nil) }

// Describe is Error with the component at fault named by name(Component)
// ("species \"ES\"", say); a nil name, or one that returns "", gives
// "component 3".
func (e *StepError) Describe(name func(i int) string) string {
	reason := e.Reason
	if e.Component >= 0 {
		subject := ""
		if name != nil {
			subject = name(e.Component)
		}
		if subject == "" {
			subject = fmt.Sprintf("component %d", e.Component)
		}
		reason = subject + " " + reason
	}
	return fmt.Sprintf("integration stopped at t = %.6g with step size %.3g: %s", e.T, e.H, reason)
}

// eps is the unit roundoff of float64.
const eps = 0x1p-52

// minStep is the smallest step size that still advances t in a useful way.
func minStep(t float64) float64 {
	return math.Max(16*eps*math.Abs(t), 1e-300)
}

// nonFiniteError reports that component i of v is NaN or infinite at t.
func (p *problem) nonFiniteError(t, h float64, v []float64, i int) *StepError {
	what := "NaN"
	if math.IsInf(v[i], 0) {
		what = "infinite"
	}
	return &StepError{T: t, H: h, Component: i,
		Reason: fmt.Sprintf("became %s at t = %.6g; a rate expression may be undefined there (division by zero, log or root of a negative number, overflow)", what, t)}
}

// tooSmallError reports that the step size fell below what t can resolve.
// bad is the index of a component that was non-finite in the last try, or -1.
func (p *problem) tooSmallError(t, h float64, bad int) *StepError {
	if bad >= 0 {
		return &StepError{T: t, H: h, Component: bad,
			Reason: fmt.Sprintf("became NaN or infinite in every attempted step after t = %.6g; a rate expression may be undefined there or the solution may grow without bound", t)}
	}
	return &StepError{T: t, H: h, Component: -1,
		Reason: "the step size fell below the smallest step the time scale allows; the solution may be growing without bound, or a rate may be discontinuous or singular here"}
}

// nonFinite returns the index of the first NaN or Inf in v, or -1.
func nonFinite(v []float64) int {
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return i
		}
	}
	return -1
}

// LinearSolver factorizes the real n×n iteration matrix of an implicit
// method, given dense and row-major, and solves systems with the factors.
// Implementations must not allocate in Factor or Solve. The dense LU is the
// default; Settings.LinearSolver lets another (a sparse one, say) take its
// place.
type LinearSolver interface {
	// Factor factorizes m, which it must not retain or change.
	Factor(m []float64) error
	// Solve overwrites b with the solution of M x = b.
	Solve(b []float64)
}

// LU is an allocation-free dense LU factorization with partial pivoting,
// reused across factorizations of matrices of the same size.
type LU struct {
	n   int
	a   []float64 // row-major factors
	piv []int
}

// NewLU returns work space for n×n factorizations.
func NewLU(n int) *LU {
	return &LU{n: n, a: make([]float64, n*n), piv: make([]int, n)}
}

// errSingular is returned by Factor for a singular matrix.
var errSingular = fmt.Errorf("matrix is singular")

// Factor factorizes the n×n row-major matrix m (left unchanged).
func (f *LU) Factor(m []float64) error {
	n := f.n
	a := f.a
	copy(a, m)
	for k := 0; k < n; k++ {
		p := k
		maxv := math.Abs(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := math.Abs(a[i*n+k]); v > maxv {
				maxv, p = v, i
			}
		}
		f.piv[k] = p
		if maxv == 0 || math.IsNaN(maxv) {
			return errSingular
		}
		if p != k {
			rk, rp := a[k*n:(k+1)*n], a[p*n:(p+1)*n]
			for j := range rk {
				rk[j], rp[j] = rp[j], rk[j]
			}
		}
		inv := 1 / a[k*n+k]
		rk := a[k*n+k+1 : (k+1)*n]
		for i := k + 1; i < n; i++ {
			l := a[i*n+k] * inv
			a[i*n+k] = l
			if l == 0 {
				continue
			}
			ri := a[i*n+k+1 : (i+1)*n]
			for j, v := range rk {
				ri[j] -= l * v
			}
		}
	}
	return nil
}

// Solve overwrites b with the solution of A x = b.
func (f *LU) Solve(b []float64) {
	n := f.n
	a := f.a
	for k := 0; k < n; k++ {
		if p := f.piv[k]; p != k {
			b[k], b[p] = b[p], b[k]
		}
	}
	for i := 1; i < n; i++ {
		row := a[i*n : i*n+i]
		s := b[i]
		for j, v := range row {
			s -= v * b[j]
		}
		b[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		row := a[i*n+i+1 : (i+1)*n]
		for j, v := range row {
			s -= v * b[i+1+j]
		}
		b[i] = s / a[i*n+i]
	}
}
