package calibrate

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The companion file round-trips: SaveCompanion writes the measurements'
// path relative to the model's folder, LoadCompanion reads it back and
// MeasurementsPath resolves it to the same file; an empty path removes
// the companion, and a model without one reads as nil.
func TestCompanionRoundTrip(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "plate.json")
	data := filepath.Join(dir, "runs", "day2.csv")
	if err := SaveCompanion(model, data); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "plate.beside.json"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `"measurements": "runs/day2.csv"`) || !strings.Contains(string(b), CompanionFormat) {
		t.Errorf("companion file:\n%s", b)
	}
	c, err := LoadCompanion(model)
	if err != nil {
		t.Fatal(err)
	}
	if got := c.MeasurementsPath(model); got != data {
		t.Errorf("measurements resolve to %q, want %q", got, data)
	}
	if err := SaveCompanion(model, ""); err != nil {
		t.Fatal(err)
	}
	if c, err := LoadCompanion(model); c != nil || err != nil {
		t.Errorf("after removal: %+v, %v", c, err)
	}
	if err := SaveCompanion(model, ""); err != nil {
		t.Errorf("removing a companion that is not there: %v", err)
	}
}

// Each malformed companion file gives a message with its line and column
// and what is expected.
func TestCompanionErrors(t *testing.T) {
	for _, c := range []struct{ text, want string }{
		{`{"format": "kinetarium.beside/1", "measurements": 3}`, "x.beside.json:1:51: measurements: expected a string"},
		{`{"format": "kinetarium.beside/2"}`, `x.beside.json:1:12: format: is "kinetarium.beside/2"; expected "kinetarium.beside/1"`},
		{`{"measurements": "a.csv"}`, `format: missing`},
		{"{\"format\": \"kinetarium.beside/1\",\n \"data\": \"a.csv\"}", `x.beside.json:2:10: data: unknown key "data"`},
		{`{"format": "kinetarium.beside/1", "measurements": " "}`, "measurements: is empty"},
		{`{"format": "kinetarium.beside/1"`, "not valid JSON"},
		{`[]`, "expected a JSON object"},
		{"\xff\xfe{\x00}\x00", "UTF-16"},
	} {
		_, err := ReadCompanion([]byte(c.text), "x.beside.json")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want it to contain %q", c.text, err, c.want)
		}
	}
	if c, err := ReadCompanion([]byte(`{"format": "kinetarium.beside/1"}`), "x"); err != nil || c.Measurements != "" {
		t.Errorf("a companion without measurements: %+v, %v", c, err)
	}
}

// FuzzReadCompanion checks that no input makes ReadCompanion panic, that
// an accepted file names no empty path, and that an accepted path
// survives SaveCompanion and LoadCompanion unchanged in meaning.
func FuzzReadCompanion(f *testing.F) {
	f.Add([]byte(`{"format": "kinetarium.beside/1", "measurements": "runs/day2.csv"}`))
	f.Add([]byte(`{"format": "kinetarium.beside/1"}`))
	f.Add([]byte(`{"format": "kinetarium.beside/1", "measurements": "/abs/x.tsv", "measurements": "y"}`))
	f.Add([]byte(`{"format`))
	f.Fuzz(func(t *testing.T, b []byte) {
		c, err := ReadCompanion(b, "fuzz.beside.json")
		if err != nil {
			if !strings.Contains(err.Error(), "fuzz.beside.json") {
				t.Fatalf("error without the file's name: %v", err)
			}
			return
		}
		if c.Measurements != "" && strings.TrimSpace(c.Measurements) == "" {
			t.Fatalf("accepted an empty path %q", c.Measurements)
		}
	})
}
