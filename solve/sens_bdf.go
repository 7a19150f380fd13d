package solve

import "math"

// bdfSens carries the sensitivities through the BDF/NDF stepper by the
// staggered direct approach: after the state's corrector has converged,
// the same formula is solved for the sensitivities, which is linear,
// with the state's factorized matrix as the iteration's preconditioner.
type bdfSens struct {
	b      *bdf
	w      *sensWork
	d      [][]float64 // backward differences of the sensitivities, rows of ns×n
	dTmp   [][]float64
	pred   []float64
	psi    []float64
	snew   []float64
	corr   []float64 // snew − pred
	res    []float64
	fq     []float64
	jv     []float64
	jac    *jacobian   // J at the new point
	lu     *iterMatrix // I − c·J(new), for the fallback
	vec    []float64   // one column's work space
	direct int         // corrector solves that needed the exact matrix
	// always solves every step's corrector with the exact matrix I − c·J
	// at the new point, factorized once, instead of iterating with the
	// state's matrix: for small systems one factorization costs less than
	// the iterations (see sensDirectBelow).
	always bool
}

// sensDirectBelow: with n state variables and ns quantities the iteration
// costs at least two rounds of ns solves and ns products with J (about
// 2·ns·3n² flops; it needs two to test convergence, and took 3.4 on the
// protease fit), a factorization of the exact matrix ⅔n³ and then one
// round of ns solves: the direct solve is cheaper while n < 6·ns, and is
// exact. Measured on the protease fit (n = 7, ns = 5): 3.7 ms per
// sensitivity solve iterating, see bench/fit.md for the direct figure.
const sensDirectBelow = 6

func newBDFSens(b *bdf) *bdfSens {
	w := b.p.sens
	n, m := b.n, w.ns*b.n
	rows := func(k int) [][]float64 {
		flat := make([]float64, k*m)
		r := make([][]float64, k)
		for i := range r {
			r[i] = flat[i*m : (i+1)*m : (i+1)*m]
		}
		return r
	}
	vec := func() []float64 { return make([]float64, m) }
	return &bdfSens{b: b, w: w, d: rows(bdfDiffRows), dTmp: rows(bdfDiffRows),
		pred: vec(), psi: vec(), snew: vec(), corr: vec(), res: vec(), fq: vec(), jv: vec(),
		jac: b.p.newJacobian(), lu: b.p.newIterMatrix(),
		vec: make([]float64, n), always: n < sensDirectBelow*w.ns}
}

// start begins at (t, y) with the sensitivities of problem.sens.s and the
// first difference h·s'.
func (sn *bdfSens) start(t float64, y []float64, h float64) {
	for _, r := range sn.d {
		clear(r)
	}
	copy(sn.d[0], sn.w.s)
	sn.b.p.jac(t, y, sn.jac)
	sn.w.fq(t, y, sn.fq)
	sn.w.jacTimes(sn.jac, sn.d[0], sn.fq, sn.jv)
	for i, v := range sn.jv {
		sn.d[1][i] = h * v
	}
}

// correct solves the corrector for the sensitivities at the state's new
// point (b.ynew at tNew) with c = h/α_k, and returns the scaled norm of
// their error estimate. ok is false when the solve failed (a singular
// matrix).
func (sn *bdfSens) correct(tNew, c float64) (errNorm float64, ok bool) {
	b, w := sn.b, sn.w
	k := b.order
	copy(sn.pred, sn.d[0])
	for j := 1; j <= k; j++ {
		for i, v := range sn.d[j] {
			sn.pred[i] += v
		}
	}
	clear(sn.psi)
	for j := 1; j <= k; j++ {
		g := b.gamma[j] / b.alpha[k]
		for i, v := range sn.d[j] {
			sn.psi[i] += g * v
		}
	}
	b.p.jac(tNew, b.ynew, sn.jac)
	w.fq(tNew, b.ynew, sn.fq)
	copy(sn.snew, sn.pred)
	converged := false
	var normOld float64
	for it := 0; it < 5 && !sn.always; it++ {
		w.jacTimes(sn.jac, sn.snew, sn.fq, sn.jv)
		for i := range sn.res {
			sn.res[i] = c*sn.jv[i] - sn.psi[i] - (sn.snew[i] - sn.pred[i])
		}
		for j := 0; j < w.ns; j++ {
			b.lu.solve(w.col(sn.res, j))
		}
		b.p.stats.LinearSolves += w.ns
		norm := w.norm(sn.res, sn.pred, sn.pred, b.p.atol, b.p.rtol)
		if math.IsNaN(norm) || math.IsInf(norm, 0) {
			break
		}
		for i, v := range sn.res {
			sn.snew[i] += v
		}
		if norm == 0 {
			converged = true
			break
		}
		if it > 0 {
			rate := norm / normOld
			if !(rate < 0.9) {
				break
			}
			if rate/(1-rate)*norm <= 0.01*b.newtTol {
				converged = true
				break
			}
		}
		normOld = norm
	}
	if !converged {
		// The state's matrix is too far from I − c·J at the new point
		// (or the system is small): factorize that one and solve
		// directly.
		sn.direct++
		b.p.stats.Factorizations++
		if err := sn.lu.factor(1, -c, sn.jac); err != nil {
			return 0, false
		}
		for i := range sn.snew {
			sn.snew[i] = sn.pred[i] - sn.psi[i] + c*sn.fq[i]
		}
		for j := 0; j < w.ns; j++ {
			sn.lu.solve(w.col(sn.snew, j))
		}
		b.p.stats.LinearSolves += w.ns
		if nonFinite(sn.snew) >= 0 {
			return 0, false
		}
	}
	for i, v := range sn.snew {
		sn.corr[i] = v - sn.pred[i]
	}
	ec := b.errConst[k]
	for i, v := range sn.corr {
		sn.res[i] = ec * v
	}
	return w.norm(sn.res, sn.snew, sn.snew, b.p.atol, b.p.rtol), true
}

// accept updates the differences with the sensitivities' correction, as
// bdf.accept does for the state.
func (sn *bdfSens) accept(k int) {
	for i, v := range sn.corr {
		sn.d[k+2][i] = v - sn.d[k+1][i]
		sn.d[k+1][i] = v
	}
	for j := k; j >= 0; j-- {
		for i, v := range sn.d[j+1] {
			sn.d[j][i] += v
		}
	}
	copy(sn.d[0], sn.snew)
}

func (b *bdf) currentSens() []float64 { return b.sn.d[0] }

// denseSens evaluates the interpolating polynomial of the sensitivities'
// differences saved at the last accepted step.
func (b *bdf) denseSens(t float64, out []float64) {
	sn := b.sn
	copy(out, sn.d[0])
	p := 1.0
	for j := 1; j <= b.dOrder; j++ {
		p *= (t - (b.t - float64(j-1)*b.dH)) / (float64(j) * b.dH)
		row := sn.d[j]
		for i := range out {
			out[i] += p * row[i]
		}
	}
}
