package network

import (
	"bytes"
	"fmt"
	"strings"
	"testing"
)

// Positions written into the layout section read back the same, for
// every kind of place, with the style.
func TestLayoutRoundTrip(t *testing.T) {
	m := baseModel()
	m.Layout.Style = "sbgn"
	m.Layout.Put(PlaceSpecies, "E", 10.5, -3)
	m.Layout.Put(PlaceReaction, "bind", 1e-3, 250)
	m.Layout.Put(PlaceSpecies, "S", 42, 7)
	m.Layout.Put(PlaceSink, "cut", 0.1, 0.2)
	m.Layout.Put(PlaceSource, "name with spaces", 3, 4)
	m.Layout.Put(PlaceSpecies, "E", 11, -3) // moved again
	var b bytes.Buffer
	if err := m.Write(&b); err != nil {
		t.Fatal(err)
	}
	back, err := Read(&b, "x.json")
	if err != nil {
		t.Fatalf("%v\n%s", err, b.String())
	}
	if back.Layout.Style != "sbgn" || len(back.Layout.Places) != 5 {
		t.Fatalf("layout read back as %+v", back.Layout)
	}
	for _, p := range m.Layout.Places {
		x, y, ok := back.Layout.Find(p.Kind, p.Name)
		if !ok || x != p.X || y != p.Y {
			t.Errorf("%v %q read back at (%v, %v, %v), want (%v, %v)", p.Kind, p.Name, x, y, ok, p.X, p.Y)
		}
	}
	// Writing again gives the same bytes.
	var b2, b3 bytes.Buffer
	if err := back.Write(&b2); err != nil {
		t.Fatal(err)
	}
	again, _ := Read(bytes.NewReader(b2.Bytes()), "y.json")
	again.Write(&b3)
	if b2.String() != b3.String() {
		t.Errorf("writing the layout twice differs:\n%s\n%s", b2.String(), b3.String())
	}
	// A model without a layout writes no section.
	var b4 bytes.Buffer
	baseModel().Write(&b4)
	if strings.Contains(b4.String(), "layout") {
		t.Errorf("an empty layout is written:\n%s", b4.String())
	}
	// A clone has its own places.
	c := m.Clone()
	c.Layout.Put(PlaceSpecies, "E", 0, 0)
	if x, _, _ := m.Layout.Find(PlaceSpecies, "E"); x != 11 {
		t.Error("a clone's layout shares places with the original")
	}
}

func TestLayoutReadProblems(t *testing.T) {
	cases := []struct{ layout, want string }{
		{`{"style": "fancy"}`, `4:23: layout.style: unknown style "fancy"`},
		{`{"species": {"A": [1]}}`, `4:31: layout.species.A: expected a position [x, y] (two numbers), found a list of 1`},
		{`{"species": {"A": [1, "x"]}}`, `layout.species.A[1]: expected a number, found text`},
		{`{"species": {"A": [1, 2], "A": [3, 4]}}`, `the name "A" appears twice`},
		{`{"speces": {}}`, `unknown key "speces"; expected one of style, species, reactions, sources, sinks`},
		{`{"reactions": [1, 2]}`, `layout.reactions: expected an object {"NAME": [x, y], ...}, found a list`},
		{`[]`, `layout: expected an object {...}, found a list`},
	}
	for _, c := range cases {
		src := fmt.Sprintf("{\n  \"format\": \"kinetarium.model/1\",\n  \"species\": [{\"name\": \"A\", \"initial\": 1}],\n  \"layout\": %s\n}", c.layout)
		_, err := Read(strings.NewReader(src), "m.json")
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("layout %s: error %v, want it to contain %q", c.layout, err, c.want)
		}
	}
}

// FuzzLayout reads arbitrary files (the seeds: every example with a
// layout section added, and FuzzRead's corpus in testdata) and checks that
// whatever reads writes and reads back to the same layout.
func FuzzLayout(f *testing.F) {
	f.Add([]byte(`{"format": "kinetarium.model/1", "species": [{"name": "A", "initial": 1}], "reactions": [], "layout": {"style": "sbgn", "species": {"A": [1.5, -2]}, "reactions": {"r 1": [0, 0]}, "sources": {"r": [1e300, 2]}, "sinks": {}}}`))
	f.Add([]byte(`{"format": "kinetarium.model/1", "species": [], "reactions": [], "layout": {"species": {"A": [1, 2], "B": [1e-320, 0]}}}`))
	f.Add([]byte(`{"format": "kinetarium.model/1", "species": [], "reactions": [], "layout": {"species": {"\u00e9": [-0, 2]}}}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := Read(bytes.NewReader(data), "fuzz")
		if err != nil {
			return
		}
		var b bytes.Buffer
		if err := m.Write(&b); err != nil {
			return // a number JSON cannot hold, reported
		}
		back, err := Read(&b, "again")
		if err != nil {
			t.Fatalf("a model that read and wrote does not read back: %v\n%s", err, b.String())
		}
		if back.Layout.Style != m.Layout.Style || len(back.Layout.Places) != len(m.Layout.Places) {
			t.Fatalf("layout %+v read back as %+v", m.Layout, back.Layout)
		}
		for _, p := range m.Layout.Places {
			x, y, ok := back.Layout.Find(p.Kind, p.Name)
			if !ok || x != p.X || y != p.Y {
				t.Fatalf("%v %q at (%v, %v) read back at (%v, %v, %v)", p.Kind, p.Name, p.X, p.Y, x, y, ok)
			}
		}
	})
}
