package solve

import (
	"math"
	"testing"
)

// TestLambertW0 checks the principal branch of the Lambert W function.
func TestLambertW0(t *testing.T) {
	// Special values: W(1) is the omega constant 0.5671432904097838
	// (Corless et al., Adv. Comput. Math. 5 (1996) 329–359); W(e) = 1,
	// W(−1/e) = −1 and W(0) = 0 follow from w·eʷ = x; W(10) =
	// 1.7455280027406994 is from memory.
	for _, c := range []struct{ x, w float64 }{
		{1, 0.5671432904097838},
		{math.E, 1},
		{-1 / math.E, -1},
		{0, 0},
		{10, 1.7455280027406994},
	} {
		if got := lambertW0(c.x); math.Abs(got-c.w) > 2e-16*math.Max(1, math.Abs(c.w)) {
			t.Errorf("W(%g) = %.17g, want %.17g", c.x, got, c.w)
		}
	}
	// The defining equation w·eʷ = x (Corless et al. 1996, eq. 1.5), to
	// 1e-15 relative, across the range; for huge x the logarithmic form
	// w + ln w = ln x, which avoids the overflow of eʷ.
	for _, x := range []float64{-0.36, -0.3, -0.2, -0.1, -1e-3, 1e-12, 1e-3, 0.1, 0.5, 1, 2, 2.9, 3.1, 5, 10, 100, 1e4, 1e8} {
		w := lambertW0(x)
		if r := math.Abs(w*math.Exp(w)-x) / math.Abs(x); r > 1e-15 {
			t.Errorf("x = %g: w·eʷ − x relative residual %.3g", x, r)
		}
	}
	for _, x := range []float64{1e20, 1e100, 1e300, math.MaxFloat64} {
		w := lambertW0(x)
		if r := math.Abs(w+math.Log(w)-math.Log(x)) / math.Log(x); r > 1e-15 {
			t.Errorf("x = %g: w + ln w − ln x relative residual %.3g", x, r)
		}
	}
	if !math.IsNaN(lambertW0(-0.5)) {
		t.Errorf("W(−0.5) should be NaN (below the branch point −1/e)")
	}
}
