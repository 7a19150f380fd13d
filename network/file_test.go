package network

import (
	"bytes"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"kinetarium/examples"
)

func TestRoundTripExamples(t *testing.T) {
	for _, name := range examples.Names() {
		m := loadExample(t, name)
		var a, b bytes.Buffer
		if err := m.Write(&a); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		m2, err := Read(bytes.NewReader(a.Bytes()), name+" (written)")
		if err != nil {
			t.Fatalf("%s: reading what Write wrote: %v", name, err)
		}
		if !reflect.DeepEqual(m.Clone(), m2.Clone()) { // Clone leaves out where items were in the file
			t.Errorf("%s: model changed in a write/read round trip", name)
		}
		if err := m2.Write(&b); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(a.Bytes(), b.Bytes()) {
			t.Errorf("%s: second write differs from the first", name)
		}
		if c := m.Clone(); !reflect.DeepEqual(c, m.Clone()) || c.source != nil {
			t.Errorf("%s: Clone differs", name)
		}
		if ps := m.Validate(); HasErrors(ps) {
			t.Errorf("%s: example has errors: %v", name, ps)
		}
	}
}

func TestSaveAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "m.json")
	m := loadExample(t, "toggle-repressors.json")
	if err := m.Save(path); err != nil {
		t.Fatal(err)
	}
	m.Title = "changed"
	if err := m.Save(path); err != nil {
		t.Fatal(err)
	}
	got, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if got.Title != "changed" {
		t.Errorf("title %q after save", got.Title)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("directory holds %d files after saving, want 1 (no temporary files left)", len(entries))
	}
	if err := m.Save(filepath.Join(dir, "missing", "m.json")); err == nil {
		t.Error("saving into a missing directory succeeded")
	}
}

func TestReadErrors(t *testing.T) {
	const head = `{"format": "kinetarium.model/1", `
	cases := []struct{ in, want string }{
		{`{"format": "kinetarium.model/1",` + "\n" + `  "species": [}`, "m.json:2:15: invalid JSON"},
		{`{"format": "kinetarium.model/1"`, "ends too early"},
		{`{"title": "x"}`, `missing key "format"`},
		{`{"format": "kinetarium.model/2"}`, `version this program does not read`},
		{`{"format": "other"}`, `not a model file format`},
		{`[1, 2]`, `the top level: expected an object`},
		{head + `"colour": 1}`, `the top level: unknown key "colour"`},
		{head + `"reactions": [{}, {}, {"rate": {"kk": 1}}]}`, `reactions[2].rate: unknown key "kk"`},
		{head + `"species": [{"name": 5}]}`, `species[0].name: expected text`},
		{head + `"species": [{"name": "A", "initial": "lots"}]}`, `species[0].initial: expected a number, found text`},
		{head + `"species": {"name": "A"}}`, `species: expected a list`},
		{head + `"parameters": [{"name": "k", "unit": "1/s"}]}`, `parameters[0]: has no "value": expected a number`},
		{head + `"species": [{"name": "A", "fixed": 1}]}`, `species[0].fixed: expected true or false`},
		{head + `"reactions": [{"rate": {"k": true}}]}`, `reactions[0].rate.k: expected a parameter name in quotes or a number`},
		{head + `"simulation": {"output": {"points": 2.5}}}`, `simulation.output.points: 2.5 is not a whole number`},
		{head + `"simulation": {"t_end": 1e999}}`, `simulation.t_end: 1e999 is out of the range`},
		{head + `"units": {"time": "s", "length": "m"}}`, `units: unknown key "length"`},
		// Review regressions: a repeated key used to keep the last value
		// silently; a stray closing brace was reported as "expected an
		// object, found an object"; 1e20 points was called "not a whole
		// number".
		{head + `"species": [{"name": "A", "name": "B"}]}`, `species[0]: the key "name" appears twice`},
		{head + `"title": "a", "title": "b"}`, `the top level: the key "title" appears twice`},
		{`{"format": "kinetarium.model/1"}}`, `m.json:1:33: unexpected text after the end`},
		{`{"format": "kinetarium.model/1"}` + "\n ]", `m.json:2:2: unexpected text after the end`},
		{head + `"simulation": {"output": {"points": 1e20}}}`, `1e+20 is not a whole number up to 1000000`},
		// Issue 17: a present key means what it says; a zero used to
		// become the default silently (t_end: 0 ran to t = 100).
		{head + `"simulation": {"t_end": 0}}`, `m.json:1:58: simulation.t_end: 0 cannot be honoured; expected a positive end time`},
		{head + `"simulation": {"rtol": 0}}`, `simulation.rtol: 0 cannot be honoured`},
		{head + `"simulation": {"atol": 0.0}}`, `simulation.atol: 0 cannot be honoured`},
		{head + `"simulation": {"output": {"points": 0}}}`, `simulation.output.points: 0 cannot be honoured`},
		{head + `"simulation": {"output": {"first": 0}}}`, `simulation.output.first: 0 cannot be honoured`},
		{head + `"simulation": {"output": {"points": 1000001}}}`, `not a whole number up to 1000000`},
		{"\xff\xfe{\x00}\x00", `m.json: the file is UTF-16 text; save it as UTF-8`},
		// Issue 17's probes again: an empty rate constant read as the
		// number 0, and the reaction ran at rate 0 without a word.
		{head + `"reactions": [{"rate": {"k": ""}}]}`, `m.json:1:63: reactions[0].rate.k: empty; expected a parameter name`},
		{head + `"reactions": [{"rate": {"k": "  "}}]}`, `reactions[0].rate.k: empty`},
	}
	for _, c := range cases {
		_, err := Read(strings.NewReader(c.in), "m.json")
		if err == nil {
			t.Errorf("Read(%q) succeeded, want error containing %q", c.in, c.want)
			continue
		}
		if !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "m.json:") {
			t.Errorf("Read(%q) error %q, want it to name m.json and contain %q", c.in, err, c.want)
		}
	}
}

func TestReadBriefExample(t *testing.T) {
	// Every key of the documented file format.
	src := `{"format": "kinetarium.model/1", "title": "t", "units": {"time": "s", "amount": "uM"},
 "compartments": [{"name": "well", "volume": 1.0}],
 "species": [{"name": "E", "initial": 0.05, "compartment": "well"}, {"name": "S", "initial": 20.0, "note": "substrate"}, {"name": "Buffer", "initial": 1.0, "fixed": true}, {"name": "ES", "initial": 0}, {"name": "P", "initial": 0}, {"name": "U", "initial": 0}],
 "parameters": [{"name": "kon", "value": 50.0, "unit": "1/(uM*s)"}, {"name": "koff", "value": 5.0}, {"name": "Vmax", "value": 1}, {"name": "Km", "value": 2}, {"name": "kcat", "value": 3}, {"name": "a1", "value": 1}, {"name": "V", "value": 1}, {"name": "K", "value": 1}, {"name": "n", "value": 2}],
 "reactions": [
   {"name": "bind", "equation": "E + S <=> ES", "rate": {"law": "mass_action", "k": "kon", "k_reverse": "koff"}},
   {"name": "turnover", "equation": "ES -> E + P", "rate": {"law": "mass_action", "k": 12.0}},
   {"name": "leak", "equation": "S -> P", "rate": {"law": "michaelis_menten", "vmax": "Vmax", "km": "Km"}},
   {"name": "cat", "equation": "S -> P", "rate": {"law": "michaelis_menten", "kcat": "kcat", "enzyme": "E", "km": "Km"}},
   {"name": "make", "equation": "-> U", "rate": {"law": "expression", "expression": "a1/(1 + (V/K)^n)"}}],
 "simulation": {"t_end": 5000, "output": {"points": 200, "spacing": "log", "first": 0.01}, "rtol": 1e-6, "atol": 1e-12, "method": "auto", "non_negative": false}}`
	m, err := Read(strings.NewReader(src), "brief")
	if err != nil {
		t.Fatal(err)
	}
	if m.Reactions[1].Rate.Arg("k") != Number(12) || m.Reactions[0].Rate.Arg("k_reverse") != Named("koff") || m.Reactions[0].Rate.Arg("k").String() != "kon" {
		t.Errorf("rate values decoded wrongly: %+v", m.Reactions[:2])
	}
	if !m.Species[2].Fixed || m.Species[0].Compartment != "well" || m.Simulation.Output.First != 0.01 || m.Simulation.KeepNonNegative() {
		t.Errorf("fields decoded wrongly: %+v %+v", m.Species, m.Simulation)
	}
	if _, err := Compile(m); err != nil {
		t.Fatal(err)
	}
}

func TestDefaults(t *testing.T) {
	m, err := Read(strings.NewReader(`{"format": "kinetarium.model/1"}`), "x")
	if err != nil {
		t.Fatal(err)
	}
	want := Simulation{TEnd: 100, Output: Output{Points: 200, Spacing: "linear"}, RTol: 1e-6, ATol: 1e-12, Method: "auto"}
	if !reflect.DeepEqual(m.Simulation, want) || !m.Simulation.KeepNonNegative() {
		t.Errorf("defaults %+v, want %+v", m.Simulation, want)
	}
}

func TestValueString(t *testing.T) {
	if s := Number(12).String(); s != "12" {
		t.Errorf("Number(12) = %q", s)
	}
	if s := Named("kon").String(); s != "kon" {
		t.Errorf("Named = %q", s)
	}
	if s := (Value{}).String(); s != "" {
		t.Errorf("unset = %q", s)
	}
}

func FuzzRead(f *testing.F) {
	// Small seeds only: the fuzzer minimises every new input it finds, and
	// the 15 KB cascade made it sit at 0 execs/s (issue 17).
	for _, name := range examples.Names() {
		if b, _ := examples.Open(name); len(b) <= 3000 {
			f.Add(b)
		}
	}
	f.Add([]byte(`{"format": "kinetarium.model/1", "species": [{"name": "A", "initial": 1}], "reactions": [{"name": "r", "equation": "A -> ", "rate": {"law": "expression", "expression": "A/(A-A)"}}]}`))
	f.Add([]byte(`{"format": "kinetarium.model/1", "compartments": [{"name": "c", "volume": 0}], "species": [{"name": "A", "compartment": "c"}]}`))
	f.Add([]byte(`{"format": "kinetarium.model/1", "species": [{"name": "A"}], "reactions": [{"name": "r", "equation": "A -> 2 A", "rate": {"law": "michaelis_menten", "kcat": 1, "enzyme": "A", "km": 0}}]}`))
	f.Add([]byte(`{`))
	f.Add([]byte(`{"format": "kinetarium.model/1", "species": [{"name": "A", "initial": 1}], "parameters": [{"name": "k", "value": 1}], "reactions": [{"name": "r", "equation": "A ->", "rate": {"law": "mass_action", "k": "k"}}], "events": [{"name": "d", "at": 1, "every": 2, "count": 3, "add": {"A": 1}}, {"name": "w", "when": "A < 0.5", "once": true, "set": {"k": "k/2"}}, {"name": "i", "from": 0, "to": 1, "infuse": {"A": "k"}}]}`))
	f.Add([]byte(`{"format": "kinetarium.model/1", "units": {"time": "s", "amount": "uM"}, "species": [{"name": "A"}], "reactions": [], "simulation": {"display": {"time": "h^(", "concentration": "mg/L"}}}`))
	f.Add([]byte(`{"format": "kinetarium.model/1", "units": {"time": "s", "amount": "uM"}, "compartments": [{"name": "a", "volume": 2, "unit": "mL"}, {"name": "b", "volume": 1, "unit": "fL^(1"}], "species": [{"name": "A", "compartment": "a"}], "assignments": [{"name": "q", "expression": "A*t", "unit": "uM"}], "events": [{"name": "w", "when": "t > A", "add": {"A": "q"}}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := Read(bytes.NewReader(data), "fuzz")
		if err != nil {
			return
		}
		m.Validate()
		m.ConservationLaws()
		s, err := Compile(m)
		if err != nil {
			return
		}
		y := s.Initial()
		f := make([]float64, s.Dim())
		s.RHS(0, y, f)
		s.ResetEvents(0)
		if te := s.NextEvent(0); !math.IsInf(te, 1) {
			s.Fire(te, y, nil)
		}
		g := make([]float64, s.Conditions())
		s.Watch(0, y, g)
		_, ci := s.JacobianPattern()
		s.JacobianCSR(0, y, make([]float64, len(ci)))
	})
}

// A file with three mistakes in three sections gives a message for each at
// once, each with its line and column (the misspelt "value" two: the
// unknown key and the missing value).
func TestReadReportsEveryProblem(t *testing.T) {
	src := `{
  "format": "kinetarium.model/1",
  "species": [{"name": "A", "initial": "lots"}],
  "parameters": [{"name": "k", "vlaue": 1}],
  "reactions": [{"name": "r", "equation": "A ->", "rate": {"law": "mass_action", "k": true}}]
}`
	_, err := Read(strings.NewReader(src), "three.json")
	var l ErrorList
	if !errors.As(err, &l) {
		t.Fatalf("error %v is not an ErrorList", err)
	}
	want := []string{
		`three.json:3:40: species[0].initial: expected a number, found text`,
		`three.json:4:32: parameters[0]: unknown key "vlaue"`,
		`three.json:4:18: parameters[0]: has no "value"`,
		`three.json:5:87: reactions[0].rate.k: expected a parameter name in quotes or a number, found true/false`,
	}
	if len(l) != len(want) {
		t.Fatalf("%d problems, want %d:\n%v", len(l), len(want), err)
	}
	for i, w := range want {
		if !strings.HasPrefix(l[i].String(), w) {
			t.Errorf("problem %d = %q, want it to start with %q", i, l[i].String(), w)
		}
	}
}

// Check's problems on a model read from a file carry the line and column
// of the item or field they are about.
func TestCheckLocatesProblemsInFile(t *testing.T) {
	src := `{
  "format": "kinetarium.model/1",
  "species": [{"name": "A", "initial": -1}],
  "parameters": [{"name": "k", "value": 1}],
  "reactions": [{"name": "r", "equation": "A -> Q", "rate": {"law": "mass_action", "k": "kk"}}]
}`
	m, err := Read(strings.NewReader(src), "m.json")
	if err != nil {
		t.Fatal(err)
	}
	_, l := Check(m)
	want := []string{
		`m.json:3:40: species "A", initial: initial concentration -1`,
		`m.json:5:49: reaction "r", equation, column 6: unknown species "Q"`,
		`m.json:5:89: reaction "r", rate.k: unknown parameter "kk"`,
	}
	errs := l.Errors()
	if len(errs) != len(want) {
		t.Fatalf("%d errors, want %d:\n%v", len(errs), len(want), errs)
	}
	for i, w := range want {
		if !strings.HasPrefix(errs[i].String(), w) {
			t.Errorf("error %d = %q, want it to start with %q", i, errs[i].String(), w)
		}
	}
}

// Every zero setting is reported at once, each at its line and column.
func TestReadZeroSettingsCollected(t *testing.T) {
	src := `{"format": "kinetarium.model/1",
 "simulation": {"t_end": 0,
   "rtol": 0, "output": {"points": 0}}}`
	_, err := Read(strings.NewReader(src), "m.json")
	var l ErrorList
	if !errors.As(err, &l) {
		t.Fatalf("error %v, want an ErrorList", err)
	}
	want := []string{"m.json:2:26: simulation.t_end", "m.json:3:12: simulation.rtol", "m.json:3:36: simulation.output.points"}
	if len(l) != len(want) {
		t.Fatalf("%d problems, want %d:\n%v", len(l), len(want), err)
	}
	for i, w := range want {
		if !strings.HasPrefix(l[i].Error(), w) {
			t.Errorf("problem %d: %q, want it to start with %q", i, l[i].Error(), w)
		}
	}
}

// A UTF-8 byte-order mark is accepted; an endless input (a device such as
// /dev/zero) is refused once it passes MaxFileSize.
func TestReadEncodingAndSize(t *testing.T) {
	src := "\xef\xbb\xbf" + `{"format": "kinetarium.model/1", "species": [{"name": "A", "initial": 1}]}`
	m, err := Read(strings.NewReader(src), "bom.json")
	if err != nil || len(m.Species) != 1 {
		t.Fatalf("with a byte-order mark: %v", err)
	}
	_, err = Read(io.LimitReader(zeroReader{}, MaxFileSize+10), "zero")
	if err == nil || !strings.Contains(err.Error(), "larger than 64 MiB") {
		t.Errorf("endless input: %v; want a size error", err)
	}
}

// zeroReader reads zero bytes for ever.
type zeroReader struct{}

func (zeroReader) Read(p []byte) (int, error) { clear(p); return len(p), nil }
