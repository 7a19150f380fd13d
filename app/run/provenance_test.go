package run

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"kinetarium/network"
)

// The model hash is the SHA-256 (crypto/sha256, FIPS 180-4) of the saved
// file: it equals that of the file Model.Save writes, stays the same for a
// copy and a re-read model, and changes when the model does, back when
// the change is undone.
func TestModelSHA256ChangesExactlyWithTheModel(t *testing.T) {
	m := loadExample(t, "two-compartment-drug.json")
	sum, err := ModelSHA256(m)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "m.json")
	if err := m.Save(path); err != nil {
		t.Fatal(err)
	}
	data, _ := os.ReadFile(path)
	file := sha256.Sum256(data)
	if sum != hex.EncodeToString(file[:]) {
		t.Errorf("ModelSHA256 %s is not the SHA-256 of the saved file, %x", sum, file)
	}
	same := func(what string, m *network.Model, want bool) {
		t.Helper()
		s, err := ModelSHA256(m)
		if err != nil {
			t.Fatal(err)
		}
		if (s == sum) != want {
			t.Errorf("%s: hash %s, first %s; want equal = %t", what, s, sum, want)
		}
	}
	same("a copy", m.Clone(), true)
	back, err := network.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	same("the saved file read back", back, true)
	c := m.Clone()
	c.Parameters[0].Value *= 1.0000001
	same("a parameter changed in the 7th digit", c, false)
	c.Parameters[0].Value = m.Parameters[0].Value
	same("the change undone", c, true)
	c.Title += " "
	same("the title changed", c, false)
	c = m.Clone()
	c.Simulation.RTol = 1e-9
	same("a run setting changed", c, false)
}

// SaveCSV writes the provenance beside the table, and it reads back equal
// to what was written.
func TestProvenanceCompanionRoundTrip(t *testing.T) {
	t.Setenv("SOURCE_DATE_EPOCH", "1700000000")
	m := loadExample(t, "two-compartment-drug.json")
	o, err := Run(t.Context(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	prov, err := NewProvenance("simulation", m, m.Simulation, []Change{{Name: "init:A", Model: 1, Value: 2.5}})
	if err != nil {
		t.Fatal(err)
	}
	if got := prov.Exported.Unix(); got != 1700000000 {
		t.Errorf("export time %v, want SOURCE_DATE_EPOCH's 1700000000", prov.Exported)
	}
	path := filepath.Join(t.TempDir(), "results.csv")
	if err := SaveCSV(path, o, prov); err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(filepath.Join(filepath.Dir(path), "results.provenance.json"))
	if err != nil {
		t.Fatal(err)
	}
	got, err := ReadProvenance(data)
	if err != nil {
		t.Fatal(err)
	}
	// It names the methods used and why auto chose them.
	want := prov.withMethods(o.Stats)
	if !reflect.DeepEqual(got, want) {
		t.Errorf("provenance read back as %+v, want %+v", got, want)
	}
	if len(got.Solver.Used) == 0 || got.Solver.Used[0] != string(o.Stats.Methods[0]) || got.Solver.Choice == "" {
		t.Errorf("provenance solver %+v does not name the method used (%v) and the choice", got.Solver, o.Stats.Methods)
	}
	if got.Program != Program || got.ModelTitle != m.Title || got.Solver.RTol != m.Simulation.WithDefaults().RTol {
		t.Errorf("provenance %+v lacks the program, title or settings", got)
	}
	// The table itself stays plain CSV: its first line is the header,
	// with the model's units (hours).
	csv, _ := os.ReadFile(path)
	if !bytes.HasPrefix(csv, []byte("time (h),")) {
		t.Errorf("results.csv starts %q, want its header", csv[:min(len(csv), 20)])
	}
}

func FuzzReadProvenance(f *testing.F) {
	f.Add([]byte(`{"program":"Kinetarium","version":"devel","what":"simulation","model_title":"t","model_sha256":"00","solver":{"t_end":1,"points":2,"spacing":"linear","rtol":1e-6,"atol":1e-12,"method":"auto","non_negative":true},"exported":"2024-01-01T00:00:00Z"}`))
	f.Add([]byte(`{}`))
	f.Fuzz(func(t *testing.T, b []byte) {
		p, err := ReadProvenance(b)
		if err != nil {
			return
		}
		q, err := ReadProvenance(p.JSON())
		if err != nil || !reflect.DeepEqual(p, q) {
			t.Fatalf("%+v does not survive writing and reading: %+v, %v", p, q, err)
		}
	})
}
