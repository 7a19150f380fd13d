// Package gennet generates the test networks that benchmarks and reports
// share: the stiff signalling-like network of 4·modules species (200
// species with 50 modules) of the work-precision report and the
// stochastic benchmarks.
package gennet

import (
	"fmt"
	"math"
	"math/rand/v2"

	"kinetarium/network"
)

// Signalling builds a stiff signalling-like network of 4·modules species:
// in module i, A binds B fast and reversibly to C, C turns over slowly to D
// and releases B, D feeds A of the next module and decays. Rate constants
// are spread over many decades by a fixed random stream.
func Signalling(modules int) *network.Model {
	rng := rand.New(rand.NewPCG(2026, 12))
	dec := func(lo, hi float64) float64 { return math.Pow(10, lo+(hi-lo)*rng.Float64()) }
	m := &network.Model{Title: "generated stiff network"}
	add := func(name string, v float64) string {
		m.Parameters = append(m.Parameters, network.Parameter{Name: name, Value: v})
		return name
	}
	for i := 0; i < modules; i++ {
		for _, s := range "ABCD" {
			init := 0.0
			if s == 'B' {
				init = dec(-1, 0)
			}
			if s == 'A' && i == 0 {
				init = 1
			}
			m.Species = append(m.Species, network.Species{Name: fmt.Sprintf("%c%d", s, i), Initial: init})
		}
		r := func(eq string, rate network.Rate) {
			m.Reactions = append(m.Reactions, network.Reaction{Name: fmt.Sprintf("r%d", len(m.Reactions)), Equation: eq, Rate: rate})
		}
		r(fmt.Sprintf("A%d + B%d <=> C%d", i, i, i), network.NewRate(network.MassAction, "k", network.Named(add(fmt.Sprintf("kon%d", i), dec(2, 6))), "k_reverse", network.Named(add(fmt.Sprintf("koff%d", i), dec(-1, 2)))))
		r(fmt.Sprintf("C%d -> D%d + B%d", i, i, i), network.NewRate(network.MassAction, "k", network.Named(add(fmt.Sprintf("kcat%d", i), dec(-2, 1)))))
		if i+1 < modules {
			r(fmt.Sprintf("D%d -> A%d", i, i+1), network.NewRate(network.MassAction, "k", network.Named(add(fmt.Sprintf("kt%d", i), dec(-2, 0)))))
		}
		r(fmt.Sprintf("D%d ->", i), network.NewRate(network.MassAction, "k", network.Named(add(fmt.Sprintf("kd%d", i), dec(-4, -2)))))
	}
	m.Reactions = append(m.Reactions, network.Reaction{Name: "feed", Equation: "-> A0",
		Rate: network.NewRate(network.MassAction, "k", network.Number(1e-3))})
	return m
}
