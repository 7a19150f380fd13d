package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Uncertainty is what the Fisher information says about an estimate.
type Uncertainty struct {
	// SE is each parameter's standard error: +Inf when the data do not
	// determine it (see Determined), NaN when it is held at a bound.
	SE []float64
	// Cov and Corr are the covariance and correlation matrices (NaN
	// rows and columns for parameters not determined or held).
	Cov, Corr *mat.SymDense
	// Determined is false for a parameter that lies along a direction
	// of the parameter space the Jacobian does not see (a singular value
	// below Cutoff times the largest).
	Determined []bool
	// Rank is the number of directions the data determine.
	Rank int
}

// Cutoff is the relative singular value of the weighted Jacobian below
// which a direction counts as not determined by the data: about the
// relative accuracy of Jacobians from sensitivities integrated at rtol
// 1e-8 … 1e-10 (a smaller singular value is noise).
const Cutoff = 1e-9

// Fisher returns the covariance σ²·(JᵀJ)⁻¹ of the estimate whose weighted
// residuals have the Jacobian j (rows residuals, columns parameters),
// leaving out the parameters with held[k] (at a bound). Pass σ² = 1 when
// the residuals are already divided by known standard deviations, and
// the residual variance SSR/(n − p) when σ is estimated (the convention
// of NIST's certified standard errors).
func Fisher(j *mat.Dense, sigma2 float64, held []bool) Uncertainty {
	m, n := j.Dims()
	u := Uncertainty{SE: make([]float64, n), Determined: make([]bool, n),
		Cov: mat.NewSymDense(n, nil), Corr: mat.NewSymDense(n, nil)}
	var cols []int
	for k := 0; k < n; k++ {
		if held == nil || !held[k] {
			cols = append(cols, k)
		}
	}
	nan := math.NaN()
	for a := 0; a < n; a++ {
		u.SE[a] = nan
		for b := a; b < n; b++ {
			u.Cov.SetSym(a, b, nan)
			u.Corr.SetSym(a, b, nan)
		}
	}
	if len(cols) == 0 {
		return u
	}
	// Scale columns to unit norm, so that the cutoff compares directions,
	// not units.
	b := mat.NewDense(m, len(cols), nil)
	scale := make([]float64, len(cols))
	for c, k := range cols {
		scale[c] = colNorm(j, k)
		if scale[c] == 0 {
			scale[c] = 1
		}
		for i := 0; i < m; i++ {
			b.Set(i, c, j.At(i, k)/scale[c])
		}
	}
	var svd mat.SVD
	if !svd.Factorize(b, mat.SVDThin) {
		return u
	}
	sv := svd.Values(nil)
	var v mat.Dense
	svd.VTo(&v)
	cut := Cutoff * sv[0]
	undet := make([]bool, len(cols))
	for i, s := range sv {
		if s > cut {
			u.Rank++
			continue
		}
		for c := range cols {
			if math.Abs(v.At(c, i)) > 1e-3 {
				undet[c] = true
			}
		}
	}
	for c1, k1 := range cols {
		u.Determined[k1] = !undet[c1] && sv[0] > 0
		for c2 := c1; c2 < len(cols); c2++ {
			k2 := cols[c2]
			var s float64
			for i, sval := range sv {
				if sval > cut {
					s += v.At(c1, i) * v.At(c2, i) / (sval * sval)
				}
			}
			s *= sigma2 / (scale[c1] * scale[c2])
			if undet[c1] || undet[c2] {
				s = nan
			}
			u.Cov.SetSym(k1, k2, s)
		}
	}
	for _, k := range cols {
		if u.Determined[k] {
			u.SE[k] = math.Sqrt(u.Cov.At(k, k))
		} else {
			u.SE[k] = math.Inf(1)
		}
	}
	for _, a := range cols {
		for _, b := range cols {
			if b < a {
				continue
			}
			u.Corr.SetSym(a, b, u.Cov.At(a, b)/(u.SE[a]*u.SE[b]))
		}
	}
	return u
}

// Quantile97_5 is the two-sided 95 % quantile for a Fisher interval:
// Student's t with dof degrees of freedom when σ is estimated from the
// residuals, the normal 1.959964 when σ is known (dof ≤ 0).
func Quantile97_5(dof int) float64 {
	if dof <= 0 {
		return distuv.UnitNormal.Quantile(0.975)
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile(0.975)
}
