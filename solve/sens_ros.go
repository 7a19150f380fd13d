package solve

import "math"

// rosSens carries the sensitivities through RODAS4, which is applied to
// state and sensitivities together. The combined Jacobian is
//
//	[ J  0 ]
//	[ B  J ]    with B = ∂(J·s + ∂f/∂q)/∂y at the step's start,
//
// so each stage's sensitivities solve (I/(γh) − J)·Ks_i = rhs_i + B·K_i
// with the state's factorized matrix, K_i being the state's stage. B·K_i
// is a difference quotient of the exact J and ∂f/∂q along K_i.
type rosSens struct {
	r                *rosenbrock
	w                *sensWork
	s, sOld, sNew    []float64
	k                [6][]float64
	cont             [2][]float64
	fs1              []float64 // J·s + ∂f/∂q at the step's start
	fq0              []float64
	ft               []float64 // ∂(J·s + ∂f/∂q)/∂t (non-autonomous systems)
	jw               *jacobian
	fqw, u, bv, rhs  []float64
	yw, yp           []float64
	haveDense        bool
	directionalEvals int
}

func newRosSens(r *rosenbrock) *rosSens {
	w := r.p.sens
	n, m := r.n, w.ns*r.n
	vec := func() []float64 { return make([]float64, m) }
	sn := &rosSens{r: r, w: w, s: vec(), sOld: vec(), sNew: vec(), fs1: vec(), fq0: vec(), ft: vec(),
		jw: r.p.newJacobian(), fqw: vec(), u: vec(), bv: vec(), rhs: vec(),
		yw: make([]float64, n), yp: make([]float64, n)}
	for i := range sn.k {
		sn.k[i] = vec()
	}
	sn.cont[0], sn.cont[1] = vec(), vec()
	return sn
}

// start begins with the sensitivities of problem.sens.s.
func (sn *rosSens) start() {
	copy(sn.s, sn.w.s)
	copy(sn.sOld, sn.s)
	sn.haveDense = false
}

// prepare evaluates J·s + ∂f/∂q (and its time derivative) at the step's
// start; r.jac holds J there.
func (sn *rosSens) prepare() {
	r, w := sn.r, sn.w
	w.fq(r.t, r.y, sn.fq0)
	w.jacTimes(r.jac, sn.s, sn.fq0, sn.fs1)
	if !r.p.autonomous {
		dt := math.Sqrt(eps) * math.Max(1e-5, math.Abs(r.t))
		r.p.jac(r.t+dt, r.y, sn.jw)
		w.fq(r.t+dt, r.y, sn.fqw)
		w.jacTimes(sn.jw, sn.s, sn.fqw, sn.ft)
		for i := range sn.ft {
			sn.ft[i] = (sn.ft[i] - sn.fs1[i]) / dt
		}
	}
}

// coupling writes B·v into sn.bv, by a difference quotient of J·s + ∂f/∂q
// along v.
func (sn *rosSens) coupling(v []float64) {
	r, w := sn.r, sn.w
	var vmax, ymax float64
	for i, x := range v {
		vmax = math.Max(vmax, math.Abs(x))
		ymax = math.Max(ymax, math.Abs(r.y[i]))
	}
	if vmax == 0 || math.IsNaN(vmax) {
		clear(sn.bv)
		return
	}
	sn.directionalEvals++
	delta := math.Sqrt(eps) * math.Max(1, ymax) / vmax
	for try := 0; try < 2; try++ {
		for i := range sn.yp {
			sn.yp[i] = r.y[i] + delta*v[i]
		}
		r.p.jac(r.t, sn.yp, sn.jw)
		w.fq(r.t, sn.yp, sn.fqw)
		w.jacTimes(sn.jw, sn.s, sn.fqw, sn.bv)
		if nonFinite(sn.bv) < 0 {
			break
		}
		delta = -delta // f may be undefined on one side
	}
	for i := range sn.bv {
		sn.bv[i] = (sn.bv[i] - sn.fs1[i]) / delta
	}
}

// attempt computes the sensitivities' stages for the state's step of size
// h (stages r.k) and returns the scaled norm of their error estimate; ok
// is false when a value is not finite.
func (sn *rosSens) attempt(h float64) (errNorm float64, ok bool) {
	r, w := sn.r, sn.w
	y, k := r.y, r.k
	ks := sn.k
	auto := r.p.autonomous
	a := [6][5]float64{
		{},
		{rosA21},
		{rosA31, rosA32},
		{rosA41, rosA42, rosA43},
		{rosA51, rosA52, rosA53, rosA54},
		{rosA51, rosA52, rosA53, rosA54, 1},
	}
	c := [6][5]float64{
		{},
		{rosC21},
		{rosC31, rosC32},
		{rosC41, rosC42, rosC43},
		{rosC51, rosC52, rosC53, rosC54},
		{rosC61, rosC62, rosC63, rosC64, rosC65},
	}
	ct := [6]float64{0, rosC2, rosC3, rosC4, 1, 1}
	d := [6]float64{rosD1, rosD2, rosD3, rosD4, 0, 0}
	for i := 0; i < 6; i++ {
		rhs := sn.rhs
		if i == 0 {
			copy(rhs, sn.fs1)
		} else {
			for m := range sn.yw {
				v := y[m]
				for l := 0; l < i; l++ {
					v += a[i][l] * k[l][m]
				}
				sn.yw[m] = v
			}
			for m := range sn.u {
				v := sn.s[m]
				for l := 0; l < i; l++ {
					v += a[i][l] * ks[l][m]
				}
				sn.u[m] = v
			}
			r.p.jac(r.t+ct[i]*h, sn.yw, sn.jw)
			w.fq(r.t+ct[i]*h, sn.yw, sn.fqw)
			w.jacTimes(sn.jw, sn.u, sn.fqw, rhs)
			for m := range rhs {
				var v float64
				for l := 0; l < i; l++ {
					v += c[i][l] * ks[l][m]
				}
				rhs[m] += v / h
			}
		}
		if !auto && d[i] != 0 {
			for m := range rhs {
				rhs[m] += h * d[i] * sn.ft[m]
			}
		}
		sn.coupling(k[i])
		for m := range rhs {
			ks[i][m] = rhs[m] + sn.bv[m]
		}
		for j := 0; j < w.ns; j++ {
			r.lu.solve(w.col(ks[i], j))
		}
		r.p.stats.LinearSolves += w.ns
	}
	for m := range sn.sNew {
		v := sn.s[m] + ks[4][m] + ks[5][m]
		for l := 0; l < 4; l++ {
			v += a[4][l] * ks[l][m]
		}
		sn.sNew[m] = v
	}
	if nonFinite(sn.sNew) >= 0 {
		return 0, false
	}
	return w.norm(ks[5], sn.s, sn.sNew, r.p.atol, r.p.rtol), true
}

// accept stores the dense output of the step and advances the
// sensitivities.
func (sn *rosSens) accept() {
	k := sn.k
	c2, c3 := sn.cont[0], sn.cont[1]
	for i := range c2 {
		c2[i] = rosD21*k[0][i] + rosD22*k[1][i] + rosD23*k[2][i] + rosD24*k[3][i] + rosD25*k[4][i]
		c3[i] = rosD31*k[0][i] + rosD32*k[1][i] + rosD33*k[2][i] + rosD34*k[3][i] + rosD35*k[4][i]
	}
	sn.sOld, sn.s, sn.sNew = sn.s, sn.sNew, sn.sOld
	sn.haveDense = true
}

func (r *rosenbrock) currentSens() []float64 { return r.sn.s }

// denseSens evaluates the order-3 continuous solution of the
// sensitivities.
func (r *rosenbrock) denseSens(t float64, out []float64) {
	sn := r.sn
	if r.hDone == 0 || !sn.haveDense {
		copy(out, sn.s)
		return
	}
	s := (t - r.tPrev) / r.hDone
	s1 := 1 - s
	c2, c3 := sn.cont[0], sn.cont[1]
	for i := range out {
		out[i] = sn.sOld[i]*s1 + s*(sn.s[i]+s1*(c2[i]+s*c3[i]))
	}
}
