package steady

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Control holds the control coefficients of a steady state, computed by
// the matrix method (Reder 1988) with the stoichiometry reduced by the
// conservation laws. Scaled coefficients are NaN where the flux or the
// variable they are scaled by is zero.
type Control struct {
	// Elasticities[j][i] = ∂ln v_j/∂ln y_i (reactions × variables).
	Elasticities *mat.Dense
	// FluxControl[i][j] = ∂ln J_i/∂ln v_j: how the steady-state flux of
	// reaction i responds to a change in the rate of reaction j (reactions
	// × reactions).
	FluxControl *mat.Dense
	// ConcControl[i][j] = ∂ln y_i/∂ln v_j (variables × reactions).
	ConcControl *mat.Dense
	// The same without scaling: C^J = I + ε·C^S and C^S = −L (N_R ε L)⁻¹ N_R.
	UnscaledFlux, UnscaledConc *mat.Dense
	// ParamVariables[i][k] = ∂ln y_i/∂ln p_k and ParamFluxes[j][k] =
	// ∂ln J_j/∂ln p_k, when the rates' parameter derivatives were given.
	ParamVariables, ParamFluxes *mat.Dense
}

// ControlInput is what ControlAnalysis needs besides the steady state.
type ControlInput struct {
	// N is the stoichiometry: f = N·v (variables × reactions).
	N *mat.Dense
	// Rates are the reaction rates v at the steady state, and RateJac
	// their derivatives ∂v/∂y (reactions × variables).
	Rates   []float64
	RateJac *mat.Dense
	// RateParamJac, when not nil, is ∂v/∂p (reactions × parameters) and
	// Params the parameters' values, for the parameter sensitivities.
	RateParamJac *mat.Dense
	Params       []float64
}

// ControlAnalysis computes the control coefficients at the steady state
// r. It fails when the reduced Jacobian is singular (a fold point), where
// control coefficients are undefined.
func ControlAnalysis(r *Result, in ControlInput) (*Control, error) {
	n := len(r.Y)
	if in.N == nil || in.RateJac == nil {
		return nil, fmt.Errorf("steady: control analysis needs the stoichiometry and the rates' Jacobian")
	}
	nv, nr := in.N.Dims()
	if nv != n || len(in.Rates) != nr {
		return nil, fmt.Errorf("steady: stoichiometry is %d×%d for %d variables and %d rates", nv, nr, n, len(in.Rates))
	}
	if er, ec := in.RateJac.Dims(); er != nr || ec != n {
		return nil, fmt.Errorf("steady: the rates' Jacobian is %d×%d, want %d×%d", er, ec, nr, n)
	}
	c := &Control{}
	m := len(r.Independent)
	cs := mat.NewDense(n, nr, nil)
	if m > 0 {
		nR := mat.NewDense(m, nr, nil)
		for a, i := range r.Independent {
			for j := 0; j < nr; j++ {
				nR.Set(a, j, in.N.At(i, j))
			}
		}
		var el, mm mat.Dense
		el.Mul(in.RateJac, r.Link) // r × m
		mm.Mul(nR, &el)            // m × m
		var lu mat.LU
		lu.Factorize(&mm)
		if lu.Det() == 0 {
			return nil, fmt.Errorf("steady: the reduced Jacobian is singular here (a fold point?): control coefficients are undefined")
		}
		var x mat.Dense
		if err := lu.SolveTo(&x, false, nR); err != nil {
			return nil, fmt.Errorf("steady: the reduced Jacobian is singular here (a fold point?): control coefficients are undefined")
		}
		cs.Mul(r.Link, &x)
		cs.Scale(-1, cs)
	}
	cj := mat.NewDense(nr, nr, nil)
	cj.Mul(in.RateJac, cs)
	for i := 0; i < nr; i++ {
		cj.Set(i, i, cj.At(i, i)+1)
	}
	c.UnscaledConc, c.UnscaledFlux = cs, cj
	div := func(a, b float64) float64 {
		if b == 0 {
			return math.NaN()
		}
		return a / b
	}
	v, y := in.Rates, r.Y
	c.Elasticities = mat.NewDense(nr, n, nil)
	for j := 0; j < nr; j++ {
		for i := 0; i < n; i++ {
			c.Elasticities.Set(j, i, div(in.RateJac.At(j, i)*y[i], v[j]))
		}
	}
	c.FluxControl = mat.NewDense(nr, nr, nil)
	for i := 0; i < nr; i++ {
		for j := 0; j < nr; j++ {
			c.FluxControl.Set(i, j, div(cj.At(i, j)*v[j], v[i]))
		}
	}
	c.ConcControl = mat.NewDense(n, nr, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < nr; j++ {
			c.ConcControl.Set(i, j, div(cs.At(i, j)*v[j], y[i]))
		}
	}
	if in.RateParamJac != nil {
		_, np := in.RateParamJac.Dims()
		if len(in.Params) != np {
			return nil, fmt.Errorf("steady: %d parameter values for %d columns of ∂v/∂p", len(in.Params), np)
		}
		var dy, dj mat.Dense
		dy.Mul(cs, in.RateParamJac)
		dj.Mul(cj, in.RateParamJac)
		c.ParamVariables = mat.NewDense(n, np, nil)
		c.ParamFluxes = mat.NewDense(nr, np, nil)
		for k := 0; k < np; k++ {
			for i := 0; i < n; i++ {
				c.ParamVariables.Set(i, k, div(dy.At(i, k)*in.Params[k], y[i]))
			}
			for j := 0; j < nr; j++ {
				c.ParamFluxes.Set(j, k, div(dj.At(j, k)*in.Params[k], v[j]))
			}
		}
	}
	return c, nil
}
