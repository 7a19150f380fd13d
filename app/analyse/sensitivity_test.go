package analyse

import (
	"context"
	"math"
	"strings"
	"testing"

	"kinetarium/app/study"
	"kinetarium/network"
	"kinetarium/solve/explore"
)

// ishigamiModel is the Ishigami function (a = 7, b as given; Saltelli et
// al. 2008) as a one-species model whose value at t = 1 is the function
// of three parameters: Y' = f, Y(0) = 0. Rate expressions have no sine,
// so the parameters hold s1 = sin x1, s2 = sin x2 and x3, drawn as the
// sines of uniform angles (sineOfUniform): f = s1 + a s2² + b x3⁴ s1 is
// then exactly the Ishigami function of (x1, x2, x3), and since each
// parameter is a function of one input alone, the indices are those of
// x1, x2, x3.
func ishigamiModel(t *testing.T, b string) *study.Prepared {
	m, err := network.Read(strings.NewReader(`{"format": "kinetarium.model/1",
		"species": [{"name": "Y", "initial": 0}],
		"parameters": [{"name": "s1", "value": 0}, {"name": "s2", "value": 0}, {"name": "x3", "value": 0},
			{"name": "a", "value": 7}, {"name": "b", "value": `+b+`}],
		"reactions": [{"name": "f", "equation": "-> Y", "rate": {"law": "expression",
			"expression": "s1 + a*s2^2 + b*x3^4*s1"}}],
		"simulation": {"t_end": 1, "output": {"points": 2}, "non_negative": false}}`), "ishigami")
	if err != nil {
		t.Fatal(err)
	}
	p, err := study.Prepare(m)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// ishigamiCheck runs the variance-based analysis of the Ishigami model
// with N base samples and returns how many of the six published indices
// (first order 0.3139, 0.4424, 0; total 0.5576, 0.4424, 0.2437; Saltelli
// et al. 2008) lie outside the estimator's bootstrap interval at level,
// widened by slack on each side.
func ishigamiCheck(t *testing.T, b string, n int, level, slack float64) (int, *Sensitivity) {
	p := ishigamiModel(t, b)
	u := explore.Uniform{Low: -math.Pi, High: math.Pi}
	s, err := GlobalSensitivity(context.Background(), p, SensitivityOptions{
		Vary:    []study.Vary{{Knob: "s1", Dist: sineOfUniform{}}, {Knob: "s2", Dist: sineOfUniform{}}, {Knob: "x3", Dist: u}},
		Samples: n, Seed: 2, Level: level,
		Readouts: []study.ReadoutSpec{{Name: "f", Kind: explore.Final, Species: "Y"}},
	})
	if err != nil {
		t.Fatal(err)
	}
	first := []float64{0.3139, 0.4424, 0}
	total := []float64{0.5576, 0.4424, 0.2437}
	misses := 0
	for k, x := range s.Indices[0] {
		t.Logf("%s: first %.4f [%.4f, %.4f], total %.4f [%.4f, %.4f]", s.Knobs[k], x.First, x.FirstLow, x.FirstHigh, x.Total, x.TotalLow, x.TotalHigh)
		if first[k] < x.FirstLow-slack || first[k] > x.FirstHigh+slack {
			misses++
		}
		if total[k] < x.TotalLow-slack || total[k] > x.TotalHigh+slack {
			misses++
		}
	}
	return misses, s
}

// The Ishigami indices at N = 2^14 (81,920 runs through the population
// runner, about a second): every published index within the estimator's
// 99% bootstrap interval, widened by 5e-5 for the published values'
// rounding to four decimals. With six intervals, a correct estimator
// misses at least one with probability at most about 6% for a random
// seed; the seed is fixed, so the test is repeatable. The same check on a
// deliberately wrong model (b = 0.3) must miss.
func TestIshigami(t *testing.T) {
	misses, s := ishigamiCheck(t, "0.1", 1<<14, 0.99, 5e-5)
	if misses > 0 {
		t.Errorf("%d published Ishigami indices outside the 99%% intervals", misses)
	}
	t.Logf("%d runs in %v", s.Runs, s.Wall)
	if misses, _ := ishigamiCheck(t, "0.3", 1<<14, 0.99, 5e-5); misses == 0 {
		t.Error("a wrong model (b = 0.3) passed: the check cannot fail")
	}
}

// Morris screening of the same model, through the same runner: μ* ≥ |μ|
// (by definition); x3, which acts only with s1 (whose mean is zero), has a
// mean effect μ near zero: |μ| below a third of μ* (closed form:
// E[∂f/∂x3] ∝ E[s1] = 0); s1 has the largest μ*. (s2 shows no effect at
// all: a move of half the probability range turns its angle by π, and
// sin² has period π — a known blind spot of screening with periodic
// inputs.)
func TestMorrisIshigami(t *testing.T) {
	p := ishigamiModel(t, "0.1")
	u := explore.Uniform{Low: -math.Pi, High: math.Pi}
	s, err := GlobalSensitivity(context.Background(), p, SensitivityOptions{Method: Morris,
		Vary:    []study.Vary{{Knob: "s1", Dist: sineOfUniform{}}, {Knob: "s2", Dist: sineOfUniform{}}, {Knob: "x3", Dist: u}},
		Samples: 200, Seed: 5,
		Readouts: []study.ReadoutSpec{{Name: "f", Kind: explore.Final, Species: "Y"}},
	})
	if err != nil {
		t.Fatal(err)
	}
	e := s.Effects[0]
	for k, x := range e {
		t.Logf("%s: μ* %.3f μ %.3f σ %.3f", s.Knobs[k], x.MuStar, x.Mu, x.Sigma)
		if x.MuStar < math.Abs(x.Mu)-1e-12 {
			t.Errorf("%s: μ* %g < |μ| %g", s.Knobs[k], x.MuStar, x.Mu)
		}
	}
	if e[0].MuStar < e[2].MuStar || e[0].MuStar < 1 {
		t.Errorf("s1's μ* %g is not the largest", e[0].MuStar)
	}
	if x := e[2]; math.Abs(x.Mu) > x.MuStar/3 {
		t.Errorf("x3: μ %g not near zero against μ* %g", x.Mu, x.MuStar)
	}
	if len(IndexRows(s)) != 1 || len(EffectRows(s)) != 4 {
		t.Errorf("tables: %d index rows, %d effect rows", len(IndexRows(s)), len(EffectRows(s)))
	}
}

// sineOfUniform is the distribution of sin θ for θ uniform on (−π, π).
type sineOfUniform struct{}

func (sineOfUniform) Quantile(p float64) float64 { return math.Sin(-math.Pi + 2*math.Pi*p) }
func (sineOfUniform) Validate() error            { return nil }
