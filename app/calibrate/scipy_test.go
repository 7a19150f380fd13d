package calibrate

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"testing"
)

// TestAgreesWithSciPy fits the invented enzyme assay of testdata/scipy
// (kcat, Km and kin from the product at two substrate levels, 24 values
// with SDs) and compares with the reference that
// scripts/enzyme_fit_reference.py made with SciPy's
// optimize.least_squares on integrate.solve_ivp (BDF, rtol 1e-11, exact
// sensitivities; Debian's python3-scipy, version in the file), committed
// as scipy-reference.json so that the test runs without SciPy.
//
// Bounds: estimates and standard errors agree to a relative 1e-8, the
// weighted sum of squares to 1e-7. Both sides solve at tight tolerances
// (model values good to about 1e-9 relative: rtol 1e-10 here, 1e-11 in
// SciPy) and stop at the minimum to rounding level, so the estimates
// differ by about the solves' error (measured: ≤ 5e-10, standard errors
// ≤ 1e-9, the sum of squares 4.7e-9, which carries the solves' error
// times the residuals). A fit that stopped early, or a Jacobian off by
// one term, is far outside.
func TestAgreesWithSciPy(t *testing.T) {
	b, err := os.ReadFile("testdata/scipy/scipy-reference.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		SciPy     string             `json:"scipy"`
		Estimates map[string]float64 `json:"estimates"`
		SE        map[string]float64 `json:"se"`
		WSSR      float64            `json:"wssr"`
		NData     int                `json:"n_data"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	spec, err := LoadSpec("testdata/scipy/enzyme-fit.json")
	if err != nil {
		t.Fatal(err)
	}
	p, err := NewProblem(spec)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := p.Run(context.Background(), Settings{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	rel := func(a, b float64) float64 { return math.Abs(a-b) / math.Abs(b) }
	if rep.NData != ref.NData {
		t.Fatalf("%d data, SciPy's fit %d", rep.NData, ref.NData)
	}
	if d := rel(rep.WSSR, ref.WSSR); d > 1e-7 {
		t.Errorf("weighted sum of squares %.12g, SciPy %.12g (relative difference %.2g, bound 1e-7)", rep.WSSR, ref.WSSR, d)
	}
	t.Logf("SciPy %s: weighted SSR %.12g here, %.12g there", ref.SciPy, rep.WSSR, ref.WSSR)
	for _, e := range rep.Estimates {
		want, ok := ref.Estimates[e.Name]
		if !ok {
			t.Fatalf("no SciPy estimate of %s", e.Name)
		}
		dv, ds := rel(e.Value, want), rel(e.SE, ref.SE[e.Name])
		t.Logf("%s: %.10g (SciPy %.10g, relative %.1g); SE %.6g (SciPy %.6g, relative %.1g)", e.Name, e.Value, want, dv, e.SE, ref.SE[e.Name], ds)
		if dv > 1e-8 {
			t.Errorf("%s = %.12g, SciPy %.12g: relative difference %.2g (bound 1e-8)", e.Name, e.Value, want, dv)
		}
		if ds > 1e-8 {
			t.Errorf("SE of %s = %.8g, SciPy %.8g: relative difference %.2g (bound 1e-8)", e.Name, e.SE, ref.SE[e.Name], ds)
		}
	}
}
