package stochastic

import (
	"context"
	"fmt"
	"math"
	"os"
	"testing"
)

// The acceptance test of an ensemble against the moments of the chemical
// master equation (../shared/reference/analytic-checks.md, "common
// practice for stochastic simulators' test suites"): at each output time
// t > 0, with n runs,
//
//	Z = √n (mean − μ(t))/σ(t)        within (−3, 3)
//	Y = √(n/2) (s²/σ(t)² − 1)         within (−5, 5)
//
// Under a correct simulator Z is close to standard normal, so
// P(|Z| ≥ 3) ≈ 0.0027 at one time; Y has variance about 1 + κ/2 (κ the
// excess kurtosis of the counts: 1/μ for immigration–death's Poisson
// count, several for birth–death's skewed one), so |Y| ≥ 5 is rarer than
// 1 % at one time. The checks at neighbouring times are strongly
// correlated (the same runs), so excursions come in clusters: one unlucky
// ensemble is out at two or three neighbouring times. We allow two
// excursions per method and model. Measured on the direct method with
// 1,000 ensembles of n = 1,000 per model (seeds 1000–1999), a correct
// simulator had more than two excursions in 3 (immigration–death) and 5
// (birth–death) of them, 0.3–0.5 %; with 200 ensembles of n = 10,000, in 0
// and 1 of them. A rate 10 % off gives 20 to 40 excursions (see
// TestMomentsWrongRate). The runs are seeded, so each test's outcome is
// reproducible; the allowance is what a change of random stream may cost.
//
// n is 1,000 in the quick form (go test) and 10,000 with
// STOCHASTIC_FULL=1 (make test-stochastic). Z and Y are normalised by n, so
// the bounds are the same for both; only the power to see a small error
// grows with n (a bias of 3σ/√n in the mean: 9.5 % of σ at n = 1,000,
// 3 % at n = 10,000).
func ensembleRuns() int {
	if os.Getenv("STOCHASTIC_FULL") != "" {
		return 10000
	}
	return 1000
}

const allowedExcursions = 2

// momentReport is the outcome of the acceptance test.
type momentReport struct {
	excursions int
	maxZ, maxY float64
	worst      string
}

func (r momentReport) String() string {
	return fmt.Sprintf("%d excursions, max |Z| = %.2f, max |Y| = %.2f (%s)", r.excursions, r.maxZ, r.maxY, r.worst)
}

// passes reports whether r meets the bounds above.
func (r momentReport) passes() bool {
	return r.excursions <= allowedExcursions
}

// momentTest applies the acceptance test to species 0 of e.
func momentTest(e *Ensemble, mu, sigma2 func(t float64) float64) momentReport {
	var r momentReport
	n := float64(e.Done)
	for i, t := range e.Times {
		v := sigma2(t)
		if v <= 0 {
			continue
		}
		z := math.Sqrt(n) * (e.Mean(i, 0) - mu(t)) / math.Sqrt(v)
		y := math.Sqrt(n/2) * (e.Var(i, 0)/v - 1)
		if math.Abs(z) >= 3 {
			r.excursions++
		}
		if math.Abs(y) >= 5 {
			r.excursions++
		}
		if math.Abs(z) > r.maxZ || math.Abs(y) > r.maxY {
			r.worst = fmt.Sprintf("t = %g: mean %.4g vs %.4g, variance %.4g vs %.4g", t, e.Mean(i, 0), mu(t), e.Var(i, 0), v)
		}
		r.maxZ = math.Max(r.maxZ, math.Abs(z))
		r.maxY = math.Max(r.maxY, math.Abs(y))
	}
	return r
}

// immigrationDeath is ∅ → X at rate alpha, X → ∅ at rate mu·X, X(0) = 0.
func immigrationDeath(alpha, mu float64) *Network {
	return &Network{Species: []string{"X"}, Initial: []float64{0}, Channels: []Channel{
		{Name: "in", Change: []Term{{0, 1}}, C: alpha},
		{Name: "out", Change: []Term{{0, -1}}, Reactants: []Term{{0, 1}}, C: mu},
	}}
}

// birthDeath is X → 2X at rate lambda·X, X → ∅ at rate mu·X.
func birthDeath(lambda, mu, x0 float64) *Network {
	return &Network{Species: []string{"X"}, Initial: []float64{x0}, Channels: []Channel{
		{Name: "birth", Change: []Term{{0, 1}}, Reactants: []Term{{0, 1}}, C: lambda},
		{Name: "death", Change: []Term{{0, -1}}, Reactants: []Term{{0, 1}}, C: mu},
	}}
}

func grid(dt float64, n int) []float64 {
	ts := make([]float64, n)
	for i := range ts {
		ts[i] = dt * float64(i+1)
	}
	return ts
}

// The closed forms (analytic-checks.md): immigration–death is Poisson at
// every t with mean = variance = (α/μ)(1 − e^(−μt)); birth–death has mean
// X0 e^(rt) and variance X0 (λ+μ)/r e^(rt)(e^(rt) − 1), r = λ − μ (Bailey
// 1964; Kendall 1948).
const (
	idAlpha, idMu          = 10.0, 1.0
	bdLambda, bdMu, bdX0   = 1.0, 0.8, 10.0
	momentDT, momentPoints = 0.25, 20
)

func idMean(t float64) float64 { return idAlpha / idMu * (1 - math.Exp(-idMu*t)) }

func bdMean(t float64) float64 { return bdX0 * math.Exp((bdLambda-bdMu)*t) }

func bdVar(t float64) float64 {
	r := bdLambda - bdMu
	return bdX0 * (bdLambda + bdMu) / r * math.Exp(r*t) * (math.Exp(r*t) - 1)
}

type momentCase struct {
	name   string
	net    func(scale float64) *Network // scale multiplies one rate constant
	mu, s2 func(float64) float64
}

var momentCases = []momentCase{
	{"immigration-death", func(sc float64) *Network { return immigrationDeath(idAlpha*sc, idMu) }, idMean, idMean},
	{"birth-death", func(sc float64) *Network { return birthDeath(bdLambda*sc, bdMu, bdX0) }, bdMean, bdVar},
}

var methodCases = []Settings{
	{Method: Direct, Search: SearchLinear},
	{Method: Direct, Search: SearchTree},
	{Method: NextReaction},
	{Method: TauLeap},
}

func methodName(s Settings) string {
	switch {
	case s.Method == Direct && s.Search == SearchTree:
		return "direct-tree"
	case s.Method == Direct:
		return "direct-linear"
	}
	return string(s.Method)
}

func runMoments(t *testing.T, c momentCase, set Settings, scale float64, seed uint64) momentReport {
	t.Helper()
	e, err := RunEnsemble(context.Background(), c.net(scale), EnsembleSettings{
		Runs: ensembleRuns(), Seed: seed, Times: grid(momentDT, momentPoints), Sim: set, Keep: -1})
	if err != nil {
		t.Fatal(err)
	}
	if e.Done != ensembleRuns() || len(e.Failures) > 0 {
		t.Fatalf("%d runs done, failures %v", e.Done, e.Failures)
	}
	return momentTest(e, c.mu, c.s2)
}

func TestMoments(t *testing.T) {
	for _, c := range momentCases {
		for _, m := range methodCases {
			t.Run(c.name+"/"+methodName(m), func(t *testing.T) {
				r := runMoments(t, c, m, 1, 2026)
				t.Logf("n = %d: %v", ensembleRuns(), r)
				if !r.passes() {
					t.Errorf("moments rejected: %v", r)
				}
			})
		}
	}
}

// TestMomentsWrongRate shows that the acceptance test can fail: a rate
// constant 10 % too high (immigration for immigration–death, birth for
// birth–death) must be rejected by the same test for every method.
func TestMomentsWrongRate(t *testing.T) {
	for _, c := range momentCases {
		for _, m := range methodCases {
			t.Run(c.name+"/"+methodName(m), func(t *testing.T) {
				r := runMoments(t, c, m, 1.1, 2026)
				t.Logf("rate ×1.1, n = %d: %v", ensembleRuns(), r)
				if r.passes() {
					t.Errorf("a 10 %% wrong rate passed the acceptance test: %v", r)
				}
			})
		}
	}
}
