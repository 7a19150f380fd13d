package analyse

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"kinetarium/network"
)

func newRateJac(m *Model, s *Steady) *mat.Dense {
	var e mat.Dense
	m.Sys.RateJacobian(0, s.Y, &e)
	return &e
}

func scaleOf(e *mat.Dense) float64 {
	return 1 + mat.Norm(e, math.Inf(1))
}

// withClearableReporter returns a copy of a cascade example whose
// reporter's saturable decay is 100 times faster, so that it has a
// steady state.
func withClearableReporter(t interface{ Fatal(...any) }, m *network.Model) *network.Model {
	c := m.Clone()
	for i := range c.Parameters {
		if c.Parameters[i].Name == "dp" {
			c.Parameters[i].Value *= 100
			return c
		}
	}
	t.Fatal("no parameter dp")
	return nil
}
