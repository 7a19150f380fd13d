package solve

import "math"

// Variable-order (1–5) backward differentiation stepper.
//
// The solution history is kept as an array of backward differences
// D[0] = y_n, D[j] = ∇^j y_n on an equally spaced grid of step h, as in
// Byrne & Hindmarsh, ACM TOMS 1 (1975) 71–96, and in the BDF solver of
// SciPy (scipy.integrate.BDF). A change of step size h → ρh re-interpolates
// the differences with the matrix product R(ρ)·U (Shampine & Reichelt, The
// MATLAB ODE Suite, SIAM J. Sci. Comput. 18 (1997) 1–22, section 2.3).
// The corrector is solved by simplified Newton iterations with a Jacobian
// kept across many steps and refreshed only when the iteration fails to
// converge; the iteration matrix is refactorized only when h or the order
// changes. The order is chosen from error estimates at orders k−1, k and k+1
// after k+1 steps of constant size.

// BDF step-control constants (as in SciPy's BDF).
const (
	bdfMaxOrder    = 5
	bdfNewtonMaxIt = 4
	bdfMinFactor   = 0.2
	bdfMaxFactor   = 10
	bdfMaxTries    = 100 // consecutive failed attempts before giving up
	bdfDiffRows    = bdfMaxOrder + 3
)

// bdfControl is the calibration of the step and order controller.
//
// A controller that aims each step's error estimate right at the tolerance
// leaves the global error of a multistep method many times the tolerance:
// the local errors of hundreds of steps add up, and every change of h or
// order costs a refactorization and perturbs the difference array. The
// classic remedy (common practice in variable-order BDF codes since Byrne
// & Hindmarsh 1975; the biases 6, 6 and 10 are CVODE's, from memory) aims
// below the tolerance by multiplying the error estimates of orders k−1, k
// and k+1 by biases before proposing a step from each, favours the current
// order over a higher one by the larger bias, and keeps h and the order
// unless the step can grow by a worthwhile factor (a step that must shrink
// is shrunk at once), which saves refactorizations.
//
// The simplified Newton iteration's error adds up the same way: it is left
// on the same side step after step, so its tolerance must be a small part
// of the error the controller aims at, not of the error test's bound.
type bdfControl struct {
	biasDown, biasSame, biasUp float64 // multiply the estimates at orders k−1, k, k+1
	keepAbove, growMin         float64 // a proposed factor in [keepAbove, growMin) keeps h and the order
	safety                     float64 // multiplies every proposed factor
	newtonSafety               bool    // scale safety by (2m+1)/(2m+iterations), m = Newton's maximum (SciPy)
	recheck                    bool    // after keeping h, propose again after the next step, not k+1 steps later
	// newtonTol is where Newton stops: its estimated remaining error, in
	// the error test's weighted norm (the error test accepts up to 1).
	newtonTol float64
}

// bdfCalibrated is the controller newBDF uses: biases 20, 20 and 32, h
// kept unless it can grow by 1.5 or must shrink, Newton stopped at 0.003
// of the error test's bound, on top of SciPy's safety factors.
//
// Chosen on the work-precision problems (HIRES, POLLU, the 50-species
// cascade, the 200-species network; rtol 1e-4 to 1e-10 four to a decade,
// internal/workprecision; bench/bdf-tight-tolerance.md) among 40 variants
// of biases 5·{1,2,3,4,6,8}, Newton tolerances 0.03, 0.01, 0.003 and 0.001,
// growth 1.2, 1.3 and 1.5 and the shape of the biases. Its end-time
// scaled error stays within 7.3 on all four at every tolerance, and within
// 3.5 over the networks' 200 output times (bdfUnbiased: up to 191 and 80;
// biases 5, 5, 8 with Newton at 0.03, the calibration before: up to 66 on
// HIRES at 1e-10 and 12 over the run). Neither half does it alone: biases
// 30, 30, 48 with Newton at 0.03 left 20 on HIRES at 1e-10, Newton at
// 0.0003 with biases 5, 5, 8 left 28. At equal accuracy it costs 0.97,
// 1.11, 1.07 and 1.05 times bdfUnbiased's instructions (callgrind; a
// straight line fitted to each controller's 13 points): a uniform bias is
// a tighter tolerance in disguise, so only its side effects (more Newton
// iterations, fewer factorizations) can change the cost at equal accuracy.
// TestBDFCalibration in internal/workprecision and TestBDFTestset guard
// the bound.
var bdfCalibrated = bdfControl{biasDown: 20, biasSame: 20, biasUp: 32, keepAbove: 1, growMin: 1.5, safety: 0.9, newtonSafety: true, recheck: true, newtonTol: 0.003}

// bdfUnbiased is the controller of SciPy's BDF, which aims at the
// tolerance with safety 0.9 and resizes whenever the controller proposes
// it; it is what newBDF used before the calibration, kept for comparison
// (TestBDFControllers). Its Newton tolerance is 0.03 (SciPy's is
// min(0.03, √rtol), from memory), as it was then.
var bdfUnbiased = bdfControl{biasDown: 1, biasSame: 1, biasUp: 1, keepAbove: 1, growMin: 1, safety: 0.9, newtonSafety: true, newtonTol: 0.03}

// bdfKappa are the κ of the numerical differentiation formulas (NDF) of
// Shampine & Reichelt (1997), Table 1; κ = 0 gives the classical BDF.
var bdfKappa = [bdfMaxOrder + 1]float64{0, -0.1850, -1.0 / 9, -0.0823, -0.0415, 0}

// bdf is the BDF/NDF stepper. All work space is allocated by newBDF.
type bdf struct {
	p   *problem
	n   int
	ctl bdfControl

	// Formula coefficients for orders 0…5.
	gamma, alpha, errConst [bdfMaxOrder + 2]float64

	t, hAbs  float64 // current time and step size of the difference array
	order    int
	nEqual   int         // steps taken with the current h and order
	d        [][]float64 // backward differences, bdfDiffRows × n
	dTmp     [][]float64 // work space for changing h
	ru       [bdfMaxOrder + 1][bdfMaxOrder + 1]float64
	ypred    []float64
	psi      []float64
	corr     []float64 // accumulated Newton correction y_new − y_pred
	ynew     []float64
	f, dy    []float64
	scale    []float64
	clip     []float64
	newtTol  float64
	jac      *jacobian
	haveJac  bool
	lu       *iterMatrix // I − c·J
	luC      float64     // c of the current factorization; 0 when none
	hWanted  float64     // natural step of the last step shortened to land on tLimit; 0 if none
	badComp  int
	lastIter int

	// Dense output of the last accepted step: the rows 0…dOrder of d for
	// step dH ending at t. The rescaling of d for the next step is
	// deferred to its start (pending), so that d itself serves dense
	// output without a copy.
	tOld    float64
	dOrder  int
	dH      float64
	pending float64 // step factor to apply to d when the next step starts; 0 for none

	// growAt[it][q] and stayAt[it][q] are (growMin/safety)^(−q) and
	// (keepAbove/safety)^(−q) for the safety after it Newton iterations
	// (see keep).
	growAt, stayAt [bdfNewtonMaxIt + 1][bdfMaxOrder + 3]float64

	sn *bdfSens // sensitivities, or nil
}

// newBDF returns a variable-order NDF stepper for p.
//
// It uses the NDFs (κ of Shampine & Reichelt 1997) rather than the pure
// BDFs: on POLLU at rtol 1e-6 … 1e-10 they needed 2–5% fewer steps and
// RHS evaluations; on HIRES the two were within 1% in steps and errors
// (measured; TestBDFKappaChoice logs the comparison).
func newBDF(p *problem) stepper {
	return newBDFKappa(p, bdfKappa, bdfCalibrated)
}

// newBDFKappa returns a stepper with the given κ coefficients and
// controller.
func newBDFKappa(p *problem, kappa [bdfMaxOrder + 1]float64, ctl bdfControl) *bdf {
	n := p.n
	b := &bdf{p: p, n: n, ctl: ctl}
	for k := 1; k <= bdfMaxOrder; k++ {
		b.gamma[k] = b.gamma[k-1] + 1/float64(k)
	}
	for k := 0; k <= bdfMaxOrder; k++ {
		b.alpha[k] = (1 - kappa[k]) * b.gamma[k]
		b.errConst[k] = kappa[k]*b.gamma[k] + 1/float64(k+1)
	}
	b.errConst[bdfMaxOrder+1] = 1 / float64(bdfMaxOrder+2)
	rows := func(k int) [][]float64 {
		flat := make([]float64, k*n)
		r := make([][]float64, k)
		for i := range r {
			r[i] = flat[i*n : (i+1)*n : (i+1)*n]
		}
		return r
	}
	b.d, b.dTmp = rows(bdfDiffRows), rows(bdfDiffRows)
	vec := func() []float64 { return make([]float64, n) }
	b.ypred, b.psi, b.corr, b.ynew = vec(), vec(), vec(), vec()
	b.f, b.dy, b.scale, b.clip = vec(), vec(), vec(), vec()
	b.jac = p.newJacobian()
	b.lu = p.newIterMatrix()
	// Newton stops when its estimated remaining error is ctl.newtonTol of
	// the error test's bound, or where rounding allows no less.
	b.newtTol = math.Max(10*eps/p.rtol, ctl.newtonTol)
	for it := 1; it <= bdfNewtonMaxIt; it++ {
		safety := ctl.safety
		if ctl.newtonSafety {
			safety *= float64(2*bdfNewtonMaxIt+1) / float64(2*bdfNewtonMaxIt+it)
		}
		for q := 1; q < len(b.growAt[it]); q++ {
			b.growAt[it][q] = math.Pow(ctl.growMin/safety, -float64(q))
			b.stayAt[it][q] = math.Pow(ctl.keepAbove/safety, -float64(q))
		}
	}
	if p.sens != nil {
		b.sn = newBDFSens(b)
	}
	return b
}

func (b *bdf) start(t float64, y []float64, h float64) error {
	copy(b.d[0], y)
	if i := nonFinite(y); i >= 0 {
		return b.p.nonFiniteError(t, h, y, i)
	}
	b.p.rhs(t, b.d[0], b.f)
	if i := nonFinite(b.f); i >= 0 {
		return b.p.nonFiniteError(t, h, b.f, i)
	}
	if h <= 0 {
		tEnd := b.p.tEnd
		if !(tEnd > t) {
			tEnd = math.Inf(1)
		}
		h = b.p.initialStep(t, tEnd, b.d[0], b.f, 1, b.ynew, b.dy)
	}
	if b.p.maxStep > 0 {
		h = math.Min(h, b.p.maxStep)
	}
	b.t, b.hAbs = t, h
	for i, v := range b.f {
		b.d[1][i] = h * v
	}
	for k := 2; k < bdfDiffRows; k++ {
		clear(b.d[k])
	}
	b.order, b.nEqual = 1, 0
	b.haveJac, b.luC = false, 0
	b.tOld, b.dOrder, b.dH, b.pending = t, 0, h, 0
	b.badComp = -1
	if b.sn != nil {
		b.sn.start(t, y, h)
	}
	return nil
}

func (b *bdf) current() (float64, []float64) { return b.t, b.d[0] }

// stepSize is the step to restart with: after a step shortened to land on
// tLimit, the step the controller wanted, so that a restart at a stop time
// does not begin with the (possibly tiny) remnant.
func (b *bdf) stepSize() float64 { return math.Max(b.hAbs, b.hWanted) }

// dense evaluates the interpolating polynomial of the differences saved at
// the last accepted step.
func (b *bdf) dense(t float64, out []float64) {
	copy(out, b.d[0])
	p := 1.0
	for j := 1; j <= b.dOrder; j++ {
		// x_j = (t − (tn − (j−1)h)) / (j·h)
		p *= (t - (b.t - float64(j-1)*b.dH)) / (float64(j) * b.dH)
		row := b.d[j]
		for i := range out {
			out[i] += p * row[i]
		}
	}
	if b.p.nonneg {
		for i, v := range out {
			if v < 0 && !b.p.isSigned(i) {
				out[i] = 0
			}
		}
	}
}

// changeH rescales the difference array of the current order for the step
// factor ρ: D ← (R(ρ)·U)ᵀ D (Shampine & Reichelt 1997, section 2.3).
func (b *bdf) changeH(factor float64) {
	k := b.order
	var r, u [bdfMaxOrder + 1][bdfMaxOrder + 1]float64
	bdfR(&r, k, factor)
	bdfR(&u, k, 1)
	for i := 0; i <= k; i++ {
		for j := 0; j <= k; j++ {
			var s float64
			for l := 0; l <= k; l++ {
				s += r[i][l] * u[l][j]
			}
			b.ru[i][j] = s
		}
	}
	b.applyRU(b.d, b.dTmp)
	if b.sn != nil {
		b.applyRU(b.sn.d, b.sn.dTmp)
	}
	b.nEqual = 0
}

// applyRU replaces the rows 0…order of the difference array d by
// (R·U)ᵀ d, using tmp as work space.
func (b *bdf) applyRU(d, tmp [][]float64) {
	k := b.order
	for i := 0; i <= k; i++ {
		dst := tmp[i]
		clear(dst)
		for j := 0; j <= k; j++ {
			c := b.ru[j][i]
			if c == 0 {
				continue
			}
			for m, v := range d[j] {
				dst[m] += c * v
			}
		}
	}
	for i := 0; i <= k; i++ {
		copy(d[i], tmp[i])
	}
}

// bdfR fills m[0:k+1][0:k+1] with R(ρ): R[0][j] = 1 and
// R[i][j] = Π_{l=1..i} (l − 1 − ρj)/l.
func bdfR(m *[bdfMaxOrder + 1][bdfMaxOrder + 1]float64, k int, rho float64) {
	for j := 0; j <= k; j++ {
		m[0][j] = 1
	}
	for i := 1; i <= k; i++ {
		m[i][0] = 0
		for j := 1; j <= k; j++ {
			m[i][j] = m[i-1][j] * (float64(i) - 1 - rho*float64(j)) / float64(i)
		}
	}
}

// factor forms and factorizes I − c·J.
func (b *bdf) factor(c float64) error {
	b.luC = 0
	b.p.stats.Factorizations++
	if err := b.lu.factor(1, -c, b.jac); err != nil {
		return err
	}
	b.luC = c
	return nil
}

// predict fills ypred, psi and the Newton weights for the current order.
func (b *bdf) predict() {
	k := b.order
	copy(b.ypred, b.d[0])
	clear(b.psi)
	for j := 1; j <= k; j++ {
		g := b.gamma[j] / b.alpha[k]
		ypred, psi := b.ypred, b.psi[:len(b.ypred)]
		for i, v := range b.d[j][:len(ypred)] {
			ypred[i] += v
			psi[i] += g * v
		}
	}
	for i, v := range b.ypred {
		b.scale[i] = b.p.atol[i] + b.p.rtol*math.Abs(v)
	}
}

// newton solves the corrector at tNew with c = h/α_k, starting from ypred.
// It leaves the solution in ynew and y_new − y_pred in corr.
func (b *bdf) newton(tNew, c float64) bool {
	copy(b.ynew, b.ypred)
	clear(b.corr)
	var normOld float64
	for it := 0; it < bdfNewtonMaxIt; it++ {
		b.lastIter = it + 1
		b.p.rhs(tNew, b.ynew, b.f)
		dy, psi, corr := b.dy, b.psi[:len(b.dy)], b.corr[:len(b.dy)]
		for i, v := range b.f[:len(dy)] {
			dy[i] = c*v - psi[i] - corr[i]
		}
		b.lu.solve(dy)
		b.p.stats.LinearSolves++
		norm := wrms(dy, b.scale)
		if !(norm <= math.MaxFloat64) {
			// A NaN or infinity came from f (name it) or from the solve.
			b.badComp = nonFinite(b.f)
			return false
		}
		rate := -1.0
		if it > 0 {
			rate = norm / normOld
			// The error left after the remaining iterations, ρ^(m−it)/(1−ρ)·‖Δ‖.
			left := norm / (1 - rate)
			for range bdfNewtonMaxIt - it {
				left *= rate
			}
			if !(rate < 1) || left > b.newtTol {
				return false
			}
		}
		ynew := b.ynew[:len(dy)]
		for i, v := range dy {
			ynew[i] += v
			corr[i] += v
		}
		if norm == 0 || rate >= 0 && rate/(1-rate)*norm < b.newtTol {
			return true
		}
		normOld = norm
	}
	return false
}

// wrms is the RMS norm of v/scale.
func wrms(v, scale []float64) float64 {
	var s float64
	for i, x := range v {
		q := x / scale[i]
		s += q * q
	}
	return math.Sqrt(s / float64(len(v)))
}

func (b *bdf) step(tLimit float64) error {
	b.badComp = -1
	b.hWanted = 0
	if b.pending != 0 {
		b.changeH(b.pending)
		b.pending = 0
	}
	if b.p.maxStep > 0 && b.hAbs > b.p.maxStep {
		b.changeH(b.p.maxStep / b.hAbs)
		b.hAbs = b.p.maxStep
	}
	var errNorm, safety float64
	clipped := false
	jacCurrent := false
	for tries := 0; ; tries++ {
		if b.hAbs <= math.Max(1e-14*math.Abs(b.t), minStep(b.t)) || tries >= bdfMaxTries {
			return b.p.tooSmallError(b.t, b.hAbs, b.badComp)
		}
		h := b.hAbs
		tNew := b.t + h
		if tNew >= tLimit {
			tNew = tLimit
			b.hWanted = h
			b.changeH((tNew - b.t) / h)
			b.hAbs = tNew - b.t
			h = b.hAbs
		}
		b.predict()
		c := h / b.alpha[b.order]
		converged := false
		for {
			if !b.haveJac {
				b.p.jac(b.t, b.d[0], b.jac)
				b.haveJac, jacCurrent, b.luC = true, true, 0
			}
			if b.luC != c {
				if err := b.factor(c); err != nil {
					break
				}
			}
			converged = b.newton(tNew, c)
			if converged || jacCurrent {
				break
			}
			b.p.jac(tNew, b.ypred, b.jac)
			jacCurrent, b.luC = true, 0
		}
		if !converged {
			b.p.stats.Rejected++
			b.changeH(0.5)
			b.hAbs *= 0.5
			continue
		}
		safety = b.ctl.safety
		if b.ctl.newtonSafety {
			safety *= float64(2*bdfNewtonMaxIt+1) / float64(2*bdfNewtonMaxIt+b.lastIter)
		}
		ec := b.errConst[b.order]
		var s float64
		atol, scale, corr := b.p.atol[:len(b.ynew)], b.scale[:len(b.ynew)], b.corr[:len(b.ynew)]
		for i, v := range b.ynew {
			sc := atol[i] + b.p.rtol*math.Abs(v)
			scale[i] = sc
			q := ec * corr[i] / sc
			s += q * q
		}
		errNorm = math.Sqrt(s / float64(b.n))
		// Non-negativity (Shampine, Thompson, Kierzenka & Byrne 2005):
		// project onto y ≥ 0 and count the projection as error.
		clipped = false
		if b.p.nonneg {
			for i, v := range b.ynew {
				if v < 0 && !b.p.isSigned(i) {
					b.clip[i] = -v
					clipped = true
				} else {
					b.clip[i] = 0
				}
			}
			if clipped {
				errNorm = math.Max(errNorm, wrms(b.clip, b.scale))
			}
		}
		if b.sn != nil && errNorm <= 1 {
			errS, ok := b.sn.correct(tNew, c)
			if !ok {
				errNorm = math.NaN() // reject and halve below
			} else if b.p.sens.errCtl {
				errNorm = math.Max(errNorm, errS)
			}
		}
		if !(errNorm <= 1) {
			b.p.stats.Rejected++
			b.hWanted = 0
			factor := bdfMinFactor
			if !math.IsNaN(errNorm) {
				factor = math.Max(bdfMinFactor, safety*math.Pow(b.ctl.biasSame*errNorm, -1/float64(b.order+1)))
			}
			b.changeH(factor)
			b.hAbs *= factor
			continue
		}
		b.t = tNew
		break
	}
	if clipped {
		for i, v := range b.clip {
			b.ynew[i] += v
			b.corr[i] += v
		}
		b.p.stats.NonNegFixes++
	}
	b.accept()
	k := b.order
	if b.nEqual < k+1 {
		return nil
	}
	// Choose order and step size from the estimates at k−1, k, k+1.
	em, ep := b.neighbourNorms(k)
	if b.p.maxStep == 0 && b.keep(k, em, errNorm, ep) {
		// Not worth a refactorization: keep h and the order. (The
		// error test still guards every step.)
		if !b.ctl.recheck {
			b.nEqual = 0
		}
		return nil
	}
	fm := math.Pow(b.ctl.biasDown*em, -1/float64(k))
	f0 := math.Pow(b.ctl.biasSame*errNorm, -1/float64(k+1))
	fp := math.Pow(b.ctl.biasUp*ep, -1/float64(k+2))
	best, dk := f0, 0
	if fm > best {
		best, dk = fm, -1
	}
	if fp > best {
		best, dk = fp, 1
	}
	factor := math.Min(bdfMaxFactor, safety*best)
	if b.p.maxStep > 0 {
		factor = math.Min(factor, b.p.maxStep/b.hAbs)
	}
	if factor >= b.ctl.keepAbove && factor < b.ctl.growMin {
		if !b.ctl.recheck {
			b.nEqual = 0
		}
		return nil
	}
	// The differences are rescaled when the next step starts, so that
	// until then they give this step's dense output.
	b.order += dk
	b.pending = factor
	b.nEqual = 0
	b.hAbs *= factor
	return nil
}

// keep reports, without a power, whether the controller keeps h and the
// order after a step with the error norms em, e0 and ep at orders k−1, k
// and k+1: whether no proposed factor safety·(bias·e)^(−1/q) reaches
// growMin and not all fall below keepAbove. It compares bias·e with the
// thresholds (G/safety)^(−q), tabulated by newBDF for each Newton
// iteration count (which sets safety) and q.
func (b *bdf) keep(k int, em, e0, ep float64) bool {
	grow, stay := &b.growAt[b.lastIter], &b.stayAt[b.lastIter]
	xm, x0, xp := b.ctl.biasDown*em, b.ctl.biasSame*e0, b.ctl.biasUp*ep
	if xm <= grow[k] || x0 <= grow[k+1] || xp <= grow[k+2] {
		return false // some factor reaches growMin
	}
	return xm <= stay[k] || x0 <= stay[k+1] || xp <= stay[k+2]
}

// neighbourNorms returns the error estimates at orders k−1 and k+1
// (+Inf where the order does not exist), in one pass over the state.
func (b *bdf) neighbourNorms(k int) (em, ep float64) {
	var vm, vp []float64
	cm, cp := 0.0, 0.0
	if k > 1 {
		vm, cm = b.d[k], b.errConst[k-1]
	}
	if k < bdfMaxOrder {
		vp, cp = b.d[k+2], b.errConst[k+1]
	}
	switch {
	case vm == nil && vp == nil:
		return math.Inf(1), math.Inf(1)
	case vm == nil:
		return math.Inf(1), b.diffNorm(cp, vp)
	case vp == nil:
		return b.diffNorm(cm, vm), math.Inf(1)
	}
	scale := b.scale[:len(vm)]
	vp = vp[:len(vm)]
	var sm, sp float64
	for i, x := range vm {
		qm := x / scale[i]
		qp := vp[i] / scale[i]
		sm += qm * qm
		sp += qp * qp
	}
	n := float64(len(vm))
	return cm * math.Sqrt(sm/n), cp * math.Sqrt(sp/n)
}

// diffNorm is the weighted RMS norm of c·v.
func (b *bdf) diffNorm(c float64, v []float64) float64 {
	var s float64
	for i, x := range v {
		q := c * x / b.scale[i]
		s += q * q
	}
	return math.Sqrt(s / float64(len(v)))
}

// accept updates the differences with the converged correction; they are
// the interpolating polynomial of the step for dense output.
func (b *bdf) accept() {
	b.nEqual++
	// D^{j+1} y_n = D^j y_n − D^j y_{n−1}, with corr = D^{k+1} y_n.
	k := b.order
	for i, v := range b.corr {
		b.d[k+2][i] = v - b.d[k+1][i]
		b.d[k+1][i] = v
	}
	for j := k; j >= 1; j-- {
		dj := b.d[j]
		for i, v := range b.d[j+1][:len(dj)] {
			dj[i] += v
		}
	}
	// D^0 y_n would be the sum of the above with D^1 y_n, which equals
	// ynew up to rounding; take ynew itself, so that the projected
	// (non-negative) solution is exactly the current state.
	copy(b.d[0], b.ynew)
	b.tOld = b.t - b.hAbs
	b.dOrder, b.dH = k, b.hAbs
	if b.sn != nil {
		b.sn.accept(k)
	}
}
