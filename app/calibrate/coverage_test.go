package calibrate

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"kinetarium/network"
)

// chainData writes measurements of B and C of A → B → C (A0 = 1) made from
// Bateman's closed form (Bateman 1910; analytic-checks.md) with Gaussian
// noise of SD sd, and returns the file's name.
func chainData(t testing.TB, dir string, k1, k2, sd float64, rng *rand.Rand, i int) string {
	var b strings.Builder
	b.WriteString("time,B,sd_B,C,sd_C\n")
	for _, tt := range []float64{0.5, 1, 2, 3, 4.5, 6, 8, 10, 12} {
		bb := k1 / (k2 - k1) * (math.Exp(-k1*tt) - math.Exp(-k2*tt))
		cc := 1 - math.Exp(-k1*tt) - bb
		fmt.Fprintf(&b, "%g,%.10g,%g,%.10g,%g\n", tt, bb+sd*rng.NormFloat64(), sd, cc+sd*rng.NormFloat64(), sd)
	}
	name := fmt.Sprintf("chain-%d.csv", i)
	if err := os.WriteFile(filepath.Join(dir, name), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return name
}

// TestCoverage fits 200 synthetic data sets of an invented two-step
// conversion with known constants (k1 = 0.7, k2 = 0.25, noise SD 0.02 on
// B and C at 9 times, fixed seeds) and counts how often the 95 % Fisher
// interval holds the truth. Acceptance: 95 % ± 3.5 % for each constant.
// Why that bound: over n = 200 independent sets the count is binomial with
// SD √(0.95·0.05/200) = 1.54 %, so ±3.5 % is ±2.27 SD (a correct method
// fails it by chance about 2.3 % of the time), and it leaves room for the
// Fisher interval being a linear approximation of a nonlinear model. The
// same fits with intervals half as wide (σ understated by 2, a deliberate
// error) cover about 68 % and must fail the bound, which shows the test
// can fail.
func TestCoverage(t *testing.T) {
	const n = 200
	const k1, k2, sd = 0.7, 0.25, 0.02
	m, err := network.Load("testdata/chain-model.json")
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(2024, 11))
	truth := []float64{k1, k2}
	var hits, hitsHalf [2]int
	for i := 0; i < n; i++ {
		name := chainData(t, dir, k1, k2, sd, rng, i)
		spec := &Spec{Dir: dir, Starts: 1, Noise: Noise{Model: NoiseSD},
			Experiments: []Experiment{{Name: "set", Data: name}},
			Estimate: []Estimate{{Target: "k1", Lower: 0.01, Upper: 10, Start: 0.5, Log: true},
				{Target: "k2", Lower: 0.01, Upper: 10, Start: 0.5, Log: true}}}
		p, err := NewProblemModel(spec, m)
		if err != nil {
			t.Fatal(err)
		}
		rep, err := p.Run(context.Background(), Settings{Workers: 1})
		if err != nil {
			t.Fatalf("set %d: %v", i, err)
		}
		for j, e := range rep.Estimates {
			if e.Low <= truth[j] && truth[j] <= e.High {
				hits[j]++
			}
			// The deliberately wrong interval: half as wide on the log scale.
			f := math.Sqrt(e.High / e.Value)
			if e.Value/f <= truth[j] && truth[j] <= e.Value*f {
				hitsHalf[j]++
			}
		}
	}
	within := func(h int) bool {
		c := float64(h) / n
		return c >= 0.915 && c <= 0.985
	}
	for j, name := range []string{"k1", "k2"} {
		t.Logf("%s: Fisher 95 %% intervals covered the truth in %d of %d sets (%.1f %%); half-width intervals %.1f %%",
			name, hits[j], n, 100*float64(hits[j])/n, 100*float64(hitsHalf[j])/n)
		if !within(hits[j]) {
			t.Errorf("%s: coverage %.1f %% outside 95 ± 3.5 %%", name, 100*float64(hits[j])/n)
		}
		if within(hitsHalf[j]) {
			t.Errorf("%s: half-width intervals passed the bound (%.1f %%); the test cannot tell a wrong interval", name, 100*float64(hitsHalf[j])/n)
		}
	}
}
