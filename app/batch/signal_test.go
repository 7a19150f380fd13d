package main

import (
	"bufio"
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestMain lets the signal tests run this test binary as the command.
func TestMain(m *testing.M) {
	if os.Getenv("KINETARIUM_BATCH_MAIN") == "1" {
		os.Exit(dispatch(os.Args[1:], os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

// startBatch runs the command in a child process and returns it with a
// reader of its standard error.
func startBatch(t *testing.T, args ...string) (*exec.Cmd, *bufio.Scanner) {
	t.Helper()
	cmd := exec.Command(os.Args[0], args...)
	cmd.Env = append(os.Environ(), "KINETARIUM_BATCH_MAIN=1")
	stderr, err := cmd.StderrPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	return cmd, bufio.NewScanner(stderr)
}

// exitCode waits for cmd and returns its exit status.
func exitCode(t *testing.T, cmd *exec.Cmd) int {
	t.Helper()
	err := cmd.Wait()
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		return ee.ExitCode()
	}
	if err != nil {
		t.Fatal(err)
	}
	return 0
}

// SIGTERM (or Ctrl-C) during a sweep stops it cleanly: the runs done so
// far are written, marked partial, and the exit status is 1 (issue 17: the
// process died and left no output folder).
func TestSignalDuringSweepWritesPartial(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a child process")
	}
	dir := t.TempDir()
	model := filepath.Join(dir, "m.json")
	if err := os.WriteFile(model, []byte(robustModel), 0o644); err != nil {
		t.Fatal(err)
	}
	spec := filepath.Join(dir, "sweep.json")
	const body = `{"format": "kinetarium.sweep/1", "model": "m.json",
 "parameter": {"target": "k", "from": 0.01, "to": 1, "points": 50000},
 "readouts": [{"kind": "final", "species": "B"}], "simulation": {"t_end": 1000, "points": 1000}}`
	if err := os.WriteFile(spec, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	for _, sig := range []os.Signal{syscall.SIGTERM, os.Interrupt} {
		os.RemoveAll(out)
		cmd, progress := startBatch(t, "sweep", spec, "--out", out, "--workers", "1")
		// Wait for the first progress report: the run is under way.
		var lines []string
		for progress.Scan() {
			lines = append(lines, progress.Text())
			if strings.HasSuffix(progress.Text(), "%") {
				break
			}
		}
		if err := cmd.Process.Signal(sig); err != nil {
			t.Fatal(err)
		}
		for progress.Scan() {
			lines = append(lines, progress.Text())
		}
		if rc := exitCode(t, cmd); rc != exitFailed {
			t.Fatalf("%v: exit %d, want 1; stderr:\n%s", sig, rc, strings.Join(lines, "\n"))
		}
		if !strings.Contains(strings.Join(lines, "\n"), "marked partial") {
			t.Errorf("%v: stderr lacks the partial notice:\n%s", sig, strings.Join(lines, "\n"))
		}
		rows := readCSV(t, filepath.Join(out, "runs.csv"))
		if n := len(rows) - 1; n < 1 || n >= 50000 {
			t.Errorf("%v: runs.csv holds %d runs, want some but not all 50000", sig, n)
		}
		data, err := os.ReadFile(filepath.Join(out, "runs.provenance.json"))
		if err != nil {
			t.Fatal(err)
		}
		var prov struct {
			Partial bool `json:"partial"`
		}
		if err := json.Unmarshal(data, &prov); err != nil || !prov.Partial {
			t.Errorf("%v: provenance %s lacks partial: true (%v)", sig, data, err)
		}
	}
}

// SIGTERM during a population, whose samples go to a spill file as they
// finish, writes the samples done so far from the spill, marked partial,
// with their summaries, exits 1 and leaves no spill file behind.
func TestSignalDuringPopulationWritesPartial(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a child process")
	}
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "m.json"), []byte(robustModel), 0o644); err != nil {
		t.Fatal(err)
	}
	spec := filepath.Join(dir, "pop.json")
	const body = `{"format": "kinetarium.population/1", "model": "m.json", "samples": 1000000, "seed": 2,
 "vary": [{"target": "k", "distribution": "lognormal", "median": 0.5, "cv_percent": 30}],
 "readouts": [{"name": "fin", "kind": "final", "species": "B"}], "bands": {"species": ["B"]},
 "simulation": {"t_end": 1000, "points": 1000}}`
	if err := os.WriteFile(spec, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	cmd, progress := startBatch(t, "population", spec, "--out", out, "--workers", "1")
	var lines []string
	for progress.Scan() {
		lines = append(lines, progress.Text())
		if strings.HasSuffix(progress.Text(), "%") {
			break
		}
	}
	if err := cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	for progress.Scan() {
		lines = append(lines, progress.Text())
	}
	if rc := exitCode(t, cmd); rc != exitFailed {
		t.Fatalf("exit %d, want 1; stderr:\n%s", rc, strings.Join(lines, "\n"))
	}
	rows := readCSV(t, filepath.Join(out, "samples.csv"))
	n := len(rows) - 1
	if n < 1 || n >= 1000000 {
		t.Fatalf("samples.csv holds %d samples, want some but not all", n)
	}
	for i, r := range rows[1:] {
		if r[0] != strconv.Itoa(i) {
			t.Fatalf("row %d has index %s; want the samples in order from 0", i+1, r[0])
		}
	}
	ro := readCSV(t, filepath.Join(out, "readouts.csv"))
	if len(ro) != 2 || ro[1][2] != strconv.Itoa(n) {
		t.Errorf("readouts.csv %v: want n = %d", ro, n)
	}
	for _, f := range []string{"samples", "readouts", "bands"} {
		data, err := os.ReadFile(filepath.Join(out, f+".provenance.json"))
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(data), `"partial": true`) {
			t.Errorf("%s.provenance.json lacks partial: true", f)
		}
	}
	if left, _ := filepath.Glob(filepath.Join(out, ".kinetarium-spill-*")); len(left) > 0 {
		t.Errorf("spill files left behind: %v", left)
	}
}

// SIGTERM during simulate writes the CSV up to the time reached, with
// partial: true in its provenance and in the statistics, and exits 1.
func TestSignalDuringSimulateWritesPartial(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a child process")
	}
	dir := t.TempDir()
	model := filepath.Join(dir, "slow.json")
	// A solve repeated without end: the signal comes during one of them.
	src := strings.Replace(robustModel, `"output": {"points": 11}`, `"output": {"points": 1001}`, 1)
	if err := os.WriteFile(model, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	csv := filepath.Join(dir, "traj.csv")
	cmd, stderr := startBatch(t, "simulate", model, "--out", csv, "--stats", "--repeat", "1000000000")
	time.Sleep(300 * time.Millisecond)
	if err := cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	var lines []string
	for stderr.Scan() {
		lines = append(lines, stderr.Text())
	}
	if rc := exitCode(t, cmd); rc != exitFailed {
		t.Fatalf("exit %d, want 1; stderr:\n%s", rc, strings.Join(lines, "\n"))
	}
	if !strings.Contains(strings.Join(lines, "\n"), "stopped by a signal") {
		t.Errorf("stderr lacks the signal notice:\n%s", strings.Join(lines, "\n"))
	}
	rows := readCSV(t, csv)
	if len(rows) < 1 || len(rows) > 1002 {
		t.Errorf("the CSV holds %d rows, want the header and at most 1001", len(rows))
	}
	data, err := os.ReadFile(filepath.Join(dir, "traj.provenance.json"))
	if err != nil || !strings.Contains(string(data), `"partial": true`) {
		t.Errorf("provenance %s lacks partial: true (%v)", data, err)
	}
}

// A shard stopped by SIGTERM says it is partial and must be run again,
// instead of inviting a merge that will refuse it.
func TestSignalDuringShardSaysPartial(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a child process")
	}
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "m.json"), []byte(robustModel), 0o644); err != nil {
		t.Fatal(err)
	}
	spec := filepath.Join(dir, "pop.json")
	const body = `{"format": "kinetarium.population/1", "model": "m.json", "samples": 1000000, "seed": 2,
 "vary": [{"target": "k", "distribution": "lognormal", "median": 0.5, "cv_percent": 30}],
 "readouts": [{"name": "fin", "kind": "final", "species": "B"}],
 "simulation": {"t_end": 1000, "points": 1000}}`
	if err := os.WriteFile(spec, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(os.Args[0], "population", spec, "--out", filepath.Join(dir, "parts"), "--workers", "1", "--shard", "0/2")
	cmd.Env = append(os.Environ(), "KINETARIUM_BATCH_MAIN=1")
	var stdout strings.Builder
	cmd.Stdout = &stdout
	stderr, err := cmd.StderrPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	progress := bufio.NewScanner(stderr)
	for progress.Scan() && !strings.HasSuffix(progress.Text(), "%") {
	}
	if err := cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	for progress.Scan() {
	}
	if rc := exitCode(t, cmd); rc != exitFailed || !strings.Contains(stdout.String(), "partial: true; run this shard again") ||
		strings.Contains(stdout.String(), "combine the shards") {
		t.Errorf("exit %d, stdout %q; want 1 and the shard called partial", rc, stdout.String())
	}
}
