package solve

import "math"

// lambertW0 returns the principal branch W₀(x) of the Lambert W function,
// the solution w ≥ −1 of w·eʷ = x, for x ≥ −1/e (NaN below). It uses
// Halley's iteration (Corless, Gonnet, Hare, Jeffrey & Knuth, "On the
// Lambert W function", Adv. Comput. Math. 5 (1996) 329–359) from a
// branch-point series, a logarithm or an asymptotic starting value.
func lambertW0(x float64) float64 {
	const branch = -1 / math.E
	switch {
	case math.IsNaN(x) || x < branch:
		return math.NaN()
	case x == branch:
		return -1
	case x == 0:
		return 0
	case math.IsInf(x, 1):
		return x
	}
	var w float64
	switch {
	case x < -0.25:
		// Series about the branch point (Corless et al. 1996, eq. 4.22).
		p := math.Sqrt(2 * (math.E*x + 1))
		w = -1 + p - p*p/3 + 11.0/72*p*p*p
	case x < 3:
		w = math.Log1p(x) * (1 - math.Log1p(math.Log1p(x))/(2+math.Log1p(x)))
	default:
		// Asymptotic expansion (Corless et al. 1996, eq. 4.19).
		l1 := math.Log(x)
		l2 := math.Log(l1)
		w = l1 - l2 + l2/l1
	}
	for i := 0; i < 30; i++ {
		// Halley's step for f(w) = w·eʷ − x, with f and its derivatives
		// divided by eʷ so that large x cannot overflow.
		g := w - x*math.Exp(-w)
		d := g / ((w + 1) - g*(w+2)/(2*(w+1)))
		w -= d
		if math.Abs(d) <= 4*eps*math.Max(1, math.Abs(w)) {
			break
		}
	}
	return w
}
