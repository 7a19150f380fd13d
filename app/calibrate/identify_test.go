package calibrate

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"kinetarium/network"
)

// TestNotDetermined fits a conversion whose rate is ka·kb·A to data of B:
// only the product is determined (common practice: a structurally
// non-identifiable pair). The fit must say so in words, with unbounded
// Fisher intervals for both, never a tiny interval; the profiles are open.
func TestNotDetermined(t *testing.T) {
	m, err := network.Load("testdata/product-model.json")
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("time,B,sd_B\n")
	noise := []float64{0.3, -1.1, 0.8, -0.2, 1.4, -0.7, 0.1, -0.9}
	for i, tt := range []float64{0.5, 1, 2, 3, 4, 5, 6, 8} {
		fmt.Fprintf(&b, "%g,%.8g,0.01\n", tt, 1-math.Exp(-0.5*tt)+0.01*noise[i])
	}
	if err := os.WriteFile(filepath.Join(dir, "b.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	spec := &Spec{Dir: dir, Starts: 1, Noise: Noise{Model: NoiseSD}, Experiments: []Experiment{{Name: "e", Data: "b.csv"}},
		Estimate: []Estimate{{Target: "ka", Lower: 0.01, Upper: 100, Start: 2, Log: true}, {Target: "kb", Lower: 1e-4, Upper: 1e4, Start: 2, Log: true}}}
	p, err := NewProblemModel(spec, m)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := p.Run(context.Background(), Settings{Workers: 1, Profiles: true})
	if err != nil {
		t.Fatal(err)
	}
	if prod := rep.Estimates[0].Value * rep.Estimates[1].Value; math.Abs(prod-0.5) > 0.02 {
		t.Errorf("ka·kb = %g, want about 0.5", prod)
	}
	for _, e := range rep.Estimates {
		if e.Determined || !math.IsInf(e.SE, 1) || !math.IsInf(e.Low, -1) || !math.IsInf(e.High, 1) {
			t.Errorf("%s: determined %v, SE %g, interval [%g, %g]; want not determined, unbounded", e.Name, e.Determined, e.SE, e.Low, e.High)
		}
	}
	// Within ka's bounds kb can always make up the product, so ka's
	// profile is flat and open on both sides; kb's ends where ka reaches
	// its bounds: kb = 0.5/100 and 0.5/0.01, a little beyond with the
	// noise.
	if e := rep.Estimates[0]; !math.IsInf(e.ProfileLow, -1) || !math.IsInf(e.ProfileHigh, 1) {
		t.Errorf("ka: profile interval [%g, %g]; want open on both sides", e.ProfileLow, e.ProfileHigh)
	}
	if e := rep.Estimates[1]; !(e.ProfileLow > 0.004 && e.ProfileLow < 0.005) || !(e.ProfileHigh > 50 && e.ProfileHigh < 62) {
		t.Errorf("kb: profile interval [%g, %g]; want about [0.0045, 55]", e.ProfileLow, e.ProfileHigh)
	}
	t.Logf("kb profile interval [%.4g, %.4g]", rep.Estimates[1].ProfileLow, rep.Estimates[1].ProfileHigh)
	notes := strings.Join(rep.Notes, "\n")
	for _, want := range []string{"ka is not determined by the data", "kb is not determined by the data", "the interval is open there"} {
		if !strings.Contains(notes, want) {
			t.Errorf("notes lack %q:\n%s", want, notes)
		}
	}
}
