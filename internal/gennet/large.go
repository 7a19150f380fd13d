package gennet

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"

	"kinetarium/network"
)

// Cascade builds the stiff signalling cascade of Signalling with the given
// number of species, rounded up to a multiple of 4 (species/4 modules),
// with the simulation settings of the work-precision report's generated
// network: t_end 1000, log-spaced output from 10⁻³, rtol 1e-6, atol 1e-12.
// Its Jacobian is block lower triangular: each module feeds the next and
// nothing feeds back.
func Cascade(species int) *network.Model {
	m := Signalling(max(1, (species+3)/4))
	m.Title = fmt.Sprintf("generated cascade of %d species", len(m.Species))
	m.Simulation = largeSimulation()
	return m
}

// Feedback builds a cascade like Cascade in which each module past the
// first also acts back on one of the 1–8 modules before it: in odd
// modules the product D activates the return of an earlier module's D to
// its A (Michaelis–Menten with D as the enzyme), in even modules it
// represses that return (a Hill-type expression). The loops overlap, so
// the whole network is one strongly connected block and a block
// triangular form does not split it. The generator state is fixed: the
// same size gives the same model.
func Feedback(species int) *network.Model {
	m := Cascade(species)
	modules := len(m.Species) / 4
	m.Title = fmt.Sprintf("generated network with feedback, %d species", len(m.Species))
	rng := rand.New(rand.NewPCG(2026, 19))
	dec := func(lo, hi float64) float64 { return math.Pow(10, lo+(hi-lo)*rng.Float64()) }
	add := func(name string, v float64) string {
		m.Parameters = append(m.Parameters, network.Parameter{Name: name, Value: v})
		return name
	}
	for i := 1; i < modules; i++ {
		j := i - 1 - rng.IntN(min(i, 8))
		eq := fmt.Sprintf("D%d -> A%d", j, j)
		name := fmt.Sprintf("fb%d", i)
		var rate network.Rate
		if i%2 == 1 {
			rate = network.NewRate(network.MichaelisMenten,
				"kcat", network.Named(add(fmt.Sprintf("kfb%d", i), dec(-2, 0))),
				"enzyme", network.Named(fmt.Sprintf("D%d", i)),
				"km", network.Named(add(fmt.Sprintf("Kfb%d", i), dec(-3, -1))))
		} else {
			k := add(fmt.Sprintf("kfb%d", i), dec(-3, -1))
			K := add(fmt.Sprintf("Kfb%d", i), dec(-3, -1))
			rate = network.Rate{Law: network.Expression,
				Expression: fmt.Sprintf("%s*D%d/(1 + (D%d/%s)^2)", k, j, i, K)}
		}
		m.Reactions = append(m.Reactions, network.Reaction{Name: name, Equation: eq, Rate: rate})
	}
	return m
}

func largeSimulation() network.Simulation {
	return network.Simulation{TEnd: 1000, RTol: 1e-6, ATol: 1e-12,
		Output: network.Output{Points: 200, Spacing: "log", First: 1e-3}}
}

// Random builds a random reaction network of about the given number of
// species from the seed: binding of two species into a complex and its
// release, conversions between species, some with coefficients 2, 3 or
// 0.5, synthesis and removal, a few fixed species and two compartments.
// Several pools of species that only bind and convert among themselves
// keep conserved totals, which the other reactions partly break. The
// rates are mass action; the networks are for checks of stoichiometry and
// conservation laws, not for meaningful dynamics.
func Random(seed uint64, species int) *network.Model {
	rng := rand.New(rand.NewPCG(seed, 7))
	species = max(species, 2)
	m := &network.Model{Title: fmt.Sprintf("random network %d", seed),
		Compartments: []network.Compartment{{Name: "cyt", Volume: 1}, {Name: "nuc", Volume: 0.25}}}
	for i := range species {
		comp := "cyt"
		if rng.IntN(4) == 0 {
			comp = "nuc"
		}
		m.Species = append(m.Species, network.Species{Name: fmt.Sprintf("S%d", i), Initial: rng.Float64(),
			Compartment: comp, Fixed: rng.IntN(15) == 0})
	}
	m.Parameters = []network.Parameter{{Name: "k", Value: 1}}
	pick := func() string { return m.Species[rng.IntN(species)].Name }
	coef := func() string {
		switch rng.IntN(10) {
		case 0:
			return "2 "
		case 1:
			return "3 "
		case 2:
			return "0.5 "
		}
		return ""
	}
	reactions := 1 + rng.IntN(species+species/2)
	for j := range reactions {
		var eq string
		switch rng.IntN(8) {
		case 0, 1:
			eq = fmt.Sprintf("%s + %s <=> %s", pick(), pick(), pick())
		case 2, 3:
			eq = fmt.Sprintf("%s -> %s%s", pick(), coef(), pick())
		case 4:
			eq = fmt.Sprintf("%s%s + %s -> %s + %s", coef(), pick(), pick(), pick(), pick())
		case 5:
			eq = fmt.Sprintf("%s <=> %s", pick(), pick())
		case 6:
			eq = fmt.Sprintf("%s%s ->", coef(), pick())
		default:
			eq = fmt.Sprintf("-> %s", pick())
		}
		if rng.IntN(3) != 0 && (j%5 != 0) {
			// mostly conservative: bind, release and convert
			a, b := pick(), pick()
			eq = fmt.Sprintf("%s + %s <=> %s", a, b, pick())
		}
		rate := network.NewRate(network.MassAction, "k", network.Named("k"))
		if strings.Contains(eq, "<=>") {
			rate = network.NewRate(network.MassAction, "k", network.Named("k"), "k_reverse", network.Named("k"))
		}
		m.Reactions = append(m.Reactions, network.Reaction{Name: fmt.Sprintf("r%d", j), Equation: eq, Rate: rate})
	}
	return m
}
