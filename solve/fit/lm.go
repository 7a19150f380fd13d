// Package fit estimates parameters by nonlinear least squares: a
// Levenberg–Marquardt method with bounds in Moré's trust-region form,
// optionally on the logarithm of positive parameters, and the
// uncertainty of the estimates from the Fisher information. It is
// generic: the residuals and their Jacobian come from a function.
package fit

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Func writes the residuals r(x) (length m) into r and, when jac is not
// nil, their Jacobian ∂r/∂x (m×n) into jac. An error means x cannot be
// evaluated (a solve failed); the minimizer then shortens its step.
type Func func(ctx context.Context, x, r []float64, jac *mat.Dense) error

// Settings control Minimize. The zero value of every field means a
// sensible default.
type Settings struct {
	// Lower and Upper bound each parameter (nil: unbounded; ±Inf allowed).
	Lower, Upper []float64
	// Log, when Log[j], makes the minimizer work on ln x_j (x_j and its
	// lower bound must be positive).
	Log []bool
	// MaxIterations bounds the number of Jacobian evaluations; default 200.
	MaxIterations int
	// FTol: stop when the actual and predicted relative reductions of
	// the sum of squares are both below it; default 1e-12.
	FTol float64
	// XTol: stop when the trust region, relative to the scaled
	// parameters, falls below it; default 1e-10.
	XTol float64
	// GTol: stop when the cosine between the residuals and every free
	// column of the Jacobian is below it; default 1e-10.
	GTol float64
	// Radius is the initial trust region relative to the scaled
	// parameters (MINPACK's factor); default 100.
	Radius float64
	// Progress, when set, is called after every accepted step with the
	// iteration count and the cost ½‖r‖².
	Progress func(iteration int, cost float64)
}

// Result is the outcome of Minimize.
type Result struct {
	X    []float64 // the estimate
	R    []float64 // residuals at X
	J    *mat.Dense
	Cost float64 // ½‖r‖² at X
	// Iterations counts accepted steps, Evals evaluations of the
	// residuals and JacEvals of the Jacobian.
	Iterations, Evals, JacEvals int
	Converged                   bool
	// Reason says why the iteration stopped, in words.
	Reason string
	// AtBound[j] is −1 or +1 when x_j ends on its lower or upper bound.
	AtBound []int
}

// ErrNoStart is returned when the starting point cannot be evaluated.
var ErrNoStart = errors.New("fit: the residuals cannot be evaluated at the starting point")

// Minimize minimizes ½‖r(x)‖² from x0 within the bounds, by the
// Levenberg–Marquardt method in the trust-region form of Moré (in
// Numerical Analysis, ed. Watson, Springer LNM 630, 1978; as in MINPACK's
// lmder): the step solves
// min ‖r + J p‖ subject to ‖D p‖ ≤ Δ, D the Jacobian's column norms (the
// largest seen), Δ adapted from the ratio of actual to predicted
// reduction. The trust-region subproblem is solved through the singular
// value decomposition of J D⁻¹, with λ from the secular equation by
// Newton's method (Moré 1978, section 5), which copes with a rank-deficient
// Jacobian. Bounds: parameters on a bound whose gradient points outward
// are held, and the step is projected onto the box.
func Minimize(ctx context.Context, f Func, m int, x0 []float64, s Settings) (*Result, error) {
	n := len(x0)
	if n == 0 {
		return nil, fmt.Errorf("fit: no parameters to estimate")
	}
	if m < 1 {
		return nil, fmt.Errorf("fit: no residuals")
	}
	lo, hi := make([]float64, n), make([]float64, n)
	logs := make([]bool, n)
	for j := range lo {
		lo[j], hi[j] = math.Inf(-1), math.Inf(1)
		if s.Lower != nil {
			lo[j] = s.Lower[j]
		}
		if s.Upper != nil {
			hi[j] = s.Upper[j]
		}
		if s.Log != nil {
			logs[j] = s.Log[j]
		}
		if !(lo[j] <= hi[j]) {
			return nil, fmt.Errorf("fit: parameter %d: lower bound %g is above upper bound %g", j, lo[j], hi[j])
		}
		if logs[j] {
			if !(x0[j] > 0) || lo[j] < 0 {
				return nil, fmt.Errorf("fit: parameter %d is estimated on a log scale, so its start (%g) and lower bound (%g) must be positive", j, x0[j], lo[j])
			}
			lo[j] = math.Log(math.Max(lo[j], 0))
			hi[j] = math.Log(hi[j])
		}
	}
	maxIt := s.MaxIterations
	if maxIt <= 0 {
		maxIt = 200
	}
	ftol, xtol, gtol, factor := s.FTol, s.XTol, s.GTol, s.Radius
	if ftol <= 0 {
		ftol = 1e-12
	}
	if xtol <= 0 {
		xtol = 1e-10
	}
	if gtol <= 0 {
		gtol = 1e-10
	}
	if factor <= 0 {
		factor = 100
	}
	w := newWork(m, n)
	res := &Result{}
	toX := func(z, x []float64) {
		for j, v := range z {
			if logs[j] {
				x[j] = math.Exp(v)
			} else {
				x[j] = v
			}
		}
	}
	// eval evaluates r (and the Jacobian in z when jz is not nil) at z.
	x := make([]float64, n)
	eval := func(z, r []float64, jz *mat.Dense) error {
		toX(z, x)
		res.Evals++
		var jx *mat.Dense
		if jz != nil {
			res.JacEvals++
			jx = w.jx
		}
		if err := f(ctx, x, r, jx); err != nil {
			return err
		}
		for _, v := range r {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("fit: a residual is %v", v)
			}
		}
		if jz != nil {
			for i := 0; i < m; i++ {
				for j := 0; j < n; j++ {
					v := jx.At(i, j)
					if logs[j] {
						v *= x[j]
					}
					if math.IsNaN(v) || math.IsInf(v, 0) {
						return fmt.Errorf("fit: a derivative is %v", v)
					}
					jz.Set(i, j, v)
				}
			}
		}
		return nil
	}
	z := make([]float64, n)
	for j, v := range x0 {
		if logs[j] {
			v = math.Log(v)
		}
		z[j] = math.Min(math.Max(v, lo[j]), hi[j])
	}
	r := make([]float64, m)
	if err := eval(z, r, w.jz); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrNoStart, err)
	}
	fnorm := norm(r)
	d := make([]float64, n)
	for j := range d {
		d[j] = colNorm(w.jz, j)
		if d[j] == 0 {
			d[j] = 1
		}
	}
	delta := factor * scaledNorm(d, z)
	if delta == 0 {
		delta = factor
	}
	rt := make([]float64, m)
	zt := make([]float64, n)
	p := make([]float64, n)
	g := make([]float64, n)
	free := make([]bool, n)
	first := true
	stop := func(reason string, ok bool) (*Result, error) {
		toX(z, x)
		res.X = append([]float64(nil), x...)
		res.R = append([]float64(nil), r...)
		res.Cost = 0.5 * fnorm * fnorm
		res.Converged, res.Reason = ok, reason
		res.J = mat.NewDense(m, n, nil)
		res.J.Copy(w.jx)
		res.AtBound = make([]int, n)
		for j := range z {
			switch {
			case s.Lower != nil && x[j] <= s.Lower[j]:
				res.AtBound[j] = -1
			case s.Upper != nil && x[j] >= s.Upper[j]:
				res.AtBound[j] = 1
			}
		}
		return res, nil
	}
	// polish takes Gauss–Newton steps (λ = 0) from a point where the trust
	// region has shrunk: when the residuals carry rounding noise (from an
	// ODE solve, say) the actual reductions near the minimum drown in it
	// and the trust region stalls short of the minimum of a flat valley,
	// while the Gauss–Newton step, computed from the residuals and an
	// accurate Jacobian, still points at it. A step is kept when the sum of
	// squares does not grow beyond a relative 1e-9, the noise level, and
	// the polish stops when the steps no longer shrink.
	polish := func() {
		prev := math.Inf(1)
		for k := 0; k < 5; k++ {
			for j := 0; j < n; j++ {
				free[j] = !((z[j] <= lo[j] && g[j] > 0) || (z[j] >= hi[j] && g[j] < 0))
			}
			w.prepare(d, free)
			w.step(r, math.Inf(1), p)
			for j := range zt {
				zt[j] = math.Min(math.Max(z[j]+p[j], lo[j]), hi[j])
				p[j] = zt[j] - z[j]
			}
			pn := scaledNorm(d, p)
			if pn == 0 || !(pn < 0.5*prev) {
				return
			}
			prev = pn
			if err := eval(zt, rt, nil); err != nil {
				return
			}
			fn := norm(rt)
			if fn > fnorm*(1+1e-9) {
				return
			}
			save := append([]float64(nil), z...)
			copy(z, zt)
			if err := eval(z, rt, w.jz); err != nil {
				copy(z, save)
				_ = eval(z, r, w.jz)
				return
			}
			copy(r, rt)
			fnorm = fn
			for j := 0; j < n; j++ {
				var v float64
				for i := 0; i < m; i++ {
					v += w.jz.At(i, j) * r[i]
				}
				g[j] = v
			}
		}
	}
	for it := 0; ; {
		if err := ctx.Err(); err != nil {
			r, e := stop("cancelled", false)
			return r, errors.Join(e, err)
		}
		// Gradient and free set.
		for j := 0; j < n; j++ {
			var v float64
			for i := 0; i < m; i++ {
				v += w.jz.At(i, j) * r[i]
			}
			g[j] = v
			free[j] = !((z[j] <= lo[j] && v > 0) || (z[j] >= hi[j] && v < 0))
			d[j] = math.Max(d[j], colNorm(w.jz, j))
		}
		// Gradient test (MINPACK's gtol), over the free parameters.
		if fnorm == 0 {
			return stop("the residuals are zero", true)
		}
		gmax := 0.0
		nfree := 0
		for j := 0; j < n; j++ {
			if !free[j] {
				continue
			}
			nfree++
			if c := colNorm(w.jz, j); c > 0 {
				gmax = math.Max(gmax, math.Abs(g[j])/(fnorm*c))
			}
		}
		if nfree == 0 {
			return stop("every parameter is held at a bound", true)
		}
		if gmax <= gtol {
			return stop("the gradient vanishes (the residuals are orthogonal to the Jacobian's columns)", true)
		}
		if it >= maxIt {
			return stop(fmt.Sprintf("no convergence within %d iterations", maxIt), false)
		}
		w.prepare(d, free)
		// Inner loop: shrink the trust region until a step is accepted.
		for {
			lambda := w.step(r, delta, p)
			for j := range zt {
				zt[j] = math.Min(math.Max(z[j]+p[j], lo[j]), hi[j])
				p[j] = zt[j] - z[j]
			}
			pnorm := scaledNorm(d, p)
			if first {
				delta = math.Min(delta, pnorm)
				first = false
			}
			// Predicted reduction of the linear model, for the
			// projected step.
			var lin float64
			for i := 0; i < m; i++ {
				v := r[i]
				for j := 0; j < n; j++ {
					v += w.jz.At(i, j) * p[j]
				}
				lin += v * v
			}
			prered := 1 - lin/(fnorm*fnorm)
			actred := -1.0
			fnorm1 := math.Inf(1)
			if err := eval(zt, rt, nil); err == nil {
				fnorm1 = norm(rt)
				if 0.1*fnorm1 < fnorm {
					actred = 1 - (fnorm1/fnorm)*(fnorm1/fnorm)
				}
			}
			ratio := 0.0
			if prered > 0 {
				ratio = actred / prered
			}
			switch {
			case ratio <= 0.25:
				temp := 0.5
				if actred < 0 || fnorm1 > 10*fnorm {
					temp = 0.1
				}
				delta = temp * math.Min(delta, pnorm/0.1)
			case lambda == 0 || ratio >= 0.75:
				delta = pnorm / 0.5
			}
			if ratio >= 1e-4 {
				copy(z, zt)
				copy(r, rt)
				fnorm = fnorm1
				if err := eval(z, r, w.jz); err != nil {
					return stop(fmt.Sprintf("the Jacobian cannot be evaluated: %v", err), false)
				}
				it++
				res.Iterations = it
				if s.Progress != nil {
					s.Progress(it, 0.5*fnorm*fnorm)
				}
			}
			xnorm := scaledNorm(d, z)
			switch {
			case math.Abs(actred) <= ftol && prered <= ftol && 0.5*ratio <= 1:
				polish()
				return stop("the relative reduction of the sum of squares is below ftol", true)
			case delta <= xtol*xnorm:
				polish()
				return stop("the relative change of the parameters is below xtol", true)
			case delta <= 10*eps*math.Max(xnorm, 1):
				return stop("the trust region shrank to rounding level; no better point is near", true)
			}
			if ratio >= 1e-4 {
				break
			}
			if err := ctx.Err(); err != nil {
				r, e := stop("cancelled", false)
				return r, errors.Join(e, err)
			}
		}
	}
}

const eps = 0x1p-52

func norm(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x * x
	}
	return math.Sqrt(s)
}

func scaledNorm(d, v []float64) float64 {
	var s float64
	for j, x := range v {
		s += (d[j] * x) * (d[j] * x)
	}
	return math.Sqrt(s)
}

func colNorm(a *mat.Dense, j int) float64 {
	r, _ := a.Dims()
	var s float64
	for i := 0; i < r; i++ {
		v := a.At(i, j)
		s += v * v
	}
	return math.Sqrt(s)
}

// work holds the trust-region subproblem's factorization.
type work struct {
	m, n   int
	jz, jx *mat.Dense
	b      *mat.Dense // J D⁻¹ over the free columns
	svd    mat.SVD
	u, v   mat.Dense
	sv     []float64
	c      []float64 // Uᵀ r
	d      []float64
	free   []int
}

func newWork(m, n int) *work {
	return &work{m: m, n: n, jz: mat.NewDense(m, n, nil), jx: mat.NewDense(m, n, nil)}
}

// prepare factorizes J D⁻¹ over the free columns.
func (w *work) prepare(d []float64, free []bool) {
	w.free = w.free[:0]
	for j, f := range free {
		if f {
			w.free = append(w.free, j)
		}
	}
	nf := len(w.free)
	w.b = mat.NewDense(w.m, nf, nil)
	for k, j := range w.free {
		for i := 0; i < w.m; i++ {
			w.b.Set(i, k, w.jz.At(i, j)/d[j])
		}
	}
	w.d = d
	if !w.svd.Factorize(w.b, mat.SVDThin) {
		w.sv = nil
		return
	}
	w.sv = w.svd.Values(nil)
	w.u.Reset()
	w.v.Reset()
	w.svd.UTo(&w.u)
	w.svd.VTo(&w.v)
}

// step writes the trust-region step for radius delta into p (zero for
// held parameters) and returns the Levenberg–Marquardt parameter λ.
func (w *work) step(r []float64, delta float64, p []float64) float64 {
	clear(p)
	nf := len(w.free)
	if w.sv == nil || nf == 0 {
		return 0
	}
	k := len(w.sv)
	if cap(w.c) < k {
		w.c = make([]float64, k)
	}
	c := w.c[:k]
	for i := 0; i < k; i++ {
		var v float64
		for row := 0; row < w.m; row++ {
			v += w.u.At(row, i) * r[row]
		}
		c[i] = v
	}
	smax := w.sv[0]
	cut := smax * eps * float64(max(w.m, nf))
	// ‖q(λ)‖ for q = −V diag(s/(s²+λ)) c, the scaled step D p.
	qnorm := func(lambda float64) (nrm, dn float64) {
		var s2, ds float64
		for i, s := range w.sv {
			if s <= cut {
				continue
			}
			den := s*s + lambda
			t := c[i] * s / den
			s2 += t * t
			ds += -2 * t * t / den
		}
		nrm = math.Sqrt(s2)
		if nrm > 0 {
			dn = ds / (2 * nrm)
		}
		return nrm, dn
	}
	lambda := 0.0
	if q0, _ := qnorm(0); q0 > 1.1*delta {
		// Newton's method on 1/‖q(λ)‖ − 1/Δ (Moré 1978, 5.2), safeguarded
		// in [lo, hi].
		var gnorm float64
		for i, s := range w.sv {
			gnorm += (s * c[i]) * (s * c[i])
		}
		hi := math.Sqrt(gnorm) / delta
		lo := 0.0
		lambda = math.Max(1e-3*hi, 0)
		for iter := 0; iter < 30; iter++ {
			if !(lambda > lo && lambda < hi) {
				lambda = math.Max(0.001*hi, math.Sqrt(lo*hi))
			}
			q, dq := qnorm(lambda)
			phi := q - delta
			if math.Abs(phi) <= 0.1*delta {
				break
			}
			if phi > 0 {
				lo = math.Max(lo, lambda)
			} else {
				hi = math.Min(hi, lambda)
			}
			if dq == 0 {
				break
			}
			// Newton step on 1/q: λ += (q/Δ − 1)·q/(−dq)... in Moré's form
			lambda += (phi / delta) * q / (-dq)
		}
	}
	for k2, j := range w.free {
		var v float64
		for i, s := range w.sv {
			if s <= cut {
				continue
			}
			v += w.v.At(k2, i) * c[i] * s / (s*s + lambda)
		}
		p[j] = -v / w.d[j]
	}
	return lambda
}
