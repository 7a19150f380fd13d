package solve

import "math"

// radauSens carries the sensitivities through the Radau IIA stepper by
// internal differentiation: once the state's stages have converged, the
// derivative of the collocation equations,
//
//	Zs_k = h Σ_l a_kl (J(Y_l)·(s + Zs_l) + ∂f/∂q(Y_l)),
//
// linear in the sensitivities' stages Zs, is solved by simplified Newton
// iterations on the state's transformed matrices (real and complex), with
// the exact J at each stage in the residual.
type radauSens struct {
	r          *radau
	w          *sensWork
	s, snew    []float64 // ns×n at the current point, and after the step
	sf0        []float64 // J·s + ∂f/∂q at the current point
	z          [3][]float64
	wt         [3][]float64 // transformed stages
	dc         [3][]float64 // dense output
	jk         [3]*jacobian
	fqk        [3][]float64
	u, est     []float64
	y          []float64 // a stage's state
	iterations int
}

func newRadauSens(r *radau) *radauSens {
	w := r.p.sens
	n, m := r.n, w.ns*r.n
	vec := func() []float64 { return make([]float64, m) }
	sn := &radauSens{r: r, w: w, s: vec(), snew: vec(), sf0: vec(), u: vec(), est: vec(), y: make([]float64, n)}
	for k := 0; k < 3; k++ {
		sn.z[k], sn.wt[k], sn.dc[k], sn.fqk[k] = vec(), vec(), vec(), vec()
		sn.jk[k] = r.p.newJacobian()
	}
	return sn
}

// start begins at (t, y) with the sensitivities of problem.sens.s.
func (sn *radauSens) start(t float64, y []float64) {
	copy(sn.s, sn.w.s)
	sn.r.p.jac(t, y, sn.jk[0])
	sn.w.fq(t, y, sn.fqk[0])
	sn.w.jacTimes(sn.jk[0], sn.s, sn.fqk[0], sn.sf0)
}

// stages solves for the sensitivities' stages of the step of size h whose
// state stages are r.z1, r.z2, r.z3, and returns the scaled norm of their
// error estimate; ok is false when the iteration does not converge.
func (sn *radauSens) stages(h float64) (errNorm float64, ok bool) {
	r, w := sn.r, sn.w
	for k, c := range [3]float64{radC1, radC2, 1} {
		z := r.z1
		switch k {
		case 1:
			z = r.z2
		case 2:
			z = r.z3
		}
		for i := range sn.y {
			sn.y[i] = r.y[i] + z[i]
		}
		r.p.jac(r.t+c*h, sn.y, sn.jk[k])
		w.fq(r.t+c*h, sn.y, sn.fqk[k])
	}
	for k := 0; k < 3; k++ {
		clear(sn.z[k])
		clear(sn.wt[k])
	}
	fac1, alphn, betan := radU1/h, radAlpha/h, radBeta/h
	z1, z2, z3 := sn.z[0], sn.z[1], sn.z[2]
	w1, w2, w3 := sn.wt[0], sn.wt[1], sn.wt[2]
	var normOld float64
	converged := false
	for it := 0; it < 3*radNit; it++ {
		sn.iterations++
		for k := 0; k < 3; k++ {
			for i, v := range sn.z[k] {
				sn.u[i] = sn.s[i] + v
			}
			w.jacTimes(sn.jk[k], sn.u, sn.fqk[k], sn.z[k])
		}
		for i := range z1 {
			a1, a2, a3 := z1[i], z2[i], z3[i]
			b1 := radTI11*a1 + radTI12*a2 + radTI13*a3
			b2 := radTI21*a1 + radTI22*a2 + radTI23*a3
			b3 := radTI31*a1 + radTI32*a2 + radTI33*a3
			z1[i] = b1 - w1[i]*fac1
			z2[i] = b2 - w2[i]*alphn + w3[i]*betan
			z3[i] = b3 - w3[i]*alphn - w2[i]*betan
		}
		for j := 0; j < w.ns; j++ {
			r.lu.solve(w.col(z1, j))
			r.clu.solve(w.col(z2, j), w.col(z3, j))
		}
		r.p.stats.LinearSolves += 2 * w.ns
		n1 := w.norm(z1, sn.s, sn.s, r.atol, r.rtol)
		n2 := w.norm(z2, sn.s, sn.s, r.atol, r.rtol)
		n3 := w.norm(z3, sn.s, sn.s, r.atol, r.rtol)
		norm := math.Sqrt((n1*n1 + n2*n2 + n3*n3) / 3)
		if math.IsNaN(norm) || math.IsInf(norm, 0) {
			return 0, false
		}
		for i := range z1 {
			a1, a2, a3 := w1[i]+z1[i], w2[i]+z2[i], w3[i]+z3[i]
			w1[i], w2[i], w3[i] = a1, a2, a3
			z1[i] = radT11*a1 + radT12*a2 + radT13*a3
			z2[i] = radT21*a1 + radT22*a2 + radT23*a3
			z3[i] = radT31*a1 + a2
		}
		if norm == 0 {
			converged = true
			break
		}
		if it > 0 {
			theta := norm / normOld
			if !(theta < 0.99) {
				return 0, false
			}
			if theta/(1-theta)*norm <= 0.01*r.fnewt {
				converged = true
				break
			}
		}
		normOld = norm
	}
	if !converged {
		return 0, false
	}
	for i := range sn.snew {
		sn.snew[i] = sn.s[i] + z3[i]
	}
	// The error estimate of radau5.f for the sensitivities' stages.
	hee1, hee2, hee3 := radDD1/h, radDD2/h, radDD3/h
	for i := range sn.est {
		sn.est[i] = hee1*z1[i] + hee2*z2[i] + hee3*z3[i] + sn.sf0[i]
	}
	for j := 0; j < w.ns; j++ {
		r.lu.solve(w.col(sn.est, j))
	}
	r.p.stats.LinearSolves += w.ns
	return w.norm(sn.est, sn.s, sn.snew, r.atol, r.rtol), true
}

// accept stores the dense output of the sensitivities and advances them.
func (sn *radauSens) accept() {
	z1, z2, z3 := sn.z[0], sn.z[1], sn.z[2]
	for i := range z1 {
		sn.dc[0][i] = (z2[i] - z3[i]) / radC2M1
		ak := (z1[i] - z2[i]) / radC1C2
		acont3 := (ak - z1[i]/radC1) / radC2
		sn.dc[1][i] = (ak - sn.dc[0][i]) / radC1M1
		sn.dc[2][i] = sn.dc[1][i] - acont3
	}
	copy(sn.s, sn.snew)
	sn.w.jacTimes(sn.jk[2], sn.s, sn.fqk[2], sn.sf0)
}

func (r *radau) currentSens() []float64 { return r.sn.s }

// denseSens evaluates the sensitivities' collocation polynomial of the
// last accepted step.
func (r *radau) denseSens(t float64, out []float64) {
	sn := r.sn
	if r.hOld == 0 {
		copy(out, sn.s)
		return
	}
	s := (t - r.t) / r.hOld
	for i := range out {
		out[i] = sn.s[i] + s*(sn.dc[0][i]+(s-radC2M1)*(sn.dc[1][i]+(s-radC1M1)*sn.dc[2][i]))
	}
}
