package solve

import "math"

// Radau IIA with three stages (order 5) after Hairer & Wanner, Solving
// Ordinary Differential Equations II, 2nd ed., 1996, section IV.8, and the
// structure of their code radau5.f: simplified Newton iterations on the
// transformed stage equations (one real and one complex linear system),
// Newton convergence-rate control, Jacobian and factorization reuse, the
// filtered embedded error estimate, Gustafsson's predictive step-size
// control and dense output from the collocation polynomial.

// Method coefficients (Hairer & Wanner 1996, IV.8; radau5.f).
var (
	radSq6  = math.Sqrt(6)
	radC1   = (4 - radSq6) / 10
	radC2   = (4 + radSq6) / 10
	radC1M1 = radC1 - 1
	radC2M1 = radC2 - 1
	radC1C2 = radC1 - radC2
	radDD1  = -(13 + 7*radSq6) / 3
	radDD2  = (-13 + 7*radSq6) / 3
	radDD3  = -1.0 / 3

	// Eigenvalues of the inverse of the Radau IIA matrix: one real (radU1)
	// and a complex pair (radAlpha ± i radBeta).
	radU1, radAlpha, radBeta = radEigen()
)

// The transformation T to the real/complex block form and its inverse.
const (
	radT11 = 9.1232394870892942792e-02
	radT12 = -0.14125529502095420843
	radT13 = -3.0029194105147424492e-02
	radT21 = 0.24171793270710701896
	radT22 = 0.20412935229379993199
	radT23 = 0.38294211275726193779
	radT31 = 0.96604818261509293619

	radTI11 = 4.3255798900631553510
	radTI12 = 0.33919925181580986954
	radTI13 = 0.54177053993587487119
	radTI21 = -4.1787185915519047273
	radTI22 = -0.32768282076106238708
	radTI23 = 0.47662355450055045196
	radTI31 = -0.50287263494578687595
	radTI32 = 2.5719269498556054292
	radTI33 = -0.59603920482822492497
)

func radEigen() (u1, alpha, beta float64) {
	c81, c9 := math.Cbrt(81), math.Cbrt(9)
	u1 = (6 + c81 - c9) / 30
	alpha = (12 - c81 + c9) / 60
	beta = (c81 + c9) * math.Sqrt(3) / 60
	cno := alpha*alpha + beta*beta
	return 1 / u1, alpha / cno, beta / cno
}

// Step-control constants (radau5.f defaults).
const (
	radNit    = 7     // Newton iterations per step
	radThet   = 0.001 // keep the Jacobian when the contraction rate is below this
	radSafe   = 0.9   // safety factor
	radFacL   = 5.0   // step may shrink at most by 1/radFacL
	radFacR   = 0.125 // step may grow at most by 1/radFacR
	radQuot1  = 1.0   // keep h (and the factorization) when hnew/h is in
	radQuot2  = 1.2   // [radQuot1, radQuot2]
	radMaxRej = 100   // consecutive failed attempts before giving up
)

// radau is the Radau IIA stepper. All work space is allocated by newRadau.
type radau struct {
	p *problem
	n int

	t, h     float64 // current time; step proposed for the next attempt
	tOld     float64 // start of the last accepted step
	hOld     float64 // size of the last accepted step (0 before the first)
	y, f0    []float64
	scal     []float64 // error weights for the current step
	rtol     float64   // internal tolerances (see newRadau)
	atol     []float64
	fnewt    float64 // Newton stopping tolerance
	z1, z2   []float64
	z3       []float64
	w1, w2   []float64 // transformed stage values
	w3       []float64
	tmp, ynw []float64
	dc1, dc2 []float64 // dense output: y(tCur + s·hOld) = y + s(dc1 + (s−c2+1)(dc2 + (s−c1+1)dc3))
	dc3      []float64

	jac      *jacobian
	lu       *iterMatrix  // γ/h·I − J
	clu      *cIterMatrix // (α+iβ)/h·I − J
	hFact    float64      // h of the current factorizations; 0 when none
	jacFresh bool         // the Jacobian was evaluated at (t, y)
	needJac  bool         // evaluate the Jacobian before the next attempt

	theta, faccon   float64
	dynold, thqold  float64
	first, reject   bool
	nAccept         int
	hAcc, errAcc    float64
	nSing           int
	badComp         int // component that became non-finite in the last failure, or -1
	lastNewtonIters int

	sn *radauSens // sensitivities, or nil
}

// newRadau returns a Radau IIA stepper for p.
//
// Like radau5.f it works internally with the tolerances
// rtol' = 0.1·rtol^(2/3), atol' = atol·rtol'/rtol: its embedded estimate is
// of order 3 while the solution is of order 5, and this mapping makes the
// achieved error track the requested tolerance (measured on HIRES and POLLU
// in radau_test.go). Stats.Factorizations counts the real and the complex
// factorization separately, two for each new iteration matrix.
func newRadau(p *problem) stepper {
	n := p.n
	r := &radau{p: p, n: n}
	vec := func() []float64 { return make([]float64, n) }
	r.y, r.f0, r.scal, r.atol = vec(), vec(), vec(), vec()
	r.z1, r.z2, r.z3 = vec(), vec(), vec()
	r.w1, r.w2, r.w3 = vec(), vec(), vec()
	r.tmp, r.ynw = vec(), vec()
	r.dc1, r.dc2, r.dc3 = vec(), vec(), vec()
	r.jac = p.newJacobian()
	r.lu = p.newIterMatrix()
	r.clu = p.newCIterMatrix()

	r.rtol = 0.1 * math.Pow(p.rtol, 2.0/3)
	for i := range r.atol {
		r.atol[i] = p.atol[i] * r.rtol / p.rtol
	}
	const uround = 1.1102230246251565e-16
	r.fnewt = math.Max(10*uround/r.rtol, math.Min(0.03, math.Sqrt(r.rtol)))
	if p.sens != nil {
		r.sn = newRadauSens(r)
	}
	return r
}

func (r *radau) start(t float64, y []float64, h float64) error {
	copy(r.y, y)
	r.t, r.tOld, r.hOld = t, t, 0
	if i := nonFinite(r.y); i >= 0 {
		return r.p.nonFiniteError(t, h, r.y, i)
	}
	r.p.rhs(t, r.y, r.f0)
	if i := nonFinite(r.f0); i >= 0 {
		return r.p.nonFiniteError(t, h, r.f0, i)
	}
	if h <= 0 {
		// The solution is of order 5, the step control of order 3.
		tEnd := r.p.tEnd
		if !(tEnd > t) {
			tEnd = math.Inf(1)
		}
		h = r.p.initialStep(t, tEnd, r.y, r.f0, 3, r.tmp, r.ynw)
	}
	if r.p.maxStep > 0 {
		h = math.Min(h, r.p.maxStep)
	}
	r.h = h
	r.first, r.reject = true, false
	r.nAccept, r.nSing = 0, 0
	r.needJac, r.jacFresh, r.hFact = true, false, 0
	r.faccon, r.theta = 1, 1
	r.badComp = -1
	if r.sn != nil {
		r.sn.start(t, r.y)
	}
	return nil
}

func (r *radau) current() (float64, []float64) { return r.t, r.y }

func (r *radau) stepSize() float64 { return r.h }

// dense evaluates the collocation polynomial of the last accepted step.
func (r *radau) dense(t float64, out []float64) {
	if r.hOld == 0 {
		copy(out, r.y)
		return
	}
	s := (t - r.t) / r.hOld
	for i := range out {
		out[i] = r.y[i] + s*(r.dc1[i]+(s-radC2M1)*(r.dc2[i]+(s-radC1M1)*r.dc3[i]))
	}
	if r.p.nonneg {
		for i, v := range out {
			if v < 0 && !r.p.isSigned(i) {
				out[i] = 0
			}
		}
	}
}

// factor forms and factorizes both iteration matrices for step h.
func (r *radau) factor(h float64) error {
	fac1, alphn, betan := radU1/h, radAlpha/h, radBeta/h
	r.hFact = 0
	r.p.stats.Factorizations += 2
	if err := r.lu.factor(fac1, -1, r.jac); err != nil {
		return err
	}
	if err := r.clu.factor(alphn, betan, -1, r.jac); err != nil {
		return err
	}
	r.hFact = h
	return nil
}

// newton solves the stage equations for step h by simplified Newton
// iterations. It returns whether they converged and, when not, the factor by
// which to shrink h.
func (r *radau) newton(h float64) (ok bool, shrink float64) {
	n := r.n
	const uround = 1.1102230246251565e-16
	if r.first || r.hOld == 0 {
		for i := 0; i < n; i++ {
			r.z1[i], r.z2[i], r.z3[i] = 0, 0, 0
			r.w1[i], r.w2[i], r.w3[i] = 0, 0, 0
		}
	} else {
		// Extrapolate the collocation polynomial of the previous step.
		c3q := h / r.hOld
		c1q, c2q := radC1*c3q, radC2*c3q
		for i := 0; i < n; i++ {
			ak1, ak2, ak3 := r.dc1[i], r.dc2[i], r.dc3[i]
			z1 := c1q * (ak1 + (c1q-radC2M1)*(ak2+(c1q-radC1M1)*ak3))
			z2 := c2q * (ak1 + (c2q-radC2M1)*(ak2+(c2q-radC1M1)*ak3))
			z3 := c3q * (ak1 + (c3q-radC2M1)*(ak2+(c3q-radC1M1)*ak3))
			r.z1[i], r.z2[i], r.z3[i] = z1, z2, z3
			r.w1[i] = radTI11*z1 + radTI12*z2 + radTI13*z3
			r.w2[i] = radTI21*z1 + radTI22*z2 + radTI23*z3
			r.w3[i] = radTI31*z1 + radTI32*z2 + radTI33*z3
		}
	}
	r.faccon = math.Pow(math.Max(r.faccon, uround), 0.8)
	r.theta = radThet
	fac1, alphn, betan := radU1/h, radAlpha/h, radBeta/h
	for newt := 1; ; newt++ {
		if newt > radNit {
			return false, 0.5
		}
		// Stage right-hand sides.
		for k, c := range [3]float64{radC1, radC2, 1} {
			z := r.z1
			switch k {
			case 1:
				z = r.z2
			case 2:
				z = r.z3
			}
			for i := range r.tmp {
				r.tmp[i] = r.y[i] + z[i]
			}
			r.p.rhs(r.t+c*h, r.tmp, z)
			if i := nonFinite(z); i >= 0 {
				r.badComp = i
				return false, 0.5
			}
		}
		// Transform and solve.
		for i := 0; i < n; i++ {
			a1, a2, a3 := r.z1[i], r.z2[i], r.z3[i]
			b1 := radTI11*a1 + radTI12*a2 + radTI13*a3
			b2 := radTI21*a1 + radTI22*a2 + radTI23*a3
			b3 := radTI31*a1 + radTI32*a2 + radTI33*a3
			s2, s3 := -r.w2[i], -r.w3[i]
			r.z1[i] = b1 - r.w1[i]*fac1
			r.z2[i] = b2 + s2*alphn - s3*betan
			r.z3[i] = b3 + s3*alphn + s2*betan
		}
		r.lu.solve(r.z1)
		r.clu.solve(r.z2, r.z3)
		r.p.stats.LinearSolves += 2
		var dyno float64
		for i := 0; i < n; i++ {
			d := 1 / r.scal[i]
			a, b, c := r.z1[i]*d, r.z2[i]*d, r.z3[i]*d
			dyno += a*a + b*b + c*c
		}
		dyno = math.Sqrt(dyno / float64(3*n))
		if math.IsNaN(dyno) || math.IsInf(dyno, 0) {
			return false, 0.5
		}
		r.lastNewtonIters = newt
		if newt > 1 && newt < radNit {
			thq := dyno / r.dynold
			if newt == 2 {
				r.theta = thq
			} else {
				r.theta = math.Sqrt(thq * r.thqold)
			}
			r.thqold = thq
			if r.theta >= 0.99 {
				return false, 0.5
			}
			r.faccon = r.theta / (1 - r.theta)
			dyth := r.faccon * dyno * math.Pow(r.theta, float64(radNit-1-newt)) / r.fnewt
			if dyth >= 1 {
				qnewt := math.Max(1e-4, math.Min(20, dyth))
				return false, 0.8 * math.Pow(qnewt, -1/(4+float64(radNit-1-newt)))
			}
		}
		r.dynold = math.Max(dyno, uround)
		for i := 0; i < n; i++ {
			w1 := r.w1[i] + r.z1[i]
			w2 := r.w2[i] + r.z2[i]
			w3 := r.w3[i] + r.z3[i]
			r.w1[i], r.w2[i], r.w3[i] = w1, w2, w3
			r.z1[i] = radT11*w1 + radT12*w2 + radT13*w3
			r.z2[i] = radT21*w1 + radT22*w2 + radT23*w3
			r.z3[i] = radT31*w1 + w2
		}
		if r.faccon*dyno <= r.fnewt {
			return true, 0
		}
	}
}

// estimate returns the scaled norm of the filtered error estimate for the
// converged stages of step h.
func (r *radau) estimate(h float64) float64 {
	n := r.n
	hee1, hee2, hee3 := radDD1/h, radDD2/h, radDD3/h
	f2 := r.w2 // the transformed stages are no longer needed
	for i := 0; i < n; i++ {
		f2[i] = hee1*r.z1[i] + hee2*r.z2[i] + hee3*r.z3[i]
		r.tmp[i] = f2[i] + r.f0[i]
	}
	r.lu.solve(r.tmp)
	r.p.stats.LinearSolves++
	err := math.Max(r.wnorm(r.tmp), 1e-10)
	if err < 1 || !(r.first || r.reject) {
		return err
	}
	// After a rejection or at the first step, filter once more with f
	// evaluated at the perturbed solution (Hairer & Wanner 1996, IV.8).
	for i := 0; i < n; i++ {
		r.tmp[i] += r.y[i]
	}
	f1 := r.w1
	r.p.rhs(r.t, r.tmp, f1)
	for i := 0; i < n; i++ {
		r.tmp[i] = f1[i] + f2[i]
	}
	r.lu.solve(r.tmp)
	r.p.stats.LinearSolves++
	e := r.wnorm(r.tmp)
	if math.IsNaN(e) {
		return math.Inf(1)
	}
	return math.Max(e, 1e-10)
}

// wnorm is the RMS norm of v weighted by r.scal.
func (r *radau) wnorm(v []float64) float64 {
	var s float64
	for i, x := range v {
		q := x / r.scal[i]
		s += q * q
	}
	return math.Sqrt(s / float64(len(v)))
}

func (r *radau) step(tLimit float64) error {
	n := r.n
	r.badComp = -1
	for tries := 0; ; tries++ {
		h := r.h
		if r.p.maxStep > 0 && h > r.p.maxStep {
			h = r.p.maxStep
		}
		hNatural := h
		last := false
		if r.t+1.01*h >= tLimit {
			h, last = tLimit-r.t, true
		}
		// The floor applies to the step the controller wants; the landing
		// step may be shorter still (two close stop times).
		if hNatural <= math.Max(1e-14*math.Abs(r.t), minStep(r.t)) || !(h > 0) || tries >= radMaxRej {
			return r.p.tooSmallError(r.t, h, r.badComp)
		}
		for i := 0; i < n; i++ {
			r.scal[i] = r.atol[i] + r.rtol*math.Abs(r.y[i])
		}
		if r.needJac {
			r.p.jac(r.t, r.y, r.jac)
			r.needJac, r.jacFresh, r.hFact = false, true, 0
		}
		if r.hFact != h {
			if err := r.factor(h); err != nil {
				r.nSing++
				if r.nSing >= 5 {
					return &StepError{T: r.t, H: h, Component: -1,
						Reason: "the Newton iteration matrix stayed singular after repeated step reductions; the system may be singular"}
				}
				r.h, r.reject = 0.5*h, true
				r.needJac = !r.jacFresh
				r.p.stats.Rejected++
				continue
			}
		}
		ok, shrink := r.newton(h)
		if !ok {
			r.h, r.reject = shrink*h, true
			r.needJac = !r.jacFresh
			r.p.stats.Rejected++
			continue
		}
		err := r.estimate(h)
		// Non-negativity (Shampine, Thompson, Kierzenka & Byrne 2005):
		// project the new solution and count the projection as error.
		for i := 0; i < n; i++ {
			r.ynw[i] = r.y[i] + r.z3[i]
		}
		clipped := false
		if r.p.nonneg {
			for i, v := range r.ynw {
				if v < 0 && !r.p.isSigned(i) {
					r.tmp[i] = v
					r.ynw[i] = 0
					clipped = true
				} else {
					r.tmp[i] = 0
				}
			}
			if clipped {
				err = math.Max(err, r.wnorm(r.tmp))
			}
		}
		if math.IsNaN(err) {
			err = math.Inf(1)
		}
		if r.sn != nil && err < 1 {
			errS, ok := r.sn.stages(h)
			if !ok {
				r.h, r.reject = 0.5*h, true
				r.needJac = !r.jacFresh
				r.p.stats.Rejected++
				continue
			}
			if r.p.sens.errCtl {
				err = math.Max(err, errS)
			}
		}
		fac := math.Min(radSafe, float64(1+2*radNit)*radSafe/float64(r.lastNewtonIters+2*radNit))
		quot := math.Max(radFacR, math.Min(radFacL, math.Pow(err, 0.25)/fac))
		hnew := h / quot
		if !(err < 1) {
			if r.first {
				r.h = 0.1 * h
			} else {
				r.h = hnew
			}
			r.reject = true
			r.needJac = !r.jacFresh
			r.p.stats.Rejected++
			continue
		}
		// Accepted.
		r.first = false
		r.nAccept++
		if r.nAccept > 1 {
			// Gustafsson's predictive controller.
			facgus := (r.hAcc / h) * math.Pow(err*err/r.errAcc, 0.25) / radSafe
			facgus = math.Max(radFacR, math.Min(radFacL, facgus))
			quot = math.Max(quot, facgus)
			hnew = h / quot
		}
		r.hAcc, r.errAcc = h, math.Max(1e-2, err)
		r.tOld, r.hOld = r.t, h
		if last {
			r.t = tLimit
		} else {
			r.t += h
		}
		r.setDense()
		copy(r.y, r.ynw)
		if r.sn != nil {
			r.sn.accept()
		}
		if clipped {
			r.p.stats.NonNegFixes++
		}
		r.jacFresh = false
		r.p.rhs(r.t, r.y, r.f0)
		if i := nonFinite(r.f0); i >= 0 {
			return r.p.nonFiniteError(r.t, h, r.f0, i)
		}
		if r.p.maxStep > 0 {
			hnew = math.Min(hnew, r.p.maxStep)
		}
		if r.reject {
			hnew = math.Min(hnew, h)
		}
		r.reject = false
		r.nSing = 0
		if last && h < hNatural && hnew >= h {
			// The step was shortened to land on tLimit; propose the
			// step the controller wanted.
			hnew = math.Max(hnew, hNatural)
		}
		r.needJac = r.theta > radThet
		if qt := hnew / h; !last && r.theta <= radThet && qt >= radQuot1 && qt <= radQuot2 {
			r.h = h // keep h and the factorization
		} else {
			r.h = hnew
		}
		return nil
	}
}

// setDense stores the coefficients of the collocation polynomial of the
// step just accepted (before y is advanced).
func (r *radau) setDense() {
	for i := range r.dc1 {
		z1, z2, z3 := r.z1[i], r.z2[i], r.z3[i]
		r.dc1[i] = (z2 - z3) / radC2M1
		ak := (z1 - z2) / radC1C2
		acont3 := (ak - z1/radC1) / radC2
		r.dc2[i] = (ak - r.dc1[i]) / radC1M1
		r.dc3[i] = r.dc2[i] - acont3
	}
}
