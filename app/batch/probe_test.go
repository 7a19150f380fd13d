package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"
)

// probeReport, when set, names a file for the table of every probe.
var probeReport = flag.String("probe-report", "", "write the hostile-input probes' outcomes to this file (Markdown)")

// A probe is one hostile or malformed input given to the command in a
// child process, as a user would.
type probe struct {
	name string
	args []string
	file string // the input that is bad, named in a located message
}

// probeOutcome is what a probe did.
type probeOutcome struct {
	probe
	rc      int
	stderr  string
	elapsed time.Duration
	hung    bool
}

// crash reports a Go runtime crash or an internal error in the outcome.
func (o probeOutcome) crash() string {
	switch {
	case o.hung:
		return "hang"
	case o.rc == exitInternal:
		return "internal error (exit 3)"
	case strings.Contains(o.stderr, "fatal error:"):
		return "fatal error"
	case strings.Contains(o.stderr, "panic:") || strings.Contains(o.stderr, "goroutine "):
		return "panic"
	case o.rc < 0 || o.rc > exitInternal:
		return fmt.Sprintf("killed (status %d)", o.rc)
	}
	return ""
}

// located reports whether a refusal names the input it is about: the
// file (and, for JSON, the line and column or the key) or the option.
func (o probeOutcome) located() bool {
	if o.rc != exitBadInput {
		return true
	}
	if o.file == "" {
		return strings.Contains(o.stderr, "--")
	}
	return strings.Contains(o.stderr, filepath.Base(o.file))
}

// mutate returns the JSON document doc with the value at path (keys and
// list positions separated by dots) replaced by v, or deleted when v is
// the string "<delete>".
func mutate(t *testing.T, doc string, path string, v any) string {
	t.Helper()
	var root any
	if err := json.Unmarshal([]byte(doc), &root); err != nil {
		t.Fatal(err)
	}
	keys := strings.Split(path, ".")
	cur := root
	for i, k := range keys {
		last := i == len(keys)-1
		switch c := cur.(type) {
		case map[string]any:
			if last {
				if v == "<delete>" {
					delete(c, k)
				} else {
					c[k] = v
				}
			} else {
				cur = c[k]
			}
		case []any:
			n, err := strconv.Atoi(k)
			if err != nil || n >= len(c) {
				t.Fatalf("path %s: no item %s", path, k)
			}
			if last {
				c[n] = v
			} else {
				cur = c[n]
			}
		default:
			t.Fatalf("path %s: cannot descend at %s", path, k)
		}
	}
	b, err := json.Marshal(root)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// hostileValues replace a value of an input file.
var hostileValues = []any{-1.0, 0.0, 0.5, 1e9, 1e308, -1e308, "x", "", nil, []any{}, map[string]any{}, true, "<delete>"}

// The probes of issue 17 run again: malformed and hostile model files,
// sweep and population specs and partial results, each given to the
// command in a child process. None may crash (panic, fatal error, exit
// status 3, a kill) or hang (30 s), and every refusal (exit status 2)
// names the input. Exit 0 or 1 is allowed: many mutations leave a valid
// input (a rate of 0.5) or one that runs and fails with a message. With
// -probe-report FILE the outcome of every probe is written out (the
// table behind bench/robustness.md).
func TestHostileInputProbes(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a child process per probe")
	}
	dir := t.TempDir()
	n := 0
	put := func(content []byte) string {
		n++
		p := filepath.Join(dir, fmt.Sprintf("in%03d.json", n))
		if err := os.WriteFile(p, content, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	if err := os.WriteFile(filepath.Join(dir, "m.json"), []byte(robustModel), 0o644); err != nil {
		t.Fatal(err)
	}
	// The folder of every probe's --out (simulate's CSV must go into an
	// existing folder; the other commands make theirs).
	if err := os.Mkdir(filepath.Join(dir, "out"), 0o755); err != nil {
		t.Fatal(err)
	}
	var probes []probe
	add := func(name string, file string, args ...string) {
		probes = append(probes, probe{name: name, args: append(args, "--out", filepath.Join(dir, "out", strconv.Itoa(len(probes)))), file: file})
	}
	addRaw := func(name, cmd string, content []byte) {
		f := put(content)
		add(name, f, cmd, f)
	}

	// Model files, through simulate.
	model := robustModel
	for _, path := range []string{"format", "simulation.t_end", "simulation.output.points", "species.0.initial",
		"species.0.name", "parameters.0.value", "reactions.0.equation", "reactions.0.rate.k", "reactions.0.rate.law"} {
		for _, v := range hostileValues {
			addRaw(fmt.Sprintf("model %s = %v", path, v), "simulate", []byte(mutate(t, model, path, v)))
		}
	}
	for _, cut := range []int{1, 10, 40, 80, 120, 200, 260, len(model) - 3} {
		addRaw(fmt.Sprintf("model truncated at byte %d", cut), "simulate", []byte(model[:cut]))
	}
	utf16 := []byte{0xFF, 0xFE}
	for _, r := range model {
		utf16 = append(utf16, byte(r), 0)
	}
	sum := func(terms int, op string) string {
		var b strings.Builder
		for i := range terms {
			if i > 0 {
				b.WriteString(op)
			}
			b.WriteString("A")
		}
		return b.String()
	}
	expr := func(e string) []byte {
		return []byte(mutate(t, mutate(t, model, "reactions.0.rate", map[string]any{"law": "expression", "expression": "k*A"}), "reactions.0.rate.expression", e))
	}
	for _, raw := range []struct {
		name    string
		content []byte
	}{
		{"empty model file", nil},
		{"blank model file", []byte("  \n\t ")},
		{"binary junk", bytes.Repeat([]byte{0x00, 0xff, 0x13, 0x88}, 5000)},
		{"UTF-16 model", utf16},
		{"UTF-8 byte-order mark", append([]byte("\xef\xbb\xbf"), model...)},
		{"JSON list at top", []byte("[1, 2, 3]")},
		{"nesting 100000 deep", []byte(strings.Repeat("[", 100000) + strings.Repeat("]", 100000))},
		{"name of 10 MB", []byte(mutate(t, model, "species.0.name", strings.Repeat("A", 10<<20)))},
		{"two documents", []byte(model + model)},
		{"rate of 1,600 factors", expr("k*" + sum(1600, "*"))},
		{"rate of 100,000 terms", expr("k*(" + sum(100000, "+") + ")")},
		{"rate of 1,000,000 terms", expr("k*(" + sum(1000000, "+") + ")")},
		{"rate nested 100,000 parentheses", expr(strings.Repeat("(", 100000) + "A" + strings.Repeat(")", 100000))},
	} {
		addRaw(raw.name, "simulate", raw.content)
	}
	add("model is /dev/zero", "zero", "simulate", "/dev/zero")
	add("model is a folder", filepath.Base(dir), "simulate", dir)
	add("model is missing", "missing.json", "simulate", filepath.Join(dir, "missing.json"))
	add("--points 1e8", "", "simulate", filepath.Join(dir, "m.json"), "--points", "100000000")
	add("--t-end -1", "", "simulate", filepath.Join(dir, "m.json"), "--t-end", "-1")

	// Sweep and population specs.
	sweep := `{"format": "kinetarium.sweep/1", "model": "m.json",
 "parameter": {"target": "k", "from": 0.1, "to": 1, "points": 3, "spacing": "log"},
 "readouts": [{"name": "fin", "kind": "final", "species": "B"}], "simulation": {"t_end": 10, "points": 5}}`
	for _, path := range []string{"parameter.points", "parameter.from", "parameter.target", "parameter.spacing",
		"readouts.0.kind", "readouts.0.species", "simulation.t_end", "simulation.points", "model"} {
		for _, v := range []any{-1.0, 0.0, 1e9, 1e308, "x", nil, "<delete>"} {
			addRaw(fmt.Sprintf("sweep %s = %v", path, v), "sweep", []byte(mutate(t, sweep, path, v)))
		}
	}
	pop := `{"format": "kinetarium.population/1", "model": "m.json", "samples": 20, "seed": 4,
 "vary": [{"target": "k", "distribution": "lognormal", "median": 0.5, "cv_percent": 30}],
 "readouts": [{"name": "fin", "kind": "final", "species": "B"}], "bands": {"species": ["B"]}}`
	for _, path := range []string{"samples", "seed", "vary.0.median", "vary.0.cv_percent", "vary.0.distribution", "vary.0.target", "bands.species"} {
		for _, v := range []any{-1.0, 0.0, 1e9, 1e308, "x", nil, "<delete>"} {
			addRaw(fmt.Sprintf("population %s = %v", path, v), "population", []byte(mutate(t, pop, path, v)))
		}
	}
	for _, cut := range []int{5, 50, 150, len(pop) - 2} {
		addRaw(fmt.Sprintf("population spec truncated at byte %d", cut), "population", []byte(pop[:cut]))
	}
	popFile := put([]byte(pop))
	add("--shard 0/1e12", "", "population", popFile, "--shard", "0/1000000000000")
	add("--shard 3/3", "", "population", popFile, "--shard", "3/3")
	add("--workers -2", "", "population", popFile, "--workers", "-2")

	// Partial results, through merge.
	parts := filepath.Join(dir, "parts")
	for _, s := range []string{"0/2", "1/2"} {
		var out, errb bytes.Buffer
		if rc := dispatch([]string{"population", popFile, "--shard", s, "--out", parts, "--quiet"}, &out, &errb); rc != 0 {
			t.Fatalf("making a part: %s", errb.String())
		}
	}
	part0 := filepath.Join(parts, "part-0-of-2.json")
	p1, err := os.ReadFile(filepath.Join(parts, "part-1-of-2.json"))
	if err != nil {
		t.Fatal(err)
	}
	for _, path := range []string{"result.size", "result.shard", "result.points", "result.samples.0.i", "result.samples.0.x",
		"result.samples.0.r", "result.knobs", "meta.kind", "meta.fingerprint", "format"} {
		for _, v := range []any{-1.0, 1e9, "x", nil, "<delete>"} {
			f := put([]byte(mutate(t, string(p1), path, v)))
			add(fmt.Sprintf("part %s = %v", path, v), f, "merge", part0, f)
		}
	}
	for _, frac := range []int{1, 3, 5, 7, 9} {
		f := put(p1[:len(p1)*frac/10])
		add(fmt.Sprintf("part truncated at %d0 %%", frac), f, "merge", part0, f)
	}
	add("part merged with itself", "part-0-of-2.json", "merge", part0, part0)

	// Run every probe, two at a time.
	outcomes := make([]probeOutcome, len(probes))
	var wg sync.WaitGroup
	sem := make(chan struct{}, 2)
	for i, p := range probes {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			outcomes[i] = runProbe(p)
		}()
	}
	wg.Wait()

	var crashes, unlocated, refused, ran int
	var slowest time.Duration
	for _, o := range outcomes {
		if c := o.crash(); c != "" {
			crashes++
			t.Errorf("%s: %s; stderr:\n%s", o.name, c, firstLines(o.stderr, 12))
			continue
		}
		if !o.located() {
			unlocated++
			t.Errorf("%s: refused without naming %s: %q", o.name, filepath.Base(o.file), firstLines(o.stderr, 3))
		}
		if o.rc == exitBadInput {
			refused++
			slowest = max(slowest, o.elapsed)
		} else {
			ran++
		}
	}
	t.Logf("%d probes: %d refused with a located message (slowest %v), %d ran (exit 0 or 1), %d crashes or hangs, %d unlocated",
		len(outcomes), refused, slowest.Round(time.Millisecond), ran, crashes, unlocated)
	if *probeReport != "" {
		writeProbeReport(t, *probeReport, outcomes)
	}
}

// runProbe runs one probe in a child process with a 30 s limit.
func runProbe(p probe) probeOutcome {
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, os.Args[0], append(p.args, "--quiet")...)
	if p.args[0] == "simulate" || p.args[0] == "merge" {
		cmd = exec.CommandContext(ctx, os.Args[0], p.args...)
	}
	cmd.Env = append(os.Environ(), "KINETARIUM_BATCH_MAIN=1", "GOMAXPROCS=1")
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	start := time.Now()
	err := cmd.Run()
	o := probeOutcome{probe: p, elapsed: time.Since(start), stderr: stderr.String()}
	var ee *exec.ExitError
	switch {
	case ctx.Err() != nil:
		o.hung = true
	case errors.As(err, &ee):
		o.rc = ee.ExitCode()
	case err != nil:
		o.rc = -1
		o.stderr += err.Error()
	}
	return o
}

// firstLines returns the first n lines of s.
func firstLines(s string, n int) string {
	lines := strings.SplitN(s, "\n", n+1)
	return strings.Join(lines[:min(n, len(lines))], "\n")
}

// tempNames hides the temporary folder in reported messages.
var tempNames = regexp.MustCompile(`/[^ :"]*/(in\d{3}\.json|m\.json|part-\d-of-2\.json|missing\.json)`)

// writeProbeReport writes one table row per probe.
func writeProbeReport(t *testing.T, path string, outcomes []probeOutcome) {
	sort.SliceStable(outcomes, func(i, j int) bool { return outcomes[i].args[0] < outcomes[j].args[0] })
	var b strings.Builder
	b.WriteString("| probe | command | exit | ms | message (first line) |\n|---|---|---|---|---|\n")
	for _, o := range outcomes {
		msg := strings.TrimSpace(firstLines(o.stderr, 1))
		msg = tempNames.ReplaceAllString(msg, "$1")
		if len(msg) > 160 {
			msg = msg[:160] + "…"
		}
		msg = strings.ReplaceAll(msg, "|", "\\|")
		name := strings.ReplaceAll(o.name, "|", "\\|")
		if len(name) > 60 {
			name = name[:60] + "…"
		}
		fmt.Fprintf(&b, "| %s | %s | %d | %d | %s |\n", name, o.args[0], o.rc, o.elapsed.Milliseconds(), msg)
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}
