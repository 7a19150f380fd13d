package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"kinetarium/internal/atomicfile"
)

func fitRun(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	rc := runFit(args, &out, &errb)
	return rc, out.String(), errb.String()
}

// TestFitCommand runs fit on A → B observed as [B] with SD 0.02 (data from
// B = A0·(1 − e^(−kt)) with k = 0.5, A0 = 2, plus Gaussian noise, made by
// a script once; common practice) and checks the outputs the issue lists:
// the files, their headers, fit.json's keys, and that the 95 % intervals
// hold the constants the data were made with.
func TestFitCommand(t *testing.T) {
	dir := t.TempDir()
	rc, stdout, stderr := fitRun("testdata/fit/decay-fit.json", "--out", dir, "--quiet", "--profiles", "--workers", "2")
	if rc != 0 {
		t.Fatalf("exit %d: %s %s", rc, stdout, stderr)
	}
	for _, f := range []string{"estimates.csv", "fit.json", "fitted.csv", "correlation.csv", "starts.csv", "fit_run.png", "residuals_run.png", "starts.png", "correlation.png", "profile_k.png", "estimates.provenance.json"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("missing %s", f)
		}
	}
	rows, err := atomicfile.ReadCSV(filepath.Join(dir, "estimates.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(rows[0], ","); got != "name,value,se,ci95_low,ci95_high,profile_low,profile_high" {
		t.Errorf("estimates.csv header %q", got)
	}
	truth := map[string]float64{"k": 0.5, "init:A": 2}
	for _, r := range rows[1:] {
		var v [6]float64
		for i := range v {
			v[i], _ = strconv.ParseFloat(r[i+1], 64)
		}
		w := truth[r[0]]
		if !(v[2] <= w && w <= v[3]) || !(v[4] <= w && w <= v[5]) {
			t.Errorf("%s: intervals Fisher [%g, %g], profile [%g, %g] miss %g", r[0], v[2], v[3], v[4], v[5], w)
		}
	}
	fitted, _ := atomicfile.ReadCSV(filepath.Join(dir, "fitted.csv"))
	if got := strings.Join(fitted[0], ","); got != "experiment,time,name,observed,sd,fitted,residual" || len(fitted) != 15 {
		t.Errorf("fitted.csv header %q, %d rows", got, len(fitted))
	}
	b, _ := os.ReadFile(filepath.Join(dir, "fit.json"))
	var sum map[string]any
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"objective", "wssr", "ssr", "n_data", "n_params", "dof", "aic", "aicc", "bic", "starts", "converged_starts", "best_start", "iterations", "seconds"} {
		if _, ok := sum[k]; !ok {
			t.Errorf("fit.json lacks %q", k)
		}
	}
	if _, ok := sum["sigma"]; ok {
		t.Error("fit.json has sigma for known SDs")
	}
	if sum["n_data"].(float64) != 14 || sum["dof"].(float64) != 12 {
		t.Errorf("n_data %v dof %v", sum["n_data"], sum["dof"])
	}
}

// TestFitExitStatus checks exit 2 with a located message for a bad spec
// and exit 1 with the reasons when no start converges.
func TestFitExitStatus(t *testing.T) {
	rc, _, stderr := fitRun("testdata/fit/bad-fit.json", "--out", t.TempDir(), "--quiet")
	if rc != 2 || !strings.Contains(stderr, "bad-fit.json:5:41: estimate[0].lower: lower bound 10 must be below upper bound 1") {
		t.Errorf("bad spec: exit %d, %q", rc, stderr)
	}
	rc, _, stderr = fitRun("testdata/fit/runaway-fit.json", "--out", t.TempDir(), "--quiet")
	if rc != 1 || !strings.Contains(stderr, "no start converged") || !strings.Contains(stderr, "start 2:") {
		t.Errorf("runaway: exit %d, %q", rc, stderr)
	}
	rc, _, stderr = fitRun("testdata/fit/none.json", "--quiet")
	if rc != 2 {
		t.Errorf("missing spec: exit %d, %q", rc, stderr)
	}
}

// TestFitProportionalNoise runs fit with "noise": {"model":
// "proportional"}: estimates.csv gains a sigma_c row after the model's
// quantities, with a finite standard error and an interval around the
// value, and fit.json a sigma_c number (and no constant-noise sigma).
func TestFitProportionalNoise(t *testing.T) {
	dir := t.TempDir()
	rc, stdout, stderr := fitRun("testdata/fit/decay-proportional-fit.json", "--out", dir, "--quiet")
	if rc != 0 {
		t.Fatalf("exit %d: %s %s", rc, stdout, stderr)
	}
	rows, err := atomicfile.ReadCSV(filepath.Join(dir, "estimates.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 4 || rows[3][0] != "sigma_c" {
		t.Fatalf("estimates.csv rows %q; want k, init:A, sigma_c", rows)
	}
	c, _ := strconv.ParseFloat(rows[3][1], 64)
	se, _ := strconv.ParseFloat(rows[3][2], 64)
	lo, _ := strconv.ParseFloat(rows[3][3], 64)
	hi, _ := strconv.ParseFloat(rows[3][4], 64)
	if !(c > 0 && se > 0 && lo < c && c < hi) {
		t.Errorf("sigma_c row %q", rows[3])
	}
	b, _ := os.ReadFile(filepath.Join(dir, "fit.json"))
	var sum map[string]any
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	if v, ok := sum["sigma_c"].(float64); !ok || v != c {
		t.Errorf("fit.json sigma_c %v, estimates.csv %g", sum["sigma_c"], c)
	}
	if _, ok := sum["sigma"]; ok {
		t.Error("fit.json has the constant model's sigma for proportional noise")
	}
}
