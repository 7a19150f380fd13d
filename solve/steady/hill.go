package steady

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Hill is a fitted Hill curve
// R(x) = Bottom + (Top − Bottom)·x^N/(EC50^N + x^N).
// When the response falls with x, Top < Bottom and EC50 is the
// half-maximal inhibitory value (IC50).
type Hill struct {
	Bottom, Top, EC50, N float64
	// R2 is the coefficient of determination of the fit, RMS the root
	// mean square of the residuals, Points the number of points used.
	R2, RMS float64
	Points  int
	// DoseMin and DoseMax are the smallest and largest dose fitted.
	DoseMin, DoseMax float64
}

// Extrapolated reports whether the half-effect dose lies outside the
// doses fitted: the points then do not reach the half effect, and the
// EC50 and the far plateau are the curve's guess, not the data's.
func (h Hill) Extrapolated() bool { return h.EC50 < h.DoseMin || h.EC50 > h.DoseMax }

// At evaluates the curve.
func (h Hill) At(x float64) float64 {
	if x <= 0 {
		return h.Bottom
	}
	r := math.Pow(x/h.EC50, h.N)
	return h.Bottom + (h.Top-h.Bottom)*r/(1+r)
}

// Falling reports whether the response falls as x rises (an inhibition
// curve: EC50 is then an IC50).
func (h Hill) Falling() bool { return h.Top < h.Bottom }

// FitHill fits a Hill curve to the points (x[i], r[i]) with x > 0 (others
// are skipped) by Levenberg–Marquardt on least squares, with EC50 fitted
// in its logarithm and exact derivatives. At least four points with
// positive x and a response that changes are needed.
func FitHill(x, r []float64) (Hill, error) {
	var xs, rs []float64
	for i := range x {
		if x[i] > 0 && !math.IsNaN(r[i]) && !math.IsInf(r[i], 0) && !math.IsInf(x[i], 0) {
			xs, rs = append(xs, x[i]), append(rs, r[i])
		}
	}
	m := len(xs)
	if m < 4 {
		return Hill{}, fmt.Errorf("steady: a Hill curve needs at least 4 points with a positive dose, got %d", m)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	ilo, ihi := 0, 0
	for i := range xs {
		if xs[i] < xs[ilo] {
			ilo = i
		}
		if xs[i] > xs[ihi] {
			ihi = i
		}
		lo, hi = math.Min(lo, rs[i]), math.Max(hi, rs[i])
	}
	if !(hi-lo > 1e-12*math.Max(math.Abs(hi), math.Abs(lo))) {
		return Hill{}, fmt.Errorf("steady: the response does not change over the doses (%g throughout): no curve to fit", lo)
	}
	// Start: the ends, the dose at half response (on a log scale), N = 1.
	b, t := rs[ilo], rs[ihi]
	half := (b + t) / 2
	lx := math.Log(math.Sqrt(xs[ilo] * xs[ihi]))
	bestD := math.Inf(1)
	for i := range xs {
		if d := math.Abs(rs[i] - half); d < bestD {
			bestD, lx = d, math.Log(xs[i])
		}
	}
	p := []float64{b, t, lx, 1}
	res := func(p []float64, out []float64) float64 {
		s := 0.0
		h := Hill{Bottom: p[0], Top: p[1], EC50: math.Exp(p[2]), N: p[3]}
		for i := range xs {
			out[i] = h.At(xs[i]) - rs[i]
			s += out[i] * out[i]
		}
		return s
	}
	e := make([]float64, m)
	e2 := make([]float64, m)
	cost := res(p, e)
	jac := mat.NewDense(m, 4, nil)
	lambda := 1e-3
	pt := make([]float64, 4)
	for it := 0; it < 500; it++ {
		for i, xv := range xs {
			// u = (x/EC50)^N, s = u/(1+u).
			lu := p[3] * (math.Log(xv) - p[2])
			s := 1 / (1 + math.Exp(-lu))
			ds := s * (1 - s) // ∂s/∂lu
			d := p[1] - p[0]
			jac.Set(i, 0, 1-s)
			jac.Set(i, 1, s)
			jac.Set(i, 2, d*ds*(-p[3]))
			jac.Set(i, 3, d*ds*(math.Log(xv)-p[2]))
		}
		var jtj mat.Dense
		jtj.Mul(jac.T(), jac)
		g := mat.NewVecDense(4, nil)
		g.MulVec(jac.T(), mat.NewVecDense(m, e))
		improved := false
		for try := 0; try < 30; try++ {
			a := mat.DenseCopyOf(&jtj)
			for k := 0; k < 4; k++ {
				a.Set(k, k, jtj.At(k, k)*(1+lambda)+1e-300)
			}
			var step mat.VecDense
			if err := step.SolveVec(a, g); err != nil {
				lambda *= 10
				continue
			}
			for k := range p {
				pt[k] = p[k] - step.AtVec(k)
			}
			if c := res(pt, e2); c < cost && !math.IsNaN(c) {
				rel := (cost - c) / math.Max(cost, 1e-300)
				copy(p, pt)
				copy(e, e2)
				cost = c
				lambda = math.Max(lambda/10, 1e-12)
				improved = true
				if rel < 1e-15 {
					improved = false
				}
				break
			}
			lambda *= 10
		}
		if !improved {
			break
		}
	}
	h := Hill{Bottom: p[0], Top: p[1], EC50: math.Exp(p[2]), N: p[3], Points: m, DoseMin: xs[ilo], DoseMax: xs[ihi]}
	if h.N < 0 { // the same curve with the ends swapped
		h.N = -h.N
		h.Bottom, h.Top = h.Top, h.Bottom
	}
	mean := 0.0
	for _, v := range rs {
		mean += v
	}
	mean /= float64(m)
	tss := 0.0
	for _, v := range rs {
		tss += (v - mean) * (v - mean)
	}
	h.R2 = 1 - cost/tss
	h.RMS = math.Sqrt(cost / float64(m))
	if math.IsNaN(h.EC50) || math.IsInf(h.EC50, 0) || math.IsNaN(h.N) {
		return h, fmt.Errorf("steady: the Hill fit did not converge")
	}
	return h, nil
}
