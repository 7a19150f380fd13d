package main

import (
	"bytes"
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
		}{"/dev/zero", []string{"simulate", "/dev/zero"}, "larger than 64 MiB"})
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
