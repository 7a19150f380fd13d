package solve

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Forward sensitivities.
//
// For a quantity q (a parameter of f, an initial value, an event's amount)
// the sensitivity s = ∂y/∂q obeys the linear equation
//
//	s' = J(t, y)·s + ∂f/∂q,   s(t0) = ∂y0/∂q,
//
// with J = ∂f/∂y. The stiff methods integrate it together with the state,
// step by step, reusing the state's iteration matrix (the staggered direct
// approach of Caracotsios & Stewart, Comput. Chem. Eng. 9, 1985, as in
// CVODES; Hindmarsh et al., ACM TOMS 31, 2005):
//
//   - BDF: once the state's corrector has converged, the sensitivity
//     corrector (I − c·J(t_{n+1}, y_{n+1}))·s = s_pred − ψ_s + c·∂f/∂q is
//     solved by iterations preconditioned with the state's factorized
//     matrix I − c·J_old, with the exact J at the new point in the
//     residual; when the old matrix is too far off for the iteration to
//     contract, the exact matrix is factorized once.
//   - Radau IIA: the sensitivities of the converged stages solve the
//     derivative of the collocation equations (internal differentiation,
//     Bock 1981), with the exact J at each stage, by simplified Newton
//     iterations on the state's transformed real and complex matrices.
//   - RODAS4: the method is applied to state and sensitivities together;
//     the combined Jacobian is block lower triangular with J on the
//     diagonal, so every stage's sensitivities are solved with the
//     state's factorized matrix. Its off-diagonal block (the second
//     derivatives of f contracted with s) is formed as a difference
//     quotient of the exact Jacobian and ∂f/∂q along each stage's
//     direction; it enters only the method's linear algebra, with an
//     error of the order of √ε.
//
// Dormand–Prince does not compute sensitivities; Auto picks a stiff method
// when sensitivities are asked for.

// ParamSystem is a System whose right-hand side depends on parameters q
// and that gives ∂f/∂q exactly.
type ParamSystem interface {
	System
	// ParamDim is the number of columns of ∂f/∂q.
	ParamDim() int
	// ParamJacobian writes ∂f/∂q at (t, y) into dfdq, a Dim×ParamDim
	// matrix.
	ParamJacobian(t float64, y []float64, dfdq *mat.Dense)
}

// ParamPatternSystem is a ParamSystem that gives ∂f/∂q in compressed
// sparse column form; the sensitivities then read only the columns they
// need.
type ParamPatternSystem interface {
	ParamSystem
	// ParamJacobianPattern returns the pattern of ∂f/∂q: the rows of
	// column j are rowIdx[colPtr[j]:colPtr[j+1]].
	ParamJacobianPattern() (colPtr, rowIdx []int)
	// ParamJacobianCSC writes the values of ∂f/∂q at (t, y) in the order
	// of the pattern.
	ParamJacobianCSC(t float64, y []float64, vals []float64)
}

// Sensitivity is one quantity whose forward sensitivity ∂y/∂q is
// integrated with the state.
type Sensitivity struct {
	// Param is the column of ∂f/∂q that belongs to the quantity (the
	// system must be a ParamSystem), or −1 when f does not depend on it
	// (an initial value, an event's amount).
	Param int
	// Initial is ∂y(t0)/∂q; nil means zero.
	Initial []float64
	// Scale is the quantity's typical size, for the sensitivities' error
	// weights atol/Scale + rtol·|s| (as in CVODES); default 1.
	Scale float64
}

// SensSettings ask a solve for forward sensitivities.
type SensSettings struct {
	Quantities []Sensitivity
	// ErrorControl includes the sensitivities in the error test of BDF,
	// Radau IIA and RODAS4, so that they, too, meet the tolerances
	// (steps are then rejected for the sensitivities' sake as well).
	ErrorControl bool
	// Jump, when set, is called after events of an EventSystem fired at t
	// (fired names them; before and after are the state around the
	// jump). It updates the sensitivities in s in place: s[j] is ∂y/∂q_j
	// just before the events on entry and must be the value just after on
	// return. Without Jump, the sensitivities pass events unchanged, which
	// is right for the amount of a dose that is a fixed number.
	Jump func(t float64, fired []string, before, after []float64, s [][]float64)
}

// sensWork is the sensitivity state and work space shared by a solve's
// steppers.
type sensWork struct {
	n, ns    int
	q        []Sensitivity
	errCtl   bool
	ps       ParamSystem
	colPtr   []int
	rowIdx   []int
	vals     []float64  // CSC values of ∂f/∂q
	dense    *mat.Dense // ∂f/∂q when the system gives no pattern
	s        []float64  // ns×n, the sensitivities a stepper starts from
	cols     [][]float64
	wscale   []float64 // 1/Scale per quantity
	jumpCall func(t float64, fired []string, before, after []float64, s [][]float64)
	stats    *Stats
}

// newSensWork checks s against sys and allocates the work space.
func newSensWork(sys System, set *SensSettings, stats *Stats) (*sensWork, error) {
	n := sys.Dim()
	w := &sensWork{n: n, ns: len(set.Quantities), q: set.Quantities, errCtl: set.ErrorControl, jumpCall: set.Jump, stats: stats}
	needParams := false
	for j, q := range set.Quantities {
		if q.Initial != nil && len(q.Initial) != n {
			return nil, fmt.Errorf("solve: sensitivity %d has %d initial values; the system has %d state variables", j, len(q.Initial), n)
		}
		if q.Param >= 0 {
			needParams = true
		}
		if math.IsNaN(q.Scale) || q.Scale < 0 || math.IsInf(q.Scale, 0) {
			return nil, fmt.Errorf("solve: sensitivity %d has scale %g; a positive number (or 0 for 1) is expected", j, q.Scale)
		}
	}
	if needParams {
		ps, ok := sys.(ParamSystem)
		if !ok {
			return nil, fmt.Errorf("solve: sensitivities to parameters need a system that gives ∂f/∂q (ParamSystem)")
		}
		w.ps = ps
		for j, q := range set.Quantities {
			if q.Param >= ps.ParamDim() {
				return nil, fmt.Errorf("solve: sensitivity %d names parameter column %d; the system has %d", j, q.Param, ps.ParamDim())
			}
		}
		if pp, ok := sys.(ParamPatternSystem); ok {
			w.colPtr, w.rowIdx = pp.ParamJacobianPattern()
			w.vals = make([]float64, len(w.rowIdx))
		} else {
			w.dense = mat.NewDense(n, ps.ParamDim(), nil)
		}
	}
	w.s = make([]float64, w.ns*n)
	w.cols = make([][]float64, w.ns)
	w.wscale = make([]float64, w.ns)
	for j, q := range set.Quantities {
		w.wscale[j] = 1
		if q.Scale > 0 {
			w.wscale[j] = 1 / q.Scale
		}
	}
	return w, nil
}

// init sets the sensitivities to their initial values.
func (w *sensWork) init() {
	clear(w.s)
	for j, q := range w.q {
		if q.Initial != nil {
			copy(w.s[j*w.n:(j+1)*w.n], q.Initial)
		}
	}
}

// col returns column j of the flat ns×n array a.
func (w *sensWork) col(a []float64, j int) []float64 { return a[j*w.n : (j+1)*w.n] }

// fq writes ∂f/∂q_j at (t, y) for every quantity into out (ns×n), zero
// for quantities that f does not depend on.
func (w *sensWork) fq(t float64, y, out []float64) {
	clear(out)
	if w.ps == nil {
		return
	}
	w.stats.ParamJacobianEvals++
	if w.vals != nil {
		w.ps.(ParamPatternSystem).ParamJacobianCSC(t, y, w.vals)
		for j, q := range w.q {
			if q.Param < 0 {
				continue
			}
			o := w.col(out, j)
			for k := w.colPtr[q.Param]; k < w.colPtr[q.Param+1]; k++ {
				o[w.rowIdx[k]] = w.vals[k]
			}
		}
		return
	}
	w.ps.ParamJacobian(t, y, w.dense)
	raw := w.dense.RawMatrix()
	for j, q := range w.q {
		if q.Param < 0 {
			continue
		}
		o := w.col(out, j)
		for i := range o {
			o[i] = raw.Data[i*raw.Stride+q.Param]
		}
	}
}

// jacTimes writes J·s_j + add_j for every quantity into out (ns×n); add
// may be nil. out must not alias s.
func (w *sensWork) jacTimes(jac *jacobian, s, add, out []float64) {
	for j := 0; j < w.ns; j++ {
		var aj []float64
		if add != nil {
			aj = w.col(add, j)
		}
		jac.mulVec(w.col(s, j), aj, w.col(out, j))
	}
}

// norm is the weighted RMS norm of e (ns×n) with the weights
// atol_i/Scale_j + rtol·max(|a|, |b|), and atol, rtol as given.
func (w *sensWork) norm(e, a, b []float64, atol []float64, rtol float64) float64 {
	var sum float64
	n := w.n
	for j := 0; j < w.ns; j++ {
		ws := w.wscale[j]
		for i := 0; i < n; i++ {
			k := j*n + i
			sc := atol[i]*ws + rtol*math.Max(math.Abs(a[k]), math.Abs(b[k]))
			r := e[k] / sc
			sum += r * r
		}
	}
	if w.ns == 0 || n == 0 {
		return 0
	}
	return math.Sqrt(sum / float64(w.ns*n))
}

// jump applies the Jump hook to the sensitivities in w.s.
func (w *sensWork) jump(t float64, fired []string, before, after []float64) {
	if w.jumpCall == nil {
		return
	}
	for j := range w.cols {
		w.cols[j] = w.col(w.s, j)
	}
	w.jumpCall(t, fired, before, after, w.cols)
}

// sensStepper is a stepper that integrates sensitivities. Its start reads
// the sensitivities at the start point from problem.sens.s.
type sensStepper interface {
	stepper
	// currentSens returns the sensitivities at the last accepted point
	// (ns×n); the caller must not modify them.
	currentSens() []float64
	// denseSens writes the sensitivities at t within the last accepted
	// step into out (ns×n).
	denseSens(t float64, out []float64)
}

// Sens returns ∂y/∂q_j at output i of a solve with sensitivities: a slice
// of length Dim into r.S.
func (r *Result) Sens(i, j int) []float64 {
	n := len(r.Y[i])
	return r.S[i][j*n : (j+1)*n]
}
