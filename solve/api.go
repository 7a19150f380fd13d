// Package solve integrates systems of ordinary differential equations
// y' = f(t, y) that offer an exact Jacobian, with stiff and non-stiff methods,
// adaptive steps and dense output.
//
// The package is generic: it knows nothing of reaction networks or of the
// user interface. A reaction network compiled by package network satisfies
// System.
package solve

import (
	"context"
	"time"

	"gonum.org/v1/gonum/mat"
)

// System is an ODE system y' = f(t, y) with an exact Jacobian.
//
// RHS and Jacobian must not retain y, dydt or jac, and must not allocate in
// the hot path. A System is used by one goroutine at a time.
type System interface {
	// Dim is the number of state variables.
	Dim() int
	// RHS writes f(t, y) into dydt.
	RHS(t float64, y, dydt []float64)
	// Jacobian writes ∂f/∂y at (t, y) into jac, a Dim×Dim matrix.
	Jacobian(t float64, y []float64, jac *mat.Dense)
}

// AutonomousSystem is implemented by a System that can tell whether its f
// does not depend on t explicitly. Rosenbrock methods then skip the
// estimate of ∂f/∂t (one RHS evaluation per step). Reaction networks whose
// rate laws do not mention time report true.
type AutonomousSystem interface {
	System
	// Autonomous reports whether f(t, y) is independent of t.
	Autonomous() bool
}

// SparsePatternSystem is implemented by a System that can tell which
// entries of its Jacobian may be nonzero. For large systems with few
// nonzeros per row the implicit methods then factorize their iteration
// matrices with a SparseLU instead of the dense LU (see NewSolver).
// The pattern must not change while a Solver uses the system.
type SparsePatternSystem interface {
	System
	// JacobianPattern returns the pattern of ∂f/∂y in compressed sparse
	// row form: the columns of row i are colIdx[rowPtr[i]:rowPtr[i+1]].
	// Entries outside it must be zero. The caller does not modify the
	// slices.
	JacobianPattern() (rowPtr, colIdx []int)
}

// SparseJacobianSystem is a SparsePatternSystem that writes the values of
// its Jacobian on the pattern. When the driver chooses the sparse LU (see
// NewSolver) the implicit methods then keep J in that form and assemble
// their iteration matrices, real and complex, straight into the sparse
// factorization, so that no n×n array exists for large systems.
type SparseJacobianSystem interface {
	SparsePatternSystem
	// JacobianCSR writes ∂f/∂y at (t, y) into vals in the order of
	// JacobianPattern (duplicate positions are summed).
	JacobianCSR(t float64, y []float64, vals []float64)
}

// PartlyNonNegativeSystem is implemented by a System some of whose state
// variables may take either sign (a reaction network's parameters carried
// in its state, say): Settings.NonNegative keeps only the components for
// which NonNegativeComponents is true ≥ 0, and every component when it
// returns nil.
type PartlyNonNegativeSystem interface {
	System
	NonNegativeComponents() []bool
}

// Method names an integration method.
type Method string

// The methods. The zero value is Auto.
const (
	Auto       Method = ""           // choose by size and detected stiffness
	Rosenbrock Method = "rosenbrock" // RODAS4: L-stable Rosenbrock–Wanner, order 4(3)
	Radau      Method = "radau"      // Radau IIA, 3 stages, order 5
	BDF        Method = "bdf"        // variable-order (1–5) numerical differentiation formulas
	Explicit   Method = "explicit"   // Dormand–Prince 5(4)
)

// Settings control a solve. The zero value of every field means a sensible
// default.
type Settings struct {
	RTol float64 // relative tolerance; default 1e-6
	// ATol is the absolute tolerance for every component; default 1e-10
	// (times RTol's default scaling is not applied). ATolVec, when not nil,
	// gives one per component and overrides ATol.
	ATol    float64
	ATolVec []float64

	Method Method

	// Times are the output times, ascending, within [t0, tEnd]. When empty,
	// the solution is reported at every accepted step (and at t0).
	Times []float64

	MaxSteps    int     // default 500000
	InitialStep float64 // default: chosen automatically (Hairer's algorithm)
	MaxStep     float64 // default: |tEnd − t0|

	// NonNegative keeps every component ≥ 0 (Shampine et al. 2005).
	// Reaction networks turn it on.
	NonNegative bool

	// StopTimes are times, within (t0, tEnd), at which the integrator lands
	// exactly and restarts (for doses and switches). Before restarting, the
	// OnStop hook, when set, may change y in place.
	StopTimes []float64
	OnStop    func(t float64, y []float64)

	// Progress, when set, is called with the fraction of [t0, tEnd] done,
	// at most every ProgressEvery (default 50 ms) and once at the end.
	Progress      func(fraction float64)
	ProgressEvery time.Duration

	// LinearSolver, when set, makes the linear solver for the real n×n
	// iteration matrices of the implicit methods; nil means the built-in
	// dense LU. (Radau's complex system always uses the built-in solver.)
	LinearSolver func(n int) LinearSolver

	// Sens, when not nil, asks for forward sensitivities ∂y/∂q of the
	// state to the quantities it lists (see SensSettings); they are
	// reported in Result.S. They need a stiff method (Auto then picks
	// one).
	Sens *SensSettings
}

// Stats report the work a solve did.
type Stats struct {
	Steps         int // accepted steps
	Rejected      int // rejected steps (error test or convergence failure)
	RHSEvals      int // evaluations of f
	JacobianEvals int // evaluations of the Jacobian
	// ParamJacobianEvals counts evaluations of ∂f/∂q (sensitivities).
	ParamJacobianEvals int
	Factorizations     int // LU factorizations
	LinearSolves       int // solves with a factorized matrix
	NonNegFixes        int // steps where the non-negativity projection acted
	// FactorNonzeros is the number of entries of the largest sparse LU
	// factors the solve kept (SparseLU.FactorNonzeros), 0 when every
	// factorization was dense.
	FactorNonzeros int
	Methods        []Method      // methods used, in order of first use
	Choice         string        // for Auto: what was chosen and why
	Wall           time.Duration // wall time of the solve
}

// Result is the solution at the output times.
type Result struct {
	T []float64   // output times
	Y [][]float64 // Y[i] is the state at T[i]; rows share one backing array
	// Events lists the events of an EventSystem that fired, in order, and
	// Jumps the state just before and after each time they fired.
	Events []Firing
	Jumps  []Jump
	// S holds, for a solve with sensitivities, ∂y/∂q_j at T[i] in
	// S[i][j·Dim:(j+1)·Dim] (see Sens); rows share one backing array.
	S [][]float64
	Stats
}

// Solve integrates sys from (t0, y0) to tEnd. On failure it returns the
// partial result up to the last accepted step together with an error that
// says when and why. It never panics on bad numerics and honours ctx.
//
// Solve allocates its work space on every call; use a Solver to reuse it
// across many solves of systems of the same size.
func Solve(ctx context.Context, sys System, t0, tEnd float64, y0 []float64, s Settings) (*Result, error) {
	return NewSolver(sys, s).Solve(ctx, t0, tEnd, y0)
}
