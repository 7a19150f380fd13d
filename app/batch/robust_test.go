package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// robustModel is the first-order conversion A → B of the explore tests.
const robustModel = `{"format": "kinetarium.model/1",
 "species": [{"name": "A", "initial": 10}, {"name": "B", "initial": 0}],
 "parameters": [{"name": "k", "value": 0.5}],
 "reactions": [{"name": "convert", "equation": "A -> B", "rate": {"law": "mass_action", "k": "k"}}],
 "simulation": {"t_end": 10, "output": {"points": 11}}}
`

// The probes of issue 17 that used to run with a wrong setting, exhaust
// memory or give an unlocated message: each now gives exit status 2 and a
// message that says where and what is expected.
func TestBadInputProbes(t *testing.T) {
	dir := t.TempDir()
	put := func(name, content string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	model := put("m.json", robustModel)
	const sweepHead = `{"format": "kinetarium.sweep/1", "model": "m.json", "readouts": [{"kind": "final", "species": "B"}],`
	const popHead = `{"format": "kinetarium.population/1", "model": "m.json", "seed": 1, "readouts": [{"kind": "final", "species": "B"}],`
	lognormal := `"vary": [{"target": "k", "distribution": "lognormal", "median": 0.5, "cv_percent": 30}]`
	sweep := put("sweep.json", sweepHead+` "parameter": {"target": "k", "from": 0.1, "to": 1, "points": 3}}`)
	pop := put("pop.json", popHead+` "samples": 10, `+lognormal+`}`)
	utf16 := []byte{0xFF, 0xFE}
	for _, r := range robustModel {
		utf16 = append(utf16, byte(r), 0) // ASCII only
	}
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"t_end 0", []string{"simulate", put("t0.json", strings.Replace(robustModel, `"t_end": 10`, `"t_end": 0`, 1))},
			"t0.json:5:26: simulation.t_end: 0 cannot be honoured"},
		{"rtol 0", []string{"simulate", put("r0.json", strings.Replace(robustModel, `"t_end": 10`, `"rtol": 0`, 1))},
			"simulation.rtol: 0 cannot be honoured"},
		{"model points 1e9", []string{"simulate", put("p.json", strings.Replace(robustModel, `"points": 11`, `"points": 1000000000`, 1))},
			"up to 1000000"},
		{"--points 1e8", []string{"simulate", model, "--points", "100000000"}, "--points: expected from 2 to 1000000"},
		{"UTF-16", []string{"simulate", put("u16.json", string(utf16))}, "u16.json: the file is UTF-16 text"},
		{"simulate --out folder", []string{"simulate", model, "--out", dir}, "is an existing folder"},
		{"truncated spec", []string{"sweep", put("trunc.json", "{\"format\": \"kinetarium.sweep/1\",\n \"parameter\": {\"target\": ")},
			"trunc.json:2:26: the file ends too early"},
		{"syntax error", []string{"sweep", put("sx.json", "{\"format\": x}")}, "sx.json:1:12: invalid character 'x'"},
		{"simulate --out in no folder", []string{"simulate", model, "--out", filepath.Join(dir, "none", "t.csv")}, "--out: the folder " + filepath.Join(dir, "none") + " does not exist"},
		{"simulate --figure in no folder", []string{"simulate", model, "--figure", filepath.Join(dir, "none", "t.png")}, "--figure: the folder " + filepath.Join(dir, "none") + " does not exist"},
		{"import --out in no folder", []string{"import", "../../network/sbml/testdata/none.xml", "--out", filepath.Join(dir, "none", "m.json")}, "--out: the folder"},
		{"export --out in no folder", []string{"export", model, "--out", filepath.Join(dir, "none", "m.xml")}, "--out: the folder"},
		{"diagram --out in no folder", []string{"diagram", model, "--out", filepath.Join(dir, "none", "d.svg")}, "--out: the folder"},
		{"wrong kind of value", []string{"population", put("pk.json", popHead+` "samples": "many", `+lognormal+`}`)}, "samples: expected a whole number, found text"},
		{"fraction for a count", []string{"population", put("pf.json", popHead+` "samples": 1.5, `+lognormal+`}`)}, "samples: expected a whole number, found the number 1.5"},
		{"negative seed", []string{"population", put("ps.json", strings.Replace(popHead, `"seed": 1`, `"seed": -1`, 1)+` "samples": 10, `+lognormal+`}`)}, "seed: expected a whole number ≥ 0, found the number -1"},
		{"sweep --out file", []string{"sweep", sweep, "--out", model}, "--out: " + model + " is an existing file"},
		{"population --out file", []string{"population", pop, "--out", model}, "is an existing file"},
		{"merge --out file", []string{"merge", model, "--out", model}, "is an existing file"},
		{"sweep points 1e6", []string{"sweep", put("s6.json", sweepHead+` "parameter": {"target": "k", "from": 0.1, "to": 1, "points": 1000000}}`)},
			"parameter.points: expected from 1 to 100000"},
		{"sweep grid", []string{"sweep", put("s2.json", sweepHead+` "parameter": {"target": "k", "from": 0.1, "to": 1, "points": 1000},
			"second": {"target": "init:A", "from": 1, "to": 2, "points": 1000}}`)}, "more than the 100000"},
		{"spec t_end 0", []string{"sweep", put("st0.json", sweepHead+` "parameter": {"target": "k", "from": 0.1, "to": 1, "points": 3}, "simulation": {"t_end": 0}}`)},
			"simulation.t_end: expected a positive time, got 0"},
		{"spec points 0", []string{"sweep", put("sp0.json", sweepHead+` "parameter": {"target": "k", "from": 0.1, "to": 1, "points": 3}, "simulation": {"points": 0}}`)},
			"simulation.points: expected from 2 to 1000000"},
		{"samples 1e9", []string{"population", put("p9.json", popHead+` "samples": 1000000000, `+lognormal+`}`)},
			"samples: expected from 1 to 1000000"},
		{"cv_percent 1e300", []string{"population", put("cv.json", popHead+` "samples": 10, `+strings.Replace(lognormal, "30}", "1e300}", 1)+`}`)},
			"vary[0]: log-normal: cv_percent is too wide"},
		{"shards 1e12", []string{"population", pop, "--shard", "0/1000000000000"}, "at most 100000 shards"},
	}
	if _, err := os.Stat("/dev/zero"); err == nil {
		cases = append(cases, struct {
			name string
			args []string
			want string
		}{"/dev/zero", []string{"simulate", "/dev/zero"}, "larger than 64 MiB"},
			struct {
				name string
				args []string
				want string
			}{"merge /dev/zero", []string{"merge", "/dev/zero", "--out", filepath.Join(dir, "m0")}, "/dev/zero:1:2: invalid character"})
	}
	for _, c := range cases {
		var out, errb bytes.Buffer
		rc := dispatch(c.args, &out, &errb)
		if rc != exitBadInput || !strings.Contains(errb.String(), c.want) {
			t.Errorf("%s: exit %d, stderr %q; want exit 2 and %q", c.name, rc, errb.String(), c.want)
		}
	}
	// A byte-order mark is accepted.
	bom := put("bom.json", "\xef\xbb\xbf"+robustModel)
	var out, errb bytes.Buffer
	if rc := dispatch([]string{"simulate", bom}, &out, &errb); rc != exitOK {
		t.Errorf("model with a byte-order mark: exit %d: %s", rc, errb.String())
	}
}

// A panic anywhere in a subcommand is an internal error: exit status 3,
// with the command line that caused it.
func TestPanicIsInternalError(t *testing.T) {
	register("test-panic", func(args []string, stdout, stderr io.Writer) int { panic("boom") })
	defer delete(commands, "test-panic")
	var out, errb bytes.Buffer
	rc := dispatch([]string{"test-panic", "x.json", "--flag"}, &out, &errb)
	if rc != exitInternal || !strings.Contains(errb.String(), "internal error") || !strings.Contains(errb.String(), "boom") ||
		!strings.Contains(errb.String(), "batch test-panic x.json --flag") {
		t.Errorf("exit %d, stderr %q; want 3 naming the panic and the command line", rc, errb.String())
	}
}

// Parts of different studies are refused with a message that says which
// part differs and how (issue 17: specs of the same file name in two
// folders that differed only in a median, or in the seed, merged with exit
// 0); a part with a sample deleted or repeated is refused too. Parts of
// one study whose spec sits in another folder (same content, same model)
// still merge.
func TestMergeRefusesMismatchedParts(t *testing.T) {
	dir := t.TempDir()
	write := func(rel, content string) string {
		p := filepath.Join(dir, rel)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	write("m.json", robustModel)
	spec := func(median, seed string) string {
		return `{"format": "kinetarium.population/1", "model": "../m.json", "samples": 12, "seed": ` + seed + `,
 "vary": [{"target": "k", "distribution": "lognormal", "median": ` + median + `, "cv_percent": 30}],
 "readouts": [{"kind": "final", "species": "B"}], "bands": {"species": ["B"]}}`
	}
	part := func(specPath, shard, out string) string {
		mustRun(t, popCmd, specPath, "--shard", shard, "--out", out, "--quiet")
		return filepath.Join(out, "part-"+strings.ReplaceAll(shard, "/", "-of-")+".json")
	}
	a0 := part(write("A/pop.json", spec("0.5", "11")), "0/2", filepath.Join(dir, "pa"))
	a1 := part(filepath.Join(dir, "A/pop.json"), "1/2", filepath.Join(dir, "pa"))
	median := part(write("B/pop.json", spec("0.7", "11")), "1/2", filepath.Join(dir, "pb"))
	seed := part(write("C/pop.json", spec("0.5", "12")), "1/2", filepath.Join(dir, "pc"))
	same := part(write("D/pop.json", spec("0.5", "11")), "1/2", filepath.Join(dir, "pd"))

	for _, c := range []struct {
		name  string
		parts []string
		want  []string
	}{
		{"median", []string{a0, median}, []string{median, "does not belong with", "vary[0].median is 0.7 here, 0.5 there"}},
		{"seed", []string{a0, seed}, []string{seed, "seed is 12 here, 11 there"}},
	} {
		var out, errb bytes.Buffer
		rc := runMerge(append(c.parts, "--out", filepath.Join(dir, "m-"+c.name)), &out, &errb)
		if rc != exitBadInput {
			t.Errorf("%s: exit %d, want 2; stderr %s", c.name, rc, errb.String())
		}
		for _, w := range c.want {
			if !strings.Contains(errb.String(), w) {
				t.Errorf("%s: stderr %q lacks %q", c.name, errb.String(), w)
			}
		}
	}
	mustRun(t, mergeCmd, a0, a1, "--out", filepath.Join(dir, "ok"))
	mustRun(t, mergeCmd, a0, same, "--out", filepath.Join(dir, "ok2"))
	sameFiles(t, filepath.Join(dir, "ok"), filepath.Join(dir, "ok2"))

	// A part with a sample deleted or repeated.
	data, err := os.ReadFile(a1)
	if err != nil {
		t.Fatal(err)
	}
	var p map[string]any
	if err := json.Unmarshal(data, &p); err != nil {
		t.Fatal(err)
	}
	res := p["result"].(map[string]any)
	samples := res["samples"].([]any)
	for _, c := range []struct {
		name     string
		samples  []any
		fixCount bool // also change the part's count of points to match
		want     string
	}{
		{"deleted", samples[:len(samples)-1], false, "says 6 points"},
		{"deleted, count fixed", samples[:len(samples)-1], true, "points missing or extra"},
		{"repeated", append(append([]any{}, samples[:len(samples)-1]...), samples[0]), false, "appears twice"},
	} {
		res["samples"], res["points"] = c.samples, len(samples)
		if c.fixCount {
			res["points"] = len(c.samples)
		}
		b, _ := json.Marshal(p)
		bad := write("bad-"+strings.ReplaceAll(c.name, " ", "")+".json", string(b))
		var out, errb bytes.Buffer
		if rc := runMerge([]string{a0, bad, "--out", filepath.Join(dir, "m-bad")}, &out, &errb); rc != exitBadInput || !strings.Contains(errb.String(), c.want) {
			t.Errorf("sample %s: exit %d, stderr %q; want 2 and %q", c.name, rc, errb.String(), c.want)
		}
	}
}

// A merge that is refused names the problem once (not "merge: merge:"),
// places a truncated part where the file ends (README, Limits), and leaves
// no empty output folder behind.
func TestMergeRefusalMessages(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "m.json"), []byte(robustModel), 0o644); err != nil {
		t.Fatal(err)
	}
	spec := filepath.Join(dir, "pop.json")
	if err := os.WriteFile(spec, []byte(`{"format": "kinetarium.population/1", "model": "m.json", "samples": 6, "seed": 1,
 "vary": [{"target": "k", "distribution": "lognormal", "median": 0.5, "cv_percent": 30}],
 "readouts": [{"kind": "final", "species": "B"}]}`), 0o644); err != nil {
		t.Fatal(err)
	}
	parts := filepath.Join(dir, "parts")
	mustRun(t, popCmd, spec, "--shard", "0/2", "--out", parts, "--quiet")
	part0 := filepath.Join(parts, "part-0-of-2.json")
	data, err := os.ReadFile(part0)
	if err != nil {
		t.Fatal(err)
	}
	cut := data[:len(data)/2]
	if bytes.Contains(cut, []byte("\n")) {
		t.Fatal("the part file is expected on one line")
	}
	trunc := filepath.Join(dir, "trunc.json")
	if err := os.WriteFile(trunc, cut, 0o644); err != nil {
		t.Fatal(err)
	}
	// A shard stopped by a signal: marked partial, with points missing.
	var p map[string]any
	if err := json.Unmarshal(data, &p); err != nil {
		t.Fatal(err)
	}
	p["meta"].(map[string]any)["partial"] = true
	res := p["result"].(map[string]any)
	res["samples"] = res["samples"].([]any)[:1]
	b, _ := json.Marshal(p)
	partial := filepath.Join(dir, "partial.json")
	if err := os.WriteFile(partial, b, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name  string
		parts []string
		want  string
	}{
		{"missing shard", []string{part0}, "merge: shard 1/2 is missing"},
		{"partial shard", []string{partial}, "partial.json: this shard was stopped before it finished (partial: true); run it again, then merge"},
		{"truncated", []string{trunc}, fmt.Sprintf("trunc.json:1:%d: the file ends too early", len(cut)+1)},
	} {
		out := filepath.Join(dir, "out-"+strings.ReplaceAll(c.name, " ", ""))
		var stdout, stderr bytes.Buffer
		rc := runMerge(append(c.parts, "--out", out), &stdout, &stderr)
		if rc != exitBadInput || !strings.Contains(stderr.String(), c.want) || strings.Contains(stderr.String(), "merge: merge:") {
			t.Errorf("%s: exit %d, stderr %q; want 2 and %q once", c.name, rc, stderr.String(), c.want)
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("%s: the refused merge left the folder %s", c.name, out)
		}
	}
}

// A continuation and a sensitivity run are not sharded (README, Global
// sensitivity) and a continuation runs on one core: --shard, and
// continue's --workers, are refused rather than ignored (a shard used to
// run the whole study and write no part).
func TestUnshardedCommandsRefuseShard(t *testing.T) {
	dir := t.TempDir()
	for i, args := range [][]string{
		{"continue", "../../examples/studies/toggle-continuation.json", "--shard", "0/2"},
		{"continue", "../../examples/studies/toggle-continuation.json", "--workers", "2"},
		{"sensitivity", "../../examples/studies/drug-sensitivity.json", "--shard", "0/2"},
	} {
		var out, errb bytes.Buffer
		res := filepath.Join(dir, fmt.Sprint(i))
		rc := dispatch(append(args, "--out", res, "--quiet"), &out, &errb)
		flag := args[2]
		if rc != exitBadInput || !strings.Contains(errb.String(), flag+": a ") || !strings.Contains(errb.String(), "runs whole") && !strings.Contains(errb.String(), "one core") {
			t.Errorf("%s %s: exit %d, stderr %q; want 2 refusing the flag with the reason", args[0], flag, rc, errb.String())
		}
		if _, err := os.Stat(res); err == nil {
			t.Errorf("%s %s: wrote results", args[0], flag)
		}
	}
}

// Progress is reported about once a second, not once per point of a
// continuation's branch (hundreds of lines for the example).
func TestContinueProgressEverySecond(t *testing.T) {
	var out, errb bytes.Buffer
	rc := dispatch([]string{"continue", "../../examples/studies/toggle-continuation.json", "--out", t.TempDir()}, &out, &errb)
	if n := strings.Count(errb.String(), "continue: "); rc != exitOK || n > 5 {
		t.Errorf("exit %d, %d progress lines on standard error; want 0 and a few", rc, n)
	}
}

// A continuation spec's mistakes name the spec's own keys ("species", not
// the analysis's word "quantities"), and the reason for no Hill curve
// reads without the solver package's prefix.
func TestContinueMessages(t *testing.T) {
	dir := t.TempDir()
	spec := func(extra string) string {
		p := filepath.Join(dir, fmt.Sprintf("c%d.json", len(extra)))
		src := `{"format": "kinetarium.continuation/1", "model": "` + filepath.ToSlash(mustAbs(t, "../../examples/toggle-repressors.json")) +
			`", "knob": "Kx", "from": 0.01, "to": 100` + extra + `}`
		if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	var out, errb bytes.Buffer
	if rc := dispatch([]string{"continue", spec(`, "species": ["Q"]`), "--out", filepath.Join(dir, "a"), "--quiet"}, &out, &errb); rc != exitBadInput ||
		!strings.Contains(errb.String(), `: species: `) || !strings.Contains(errb.String(), `"Q"`) {
		t.Errorf("unknown species: exit %d, stderr %q; want 2 naming species and Q", rc, errb.String())
	}
	out.Reset()
	if rc := dispatch([]string{"continue", spec(`, "response": "A"`), "--out", filepath.Join(dir, "b"), "--quiet"}, &out, &errb); rc != exitOK ||
		!strings.Contains(out.String(), "no Hill curve: the response does not change") {
		t.Errorf("flat response: exit %d, stdout %q; want the reason without a package prefix", rc, out.String())
	}
}

func mustAbs(t *testing.T, p string) string {
	a, err := filepath.Abs(p)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// A sensitivity spec's bootstrap and levels are checked where they are
// read and named by their keys: a negative bootstrap ran with the
// default, odd levels were reported under another word ("screening").
func TestSensitivitySpecChecks(t *testing.T) {
	dir := t.TempDir()
	model := filepath.ToSlash(mustAbs(t, "../../examples/two-compartment-drug.json"))
	for extra, want := range map[string]string{
		`"bootstrap": -1`:                 "bootstrap: expected a positive number of resamples, got -1",
		`"method": "morris", "levels": 3`: "levels: expected an even number of levels, at least 2, got 3",
	} {
		p := filepath.Join(dir, fmt.Sprintf("s%d.json", len(extra)))
		src := `{"format": "kinetarium.sensitivity/1", "model": "` + model + `", "samples": 8, "seed": 1, ` + extra + `,
 "vary": [{"target": "Vmax", "distribution": "lognormal", "median": 6, "cv_percent": 30}],
 "readouts": [{"kind": "max", "species": "D_plasma"}]}`
		if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
		var out, errb bytes.Buffer
		if rc := dispatch([]string{"sensitivity", p, "--out", filepath.Join(dir, "out"), "--quiet"}, &out, &errb); rc != exitBadInput || !strings.Contains(errb.String(), want) {
			t.Errorf("%s: exit %d, stderr %q; want 2 and %q", extra, rc, errb.String(), want)
		}
	}
}
