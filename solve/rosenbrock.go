package solve

import (
	"fmt"
	"math"
)

// RODAS4 coefficients: Hairer & Wanner, Solving Ordinary Differential
// Equations II, 2nd ed. (Springer 1996), Section IV.7, as in their code
// rodas.f (coefficient set 1). The stages are formulated with the matrix
// M = I/(γh) − J, so the a and c coefficients below are the transformed
// ones of that code. The method has order 4, an embedded solution of order
// 3, is L-stable and stiffly accurate; its dense output has order 3.
const (
	rosGamma = 0.25

	rosC2 = 0.386
	rosC3 = 0.21
	rosC4 = 0.63

	rosD1 = 0.25
	rosD2 = -0.1043
	rosD3 = 0.1035
	rosD4 = -0.3620000000000023e-01

	rosA21 = 1.544
	rosA31 = 0.9466785280815826
	rosA32 = 0.2557011698983284
	rosA41 = 3.314825187068521
	rosA42 = 2.896124015972201
	rosA43 = 0.9986419139977817
	rosA51 = 1.221224509226641
	rosA52 = 6.019134481288629
	rosA53 = 12.53708332932087
	rosA54 = -0.6878860361058950

	rosC21 = -5.6688
	rosC31 = -2.430093356833875
	rosC32 = -0.2063599157091915
	rosC41 = -0.1073529058151375
	rosC42 = -9.594562251023355
	rosC43 = -20.47028614809616
	rosC51 = 7.496443313967647
	rosC52 = -10.24680431464352
	rosC53 = -33.99990352819905
	rosC54 = 11.70890893206160
	rosC61 = 8.083246795921522
	rosC62 = -7.981132988064893
	rosC63 = -31.52159432874371
	rosC64 = 16.31930543123136
	rosC65 = -6.058818238834054

	rosD21 = 10.12623508344586
	rosD22 = -7.487995877610167
	rosD23 = -34.80091861555747
	rosD24 = -7.992771707568823
	rosD25 = 1.025137723295662
	rosD31 = -0.6762803392801253
	rosD32 = 6.087714651680015
	rosD33 = 16.43084320892478
	rosD34 = 24.76722511418386
	rosD35 = -6.594389125716872
)

// Step-size control of rodas.f: safety 0.9, the step may shrink to 1/5 and
// grow to 6 times per step, never grow right after a rejection, and the
// predictive (Gustafsson 1994) controller.
//
// The estimate k6 is the error of the order-3 embedded solution, while the
// order-4 solution is kept, so global errors come out well below rtol
// (measured 0.01–0.2·rtol on HIRES and POLLU). On stiff components with
// h·|λ| between about 1 and 100 the estimate also grows more slowly than
// h^4 (order reduction, as in the Prothero–Robinson analysis of Hairer &
// Wanner 1996, IV.15; section from memory), so the step count
// rises faster than rtol^(−1/4). Both are properties of RODAS4 itself, not
// of this Go rendering, which follows rodas.f statement by statement.
const (
	rosSafe   = 0.9
	rosFacMin = 0.2
	rosFacMax = 6.0
)

// rosenbrock is the RODAS4 stepper.
type rosenbrock struct {
	p *problem
	n int

	t, h   float64 // current point and proposed step
	tPrev  float64 // start of the last accepted step
	hDone  float64 // size of the last accepted step
	y      []float64
	yOld   []float64 // state at tPrev (dense output)
	yNew   []float64
	f0     []float64 // f(t, y)
	ft     []float64 // ∂f/∂t (non-autonomous systems)
	work   []float64
	k      [6][]float64
	cont   [2][]float64 // dense-output coefficients
	errVec []float64

	jac      *jacobian
	lu       *iterMatrix // I/(γh) − J
	haveJac  bool        // J, f0 (and ft) are valid at (t, y)
	luH      float64     // step size the factorization belongs to, 0 if none
	hAcc     float64     // last accepted step and its error, for the predictive controller
	errAcc   float64
	accepted int
	rejected bool
	bad      int // first component whose f was non-finite in the last attempt, or -1

	sn *rosSens // sensitivities, or nil
}

// newRosenbrock allocates the work space of a RODAS4 stepper.
func newRosenbrock(p *problem) *rosenbrock {
	n := p.n
	r := &rosenbrock{p: p, n: n, jac: p.newJacobian(), lu: p.newIterMatrix()}
	vec := func() []float64 { return make([]float64, n) }
	r.y, r.yOld, r.yNew, r.f0, r.ft, r.work, r.errVec = vec(), vec(), vec(), vec(), vec(), vec(), vec()
	for i := range r.k {
		r.k[i] = vec()
	}
	r.cont[0], r.cont[1] = vec(), vec()
	if p.sens != nil {
		r.sn = newRosSens(r)
	}
	return r
}

func (r *rosenbrock) start(t float64, y []float64, h float64) error {
	r.t = t
	copy(r.y, y)
	copy(r.yOld, y)
	r.tPrev, r.hDone = t, 0
	r.haveJac, r.luH = false, 0
	r.accepted, r.rejected = 0, false
	if r.sn != nil {
		r.sn.start()
	}
	if err := r.prepare(); err != nil {
		return err
	}
	if h == 0 {
		h = r.p.initialStep(t, r.p.tEnd, r.y, r.f0, 4, r.yNew, r.work)
	}
	r.h = h
	return nil
}

// prepare evaluates f, J and (for non-autonomous systems) ∂f/∂t at (t, y).
func (r *rosenbrock) prepare() error {
	p := r.p
	p.rhs(r.t, r.y, r.f0)
	if i := nonFinite(r.f0); i >= 0 {
		return p.nonFiniteError(r.t, r.h, r.f0, i)
	}
	p.jac(r.t, r.y, r.jac)
	r.luH = 0 // the factorization belongs to the old Jacobian
	if !p.autonomous {
		// ∂f/∂t by a forward difference: one extra RHS evaluation per step.
		// A backward difference is tried when f is undefined just after t.
		dt := math.Sqrt(eps) * math.Max(1e-5, math.Abs(r.t))
		p.rhs(r.t+dt, r.y, r.ft)
		if nonFinite(r.ft) >= 0 {
			dt = -dt
			p.rhs(r.t+dt, r.y, r.ft)
			if i := nonFinite(r.ft); i >= 0 {
				return p.nonFiniteError(r.t, r.h, r.ft, i)
			}
		}
		for i := range r.ft {
			r.ft[i] = (r.ft[i] - r.f0[i]) / dt
		}
	}
	if r.sn != nil {
		r.sn.prepare()
	}
	r.haveJac = true
	return nil
}

// factor forms M = I/(γh) − J and factorizes it.
func (r *rosenbrock) factor(h float64) error {
	d := 1 / (rosGamma * h)
	r.p.stats.Factorizations++
	if err := r.lu.factor(d, -1, r.jac); err != nil {
		r.luH = 0
		return err
	}
	r.luH = h
	return nil
}

// check remembers the first non-finite component of a stage's f, so that
// a failure can name the component at fault rather than one that the
// linear solves contaminated.
func (r *rosenbrock) check(f []float64) {
	if r.bad < 0 {
		r.bad = nonFinite(f)
	}
}

// solve overwrites b with M⁻¹ b.
func (r *rosenbrock) solve(b []float64) {
	r.p.stats.LinearSolves++
	r.lu.solve(b)
}

// attempt computes a step of size h from (t, y) into yNew and returns the
// scaled error and whether the non-negativity projection acted. The
// factorization must belong to h.
func (r *rosenbrock) attempt(h float64) (errNorm float64, clipped bool) {
	p, t, y := r.p, r.t, r.y
	k1, k2, k3, k4, k5, k6 := r.k[0], r.k[1], r.k[2], r.k[3], r.k[4], r.k[5]
	w, yn := r.work, r.yNew
	auto := p.autonomous
	ft := r.ft

	// Stage 1.
	for i := range k1 {
		k1[i] = r.f0[i]
		if !auto {
			k1[i] += h * rosD1 * ft[i]
		}
	}
	r.solve(k1)
	// Stage 2.
	for i := range w {
		w[i] = y[i] + rosA21*k1[i]
	}
	p.rhs(t+rosC2*h, w, k2)
	r.check(k2)
	for i := range k2 {
		k2[i] += rosC21 / h * k1[i]
		if !auto {
			k2[i] += h * rosD2 * ft[i]
		}
	}
	r.solve(k2)
	// Stage 3.
	for i := range w {
		w[i] = y[i] + rosA31*k1[i] + rosA32*k2[i]
	}
	p.rhs(t+rosC3*h, w, k3)
	r.check(k3)
	for i := range k3 {
		k3[i] += (rosC31*k1[i] + rosC32*k2[i]) / h
		if !auto {
			k3[i] += h * rosD3 * ft[i]
		}
	}
	r.solve(k3)
	// Stage 4.
	for i := range w {
		w[i] = y[i] + rosA41*k1[i] + rosA42*k2[i] + rosA43*k3[i]
	}
	p.rhs(t+rosC4*h, w, k4)
	r.check(k4)
	for i := range k4 {
		k4[i] += (rosC41*k1[i] + rosC42*k2[i] + rosC43*k3[i]) / h
		if !auto {
			k4[i] += h * rosD4 * ft[i]
		}
	}
	r.solve(k4)
	// Stage 5.
	for i := range yn {
		yn[i] = y[i] + rosA51*k1[i] + rosA52*k2[i] + rosA53*k3[i] + rosA54*k4[i]
	}
	p.rhs(t+h, yn, k5)
	r.check(k5)
	for i := range k5 {
		k5[i] += (rosC51*k1[i] + rosC52*k2[i] + rosC53*k3[i] + rosC54*k4[i]) / h
	}
	r.solve(k5)
	// Embedded solution (order 3) and stage 6.
	for i := range yn {
		yn[i] += k5[i]
	}
	p.rhs(t+h, yn, k6)
	r.check(k6)
	for i := range k6 {
		k6[i] += (rosC61*k1[i] + rosC62*k2[i] + rosC63*k3[i] + rosC64*k4[i] + rosC65*k5[i]) / h
	}
	r.solve(k6)
	// Solution of order 4; k6 is the difference to the embedded one.
	e := r.errVec
	for i := range yn {
		yn[i] += k6[i]
		e[i] = k6[i]
	}
	clipped = p.nonneg && p.project(yn, e)
	return p.errNorm(e, y, yn), clipped
}

func (r *rosenbrock) step(tLimit float64) error {
	p := r.p
	if !r.haveJac {
		if err := r.prepare(); err != nil {
			return err
		}
	}
	singular, bad, rejectsInRow := 0, -1, 0
	for {
		h := math.Min(r.h, p.maxStep)
		hNatural := h
		last := false
		if r.t+1.0001*h >= tLimit {
			h, last = tLimit-r.t, true
		}
		// The floor applies to the step the controller wants; the landing
		// step may be shorter still (tLimit a few ulps ahead).
		if hNatural < minStep(r.t) || !(h > 0) || rejectsInRow > 100 {
			return p.tooSmallError(r.t, h, bad)
		}
		if h != r.luH {
			if err := r.factor(h); err != nil {
				singular++
				if singular > 5 {
					return &StepError{T: r.t, H: h, Component: -1,
						Reason: fmt.Sprintf("the matrix I/(γh) − J stayed singular while the step was halved %d times; the Jacobian may contain NaN or the system may be singular", singular)}
				}
				r.h = h / 2
				continue
			}
		}
		r.bad = -1
		errNorm, clipped := r.attempt(h)
		if math.IsNaN(errNorm) || math.IsInf(errNorm, 0) {
			// Non-finite trial: shrink hard and remember which component.
			if r.bad >= 0 {
				bad = r.bad
			} else if i := nonFinite(r.yNew); i >= 0 {
				bad = i
			}
			p.stats.Rejected++
			rejectsInRow++
			r.rejected = true
			r.h = h * rosFacMin
			continue
		}
		if r.sn != nil && errNorm <= 1 {
			errS, ok := r.sn.attempt(h)
			switch {
			case !ok:
				p.stats.Rejected++
				rejectsInRow++
				r.rejected = true
				r.h = h * rosFacMin
				continue
			case p.sens.errCtl:
				errNorm = math.Max(errNorm, errS)
			}
		}
		fac := math.Max(1/rosFacMax, math.Min(1/rosFacMin, math.Pow(errNorm, 0.25)/rosSafe))
		hNew := h / fac
		if errNorm > 1 {
			p.stats.Rejected++
			rejectsInRow++
			r.rejected = true
			r.h = hNew
			continue
		}
		// Accepted.
		if r.accepted > 0 {
			// Predictive controller (Gustafsson 1994) as in rodas.f.
			facGus := (r.hAcc / h) * math.Pow(errNorm*errNorm/r.errAcc, 0.25) / rosSafe
			facGus = math.Max(1/rosFacMax, math.Min(1/rosFacMin, facGus))
			fac = math.Max(fac, facGus)
			hNew = h / fac
		}
		r.hAcc = h
		r.errAcc = math.Max(1e-2, errNorm)
		if r.rejected {
			hNew = math.Min(hNew, h)
		}
		r.rejected = false
		r.accepted++
		if clipped {
			p.stats.NonNegFixes++
		}
		k := r.k
		c2, c3 := r.cont[0], r.cont[1]
		for i := range c2 {
			c2[i] = rosD21*k[0][i] + rosD22*k[1][i] + rosD23*k[2][i] + rosD24*k[3][i] + rosD25*k[4][i]
			c3[i] = rosD31*k[0][i] + rosD32*k[1][i] + rosD33*k[2][i] + rosD34*k[3][i] + rosD35*k[4][i]
		}
		r.yOld, r.y, r.yNew = r.y, r.yNew, r.yOld
		if r.sn != nil {
			r.sn.accept()
		}
		r.tPrev, r.hDone = r.t, h
		if last {
			r.t = tLimit
		} else {
			r.t += h
		}
		r.h = hNew
		r.haveJac = false
		return nil
	}
}

func (r *rosenbrock) current() (float64, []float64) { return r.t, r.y }

// dense evaluates the order-3 continuous solution of rodas.f.
func (r *rosenbrock) dense(t float64, out []float64) {
	if r.hDone == 0 {
		copy(out, r.y)
		return
	}
	s := (t - r.tPrev) / r.hDone
	s1 := 1 - s
	c2, c3 := r.cont[0], r.cont[1]
	for i := range out {
		v := r.yOld[i]*s1 + s*(r.y[i]+s1*(c2[i]+s*c3[i]))
		if r.p.nonneg && v < 0 && !r.p.isSigned(i) {
			v = 0
		}
		out[i] = v
	}
}

func (r *rosenbrock) stepSize() float64 { return r.h }
