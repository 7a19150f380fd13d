package main

import (
	"bytes"
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// steady --json --control on the two-step chain gives its published values
// (analytic-checks.md; Kacser & Burns 1973): S = 0.25, J = 0.75,
// C^J = (0.75, 0.25), C^S = (0.75, −0.75).
func TestSteadyJSON(t *testing.T) {
	var out, errb bytes.Buffer
	if rc := runSteady([]string{"testdata/analyse/two-step.json", "--json", "--control"}, &out, &errb); rc != exitOK {
		t.Fatalf("exit %d: %s", rc, errb.String())
	}
	var got struct {
		Species        map[string]float64            `json:"species"`
		Fluxes         map[string]float64            `json:"fluxes"`
		Totals         map[string]float64            `json:"totals"`
		Eigenvalues    [][2]float64                  `json:"eigenvalues"`
		Stable         bool                          `json:"stable"`
		Classification string                        `json:"classification"`
		Elasticities   map[string]map[string]float64 `json:"elasticities"`
		FluxControl    map[string]map[string]float64 `json:"flux_control"`
		ConcControl    map[string]map[string]float64 `json:"concentration_control"`
	}
	if err := json.Unmarshal(out.Bytes(), &got); err != nil {
		t.Fatalf("%v\n%s", err, out.String())
	}
	near := func(what string, v, want float64) {
		t.Helper()
		if math.Abs(v-want) > 1e-10 {
			t.Errorf("%s = %g, want %g", what, v, want)
		}
	}
	near("S", got.Species["S"], 0.25)
	near("J", got.Fluxes["v2"], 0.75)
	near("C^J_v1", got.FluxControl["v2"]["v1"], 0.75)
	near("C^J_v2", got.FluxControl["v2"]["v2"], 0.25)
	near("C^S_v1", got.ConcControl["S"]["v1"], 0.75)
	near("C^S_v2", got.ConcControl["S"]["v2"], -0.75)
	// ε^v2_S = 1 for a first-order step (common practice).
	near("ε^v2_S", got.Elasticities["v2"]["S"], 1)
	// Jacobian −(km1 + k2) = −4.
	if len(got.Eigenvalues) != 1 || math.Abs(got.Eigenvalues[0][0]+4) > 1e-12 || !got.Stable || got.Classification != "stable node" {
		t.Errorf("eigenvalues %v stable %v %q", got.Eigenvalues, got.Stable, got.Classification)
	}
}

func TestSteadyFailures(t *testing.T) {
	var out, errb bytes.Buffer
	if rc := runSteady([]string{"testdata/analyse/synthesis.json", "--json"}, &out, &errb); rc != exitFailed || !strings.Contains(errb.String(), "P keeps growing") {
		t.Errorf("pure synthesis: exit %d, %q", rc, errb.String())
	}
	errb.Reset()
	if rc := runSteady([]string{"testdata/analyse/nothing.json"}, &out, &errb); rc != exitBadInput {
		t.Errorf("missing file: exit %d, %q", rc, errb.String())
	}
}

// continue on the Brusselator (a = 1) finds the Hopf point at b = 2 =
// 1 + a² (analytic-checks.md) and writes the files in their formats.
func TestContinueOutputs(t *testing.T) {
	dir := t.TempDir()
	var out, errb bytes.Buffer
	if rc := runContinue([]string{"testdata/analyse/hopf.json", "--out", dir, "--quiet"}, &out, &errb); rc != exitOK {
		t.Fatalf("exit %d: %s", rc, errb.String())
	}
	branch := readCSV(t, filepath.Join(dir, "branch.csv"))
	if h := strings.Join(branch[0], ","); h != "parameter,X,Y,stable,max_real_eigenvalue" {
		t.Errorf("branch.csv header %q", h)
	}
	pts := readCSV(t, filepath.Join(dir, "points.csv"))
	if h := strings.Join(pts[0], ","); h != "kind,parameter,X,Y" {
		t.Errorf("points.csv header %q", h)
	}
	if len(pts) != 2 || pts[1][0] != "hopf" || math.Abs(num(t, pts[1][1])-2) > 1e-6 {
		t.Errorf("points.csv %v, want one Hopf point at b = 2", pts)
	}
	for _, row := range branch[1:] {
		b, stable := num(t, row[0]), row[3] == "true"
		if math.Abs(b-2) > 1e-6 && stable != (b < 2) {
			t.Errorf("b = %g: stable %v", b, stable)
		}
	}
	if !strings.Contains(out.String(), "Hopf point at b = 2") {
		t.Errorf("stdout %q", out.String())
	}
}

func TestContinueBadInput(t *testing.T) {
	for spec, want := range map[string]string{
		"unknown-knob.json": `no parameter "kcat"`,
		"empty-range.json":  "give a range",
	} {
		var out, errb bytes.Buffer
		rc := runContinue([]string{filepath.Join("testdata/analyse", spec), "--out", t.TempDir()}, &out, &errb)
		if rc != exitBadInput || !strings.Contains(errb.String(), want) {
			t.Errorf("%s: exit %d, %q; want 2 and %q", spec, rc, errb.String(), want)
		}
	}
}
