package network

import "gonum.org/v1/gonum/mat"

// The rates' own derivatives, for control analysis: elasticities are
// ∂v/∂y and ∂v/∂p, and the right-hand side is f = N·v with N the
// stoichiometry in concentration units (ConcentrationStoichiometry).

// RateJacobian writes ∂v_j/∂y_i at (t, y) into e, a reactions × species
// matrix (an empty e is sized first): the unscaled elasticities of every
// reaction rate (System.Rates) with respect to every species, fixed
// species included. It is exact, like Jacobian.
func (s *System) RateJacobian(t float64, y []float64, e *mat.Dense) {
	if e.IsEmpty() {
		e.ReuseAs(len(s.rx), s.n)
	}
	e.Zero()
	s.load(t, y)
	for ri := range s.rx {
		r := &s.rx[ri]
		s.rateDeriv(r, y)
		for d := r.d0; d < r.d1; d++ {
			e.Set(ri, s.depSp[d], e.At(ri, s.depSp[d])+s.dr[d])
		}
	}
}

// RateParamJacobian writes ∂v_j/∂p_k at (t, y) into e, a reactions ×
// parameters matrix (an empty e is sized first; parameters in model
// order). Rates do not depend on volumes, so there are no volume columns.
func (s *System) RateParamJacobian(t float64, y []float64, e *mat.Dense) {
	if e.IsEmpty() {
		e.ReuseAs(len(s.rx), len(s.parNames))
	}
	e.Zero()
	s.load(t, y)
	for ri := range s.rx {
		r := &s.rx[ri]
		if r.p1 == r.p0 {
			continue
		}
		s.rateParamDeriv(r, y)
		for d := r.p0; d < r.p1; d++ {
			e.Set(ri, s.depPar[d], e.At(ri, s.depPar[d])+s.dp[d])
		}
	}
}

// ConcentrationStoichiometry writes into n (species × reactions; an empty
// n is sized first) the matrix N with f = N·v while no infusion runs: the
// net coefficient of species i in reaction j times V(j)/V(i), V(j) the
// volume of the compartment whose concentration units reaction j's rate
// uses. Rows of fixed species are zero.
func (s *System) ConcentrationStoichiometry(n *mat.Dense) {
	if n.IsEmpty() {
		n.ReuseAs(s.n, len(s.rx))
	}
	n.Zero()
	for ri := range s.rx {
		r := &s.rx[ri]
		for c := r.c0; c < r.c1; c++ {
			n.Set(s.cSp[c], ri, n.At(s.cSp[c], ri)+s.cScale[c])
		}
	}
}
