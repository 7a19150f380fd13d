package main

import (
	"io"
	"os"
	"path/filepath"
	"testing"

	"kinetarium/app/study"
	"kinetarium/solve/explore"
)

// fuzzDir makes a folder with the test model, for specs to name.
func fuzzDir(f *testing.F) string {
	dir := f.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "m.json"), []byte(robustModel), 0o644); err != nil {
		f.Fatal(err)
	}
	return dir
}

// fuzzSpec writes data as a spec and prepares the job of cmd from it: it
// must never panic, and a refusal must say something.
func fuzzSpec(t *testing.T, dir string, data []byte, prepare func(args []string, stderr io.Writer) error) {
	spec := filepath.Join(dir, "spec.json")
	if err := os.WriteFile(spec, data, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := prepare([]string{spec, "--out", filepath.Join(dir, "out")}, io.Discard); err != nil && err.Error() == "" {
		t.Fatal("an empty error message")
	}
}

func FuzzSweepSpec(f *testing.F) {
	dir := fuzzDir(f)
	for _, s := range []string{
		`{"format": "kinetarium.sweep/1", "model": "m.json", "parameter": {"target": "k", "from": 0.1, "to": 1, "points": 5, "spacing": "log"},
 "readouts": [{"name": "auc_A", "kind": "auc", "species": "A"}, {"kind": "cross_up", "species": "B", "level": 5, "from": 1, "to": 3}]}`,
		`{"format": "kinetarium.sweep/1", "model": "m.json", "parameter": {"target": "init:A", "from": 1, "to": 2, "points": 3},
 "second": {"target": "k", "from": 0.1, "to": 1, "points": 2}, "simulation": {"t_end": 5, "points": 11, "spacing": "log"}, "plot_species": ["B"]}`,
		`{"format": "kinetarium.sweep/1"`, "\xef\xbb\xbf{}", `{"format": "kinetarium.sweep/1", "model": "m.json", "parameter": {"points": 1e9}}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzSpec(t, dir, data, func(args []string, stderr io.Writer) error { _, _, err := sweepJob(args, stderr); return err })
	})
}

func FuzzPopulationSpec(f *testing.F) {
	dir := fuzzDir(f)
	for _, s := range []string{
		`{"format": "kinetarium.population/1", "model": "m.json", "samples": 20, "seed": 7, "sampling": "latin_hypercube",
 "vary": [{"target": "k", "distribution": "lognormal", "median": 0.5, "cv_percent": 30}, {"target": "init:A", "distribution": "normal", "mean": 10, "sd": 2}],
 "readouts": [{"name": "cmax", "kind": "max", "species": "B"}], "bands": {"species": ["A", "B"]}}`,
		`{"format": "kinetarium.population/1", "model": "m.json", "samples": 5, "seed": 1,
 "vary": [{"target": "k", "distribution": "loguniform", "low": 0.1, "high": 1}, {"target": "init:B", "distribution": "uniform", "low": 0, "high": 1}]}`,
		`{"format": "kinetarium.population/1", "model": "m.json", "samples": 5, "seed": 1, "vary": [{"target": "k", "distribution": "lognormal", "median": 1, "cv_percent": 1e300}]}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzSpec(t, dir, data, func(args []string, stderr io.Writer) error { _, _, err := populationJob(args, stderr); return err })
	})
}

// FuzzMergePart merges one part file with itself excluded: a part must be
// read, checked and merged, or refused with a message, never panic.
func FuzzMergePart(f *testing.F) {
	dir := fuzzDir(f)
	spec := filepath.Join(dir, "pop.json")
	if err := os.WriteFile(spec, []byte(`{"format": "kinetarium.population/1", "model": "m.json", "samples": 6, "seed": 3,
 "vary": [{"target": "k", "distribution": "lognormal", "median": 0.5, "cv_percent": 30}],
 "readouts": [{"kind": "final", "species": "B"}], "bands": {"species": ["B"]}}`), 0o644); err != nil {
		f.Fatal(err)
	}
	for _, shard := range []string{"0/2", "1/2"} {
		var out, errb nopBuffer
		if rc := runPopulation([]string{spec, "--shard", shard, "--out", filepath.Join(dir, "parts"), "--quiet"}, &out, &errb); rc != 0 {
			f.Fatalf("making a part: exit %d", rc)
		}
	}
	for _, name := range []string{"part-0-of-2.json", "part-1-of-2.json"} {
		b, err := os.ReadFile(filepath.Join(dir, "parts", name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Add([]byte(`{"format": "kinetarium.batch-part/2", "meta": {}, "result": {"size": 1e12}}`))
	first := filepath.Join(dir, "parts", "part-0-of-2.json")
	f.Fuzz(func(t *testing.T, data []byte) {
		part := filepath.Join(dir, "fuzz-part.json")
		if err := os.WriteFile(part, data, 0o644); err != nil {
			t.Fatal(err)
		}
		// Reading, checking and merging; the outputs are written by the
		// same code as a run's (and would make each try slow).
		sp, err := explore.NewSpill(dir)
		if err != nil {
			t.Fatal(err)
		}
		defer sp.Close()
		if _, res, err := readParts([]string{first, part}, sp); err != nil {
			if err.Error() == "" {
				t.Fatal("an empty error message")
			}
		} else if _, err := study.RunRows(res); err != nil {
			t.Fatalf("the merged samples do not read back: %v", err)
		}
	})
}

// nopBuffer discards what is written.
type nopBuffer struct{}

func (nopBuffer) Write(p []byte) (int, error) { return len(p), nil }
