package main

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runCmd(cmd command, args ...string) (rc int, stdout, stderr string) {
	var out, errb bytes.Buffer
	rc = cmd(args, &out, &errb)
	return rc, out.String(), errb.String()
}

// TestExportImport: export an example, import it back, and simulate both
// with --amounts at rtol 1e-11: the tables agree to 1e-8, and the amounts are concentrations
// times the compartments' volumes (plasma 5 L, tissue 30 L).
func TestExportImport(t *testing.T) {
	dir := t.TempDir()
	xml := filepath.Join(dir, "drug.xml")
	back := filepath.Join(dir, "drug.json")
	if rc, _, errs := runCmd(runExport, "../../examples/two-compartment-drug.json", "--out", xml); rc != 0 {
		t.Fatalf("export: %d %s", rc, errs)
	}
	if rc, _, errs := runCmd(runImport, xml, "--out", back); rc != 0 {
		t.Fatalf("import: %d %s", rc, errs)
	}
	_, conc, _ := simRun("../../examples/two-compartment-drug.json", "--points", "5", "--t-end", "24", "--rtol", "1e-11")
	_, amt, _ := simRun(back, "--points", "5", "--t-end", "24", "--rtol", "1e-11", "--amounts")
	h1, _, rows1 := parseTable(t, conc)
	h2, _, rows2 := parseTable(t, amt)
	// The headers name the same columns; the exported model's unit labels
	// travel as notes (SBML unit definitions are not written), so the
	// imported model's headers carry no units.
	for _, h := range [][]string{h1, h2} {
		for i, name := range h {
			h[i], _, _ = strings.Cut(name, " (")
		}
	}
	if strings.Join(h1, ",") != strings.Join(h2, ",") {
		t.Fatalf("headers differ: %v and %v", h1, h2)
	}
	vol := map[string]float64{"D_gut": 1, "D_plasma": 5, "D_tissue": 30, "M_plasma": 5}
	for i := range rows1 {
		for j, name := range h1[1:] {
			v, ok := vol[name]
			if !ok {
				v = 1 // assignments keep their values
			}
			want := rows1[i][j] * v
			if math.Abs(rows2[i][j]-want) > 1e-8*math.Max(1, math.Abs(want)) {
				t.Errorf("row %d %s: %v as an amount, want %v", i, name, rows2[i][j], want)
			}
		}
	}
}

// TestImportRefused: a model with what cannot be represented exits with
// status 2 and names each unsupported element with its line.
func TestImportRefused(t *testing.T) {
	p := filepath.Join(t.TempDir(), "bad.xml")
	os.WriteFile(p, []byte(`<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2"><model>
<listOfRules><algebraicRule><math xmlns="http://www.w3.org/1998/Math/MathML"><cn>0</cn></math></algebraicRule></listOfRules>
<listOfEvents><event id="E" useValuesFromTriggerTime="true"><trigger initialValue="true" persistent="true"><math xmlns="http://www.w3.org/1998/Math/MathML"><true/></math></trigger>
<delay><math xmlns="http://www.w3.org/1998/Math/MathML"><cn>1</cn></math></delay></event></listOfEvents>
</model></sbml>`), 0o644)
	rc, _, errs := runCmd(runImport, p)
	if rc != exitBadInput || !strings.Contains(errs, "bad.xml:2:14: algebraic rule: algebraic rules are not supported") ||
		!strings.Contains(errs, `bad.xml:4:1: event "E": events with a delay are not supported`) || !strings.Contains(errs, "2 problems") {
		t.Errorf("exit %d, stderr:\n%s", rc, errs)
	}
	if rc, _, _ := runCmd(runExport, "no-such.json"); rc != exitBadInput {
		t.Errorf("export of a missing file: exit %d, want 2", rc)
	}
}

// TestConformanceCommand runs the subcommand on one case of the SBML Test
// Suite, when it is present.
func TestConformanceCommand(t *testing.T) {
	src := "../../../shared/reference/sbml-test-suite/cases/00001"
	if _, err := os.Stat(src); err != nil {
		t.Skipf("the SBML Test Suite is not at %s: %v", src, err)
	}
	dir := t.TempDir()
	os.Mkdir(filepath.Join(dir, "00001"), 0o755)
	for _, f := range []string{"00001-sbml-l3v2.xml", "00001-settings.txt", "00001-results.csv", "00001-model.m"} {
		data, err := os.ReadFile(filepath.Join(src, f))
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, "00001", f), data, 0o644)
	}
	report := filepath.Join(dir, "report.csv")
	rc, out, errs := runCmd(runConformance, dir, "--out", report, "--quiet")
	if rc != 0 || !strings.Contains(out, "1 cases: 1 pass") {
		t.Fatalf("exit %d: %s %s", rc, out, errs)
	}
	data, _ := os.ReadFile(report)
	if !strings.HasPrefix(string(data), "case,status,max_error_ratio,message\n00001,pass,") {
		t.Errorf("report:\n%s", data)
	}
}

// A folder without cases is bad input, not a report of 0 cases that
// passes (a mistyped path to the suite gave exit status 0).
func TestConformanceWithoutCases(t *testing.T) {
	var out, errb bytes.Buffer
	if rc := dispatch([]string{"conformance", t.TempDir(), "--quiet"}, &out, &errb); rc != exitBadInput || !strings.Contains(errb.String(), "holds no case folders") {
		t.Errorf("exit %d, stderr %q; want 2 and a message", rc, errb.String())
	}
}
