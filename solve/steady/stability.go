package steady

import (
	"cmp"
	"fmt"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// Class is the kind of a steady state, in words.
type Class string

// The classes. A state is marginal when its eigenvalue of largest real
// part lies on the imaginary axis within rounding (|Re λ| ≤ 1e-8 times the
// largest |λ|, and no eigenvalue is clearly to the right).
const (
	StableNode    Class = "stable node"    // every eigenvalue real and negative
	StableFocus   Class = "stable focus"   // every real part negative, some complex pair: damped oscillations
	UnstableNode  Class = "unstable node"  // every eigenvalue real and positive
	UnstableFocus Class = "unstable focus" // every real part positive, some complex pair: growing oscillations
	Saddle        Class = "saddle"         // real parts of both signs: unstable
	Marginal      Class = "marginal"       // the largest real part is zero: linear stability cannot decide
	NoFreedom     Class = "no free variables"
)

// Stability is the linear stability of a steady state: the eigenvalues of
// the reduced Jacobian and what they mean.
type Stability struct {
	// Eigenvalues of the Jacobian reduced by the conservation laws,
	// ordered by decreasing real part (then by imaginary part).
	Eigenvalues []complex128
	Class       Class
	// Stable is true when every eigenvalue has a negative real part.
	Stable bool
	// MaxReal is the largest real part (−Inf without free variables).
	MaxReal float64
	// SlowestTimeScale is 1/|Re λ| of the eigenvalue nearest the imaginary
	// axis: how long the slowest approach to (or escape from) the state
	// takes, in the system's time unit; +Inf when that real part is zero.
	SlowestTimeScale float64
	// Period is 2π/|Im λ| of the complex pair nearest the imaginary axis,
	// 0 when every eigenvalue is real.
	Period float64
}

// marginalTol is the relative size below which a real part counts as zero.
const marginalTol = 1e-8

// Classify computes and classifies the eigenvalues of the square matrix
// jr (nil or empty for a system without free variables).
func Classify(jr *mat.Dense) (Stability, error) {
	if jr == nil || jr.IsEmpty() {
		return Stability{Class: NoFreedom, Stable: true, MaxReal: math.Inf(-1), SlowestTimeScale: math.Inf(1)}, nil
	}
	var e mat.Eigen
	if !e.Factorize(jr, mat.EigenNone) {
		return Stability{}, fmt.Errorf("steady: the eigenvalue computation did not converge")
	}
	return classifyValues(e.Values(nil)), nil
}

// classifyValues sorts and classifies eigenvalues.
func classifyValues(ev []complex128) Stability {
	slices.SortFunc(ev, func(a, b complex128) int {
		if c := cmp.Compare(real(b), real(a)); c != 0 {
			return c
		}
		return cmp.Compare(imag(b), imag(a))
	})
	st := Stability{Eigenvalues: ev, MaxReal: math.Inf(-1)}
	scale := 0.0
	for _, v := range ev {
		scale = math.Max(scale, cmplx.Abs(v))
	}
	tol := marginalTol * scale
	var pos, neg, zero int
	complexPair := false
	nearest, nearestPair := math.Inf(1), math.Inf(1)
	for _, v := range ev {
		re, im := real(v), imag(v)
		st.MaxReal = math.Max(st.MaxReal, re)
		switch {
		case re > tol:
			pos++
		case re < -tol:
			neg++
		default:
			zero++
		}
		if math.Abs(im) > tol {
			complexPair = true
			if math.Abs(re) < nearestPair {
				nearestPair = math.Abs(re)
				st.Period = 2 * math.Pi / math.Abs(im)
			}
		}
		nearest = math.Min(nearest, math.Abs(re))
	}
	if nearest > 0 {
		st.SlowestTimeScale = 1 / nearest
	} else {
		st.SlowestTimeScale = math.Inf(1)
	}
	switch {
	case pos > 0 && neg > 0:
		st.Class = Saddle
	case pos > 0 && complexPair:
		st.Class = UnstableFocus
	case pos > 0:
		st.Class = UnstableNode
	case zero > 0:
		st.Class = Marginal
	case complexPair:
		st.Class = StableFocus
		st.Stable = true
	default:
		st.Class = StableNode
		st.Stable = true
	}
	return st
}

// Describe says what the class means for a reader who is not a
// mathematician.
func (s Stability) Describe() string {
	switch s.Class {
	case StableNode:
		return "stable: small disturbances die away without overshoot"
	case StableFocus:
		return fmt.Sprintf("stable: small disturbances die away in damped oscillations (period about %.4g)", s.Period)
	case UnstableNode:
		return "unstable: small disturbances grow in every direction"
	case UnstableFocus:
		return fmt.Sprintf("unstable: small disturbances grow into oscillations (period about %.4g)", s.Period)
	case Saddle:
		return "unstable (saddle): disturbances die away in some directions and grow in others"
	case Marginal:
		return "marginal: an eigenvalue sits on the imaginary axis, so the linearisation cannot decide stability (a fold or Hopf point, or an unnoticed conservation law)"
	case NoFreedom:
		return "every species is held or set by a conserved total: nothing can change"
	}
	return string(s.Class)
}
