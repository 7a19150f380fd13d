package main

import (
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"kinetarium/internal/atomicfile"
)

// TestSimulateSensitivities checks simulate --sensitivities on A → B with
// rate k·A against the closed forms ∂A/∂k = −t·A0·e^(−kt) and
// ∂A/∂A0 = e^(−kt) (../shared/reference/analytic-checks.md), and the
// scaled column ∂ln A/∂ln k = −k·t.
func TestSimulateSensitivities(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "traj.csv")
	rc, _, stderr := simRun(simTestdata+"decay.json", "--out", out, "--sensitivities", "k,init:A")
	if rc != 0 {
		t.Fatalf("exit %d: %s", rc, stderr)
	}
	path := filepath.Join(dir, "traj-sensitivities.csv")
	rows, err := atomicfile.ReadCSV(path)
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(rows[0], ","); got != "time,output,quantity,value,sensitivity,scaled" {
		t.Fatalf("header %q", got)
	}
	if _, err := os.Stat(strings.TrimSuffix(path, ".csv") + ".provenance.json"); err != nil {
		t.Errorf("no provenance beside the sensitivities: %v", err)
	}
	const k, a0 = 0.5, 2.0
	checked := 0
	for _, r := range rows[1:] {
		if r[1] != "A" {
			continue
		}
		tt, _ := strconv.ParseFloat(r[0], 64)
		d, _ := strconv.ParseFloat(r[4], 64)
		want := math.Exp(-k * tt)
		if r[2] == "k" {
			want = -tt * a0 * math.Exp(-k*tt)
			sc, _ := strconv.ParseFloat(r[5], 64)
			if math.Abs(sc-(-k*tt)) > 1e-6 {
				t.Errorf("scaled ∂ln A/∂ln k at t=%g = %g, want %g", tt, sc, -k*tt)
			}
		}
		if math.Abs(d-want) > 1e-6 {
			t.Errorf("∂A/∂%s at t=%g = %g, want %g", r[2], tt, d, want)
		}
		checked++
	}
	if checked != 18 {
		t.Errorf("checked %d rows, want 18 (9 times × 2 quantities)", checked)
	}
	// Bad input: an unknown knob, and no place to write.
	if rc, _, stderr := simRun(simTestdata+"decay.json", "--out", out, "--sensitivities", "kk"); rc != 2 || !strings.Contains(stderr, `no parameter "kk"`) {
		t.Errorf("unknown knob: exit %d, %q", rc, stderr)
	}
	if rc, _, stderr := simRun(simTestdata+"decay.json", "--sensitivities", "k"); rc != 2 || !strings.Contains(stderr, "--sens-out") {
		t.Errorf("no output file: exit %d, %q", rc, stderr)
	}
}

// simulate --sens-map draws the scaled sensitivities beside their CSV, and
// --data draws measurements over --figure; a measurements file with a
// mistake is bad input (exit 2) whose message names its line and column,
// and an unknown map name or a flag without its partner is refused.
func TestSimulateSensMapAndData(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "traj.csv")
	fig := filepath.Join(dir, "traj.png")
	data := filepath.Join(dir, "b.csv")
	os.WriteFile(data, []byte("time,B,sd_B\n1,0.8,0.05\n2,1.3,0.05\n"), 0o644)
	rc, _, stderr := simRun(simTestdata+"decay.json", "--out", out, "--figure", fig, "--data", data, "--sensitivities", "k,init:A", "--sens-map", "A")
	if rc != 0 {
		t.Fatalf("exit %d: %s", rc, stderr)
	}
	for _, p := range []string{fig, filepath.Join(dir, "traj-sensitivities-A.png")} {
		if fi, err := os.Stat(p); err != nil || fi.Size() < 1000 {
			t.Errorf("%s not drawn: %v", p, err)
		}
	}
	os.WriteFile(data, []byte("time,B\n1,0.8\n2,x\n"), 0o644)
	if rc, _, stderr := simRun(simTestdata+"decay.json", "--figure", fig, "--data", data); rc != 2 || !strings.Contains(stderr, `line 3, column 2 (B): "x" is not a number`) {
		t.Errorf("bad data: exit %d, %q", rc, stderr)
	}
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--out", out, "--sensitivities", "k", "--sens-map", "Z"}, `no species or assignment "Z"`},
		{[]string{"--data", data}, "--data: give --figure too"},
		{[]string{"--sens-map", "A"}, "--sens-map: give --sensitivities too"},
	} {
		if rc, _, stderr := simRun(append([]string{simTestdata + "decay.json"}, c.args...)...); rc != 2 || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, %q; want 2 and %q", c.args, rc, stderr, c.want)
		}
	}
}
