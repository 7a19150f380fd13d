package stochastic

import (
	"math"
	"math/rand/v2"
)

// splitmix64 is the finaliser of the SplitMix64 generator (Steele, Lea and
// Flood 2014): a bijection of uint64 that scatters nearby inputs.
func splitmix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// RunSeed returns the two words that seed the generator of run number run
// of an ensemble with the given seed. It depends on nothing else, so a run
// draws the same numbers whichever worker or shard does it.
func RunSeed(seed uint64, run int) (uint64, uint64) {
	a := splitmix64(seed ^ splitmix64(uint64(run)))
	b := splitmix64(a ^ uint64(run) ^ 0x5851f42d4c957f2d)
	return a, b
}

// rng draws the random numbers of one run: a PCG generator
// (math/rand/v2) with the draws the simulators need inlined.
type rng struct {
	src rand.PCG
	r   *rand.Rand // over src, for the ziggurat exponential
}

func newRNG() *rng {
	g := &rng{}
	g.r = rand.New(&g.src)
	return g
}

// seed restarts the generator for run number run of an ensemble.
func (g *rng) seed(seed uint64, run int) { g.src.Seed(RunSeed(seed, run)) }

// uniform returns a uniform number in [0, 1).
func (g *rng) uniform() float64 { return float64(g.src.Uint64()>>11) * 0x1p-53 }

// exp returns an exponential number of mean 1.
func (g *rng) exp() float64 { return g.r.ExpFloat64() }

// poisson returns a Poisson number of mean mu ≥ 0: by inversion (sequential
// search from zero) for mu < 10, by the transformed rejection with squeeze
// of Hörmann (1993, "The transformed rejection method for generating
// Poisson random variables", PTRS) above.
func (g *rng) poisson(mu float64) float64 {
	switch {
	case mu <= 0:
		return 0
	case mu < 10:
		p := math.Exp(-mu)
		u := g.uniform()
		k := 0.0
		for u > p {
			u -= p
			k++
			p *= mu / k
			if p == 0 { // far in the tail: roundoff; stop
				break
			}
		}
		return k
	}
	smu := math.Sqrt(mu)
	b := 0.931 + 2.53*smu
	a := -0.059 + 0.02483*b
	invAlpha := 1.1239 + 1.1328/(b-3.4)
	vr := 0.9277 - 3.6224/(b-2)
	logMu := math.Log(mu)
	for {
		u := g.uniform() - 0.5
		v := g.uniform()
		us := 0.5 - math.Abs(u)
		k := math.Floor((2*a/us+b)*u + mu + 0.43)
		if us >= 0.07 && v <= vr {
			return k
		}
		if k < 0 || (us < 0.013 && v > us) {
			continue
		}
		lg, _ := math.Lgamma(k + 1)
		if math.Log(v)+math.Log(invAlpha)-math.Log(a/(us*us)+b) <= -mu+k*logMu-lg {
			return k
		}
	}
}
