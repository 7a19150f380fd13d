package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"kinetarium/network"
)

// simTestdata holds the models of these tests.
const simTestdata = "testdata/simulate/"

// simRun calls the simulate subcommand in-process.
func simRun(args ...string) (rc int, stdout, stderr string) {
	var out, errb bytes.Buffer
	rc = runSimulate(args, &out, &errb)
	return rc, out.String(), errb.String()
}

// parseTable parses CSV text and checks that every number reads back to the
// same text, so the file round-trips exactly.
func parseTable(t *testing.T, text string) (header []string, times []float64, rows [][]float64) {
	t.Helper()
	recs, err := csv.NewReader(strings.NewReader(text)).ReadAll()
	if err != nil {
		t.Fatalf("CSV does not parse: %v\n%s", err, text)
	}
	if len(recs) == 0 {
		t.Fatal("empty CSV")
	}
	header = recs[0]
	for i, r := range recs[1:] {
		if len(r) != len(header) {
			t.Fatalf("row %d has %d fields, header %d", i+1, len(r), len(header))
		}
		vals := make([]float64, len(r))
		for j, s := range r {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("row %d field %d: %v", i+1, j, err)
			}
			if back := strconv.FormatFloat(v, 'g', -1, 64); back != s {
				t.Fatalf("row %d field %d: %q reads back as %q", i+1, j, s, back)
			}
			vals[j] = v
		}
		times = append(times, vals[0])
		rows = append(rows, vals[1:])
	}
	return header, times, rows
}

// TestSimulateExamples runs every shipped example with its own settings.
func TestSimulateExamples(t *testing.T) {
	files, err := filepath.Glob("../../examples/*.json")
	if err != nil || len(files) == 0 {
		t.Fatalf("no examples found: %v", err)
	}
	for _, path := range files {
		t.Run(filepath.Base(path), func(t *testing.T) {
			rc, out, errs := simRun(path)
			if rc != 0 {
				t.Fatalf("exit %d: %s", rc, errs)
			}
			m, err := network.Load(path)
			if err != nil {
				t.Fatal(err)
			}
			sim := m.Simulation.WithDefaults()
			header, times, _ := parseTable(t, out)
			// Each column carries the model's unit, the assignments
			// their own.
			unit := func(name, u string) string {
				if u == "" {
					return name
				}
				return name + " (" + u + ")"
			}
			want := []string{unit("time", m.Units.Time)}
			for _, s := range m.Species {
				want = append(want, unit(s.Name, m.Units.Amount))
			}
			for _, a := range m.Assignments { // assignments follow the species
				want = append(want, unit(a.Name, a.Unit))
			}
			if strings.Join(header, ",") != strings.Join(want, ",") {
				t.Errorf("header %v, want %v", header, want)
			}
			if grid := network.OutputTimes(sim.TEnd, sim.Output); len(times) != len(grid) {
				t.Errorf("%d rows, want %d output times", len(times), len(grid))
			}
			if last := times[len(times)-1]; last != sim.TEnd {
				t.Errorf("last time %v, want exactly t_end = %v", last, sim.TEnd)
			}
		})
	}
}

// TestSimulateFirstOrderClosedForm checks the table against the closed form
// of first-order conversion A → B with rate k·A: A(t) = A0·exp(−k·t),
// B(t) = A0 − A(t) (first-order kinetics; common practice).
func TestSimulateFirstOrderClosedForm(t *testing.T) {
	out := filepath.Join(t.TempDir(), "traj.csv")
	rc, stdout, errs := simRun(simTestdata+"decay.json", "--out", out)
	if rc != 0 {
		t.Fatalf("exit %d: %s", rc, errs)
	}
	if stdout != "" {
		t.Errorf("with --out, stdout should be empty; got %q", stdout)
	}
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	header, times, rows := parseTable(t, string(data))
	if strings.Join(header, ",") != "time (s),A (uM),B (uM)" {
		t.Fatalf("header %v, want time (s), A (uM), B (uM)", header)
	}
	if len(times) != 9 || times[8] != 4 {
		t.Fatalf("times %v, want 9 from 0 to exactly 4", times)
	}
	const a0, k = 2.0, 0.5
	for i, tt := range times {
		if want := 4 * float64(i) / 8; tt != want {
			t.Errorf("time %d = %v, want %v", i, tt, want)
		}
		a := a0 * math.Exp(-k*tt)
		if d := math.Abs(rows[i][0] - a); d > 1e-7*a0 {
			t.Errorf("A(%v) = %v, want %v (error %.2g)", tt, rows[i][0], a, d)
		}
		if d := math.Abs(rows[i][1] - (a0 - a)); d > 1e-7*a0 {
			t.Errorf("B(%v) = %v, want %v (error %.2g)", tt, rows[i][1], a0-a, d)
		}
	}
}

// TestSimulateBlowUp: 2X → 3X at rate k·X² gives dX/dt = k·X², whose
// solution X0/(1 − k·X0·t) grows without bound at t = 1/(k·X0) = 1 (closed
// form; common practice). The solve must fail with exit status 1, name the
// time, and still write the rows it reached.
func TestSimulateBlowUp(t *testing.T) {
	out := filepath.Join(t.TempDir(), "traj.csv")
	rc, _, errs := simRun(simTestdata+"blowup.json", "--out", out)
	if rc != 1 {
		t.Fatalf("exit %d, want 1; stderr: %s", rc, errs)
	}
	if !strings.Contains(errs, "blowup.json") || !strings.Contains(errs, "t = ") {
		t.Errorf("message %q should name the file and the time", errs)
	}
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatalf("no partial CSV: %v", err)
	}
	_, times, _ := parseTable(t, string(data))
	if len(times) == 0 || len(times) >= 11 {
		t.Fatalf("partial CSV has %d rows, want between 1 and 10", len(times))
	}
	if last := times[len(times)-1]; last > 1 {
		t.Errorf("partial CSV reaches t = %v, beyond the blow-up at t = 1", last)
	}
}

func TestSimulateBadInput(t *testing.T) {
	model := simTestdata + "decay.json"
	cases := []struct {
		name string
		args []string
		want []string // substrings of the message
	}{
		{"broken JSON", []string{simTestdata + "broken.json"}, []string{"broken.json", "broken.json:5:"}},
		{"unknown species", []string{simTestdata + "unknown-species.json"}, []string{"unknown-species.json", `reaction "leak"`, "equation", `"Z"`}},
		{"missing file", []string{simTestdata + "absent.json"}, []string{"absent.json"}},
		{"no model", nil, []string{"expected one model file"}},
		{"two models", []string{model, model}, []string{"expected one model file"}},
		{"unknown flag", []string{model, "--colour"}, []string{"-colour"}},
		{"t-end text", []string{model, "--t-end", "soon"}, []string{"t-end"}},
		{"t-end negative", []string{model, "--t-end", "-1"}, []string{"--t-end", "positive"}},
		{"points", []string{model, "--points", "1"}, []string{"--points", "from 2 to 1000000"}},
		{"spacing", []string{model, "--spacing", "cubic"}, []string{"--spacing", "linear or log", "cubic"}},
		{"rtol", []string{model, "--rtol", "0"}, []string{"--rtol"}},
		{"atol", []string{model, "--atol", "-1e-9"}, []string{"--atol"}},
		{"method", []string{model, "--method", "fast"}, []string{"--method", "rosenbrock", "fast"}},
		{"repeat", []string{model, "--repeat", "0"}, []string{"--repeat"}},
		{"figure format", []string{model, "--figure", "fig.gif"}, []string{"--figure", ".png"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rc, _, errs := simRun(c.args...)
			if rc != 2 {
				t.Fatalf("exit %d, want 2; stderr: %s", rc, errs)
			}
			for _, w := range c.want {
				if !strings.Contains(errs, w) {
					t.Errorf("message %q lacks %q", errs, w)
				}
			}
		})
	}
}

// simStatsLine returns the stats decoded from the last line of stdout and
// the text before it.
func simStatsLine(t *testing.T, stdout string) (simStats, string) {
	t.Helper()
	text := strings.TrimRight(stdout, "\n")
	i := strings.LastIndexByte(text, '\n')
	var st simStats
	if err := json.Unmarshal([]byte(text[i+1:]), &st); err != nil {
		t.Fatalf("last line %q is not JSON: %v", text[i+1:], err)
	}
	var raw map[string]any
	json.Unmarshal([]byte(text[i+1:]), &raw)
	for _, key := range []string{"method", "steps", "rejected", "rhs_evals", "jacobian_evals", "factorizations", "linear_solves", "solve_seconds", "choice"} {
		if _, ok := raw[key]; !ok {
			t.Errorf("stats lack %q: %s", key, text[i+1:])
		}
	}
	return st, text[:i+1]
}

func TestSimulateStats(t *testing.T) {
	rc, out, errs := simRun(simTestdata+"decay.json", "--stats", "--repeat", "3")
	if rc != 0 {
		t.Fatalf("exit %d: %s", rc, errs)
	}
	st, table := simStatsLine(t, out)
	_, times, _ := parseTable(t, table)
	if len(times) != 9 || st.Points != 9 {
		t.Errorf("%d rows, stats say %d; want 9", len(times), st.Points)
	}
	if st.Repeat != 3 || !(st.SolveSeconds > 0) {
		t.Errorf("repeat %d, solve_seconds %v", st.Repeat, st.SolveSeconds)
	}
	if st.Steps <= 0 || st.RHSEvals < st.Steps || st.Method == "" {
		t.Errorf("implausible counters: %+v", st)
	}
}

// TestSimulateFlagsOverrideFile: every flag replaces the model's setting.
func TestSimulateFlagsOverrideFile(t *testing.T) {
	rc, out, errs := simRun(simTestdata+"decay.json", "--t-end", "2", "--points", "5", "--spacing", "log",
		"--method", "radau", "--rtol", "1e-5", "--atol", "1e-8", "--stats")
	if rc != 0 {
		t.Fatalf("exit %d: %s", rc, errs)
	}
	st, table := simStatsLine(t, out)
	_, times, rows := parseTable(t, table)
	want := network.OutputTimes(2, network.Output{Points: 5, Spacing: "log"})
	if len(times) != len(want) {
		t.Fatalf("times %v, want %v", times, want)
	}
	for i := range want {
		if times[i] != want[i] {
			t.Errorf("time %d = %v, want %v", i, times[i], want[i])
		}
	}
	if times[0] != 0 || times[len(times)-1] != 2 {
		t.Errorf("grid %v should run from 0 to exactly 2", times)
	}
	if st.Method != "radau" || st.Requested != "radau" || st.RTol != 1e-5 || st.ATol != 1e-8 || st.TEnd != 2 {
		t.Errorf("stats %+v do not reflect the flags", st)
	}
	// Closed form at the end, to the looser tolerance (first-order kinetics).
	if a := 2 * math.Exp(-0.5*2); math.Abs(rows[len(rows)-1][0]-a) > 1e-4 {
		t.Errorf("A(2) = %v, want %v", rows[len(rows)-1][0], a)
	}
	// Flags after or before the model.
	if rc, _, errs := simRun("--points", "3", simTestdata+"decay.json"); rc != 0 {
		t.Errorf("flag before the model: exit %d: %s", rc, errs)
	}
}

func TestSimulateFigures(t *testing.T) {
	dir := t.TempDir()
	for _, ext := range []string{".png", ".svg", ".pdf"} {
		path := filepath.Join(dir, "fig"+ext)
		rc, _, errs := simRun(simTestdata+"decay.json", "--figure", path, "--spacing", "log", "--log-y", "--out", filepath.Join(dir, "t.csv"))
		if rc != 0 {
			t.Fatalf("%s: exit %d: %s", ext, rc, errs)
		}
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		switch ext {
		case ".png":
			if _, err := png.Decode(bytes.NewReader(data)); err != nil {
				t.Errorf("PNG does not decode: %v", err)
			}
		case ".svg":
			dec := xml.NewDecoder(bytes.NewReader(data))
			root := ""
			for {
				tok, err := dec.Token()
				if err == io.EOF {
					break
				}
				if err != nil {
					t.Fatalf("SVG not well-formed: %v", err)
				}
				if se, ok := tok.(xml.StartElement); ok && root == "" {
					root = se.Name.Local
				}
			}
			if root != "svg" {
				t.Errorf("SVG root %q", root)
			}
		case ".pdf":
			if !bytes.HasPrefix(data, []byte("%PDF-")) || !bytes.HasSuffix(bytes.TrimSpace(data), []byte("%%EOF")) {
				t.Errorf("PDF lacks the header %q or the trailer %q", "%PDF-", "%%EOF")
			}
		}
	}
}

// The help carries the caution that results are research aids, not
// clinical or dosing advice (README, top), and names the unit flags of
// every command that takes them.
func TestHelpCaution(t *testing.T) {
	var out, errb bytes.Buffer
	dispatch([]string{"help"}, &out, &errb)
	for _, want := range []string{"research aids, not clinical or dosing advice", "qualified professionals", "local rules"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("help lacks %q", want)
		}
	}
	for _, cmd := range []string{"sweep", "population", "continue", "sensitivity"} {
		_, usage, _ := strings.Cut(out.String(), "\n  "+cmd+" SPEC.json")
		usage, _, _ = strings.Cut(usage, "\n\n")
		if !strings.Contains(usage, "--time-unit U") || !strings.Contains(usage, "--concentration-unit U") {
			t.Errorf("help of %s lacks the unit flags: %q", cmd, usage)
		}
	}
}

// Every command answers -h with its usage and exit status 0 (import,
// export and conformance printed nothing; check refused -h with status 2).
func TestEveryCommandHelp(t *testing.T) {
	for name := range commands {
		if name == "test-panic" {
			continue
		}
		var out, errb bytes.Buffer
		if rc := dispatch([]string{name, "-h"}, &out, &errb); rc != exitOK || !strings.Contains(out.String()+errb.String(), "usage: batch") {
			t.Errorf("%s -h: exit %d, stdout %q, stderr %q; want 0 and the usage", name, rc, out.String(), errb.String())
		}
	}
}

func TestDispatch(t *testing.T) {
	var out, errb bytes.Buffer
	if rc := dispatch([]string{"help"}, &out, &errb); rc != 0 || !strings.Contains(out.String(), "simulate MODEL.json") {
		t.Errorf("help: exit %d, output %q", rc, out.String())
	}
	for _, name := range []string{"simulate", "sweep", "population", "merge"} {
		if commands[name] == nil {
			t.Errorf("subcommand %s not registered", name)
		}
	}
	out.Reset()
	if rc := dispatch([]string{"simulate", "-h"}, &out, &errb); rc != 0 || out.String() != usageText {
		t.Errorf("simulate -h: exit %d", rc)
	}
	errb.Reset()
	// The other subcommands print their own usage for -h and succeed too.
	for _, cmd := range []string{"sweep", "population", "merge"} {
		out.Reset()
		errb.Reset()
		if rc := dispatch([]string{cmd, "-h"}, &out, &errb); rc != 0 || !strings.Contains(errb.String(), "usage: batch "+cmd) || strings.Contains(errb.String(), "help requested") {
			t.Errorf("%s -h: status %d, stderr %q; want 0 and the usage alone", cmd, rc, errb.String())
		}
	}
	out.Reset()
	errb.Reset()
	if rc := dispatch([]string{"frobnicate"}, &out, &errb); rc != 2 || !strings.Contains(errb.String(), `"frobnicate"`) {
		t.Errorf("unknown command: exit %d, %q", rc, errb.String())
	}
	if rc := dispatch(nil, &out, &errb); rc != 2 {
		t.Errorf("no command: exit %d", rc)
	}
}

// A rate that is undefined after t = 1 (the square root of a negative
// number is NaN, IEEE 754; common practice) stops the solve there, and the
// message names the species, not the solver's component index.
func TestSolverErrorNamesTheSpecies(t *testing.T) {
	rc, _, errs := simRun(simTestdata+"nan-rate.json", "--out", filepath.Join(t.TempDir(), "out.csv"))
	if rc != 1 || !strings.Contains(errs, `species "B" became NaN`) || strings.Contains(errs, "component") {
		t.Errorf("exit %d, stderr %q; want 1 and species \"B\" named", rc, errs)
	}
	if !strings.Contains(errs, "t = 1 ") {
		t.Errorf("stderr %q does not give the time the rate became undefined (t = 1)", errs)
	}
}

// --time-unit and --concentration-unit show the table in other units:
// decay.json (uM and s, A0 = 2 uM, k = 0.5 1/s) in nM and minutes has
// times ÷ 60 and concentrations × 1000, checked against the closed form
// A(t) = A0·exp(−k·t) (common practice; 1 min = 60 s, 1 uM = 1000 nM).
// The flags override display units in the model, and the model's own
// stored values do not change.
func TestSimulateDisplayUnitFlags(t *testing.T) {
	rc, out, errs := simRun(simTestdata+"decay.json", "--time-unit", "min", "--concentration-unit", "nM")
	if rc != 0 {
		t.Fatalf("exit %d: %s", rc, errs)
	}
	header, times, rows := parseTable(t, out)
	if strings.Join(header, ",") != "time (min),A (nM),B (nM)" {
		t.Fatalf("header %v, want time (min), A (nM), B (nM)", header)
	}
	if len(times) != 9 || times[8] != 4.0/60 {
		t.Fatalf("times %v, want 9 from 0 to exactly 4/60 min", times)
	}
	const a0, k = 2.0, 0.5
	for i, tm := range times {
		if want := (4 * float64(i) / 8) / 60; tm != want {
			t.Errorf("time %d = %v min, want %v", i, tm, want)
		}
		a := 1000 * a0 * math.Exp(-k*60*tm)
		if d := math.Abs(rows[i][0] - a); d > 1e-7*1000*a0 {
			t.Errorf("A(%v min) = %v nM, want %v (error %.2g)", tm, rows[i][0], a, d)
		}
	}

	// A model that asks for hours and pM is overridden by the flags.
	m, err := network.Load(simTestdata + "decay.json")
	if err != nil {
		t.Fatal(err)
	}
	m.Simulation.Display = network.Display{Time: "h", Concentration: "pM"}
	path := filepath.Join(t.TempDir(), "shown.json")
	if err := m.Save(path); err != nil {
		t.Fatal(err)
	}
	rc, out, errs = simRun(path)
	if header, _, _ = parseTable(t, out); rc != 0 || strings.Join(header, ",") != "time (h),A (pM),B (pM)" {
		t.Fatalf("the model's display units: exit %d, header %v (%s)", rc, header, errs)
	}
	rc, out, errs = simRun(path, "--concentration-unit", "mM")
	if header, _, _ = parseTable(t, out); rc != 0 || strings.Join(header, ",") != "time (h),A (mM),B (mM)" {
		t.Fatalf("--concentration-unit mM over the model's pM: exit %d, header %v (%s)", rc, header, errs)
	}

	// An assignment whose unit is not a concentration stays as computed,
	// and stderr says so: body_amount is in mg in a model in mg/L.
	rc, out, errs = simRun("../../examples/twice-daily-oral-dose.json", "--concentration-unit", "ug/mL", "--time-unit", "day")
	header, _, _ = parseTable(t, out)
	if rc != 0 || header[0] != "time (day)" || header[1] != "D_gut (ug/mL)" || header[len(header)-1] != "body_amount (mg)" ||
		!strings.Contains(errs, "note: body_amount is in mg, not a concentration") {
		t.Fatalf("exit %d, header %v, stderr %q; want body_amount left in mg with a note", rc, header, errs)
	}
}

// A display unit of the wrong kind, one that does not read, or one that
// does not convert from the model's is refused with the flag's name, exit
// status 2, and nothing written.
func TestSimulateDisplayUnitFlagErrors(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"--time-unit", "nM"}, `--time-unit: "nM" is not a unit of time (it is concentration)`},
		{[]string{"--concentration-unit", "mg/L"}, `--concentration-unit: cannot show concentrations in mg/L: the model's concentration unit uM measures concentration and mg/L measures mass concentration`},
		{[]string{"--concentration-unit", "nM/"}, `--concentration-unit: the concentration unit to show results in, "nM/", does not read: "/" needs a unit after it`},
	} {
		rc, out, errs := simRun(append([]string{simTestdata + "decay.json"}, c.args...)...)
		if rc != 2 || out != "" || !strings.Contains(errs, c.want) {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2 and %q", c.args, rc, out, errs, c.want)
		}
	}
}
