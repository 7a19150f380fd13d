package solve

import "math"

// Dormand–Prince 5(4) coefficients (Dormand & Prince, J. Comput. Appl.
// Math. 6 (1980) 19–26) with the error coefficients and the dense output
// of order 4 of Hairer's dopri5.f (Hairer, Nørsett & Wanner, Solving ODEs
// I, 2nd ed., 1993, II.5 and II.6).
const (
	dpC2 = 1.0 / 5
	dpC3 = 3.0 / 10
	dpC4 = 4.0 / 5
	dpC5 = 8.0 / 9

	dpA21 = 1.0 / 5
	dpA31 = 3.0 / 40
	dpA32 = 9.0 / 40
	dpA41 = 44.0 / 45
	dpA42 = -56.0 / 15
	dpA43 = 32.0 / 9
	dpA51 = 19372.0 / 6561
	dpA52 = -25360.0 / 2187
	dpA53 = 64448.0 / 6561
	dpA54 = -212.0 / 729
	dpA61 = 9017.0 / 3168
	dpA62 = -355.0 / 33
	dpA63 = 46732.0 / 5247
	dpA64 = 49.0 / 176
	dpA65 = -5103.0 / 18656
	dpA71 = 35.0 / 384
	dpA73 = 500.0 / 1113
	dpA74 = 125.0 / 192
	dpA75 = -2187.0 / 6784
	dpA76 = 11.0 / 84

	dpE1 = 71.0 / 57600
	dpE3 = -71.0 / 16695
	dpE4 = 71.0 / 1920
	dpE5 = -17253.0 / 339200
	dpE6 = 22.0 / 525
	dpE7 = -1.0 / 40

	dpD1 = -12715105075.0 / 11282082432
	dpD3 = 87487479700.0 / 32700410799
	dpD4 = -10690763975.0 / 1880347072
	dpD5 = 701980252875.0 / 199316789632
	dpD6 = -1453857185.0 / 822651844
	dpD7 = 69997945.0 / 29380423
)

// Step-size control of dopri5.f: safety 0.9, factors within [0.2, 10],
// and the PI (Lund-stabilised) controller with β = 0.04.
const (
	dpSafe   = 0.9
	dpFacMin = 0.2
	dpFacMax = 10.0
	dpBeta   = 0.04
)

// dopri is the Dormand–Prince 5(4) stepper with FSAL.
type dopri struct {
	p *problem
	n int

	t, h   float64
	tPrev  float64
	hDone  float64
	y      []float64
	yNew   []float64
	k      [7][]float64 // k[0] = f(t, y); after acceptance k[6] becomes k[0] (FSAL)
	w      []float64    // stage argument
	ySti   []float64    // argument of stage 6 (stiffness test)
	errVec []float64
	cont   [5][]float64

	facOld   float64
	rejected bool
	stiffRun int // consecutive tests with h·λ > 3.25
	nonStiff int
	isStiff  bool
	hLambda  float64
}

// newDopri allocates the work space of a Dormand–Prince stepper.
func newDopri(p *problem) *dopri {
	n := p.n
	d := &dopri{p: p, n: n}
	vec := func() []float64 { return make([]float64, n) }
	d.y, d.yNew, d.w, d.ySti, d.errVec = vec(), vec(), vec(), vec(), vec()
	for i := range d.k {
		d.k[i] = vec()
	}
	for i := range d.cont {
		d.cont[i] = vec()
	}
	return d
}

func (d *dopri) start(t float64, y []float64, h float64) error {
	d.t = t
	copy(d.y, y)
	d.tPrev, d.hDone = t, 0
	d.facOld = 1e-4
	d.rejected = false
	d.stiffRun, d.nonStiff, d.isStiff = 0, 0, false
	d.p.rhs(t, d.y, d.k[0])
	if i := nonFinite(d.k[0]); i >= 0 {
		return d.p.nonFiniteError(t, h, d.k[0], i)
	}
	if h == 0 {
		h = d.p.initialStep(t, d.p.tEnd, d.y, d.k[0], 5, d.yNew, d.w)
	}
	d.h = h
	return nil
}

// stiff reports whether Hairer's test (dopri5.f) found the step size
// limited by stability: h·λ > 3.25 on 15 consecutive steps, with λ
// estimated from the last two stages.
func (d *dopri) stiff() bool { return d.isStiff }

// atStabilityBound reports whether the step size is limited by stability
// rather than accuracy: the stiffness test has fired, or h·λ is above its
// threshold on the latest steps.
func (d *dopri) atStabilityBound() bool { return d.isStiff || d.stiffRun > 0 }

// attempt computes a step of size h from (t, y) into yNew and k[6] and
// returns the scaled error and whether the non-negativity projection
// acted. k[6] is f(t+h, yNew) before the projection; when clipped is true,
// yNew is the projected solution and k[6] must be evaluated again at it
// once the step is accepted.
func (d *dopri) attempt(h float64) (errNorm float64, clipped bool) {
	p, t, y, w := d.p, d.t, d.y, d.w
	k1, k2, k3, k4, k5, k6, k7 := d.k[0], d.k[1], d.k[2], d.k[3], d.k[4], d.k[5], d.k[6]
	for i := range w {
		w[i] = y[i] + h*dpA21*k1[i]
	}
	p.rhs(t+dpC2*h, w, k2)
	for i := range w {
		w[i] = y[i] + h*(dpA31*k1[i]+dpA32*k2[i])
	}
	p.rhs(t+dpC3*h, w, k3)
	for i := range w {
		w[i] = y[i] + h*(dpA41*k1[i]+dpA42*k2[i]+dpA43*k3[i])
	}
	p.rhs(t+dpC4*h, w, k4)
	for i := range w {
		w[i] = y[i] + h*(dpA51*k1[i]+dpA52*k2[i]+dpA53*k3[i]+dpA54*k4[i])
	}
	p.rhs(t+dpC5*h, w, k5)
	ys := d.ySti
	for i := range ys {
		ys[i] = y[i] + h*(dpA61*k1[i]+dpA62*k2[i]+dpA63*k3[i]+dpA64*k4[i]+dpA65*k5[i])
	}
	p.rhs(t+h, ys, k6)
	yn := d.yNew
	for i := range yn {
		yn[i] = y[i] + h*(dpA71*k1[i]+dpA73*k3[i]+dpA74*k4[i]+dpA75*k5[i]+dpA76*k6[i])
	}
	p.rhs(t+h, yn, k7)
	e := d.errVec
	for i := range e {
		e[i] = h * (dpE1*k1[i] + dpE3*k3[i] + dpE4*k4[i] + dpE5*k5[i] + dpE6*k6[i] + dpE7*k7[i])
	}
	clipped = p.nonneg && p.project(yn, e)
	return p.errNorm(e, y, yn), clipped
}

func (d *dopri) step(tLimit float64) error {
	p := d.p
	bad, rejectsInRow := -1, 0
	expo := 0.2 - dpBeta*0.75
	for {
		h := math.Min(d.h, p.maxStep)
		last := false
		if d.t+1.0001*h >= tLimit {
			h, last = tLimit-d.t, true
		}
		if h < minStep(d.t) || rejectsInRow > 100 {
			return p.tooSmallError(d.t, h, bad)
		}
		errNorm, clipped := d.attempt(h)
		if !math.IsNaN(errNorm) && errNorm <= 1 && clipped {
			// First same as last: the next step starts from the
			// projected solution, so its derivative is evaluated there.
			p.rhs(d.t+h, d.yNew, d.k[6])
			if nonFinite(d.k[6]) >= 0 {
				errNorm = math.Inf(1)
			}
		}
		if math.IsNaN(errNorm) || math.IsInf(errNorm, 0) {
			if i := nonFinite(d.yNew); i >= 0 {
				bad = i
			} else if i := nonFinite(d.k[6]); i >= 0 {
				bad = i
			}
			p.stats.Rejected++
			rejectsInRow++
			d.rejected = true
			d.h = h * dpFacMin
			continue
		}
		fac11 := math.Pow(errNorm, expo)
		if errNorm > 1 {
			p.stats.Rejected++
			rejectsInRow++
			d.rejected = true
			d.h = h / math.Min(1/dpFacMin, fac11/dpSafe)
			continue
		}
		// Accepted: PI control (dopri5.f).
		fac := fac11 / math.Pow(d.facOld, dpBeta)
		fac = math.Max(1/dpFacMax, math.Min(1/dpFacMin, fac/dpSafe))
		hNew := h / fac
		d.facOld = math.Max(errNorm, 1e-4)
		if d.rejected {
			hNew = math.Min(hNew, h)
		}
		d.rejected = false
		if clipped {
			p.stats.NonNegFixes++
		}
		d.stiffTest(h)
		d.prepareDense(h)
		d.y, d.yNew = d.yNew, d.y
		d.k[0], d.k[6] = d.k[6], d.k[0]
		d.tPrev, d.hDone = d.t, h
		if last {
			d.t = tLimit
		} else {
			d.t += h
		}
		d.h = hNew
		return nil
	}
}

// stiffTest updates the stiffness detection of dopri5.f, run on every
// accepted step.
func (d *dopri) stiffTest(h float64) {
	var num, den float64
	for i := range d.yNew {
		a := d.k[6][i] - d.k[5][i]
		b := d.yNew[i] - d.ySti[i]
		num += a * a
		den += b * b
	}
	if den <= 0 {
		return
	}
	d.hLambda = h * math.Sqrt(num/den)
	if d.hLambda > 3.25 {
		d.nonStiff = 0
		d.stiffRun++
		if d.stiffRun >= 15 {
			d.isStiff = true
		}
		return
	}
	d.nonStiff++
	if d.nonStiff == 6 {
		d.stiffRun = 0
	}
}

// prepareDense stores the coefficients of the order-4 continuous solution
// (dopri5.f) for the step just accepted, before y and yNew are swapped.
func (d *dopri) prepareDense(h float64) {
	k := d.k
	for i := range d.y {
		diff := d.yNew[i] - d.y[i]
		bspl := h*k[0][i] - diff
		d.cont[0][i] = d.y[i]
		d.cont[1][i] = diff
		d.cont[2][i] = bspl
		d.cont[3][i] = diff - h*k[6][i] - bspl
		d.cont[4][i] = h * (dpD1*k[0][i] + dpD3*k[2][i] + dpD4*k[3][i] + dpD5*k[4][i] + dpD6*k[5][i] + dpD7*k[6][i])
	}
}

func (d *dopri) current() (float64, []float64) { return d.t, d.y }

// dense evaluates the continuous solution of order 4 within the last step.
func (d *dopri) dense(t float64, out []float64) {
	if d.hDone == 0 {
		copy(out, d.y)
		return
	}
	th := (t - d.tPrev) / d.hDone
	th1 := 1 - th
	c := d.cont
	for i := range out {
		v := c[0][i] + th*(c[1][i]+th1*(c[2][i]+th*(c[3][i]+th1*c[4][i])))
		if d.p.nonneg && v < 0 && !d.p.isSigned(i) {
			v = 0
		}
		out[i] = v
	}
}

func (d *dopri) stepSize() float64 { return d.h }
