package main

import (
	"bytes"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// batch sweep and population with --time-unit and --concentration-unit
// write every table with units in its header and the values converted
// from the same study without them: 1 min = 60 s and 1 uM = 1000 nM (SI
// definitions of the minute and the prefixes, common practice), so an
// area under the curve in uM·min is 60 000 times larger in nM·s. Without
// the flags the headers stay without units.
func TestStudiesInDisplayUnits(t *testing.T) {
	plain, shown := t.TempDir(), t.TempDir()
	mustRun(t, sweepCmd, testdata+"sweep.json", "--out", plain, "--quiet")
	mustRun(t, sweepCmd, testdata+"sweep.json", "--out", shown, "--quiet", "--time-unit", "s", "--concentration-unit", "nM")
	a, b := readCSV(t, filepath.Join(plain, "runs.csv")), readCSV(t, filepath.Join(shown, "runs.csv"))
	if got := strings.Join(a[0], ","); got != "index,k,auc_A,t_B5" {
		t.Errorf("plain header %q", got)
	}
	if got := strings.Join(b[0], ","); got != "index,k (1/min),auc_A (nM·s),t_B5 (s)" {
		t.Errorf("shown header %q", got)
	}
	for i := 1; i < len(a); i++ {
		if a[i][1] != b[i][1] {
			t.Errorf("row %d: knob %s became %s", i, a[i][1], b[i][1])
		}
		for j, f := range map[int]float64{2: 60000, 3: 60} {
			x, y := num(t, a[i][j]), num(t, b[i][j])
			if math.Abs(y-f*x) > 1e-12*math.Abs(f*x) {
				t.Errorf("row %d column %s: %v shown, want %v × %v", i, b[0][j], y, f, x)
			}
		}
	}
	tr := readCSV(t, filepath.Join(shown, "trajectories.csv"))
	if got := strings.Join(tr[0], ","); got != "index,k (1/min),time (s),A (nM),B (nM)" {
		t.Errorf("trajectories header %q", got)
	}
	if tr[2][2] != "6" || tr[1][3] != "10000" {
		t.Errorf("second row time %s s (want 6), first A %s nM (want 10000)", tr[2][2], tr[1][3])
	}

	pop := t.TempDir()
	mustRun(t, popCmd, testdata+"population.json", "--out", pop, "--quiet", "--concentration-unit", "mM")
	bands := readCSV(t, filepath.Join(pop, "bands.csv"))
	if got := strings.Join(bands[0][:3], ","); got != "species,unit,time (min)" || bands[1][1] != "mM" {
		t.Errorf("bands header %q, first row %q", bands[0], bands[1])
	}
	ro := readCSV(t, filepath.Join(pop, "readouts.csv"))
	if ro[1][0] != "auc_A (mM·min)" || ro[2][0] != "t_B5 (min)" || ro[3][0] != "A_at_2.5 (mM)" {
		t.Errorf("readout names %q %q %q", ro[1][0], ro[2][0], ro[3][0])
	}

	grid := t.TempDir()
	mustRun(t, sweepCmd, testdata+"grid.json", "--out", grid, "--quiet", "--concentration-unit", "nM")
	mx := readCSV(t, filepath.Join(grid, "matrix_final_B.csv"))
	if mx[0][0] != `k (1/min) \ init:A (uM): final_B (nM)` {
		t.Errorf("matrix corner %q", mx[0][0])
	}
}

// A display unit that cannot be shown is bad input (exit 2) naming the
// flag; the flags belong to sweep and population only.
func TestStudyDisplayUnitRefused(t *testing.T) {
	var out, errb bytes.Buffer
	rc := runSweep([]string{testdata + "sweep.json", "--out", t.TempDir(), "--quiet", "--concentration-unit", "mg/L"}, &out, &errb)
	if rc != exitBadInput || !strings.Contains(errb.String(), "--concentration-unit: cannot show concentrations in mg/L") {
		t.Errorf("exit %d, stderr %q", rc, errb.String())
	}
	errb.Reset()
	rc = runSweep([]string{testdata + "sweep.json", "--out", t.TempDir(), "--quiet", "--time-unit", "uM"}, &out, &errb)
	if rc != exitBadInput || !strings.Contains(errb.String(), `--time-unit: "uM" is not a unit of time`) {
		t.Errorf("exit %d, stderr %q", rc, errb.String())
	}
}

// Shards of a study shown in other units merge into the same tables as
// the whole run; a part shown in other units than the rest is refused.
func TestShardsInDisplayUnits(t *testing.T) {
	dir := t.TempDir()
	flags := []string{"--quiet", "--time-unit", "s", "--concentration-unit", "nM"}
	full, parts, other := filepath.Join(dir, "full"), filepath.Join(dir, "parts"), filepath.Join(dir, "other")
	mustRun(t, sweepCmd, append([]string{testdata + "sweep.json", "--out", full}, flags...)...)
	for _, s := range []string{"0/2", "1/2"} {
		mustRun(t, sweepCmd, append([]string{testdata + "sweep.json", "--out", parts, "--shard", s}, flags...)...)
	}
	merged := filepath.Join(dir, "merged")
	mustRun(t, mergeCmd, filepath.Join(parts, "part-0-of-2.json"), filepath.Join(parts, "part-1-of-2.json"), "--out", merged)
	for _, f := range []string{"runs.csv", "trajectories.csv"} {
		a, b := readCSV(t, filepath.Join(full, f)), readCSV(t, filepath.Join(merged, f))
		if strings.Join(a[0], ",") != strings.Join(b[0], ",") || len(a) != len(b) || strings.Join(a[len(a)-1], ",") != strings.Join(b[len(b)-1], ",") {
			t.Errorf("%s differs after merging: %q … vs %q …", f, a[0], b[0])
		}
	}
	mustRun(t, sweepCmd, testdata+"sweep.json", "--out", other, "--shard", "1/2", "--quiet")
	var out, errb bytes.Buffer
	if rc := runMerge([]string{filepath.Join(parts, "part-0-of-2.json"), filepath.Join(other, "part-1-of-2.json"), "--out", filepath.Join(dir, "m2")}, &out, &errb); rc != exitBadInput {
		t.Errorf("parts shown in different units merged: exit %d, %s", rc, errb.String())
	}
}
