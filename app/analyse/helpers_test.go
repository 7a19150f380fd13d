package analyse

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

func newRateJac(m *Model, s *Steady) *mat.Dense {
	var e mat.Dense
	m.Sys.RateJacobian(0, s.Y, &e)
	return &e
}

func scaleOf(e *mat.Dense) float64 {
	return 1 + mat.Norm(e, math.Inf(1))
}
