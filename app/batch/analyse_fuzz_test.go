package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// fuzzSpec writes data as a spec file and reads it with read: any input
// gives a spec or an error that names the file, never a panic.
func fuzzAnalyseSpec(t *testing.T, data []byte, read func(path string) error) {
	path := filepath.Join(t.TempDir(), "spec.json")
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := read(path); err != nil && !strings.Contains(err.Error(), path) {
		t.Errorf("error %q does not name the file", err)
	}
}

func FuzzContinuationSpec(f *testing.F) {
	for _, name := range []string{"hopf.json", "unknown-knob.json", "empty-range.json"} {
		b, _ := os.ReadFile(filepath.Join("testdata", "analyse", name))
		f.Add(b)
	}
	f.Add([]byte(`{"format": "kinetarium.continuation/1", "knob": 3}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzAnalyseSpec(t, data, func(p string) error { _, err := readContinuationSpec(p); return err })
	})
}

func FuzzSensitivitySpec(f *testing.F) {
	b, _ := os.ReadFile(filepath.Join("..", "..", "examples", "studies", "drug-sensitivity.json"))
	f.Add(b)
	f.Add([]byte(`{"format": "kinetarium.sensitivity/1", "method": "morris", "seed": 1, "level": 2}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzAnalyseSpec(t, data, func(p string) error { _, err := readSensitivitySpec(p); return err })
	})
}

// The example specs run: the toggle's continuation finds its fold, and the
// drug sensitivity writes its indices.
func TestAnalyseExampleSpecs(t *testing.T) {
	dir := t.TempDir()
	out := mustRunCmd(t, runContinue, "../../examples/studies/toggle-continuation.json", "--out", filepath.Join(dir, "c"), "--quiet")
	if !strings.Contains(out, "fold at init:X = 26.5") {
		t.Errorf("continue: %s", out)
	}
	out = mustRunCmd(t, runSensitivity, "../../examples/studies/drug-sensitivity.json", "--out", filepath.Join(dir, "s"), "--quiet")
	rows := readCSV(t, filepath.Join(dir, "s", "indices.csv"))
	if len(rows) != 7 || strings.Join(rows[0], ",") != "readout,target,first,first_low,first_high,total,total_low,total_high" {
		t.Errorf("indices.csv %v (%s)", rows, out)
	}
}

func mustRunCmd(t *testing.T, cmd command, args ...string) string {
	t.Helper()
	var o, e strings.Builder
	if rc := cmd(args, &o, &e); rc != exitOK {
		t.Fatalf("exit %d: %s", rc, e.String())
	}
	return o.String()
}
