package main

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
	"time"

	"kinetarium/app/study"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/solve/explore"
)

// mustRun calls a subcommand and fails the test when it does not succeed.
func mustRun(t *testing.T, cmd func([]string, io2, io2) int, args ...string) string {
	t.Helper()
	var out, errb bytes.Buffer
	if rc := cmd(args, &out, &errb); rc != 0 {
		t.Fatalf("%v: exit %d\nstdout: %s\nstderr: %s", args, rc, out.String(), errb.String())
	}
	return out.String()
}

// io2 shortens the subcommand signature in helpers.
type io2 = *bytes.Buffer

func sweepCmd(a []string, o, e io2) int { return runSweep(a, o, e) }
func popCmd(a []string, o, e io2) int   { return runPopulation(a, o, e) }
func mergeCmd(a []string, o, e io2) int { return runMerge(a, o, e) }

// readCSV reads a whole CSV file.
func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	rows, err := atomicfile.ReadCSV(path)
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

func num(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

const testdata = "testdata/explore/"

// The test model is A → B with rate k·A, so A(t) = A0·exp(−k·t) and
// B(t) = A0·(1 − exp(−k·t)) (first-order kinetics, closed form), sampled on
// t = 0, 0.1, …, 10.
func TestPopulationAgainstClosedForm(t *testing.T) {
	dir := t.TempDir()
	mustRun(t, popCmd, testdata+"population.json", "--out", dir, "--quiet")
	rows := readCSV(t, filepath.Join(dir, "samples.csv"))
	if got := strings.Join(rows[0], ","); got != "index,k,init:A,auc_A,t_B5,A_at_2.5" {
		t.Fatalf("header %q", got)
	}
	if len(rows) != 301 {
		t.Fatalf("%d samples, want 300", len(rows)-1)
	}
	const h, n = 0.1, 100
	for _, r := range rows[1:] {
		k, a0, auc, tB5, a25 := num(t, r[1]), num(t, r[2]), num(t, r[3]), num(t, r[4]), num(t, r[5])
		q := math.Exp(-k * h)
		// Trapezoid sum of A0·exp(−k·t) on the grid, summed by hand as a
		// geometric series: h/2·A0·(1 + q)·(1 − qⁿ)/(1 − q), q = e^{−kh}.
		if want := h / 2 * a0 * (1 + q) * (1 - math.Pow(q, n)) / (1 - q); math.Abs(auc-want) > 1e-6*want {
			t.Errorf("k = %v A0 = %v: AUC %v, hand formula %v", k, a0, auc, want)
		}
		// B reaches 5 at −ln(1 − 5/A0)/k. B is concave, so the linear
		// interpolant lies below it by at most h²·max|B''|/8 (interpolation
		// error bound; common practice) and its crossing is late by at most
		// that over B' there: h²·k·e^{kh}/8, as |B''|/B' = k.
		want := -math.Log(1-5/a0) / k
		if tB5 < want-1e-7 || tB5-want > h*h*k*math.Exp(k*h)/8 || math.IsNaN(tB5) {
			t.Errorf("k = %v A0 = %v: B crosses 5 at %v, closed form %v", k, a0, tB5, want)
		}
		// Halfway between 2.5 and 2.6 the interpolated value is the mean.
		if want := a0 * (math.Exp(-2.5*k) + math.Exp(-2.6*k)) / 2; math.Abs(a25-want) > 1e-7*want {
			t.Errorf("A at 2.55: %v, want %v", a25, want)
		}
	}
	bands := readCSV(t, filepath.Join(dir, "bands.csv"))
	if len(bands) != 1+2*101 {
		t.Fatalf("bands.csv has %d rows", len(bands))
	}
	for _, r := range bands[1:] {
		var last float64 = math.Inf(-1)
		for _, s := range append(r[7:8], r[2:7]...) { // min, p5 … p95
			v := num(t, s)
			if v < last {
				t.Fatalf("bands row %v not ordered", r)
			}
			last = v
		}
		if r[0] == "B" && r[1] == "0" && (r[2] != "0" || r[6] != "0") {
			t.Errorf("B at t = 0 must be exactly 0 in every percentile: %v", r)
		}
	}
	for _, f := range []string{"failures.csv", "readouts.csv", "bands_A.png", "bands_B.png", "hist_auc_A.png"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("missing output: %v", err)
		}
	}
}

// sameFiles compares every CSV file of two output folders byte for byte.
func sameFiles(t *testing.T, a, b string) {
	t.Helper()
	files, _ := filepath.Glob(filepath.Join(a, "*.csv"))
	if len(files) == 0 {
		t.Fatalf("no CSV files in %s", a)
	}
	for _, f := range files {
		x, _ := os.ReadFile(f)
		y, err := os.ReadFile(filepath.Join(b, filepath.Base(f)))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(x, y) {
			t.Errorf("%s differs between %s and %s", filepath.Base(f), a, b)
		}
	}
}

func TestShardsMergeToTheSingleRun(t *testing.T) {
	for _, spec := range []string{"population.json", "sweep.json", "grid.json"} {
		t.Run(spec, func(t *testing.T) {
			cmd := popCmd
			if spec != "population.json" {
				cmd = sweepCmd
			}
			single, one, parts := t.TempDir(), t.TempDir(), t.TempDir()
			mustRun(t, cmd, testdata+spec, "--out", single, "--quiet", "--workers", "2")
			mustRun(t, cmd, testdata+spec, "--out", one, "--quiet", "--workers", "1")
			sameFiles(t, single, one)
			var names []string
			for i := range 3 {
				mustRun(t, cmd, "--shard", strconv.Itoa(i)+"/3", testdata+spec, "--out", parts, "--quiet")
				names = append(names, filepath.Join(parts, "part-"+strconv.Itoa(i)+"-of-3.json"))
			}
			merged := t.TempDir()
			names[0], names[2] = names[2], names[0]
			mustRun(t, mergeCmd, append(names, "--out", merged)...)
			sameFiles(t, single, merged)
			var out, errb bytes.Buffer
			if runMerge(append(names[:2:2], "--out", t.TempDir()), &out, &errb) == 0 || !strings.Contains(errb.String(), "missing") {
				t.Errorf("merging 2 of 3 shards: %q", errb.String())
			}
		})
	}
}

func TestSweepOutputs(t *testing.T) {
	dir := t.TempDir()
	mustRun(t, sweepCmd, testdata+"sweep.json", "--out", dir, "--quiet")
	rows := readCSV(t, filepath.Join(dir, "runs.csv"))
	if len(rows) != 6 {
		t.Fatalf("%d runs, want 5", len(rows)-1)
	}
	// Log spacing from 0.1 to 1 in 5 points: 10^(−1 + i/4).
	for i, r := range rows[1:] {
		if k, want := num(t, r[1]), math.Pow(10, -1+float64(i)/4); math.Abs(k-want) > 1e-15 {
			t.Errorf("run %d: k = %v, want %v", i, k, want)
		}
	}
	// k = 0.1: B = 10·(1 − e^{−0.1 t}) reaches only 6.3 by t = 10 but
	// crosses 5 at 10·ln 2 ≈ 6.93; all runs cross.
	if v := num(t, rows[1][3]); math.Abs(v-10*math.Ln2) > 1e-2 {
		t.Errorf("k = 0.1: B crosses 5 at %v, closed form %v", v, 10*math.Ln2)
	}
	for _, f := range []string{"trajectories.csv", "family_A.png", "family_B.png", "readout_auc_A.png"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("missing output: %v", err)
		}
	}
	dir2 := t.TempDir()
	mustRun(t, sweepCmd, testdata+"grid.json", "--out", dir2, "--quiet")
	m := readCSV(t, filepath.Join(dir2, "matrix_final_B.csv"))
	if len(m) != 5 || len(m[0]) != 4 {
		t.Fatalf("matrix %d × %d, want 5 × 4 with headers", len(m), len(m[0]))
	}
	for _, r := range m[1:] {
		k := num(t, r[0])
		for c, s := range r[1:] {
			a0 := num(t, m[0][c+1])
			// B(5) = A0·(1 − e^{−5k}), closed form.
			if want := a0 * (1 - math.Exp(-5*k)); math.Abs(num(t, s)-want) > 1e-6*want {
				t.Errorf("k = %v, A0 = %v: B(5) = %v, want %v", k, a0, s, want)
			}
		}
	}
	if _, err := os.Stat(filepath.Join(dir2, "heatmap_final_B.png")); err != nil {
		t.Error(err)
	}
}

func TestSpecErrorsNameTheKey(t *testing.T) {
	dir := t.TempDir()
	model, _ := filepath.Abs(testdata + "conversion.json")
	cases := []struct {
		cmd  func([]string, io2, io2) int
		spec string
		want string
	}{
		{popCmd, `{"format":"kinetarium.population/1","model":"M","samples":5,"seed":1,"vary":[{"target":"k","distribution":"lognormal","median":1,"cv":3}]}`, `vary[0]: unknown field "cv"`},
		{popCmd, `{"format":"kinetarium.population/1","model":"M","samples":5,"vary":[{"target":"k","distribution":"uniform","low":1,"high":2}]}`, "seed: missing"},
		{popCmd, `{"format":"kinetarium.population/1","model":"M","samples":5,"seed":1,"vary":[{"target":"kk","distribution":"uniform","low":1,"high":2}]}`, `vary[0].target: no parameter "kk"`},
		{popCmd, `{"format":"kinetarium.population/1","model":"M","samples":5,"seed":1,"vary":[{"target":"k","distribution":"uniform","low":1}]}`, "vary[0].high: missing"},
		{popCmd, `{"format":"kinetarium.population/1","model":"M","samples":5,"seed":1,"vary":[{"target":"volume:x","distribution":"uniform","low":1,"high":2}]}`, `no compartment "x"`},
		{popCmd, `{"format":"kinetarium.population/1","model":"M","samples":"many","seed":1}`, "samples: expected a whole number, found text"},
		{popCmd, `{"format":"kinetarium.sweep/1"}`, `format: expected "kinetarium.population/1"`},
		{sweepCmd, `{"format":"kinetarium.sweep/1","model":"M","parameter":{"target":"k","from":1,"to":2,"points":3},"readouts":[{"kind":"value_at","species":"A"}]}`, "readouts[0].time: missing"},
		{sweepCmd, `{"format":"kinetarium.sweep/1","model":"M","parameter":{"target":"k","from":0,"to":2,"points":3,"spacing":"log"}}`, "parameter.from: log spacing"},
		{sweepCmd, `{"format":"kinetarium.sweep/1","model":"M","parameter":{"target":"k","from":1,"to":2,"points":3},"readouts":[{"kind":"peak","species":"A"}]}`, `unknown kind "peak"`},
	}
	for i, c := range cases {
		path := filepath.Join(dir, "spec"+strconv.Itoa(i)+".json")
		if err := os.WriteFile(path, []byte(strings.ReplaceAll(c.spec, `"M"`, strconv.Quote(model))), 0o644); err != nil {
			t.Fatal(err)
		}
		var out, errb bytes.Buffer
		if rc := c.cmd([]string{path, "--out", dir, "--quiet"}, &out, &errb); rc != 2 || !strings.Contains(errb.String(), c.want) {
			t.Errorf("case %d: exit %d, stderr %q; want it to contain %q", i, rc, errb.String(), c.want)
		}
	}
	var out, errb bytes.Buffer
	if rc := runPopulation([]string{testdata + "population.json", "--shard", "3/3"}, &out, &errb); rc != 2 || !strings.Contains(errb.String(), "0 ≤ i < n") {
		t.Errorf("bad shard: exit %d, %q", rc, errb.String())
	}
}

// BenchmarkPopulation20 runs populations of 256 samples of the invented
// 20-species signalling cascade (examples/signalling-cascade-20.json), two
// rate constants log-normal with CV 30 %, with 1 and 2 workers, and reports
// samples per second and, for 2 workers, the parallel efficiency
// (rate with 2 workers / (2 × rate with 1)).
func BenchmarkPopulation20(b *testing.B) {
	m, err := network.Load("../../examples/signalling-cascade-20.json")
	if err != nil {
		b.Fatal(err)
	}
	prep, err := study.Prepare(m)
	if err != nil {
		b.Fatal(err)
	}
	sys := prep.Sys
	names := sys.Parameters()[:2]
	tg, err := study.NewTarget(sys, names)
	if err != nil {
		b.Fatal(err)
	}
	var dists []explore.Distribution
	for _, nm := range names {
		i, _ := sys.ParameterIndex(nm)
		dists = append(dists, explore.LogNormal{Median: sys.Parameter(i), CVPercent: 30})
	}
	sim, times := prep.Sim, prep.Times
	const size = 256
	pts, err := explore.Population{Vary: dists, Size: size, Seed: 1}.Sample()
	if err != nil {
		b.Fatal(err)
	}
	ode := &explore.ODE{Target: tg, TEnd: sim.TEnd, Settings: prep.Settings}
	var rate1 float64
	for _, w := range []int{1, 2} {
		b.Run("workers="+strconv.Itoa(w), func(b *testing.B) {
			if w > runtime.GOMAXPROCS(0) {
				b.Skipf("only %d CPUs", runtime.GOMAXPROCS(0))
			}
			b.ReportAllocs()
			start := time.Now()
			for b.Loop() {
				bands := explore.NewBands([]int{0, sys.Dim() - 1}, times)
				res, err := explore.Run(context.Background(), pts, ode.NewSimulator, explore.Settings{
					Knobs: names, Workers: w, Bands: bands,
					Readouts: []explore.Readout{{Name: "max", Kind: explore.Max, Component: sys.Dim() - 1}},
				})
				if err != nil || res.Failed > 0 {
					b.Fatalf("error %v, %d failed", err, res.Failed)
				}
			}
			rate := float64(size*b.N) / time.Since(start).Seconds()
			b.ReportMetric(rate, "samples/s")
			if w == 1 {
				rate1 = rate
			} else if rate1 > 0 {
				b.ReportMetric(rate/(float64(w)*rate1), "efficiency")
			}
		})
	}
}

func TestFailedRunsAreListedAndExitStatus(t *testing.T) {
	dir := t.TempDir()
	model, _ := filepath.Abs(testdata + "conversion.json")
	spec := filepath.Join(dir, "neg.json")
	// Initial amounts from −2 to 2: the negative ones are refused.
	body := `{"format":"kinetarium.sweep/1","model":` + strconv.Quote(model) +
		`,"parameter":{"target":"init:A","from":-2,"to":2,"points":5},"readouts":[{"kind":"final","species":"B"}]}`
	if err := os.WriteFile(spec, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errb bytes.Buffer
	if rc := dispatch([]string{"sweep", spec, "--out", dir, "--quiet"}, &out, &errb); rc != 0 {
		t.Fatalf("exit %d: %s", rc, errb.String())
	}
	f := readCSV(t, filepath.Join(dir, "failures.csv"))
	if len(f) != 3 || f[1][1] != "-2" || f[2][1] != "-1" || !strings.Contains(f[1][2], "initial concentration must be ≥ 0") {
		t.Errorf("failures.csv: %v", f)
	}
	if r := readCSV(t, filepath.Join(dir, "runs.csv")); len(r) != 4 {
		t.Errorf("runs.csv has %d runs, want 3", len(r)-1)
	}
	if !strings.Contains(out.String(), "5 runs, 2 failed") {
		t.Errorf("stdout %q", out.String())
	}
	body = strings.Replace(body, `"to":2`, `"to":-1`, 1)
	if err := os.WriteFile(spec, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	out.Reset()
	errb.Reset()
	if rc := dispatch([]string{"sweep", spec, "--out", dir, "--quiet"}, &out, &errb); rc != 1 || !strings.Contains(errb.String(), "all 5 runs failed") {
		t.Errorf("every run failing: exit %d, %q", rc, errb.String())
	}
}

// A population of a few thousand samples, streamed to a spill file as
// they finish (issue 17, item 8), writes the same bytes with 1 and 2
// workers and as 3 shards merged; nothing of the spill file is left in
// the output folder.
func TestStreamedPopulationSameForWorkersAndShards(t *testing.T) {
	dir := t.TempDir()
	model, err := filepath.Abs(testdata + "conversion.json")
	if err != nil {
		t.Fatal(err)
	}
	spec := filepath.Join(dir, "pop.json")
	if err := os.WriteFile(spec, []byte(`{"format": "kinetarium.population/1", "model": "`+model+`",
  "samples": 3001, "seed": 5, "sampling": "random",
  "vary": [{"target": "k", "distribution": "lognormal", "median": 0.5, "cv_percent": 60}],
  "readouts": [{"name": "t_B9", "kind": "cross_up", "species": "B", "level": 9}, {"name": "auc_A", "kind": "auc", "species": "A"}],
  "bands": {"species": ["B"]}}`), 0o644); err != nil {
		t.Fatal(err)
	}
	one, two, parts, merged := filepath.Join(dir, "one"), filepath.Join(dir, "two"), filepath.Join(dir, "parts"), filepath.Join(dir, "merged")
	mustRun(t, popCmd, spec, "--out", one, "--quiet", "--workers", "1")
	mustRun(t, popCmd, spec, "--out", two, "--quiet", "--workers", "2")
	var names []string
	for i := range 3 {
		mustRun(t, popCmd, spec, "--shard", strconv.Itoa(i)+"/3", "--out", parts, "--quiet", "--workers", "2")
		names = append(names, filepath.Join(parts, "part-"+strconv.Itoa(i)+"-of-3.json"))
	}
	mustRun(t, mergeCmd, append(names, "--out", merged)...)
	sameFiles(t, one, two)
	sameFiles(t, one, merged)
	rows := readCSV(t, filepath.Join(one, "samples.csv"))
	if len(rows) != 3002 {
		t.Errorf("samples.csv has %d rows, want a header and 3001", len(rows))
	}
	undefined := 0
	for _, r := range rows[1:] {
		if r[2] == "NaN" {
			undefined++
		}
	}
	if undefined == 0 || undefined == 3001 {
		t.Errorf("%d samples without a crossing; the spec should give some of each", undefined)
	}
	for _, d := range []string{one, two, parts, merged} {
		left, _ := filepath.Glob(filepath.Join(d, ".kinetarium-spill-*"))
		if len(left) > 0 {
			t.Errorf("spill files left in %s: %v", d, left)
		}
	}
}
