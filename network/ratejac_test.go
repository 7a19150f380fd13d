package network

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// The rates' Jacobians against the system's: f = N·v gives ∂f/∂y = N·∂v/∂y
// and ∂f/∂p = N·∂v/∂p (chain rule, common practice), on random networks
// with every law and with assignments and compartments; and ∂v/∂y against
// central finite differences of Rates (common practice).
func TestRateJacobiansAgainstSystem(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	for k := 0; k < 200; k++ {
		m := randomModel(rng)
		if k%2 == 1 {
			m = withAssignments(m)
		}
		s, err := Compile(m)
		if err != nil {
			t.Fatalf("network %d: %v", k, err)
		}
		y := randomState(rng, s)
		var n, e, ep, jac, dfdp mat.Dense
		s.ConcentrationStoichiometry(&n)
		s.RateJacobian(0.3, y, &e)
		s.RateParamJacobian(0.3, y, &ep)
		s.Jacobian(0.3, y, &jac)
		s.ParamJacobian(0.3, y, &dfdp)
		var ne, nep mat.Dense
		ne.Mul(&n, &e)
		nep.Mul(&n, &ep)
		for i := 0; i < s.Dim(); i++ {
			for j := 0; j < s.Dim(); j++ {
				if d := math.Abs(ne.At(i, j) - jac.At(i, j)); d > 1e-9*(1+math.Abs(jac.At(i, j))) {
					t.Fatalf("network %d: (N·∂v/∂y)[%d][%d] = %g, Jacobian %g", k, i, j, ne.At(i, j), jac.At(i, j))
				}
			}
			for j := range s.Parameters() {
				if d := math.Abs(nep.At(i, j) - dfdp.At(i, j)); d > 1e-9*(1+math.Abs(dfdp.At(i, j))) {
					t.Fatalf("network %d: (N·∂v/∂p)[%d][%d] = %g, parameter Jacobian %g", k, i, j, nep.At(i, j), dfdp.At(i, j))
				}
			}
		}
		// ∂v/∂y by central differences, fixed species included.
		nr := len(s.Reactions())
		vp, vm := make([]float64, nr), make([]float64, nr)
		for i := range y {
			h := 1e-6 * (1 + math.Abs(y[i]))
			yp := append([]float64(nil), y...)
			ym := append([]float64(nil), y...)
			yp[i] += h
			ym[i] -= h
			s.Rates(0.3, yp, vp)
			s.Rates(0.3, ym, vm)
			for j := 0; j < nr; j++ {
				fd := (vp[j] - vm[j]) / (2 * h)
				if d := math.Abs(fd - e.At(j, i)); d > 1e-5*(1+math.Abs(fd)) {
					t.Fatalf("network %d: ∂v%d/∂y%d = %g, finite differences %g", k, j, i, e.At(j, i), fd)
				}
			}
		}
	}
}
