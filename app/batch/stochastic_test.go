package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func stoCmd(a []string, o, e io2) int { return runStochastic(a, o, e) }

const stoModel = "../../examples/bursty-reporter.json"

// TestStochasticShards: the ensemble run at once, with 1 or 3 workers,
// and merged from 3 shards writes the same tables, byte for byte.
func TestStochasticShards(t *testing.T) {
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	dir := t.TempDir()
	common := []string{stoModel, "--runs", "40", "--seed", "5", "--t-end", "100", "--points", "11", "--quiet", "--hist-at", "100", "--passage", "protein=20"}
	whole := filepath.Join(dir, "whole")
	mustRun(t, stoCmd, append(common, "--out", whole, "--workers", "1")...)
	three := filepath.Join(dir, "three")
	mustRun(t, stoCmd, append(common, "--out", three, "--workers", "3", "--method", "direct")...)
	parts := filepath.Join(dir, "parts")
	var files []string
	for _, s := range []string{"2/3", "0/3", "1/3"} {
		mustRun(t, stoCmd, append(common, "--out", parts, "--shard", s, "--workers", "2")...)
	}
	for i := range 3 {
		files = append(files, filepath.Join(parts, []string{"part-0-of-3.json", "part-1-of-3.json", "part-2-of-3.json"}[i]))
	}
	merged := filepath.Join(dir, "merged")
	mustRun(t, mergeCmd, append(files, "--out", merged)...)
	for _, name := range []string{"mean.csv", "sd.csv", "bands.csv", "runs.csv", "histograms.csv", "passages.csv", "notes.txt"} {
		want, err := os.ReadFile(filepath.Join(whole, name))
		if err != nil {
			t.Fatal(err)
		}
		for _, d := range []string{three, merged} {
			got, err := os.ReadFile(filepath.Join(d, name))
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(got, want) {
				t.Errorf("%s differs between %s and %s", name, whole, d)
			}
		}
	}
	rows := readCSV(t, filepath.Join(whole, "mean.csv"))
	if len(rows) != 12 || strings.Join(rows[0], ",") != "time,gene_off,gene_on,mRNA,protein,dimer" {
		t.Errorf("mean.csv: %d rows, header %v", len(rows), rows[0])
	}
	if got := readCSV(t, filepath.Join(whole, "runs.csv")); len(got) != 1+10*11 {
		t.Errorf("runs.csv has %d rows, want 1 + 10 runs × 11 times", len(got))
	}
	if _, err := os.Stat(filepath.Join(whole, "stochastic_protein.png")); err != nil {
		t.Error(err)
	}
	// Two shards of three do not merge.
	var out, errb bytes.Buffer
	if rc := runMerge(append(files[:2], "--out", filepath.Join(dir, "bad")), &out, &errb); rc != exitBadInput {
		t.Errorf("merging 2 of 3 shards: exit %d, %s", rc, errb.String())
	}
}

func TestStochasticBadInput(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{stoModel, "--seed", "1", "--out", dir}, "--runs"},
		{[]string{stoModel, "--runs", "5", "--out", dir}, "--seed"},
		{[]string{stoModel, "--runs", "5", "--seed", "1", "--out", dir, "--method", "quick"}, "--method"},
		{[]string{stoModel, "--runs", "5", "--seed", "1", "--out", dir, "--passage", "nobody=3"}, "nobody"},
		{[]string{"../../network/testdata/hires.json", "--runs", "5", "--seed", "1", "--out", dir}, "molecules_per_amount"},
	} {
		var out, errb bytes.Buffer
		if rc := runStochastic(c.args, &out, &errb); rc != exitBadInput || !strings.Contains(errb.String(), c.want) {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 naming %s", c.args, rc, errb.String(), c.want)
		}
	}
}
