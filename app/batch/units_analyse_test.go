package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The analyses in display units. The models (testdata/units) are
// invented, in uM and s. The conversion factors are the SI definitions
// (common practice): 1 h = 3600 s, 1 min = 60 s, 1 uM = 1000 nM =
// 0.001 mM. testdata/units/golden holds what the commands wrote for the
// same inputs before display units reached the analyses (commit d7ffbe4,
// batch built from it): without display units every table and line must
// stay exactly that.

const unitsDir = "testdata/units"

func golden(t *testing.T, name string) []byte {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(unitsDir, "golden", name))
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func sameFile(t *testing.T, path, goldenName string) {
	t.Helper()
	got, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if want := golden(t, goldenName); !bytes.Equal(got, want) {
		t.Errorf("%s differs from golden/%s:\n%s\nwant:\n%s", path, goldenName, got, want)
	}
}

// Without display units, steady, continue, sensitivity and stochastic
// write byte for byte what they wrote before (golden files).
func TestAnalysesWithoutDisplayUnitsUnchanged(t *testing.T) {
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	if got := mustRunCmd(t, runSteady, filepath.Join(unitsDir, "decay.json")); got != string(golden(t, "steady.txt")) {
		t.Errorf("steady text:\n%s\nwant:\n%s", got, golden(t, "steady.txt"))
	}
	if got := mustRunCmd(t, runSteady, filepath.Join(unitsDir, "decay.json"), "--json", "--control"); got != string(golden(t, "steady.json")) {
		t.Errorf("steady --json --control:\n%s\nwant:\n%s", got, golden(t, "steady.json"))
	}
	dir := filepath.Join(t.TempDir(), "cont")
	out := mustRunCmd(t, runContinue, filepath.Join(unitsDir, "hopf.json"), "--out", dir, "--quiet")
	if want := strings.ReplaceAll(string(golden(t, "continue.txt")), "/tmp/u2g-cont", dir); out != want {
		t.Errorf("continue stdout:\n%s\nwant:\n%s", out, want)
	}
	for _, f := range []string{"branch.csv", "points.csv", "hill.csv"} {
		sameFile(t, filepath.Join(dir, f), f)
	}
	dir = filepath.Join(t.TempDir(), "morris")
	mustRunCmd(t, runSensitivity, filepath.Join(unitsDir, "morris.json"), "--out", dir, "--quiet")
	sameFile(t, filepath.Join(dir, "morris.csv"), "morris.csv")
	dir = filepath.Join(t.TempDir(), "sobol")
	mustRunCmd(t, runSensitivity, filepath.Join(unitsDir, "sobol.json"), "--out", dir, "--quiet")
	sameFile(t, filepath.Join(dir, "indices.csv"), "indices.csv")
	dir = filepath.Join(t.TempDir(), "sto")
	mustRunCmd(t, runStochastic, stochasticUnitsArgs(dir)...)
	for _, f := range []string{"mean", "sd", "bands", "runs", "histograms", "passages"} {
		sameFile(t, filepath.Join(dir, f+".csv"), "sto-"+f+".csv")
	}
}

func stochasticUnitsArgs(dir string, extra ...string) []string {
	return append([]string{stoModel, "--runs", "12", "--seed", "5", "--t-end", "100", "--points", "11", "--quiet",
		"--hist-at", "100", "--passage", "protein=20", "--no-ode", "--out", dir}, extra...)
}

// steady on decay.json (made at k0, cleared at k1; A ⇄ B at kf, kr) in
// display units, against its closed form: X = k0/k1 = 5 uM, A = T·kr/(kf
// + kr) = 2.4 uM with T = A + B = 4 uM, fluxes make = clear = k0 =
// 0.5 uM/s, swap = 0, eigenvalues −k1 = −0.1/s and −(kf + kr) = −0.05/s,
// slowest time scale 1/0.05 = 20 s (first-order kinetics, common
// practice), each converted by the SI factors.
func TestSteadyInDisplayUnits(t *testing.T) {
	for _, c := range []struct {
		time, conc string
		perConc    float64 // shown concentration per uM
		perSecond  float64 // shown time per s
		flux       string  // the unit of fluxes
	}{
		{"h", "nM", 1000, 1.0 / 3600, "nM/h"},
		{"min", "mM", 0.001, 1.0 / 60, "mM/min"},
		// The model's own units: nothing to convert, so the tables are
		// as without display units and name no units.
		{"s", "uM", 1, 1, ""},
	} {
		out := mustRunCmd(t, runSteady, filepath.Join(unitsDir, "decay.json"), "--json", "--time-unit", c.time, "--concentration-unit", c.conc)
		var got struct {
			Species     map[string]float64 `json:"species"`
			Fluxes      map[string]float64 `json:"fluxes"`
			Totals      map[string]float64 `json:"totals"`
			Eigenvalues [][2]float64       `json:"eigenvalues"`
			Slowest     float64            `json:"slowest_time_scale"`
			Units       map[string]string  `json:"units"`
		}
		if err := json.Unmarshal([]byte(out), &got); err != nil {
			t.Fatalf("%v\n%s", err, out)
		}
		// Bound: Newton's method converges to round-off on this linear
		// system; a wrong factor is off by 60 or more.
		near := func(what string, v, want float64) {
			t.Helper()
			if math.Abs(v-want) > 1e-9*math.Abs(want)+1e-12 {
				t.Errorf("%s, %s: %s = %.12g, want %.12g", c.time, c.conc, what, v, want)
			}
		}
		near("X", got.Species["X"], 5*c.perConc)
		near("A", got.Species["A"], 2.4*c.perConc)
		near("B", got.Species["B"], 1.6*c.perConc)
		near("make", got.Fluxes["make"], 0.5*c.perConc/c.perSecond)
		near("clear", got.Fluxes["clear"], 0.5*c.perConc/c.perSecond)
		near("A + B", got.Totals["A + B = constant"], 4*c.perConc)
		if len(got.Eigenvalues) != 2 {
			t.Fatalf("eigenvalues %v", got.Eigenvalues)
		}
		near("λ1", got.Eigenvalues[0][0], -0.05/c.perSecond)
		near("λ2", got.Eigenvalues[1][0], -0.1/c.perSecond)
		near("slowest time scale", got.Slowest, 20*c.perSecond)
		want := map[string]string{"concentration": c.conc, "time": c.time, "flux": c.flux, "eigenvalue": "1/" + c.time, "total": c.conc}
		if c.flux == "" {
			if got.Units != nil {
				t.Errorf("units %v in the model's own units, want none named", got.Units)
			}
			continue
		}
		for k, v := range want {
			if got.Units[k] != v {
				t.Errorf("%s, %s: units[%s] = %q, want %q", c.time, c.conc, k, got.Units[k], v)
			}
		}
	}
	text := mustRunCmd(t, runSteady, filepath.Join(unitsDir, "decay.json"), "--time-unit", "h", "--concentration-unit", "nM")
	for _, want := range []string{"Slowest time scale: 0.005556 h.", "species\tconcentration (nM)\nX\t5000\n", "reaction\tflux (nM/h)\nmake\t1.8e+06\n",
		"conserved total\tvalue (nM)\nA + B = constant\t4000\n", "eigenvalues of the reduced Jacobian (1/h)\n-180\n-360\n"} {
		if !strings.Contains(text, want) {
			t.Errorf("steady text in h and nM lacks %q:\n%s", want, text)
		}
	}
	var errb bytes.Buffer
	if rc := runSteady([]string{filepath.Join(unitsDir, "decay.json"), "--time-unit", "mg/L"}, &bytes.Buffer{}, &errb); rc != exitBadInput || !strings.Contains(errb.String(), "--time-unit") {
		t.Errorf("a concentration as the time unit: exit %d, %q", rc, errb.String())
	}
}

// continue on the Brusselator in uM and s (Hopf point at b = 1 + a² = 2,
// X = a = 1 uM, Y = b/a = 2 uM, period 2π/a = 2π s; analytic-checks.md)
// shown in min and nM: the knob keeps its unit (1/s, named), X and Y are
// 1000 × the golden values, the largest real part of the eigenvalues 60
// × (per minute), the period 2π/60 min.
func TestContinueInDisplayUnits(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "cont")
	out := mustRunCmd(t, runContinue, filepath.Join(unitsDir, "hopf.json"), "--out", dir, "--quiet", "--time-unit", "min", "--concentration-unit", "nM")
	if want := "Hopf point at b = 2 1/s, X = 1000 nM, Y = 2000 nM: oscillations begin with period 0.10472 min"; !strings.Contains(out, want) {
		t.Errorf("stdout lacks %q:\n%s", want, out)
	}
	branch := readCSV(t, filepath.Join(dir, "branch.csv"))
	if h := strings.Join(branch[0], ","); h != "parameter (1/s),X (nM),Y (nM),stable,max_real_eigenvalue (1/min)" {
		t.Errorf("branch.csv header %q", h)
	}
	raw := readCSV(t, filepath.Join(unitsDir, "golden", "branch.csv"))
	if len(raw) != len(branch) {
		t.Fatalf("%d rows, %d without display units", len(branch), len(raw))
	}
	for k := 1; k < len(raw); k++ {
		r, b := raw[k], branch[k]
		if b[0] != r[0] || b[3] != r[3] || num(t, b[1]) != 1000*num(t, r[1]) || num(t, b[2]) != 1000*num(t, r[2]) || num(t, b[4]) != 60*num(t, r[4]) {
			t.Fatalf("row %d %v, want the knob and stability of %v, X and Y × 1000, the eigenvalue × 60", k, b, r)
		}
	}
	pts := readCSV(t, filepath.Join(dir, "points.csv"))
	if h := strings.Join(pts[0], ","); h != "kind,parameter (1/s),X (nM),Y (nM)" || len(pts) != 2 || math.Abs(num(t, pts[1][2])-1000) > 1e-3 {
		t.Errorf("points.csv %v", pts)
	}
	hill, rawHill := readCSV(t, filepath.Join(dir, "hill.csv")), readCSV(t, filepath.Join(unitsDir, "golden", "hill.csv"))
	if h := strings.Join(hill[0], ","); h != "response,knob,kind,bottom (nM),top (nM),half_effect (1/s),hill_coefficient,r_squared,points" {
		t.Errorf("hill.csv header %q", h)
	}
	// The fit is of the values as computed, shown scaled by 1000: bottom
	// and top scale, the half-effect dose and the coefficient do not.
	// Bound 1e-12 relative: only the scaling's rounding differs.
	for _, c := range []struct {
		col   int
		scale float64
	}{{3, 1000}, {4, 1000}, {5, 1}, {6, 1}} {
		g, w := num(t, hill[1][c.col]), c.scale*num(t, rawHill[1][c.col])
		if math.Abs(g-w) > 1e-12*math.Abs(w) {
			t.Errorf("hill.csv %s = %g, want %g", hill[0][c.col], g, w)
		}
	}
}

// Morris effects are differences of a readout, so they take its unit:
// the peak of X in nM is 1000 × the golden effects in uM, its area in
// nM·h 1000/3600 × those in uM·s. Sobol indices are ratios of variances,
// pure numbers: the same file with display units as without.
func TestSensitivityInDisplayUnits(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "morris")
	mustRunCmd(t, runSensitivity, filepath.Join(unitsDir, "morris.json"), "--out", dir, "--quiet", "--time-unit", "h", "--concentration-unit", "nM")
	got, raw := readCSV(t, filepath.Join(dir, "morris.csv")), readCSV(t, filepath.Join(unitsDir, "golden", "morris.csv"))
	if len(got) != len(raw) || strings.Join(got[0], ",") != strings.Join(raw[0], ",") {
		t.Fatalf("morris.csv %v, want the rows of %v", got, raw)
	}
	for k := 1; k < len(raw); k++ {
		scale, name := 1000.0, "peakX (nM)"
		if raw[k][0] == "areaX" {
			scale, name = 1000.0/3600, "areaX (nM·h)"
		}
		if got[k][0] != name || got[k][1] != raw[k][1] || got[k][5] != raw[k][5] {
			t.Errorf("row %d %v, want readout %q and the rest of %v", k, got[k], name, raw[k])
		}
		// Bound: the runs are the same; only the scaling's rounding
		// differs (a few ulps).
		for col := 2; col <= 4; col++ {
			if g, w := num(t, got[k][col]), scale*num(t, raw[k][col]); math.Abs(g-w) > 1e-12*math.Abs(w) {
				t.Errorf("row %d %s = %.17g, want %.17g", k, got[0][col], g, w)
			}
		}
	}
	dir = filepath.Join(t.TempDir(), "sobol")
	mustRunCmd(t, runSensitivity, filepath.Join(unitsDir, "sobol.json"), "--out", dir, "--quiet", "--time-unit", "h", "--concentration-unit", "nM")
	sameFile(t, filepath.Join(dir, "indices.csv"), "indices.csv")
}

// A stochastic ensemble of the bursty reporter (in min) shown in h: every
// time is the golden time / 60, counts are the golden counts, and the
// headers say the time unit and that counts are molecules.
func TestStochasticInDisplayUnits(t *testing.T) {
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	dir := filepath.Join(t.TempDir(), "sto")
	mustRunCmd(t, runStochastic, stochasticUnitsArgs(dir, "--time-unit", "h")...)
	mean, raw := readCSV(t, filepath.Join(dir, "mean.csv")), readCSV(t, filepath.Join(unitsDir, "golden", "sto-mean.csv"))
	if h := strings.Join(mean[0], ","); h != "time (h),gene_off (molecules),gene_on (molecules),mRNA (molecules),protein (molecules),dimer (molecules)" {
		t.Errorf("mean.csv header %q", h)
	}
	for k := 1; k < len(raw); k++ {
		if num(t, mean[k][0]) != num(t, raw[k][0])/60 || strings.Join(mean[k][1:], ",") != strings.Join(raw[k][1:], ",") {
			t.Fatalf("mean.csv row %d %v, want the time of %v / 60 and its counts", k, mean[k], raw[k])
		}
	}
	pass, rawPass := readCSV(t, filepath.Join(dir, "passages.csv")), readCSV(t, filepath.Join(unitsDir, "golden", "sto-passages.csv"))
	if h := strings.Join(pass[0], ","); h != "run,protein reaches 20 molecules (h)" {
		t.Errorf("passages.csv header %q", h)
	}
	for k := 1; k < len(rawPass); k++ {
		if rawPass[k][1] == "" {
			if pass[k][1] != "" {
				t.Errorf("passage row %d %v, want not reached", k, pass[k])
			}
			continue
		}
		if g, w := num(t, pass[k][1]), num(t, rawPass[k][1])/60; math.Abs(g-w) > 1e-15*w {
			t.Errorf("passage row %d: %g h, want %g min / 60 = %g", k, g, num(t, rawPass[k][1]), w)
		}
	}
	hist := readCSV(t, filepath.Join(dir, "histograms.csv"))
	if h := strings.Join(hist[0], ","); h != "time (h),species,molecules,runs" || num(t, hist[1][0]) != 100.0/60 {
		t.Errorf("histograms.csv starts %v %v", hist[0], hist[1])
	}
	bands := readCSV(t, filepath.Join(dir, "bands.csv"))
	if h := strings.Join(bands[0][:3], ","); h != "species,unit,time (h)" || bands[1][1] != "molecules" {
		t.Errorf("bands.csv starts %v %v", bands[0], bands[1])
	}
	// Shards keep the display units to the merge, which writes what the
	// whole run wrote.
	parts := filepath.Join(t.TempDir(), "parts")
	for _, sh := range []string{"0/2", "1/2"} {
		mustRunCmd(t, runStochastic, stochasticUnitsArgs(parts, "--time-unit", "h", "--shard", sh)...)
	}
	merged := filepath.Join(t.TempDir(), "merged")
	mustRunCmd(t, runMerge, filepath.Join(parts, "part-0-of-2.json"), filepath.Join(parts, "part-1-of-2.json"), "--out", merged)
	for _, f := range []string{"mean.csv", "passages.csv", "histograms.csv"} {
		a, _ := os.ReadFile(filepath.Join(dir, f))
		b, err := os.ReadFile(filepath.Join(merged, f))
		if err != nil || !bytes.Equal(a, b) {
			t.Errorf("%s merged from shards differs from the whole run (%v)", f, err)
		}
	}
}
