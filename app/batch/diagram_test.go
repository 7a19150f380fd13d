package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"kinetarium/network"
	"kinetarium/plotting"
)

// The diagram command draws every example in each format, with the
// provenance of the model; --store saves positions that read back.
func TestDiagramCommand(t *testing.T) {
	dir := t.TempDir()
	model := filepath.Join(dir, "m.json")
	src, err := os.ReadFile("../../examples/two-compartment-drug.json")
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(model, src, 0o644)
	for _, ext := range []string{".svg", ".pdf", ".png"} {
		out := filepath.Join(dir, "d"+ext)
		rc, stdout, stderr := dgRun(model, "--out", out, "--style", "sbgn")
		if rc != 0 {
			t.Fatalf("%s: exit %d: %s", ext, rc, stderr)
		}
		if !strings.Contains(stdout, "4 species, 6 reactions") {
			t.Errorf("summary %q", stdout)
		}
		if fi, err := os.Stat(out); err != nil || fi.Size() < 1000 {
			t.Errorf("%s: %v, %v", ext, fi, err)
		}
	}
	f, _ := os.Open(filepath.Join(dir, "d.svg"))
	meta, err := plotting.SVGMetadata(f)
	f.Close()
	if err != nil || !strings.Contains(string(meta.Provenance), `"what": "diagram"`) {
		t.Errorf("SVG metadata %v, %v", meta, err)
	}
	rc, _, stderr := dgRun(model, "--out", filepath.Join(dir, "r.png"), "--at", "12")
	if rc != 0 {
		t.Fatalf("--at: exit %d: %s", rc, stderr)
	}
	if rc, _, stderr := dgRun(model, "--store"); rc != 0 {
		t.Fatalf("--store: exit %d: %s", rc, stderr)
	}
	m, err := network.Load(model)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, ok := m.Layout.Find(network.PlaceSpecies, "D_plasma"); !ok || len(m.Layout.Places) != 4+6+2 {
		t.Errorf("stored layout %+v", m.Layout)
	}
	for _, bad := range [][]string{
		{model, "--out", "x.gif"},
		{model, "--out", "x.png", "--style", "fancy"},
		{model, "--out", "x.png", "--layout", "circle"},
		{model, "--out", "x.png", "--at", "soon"},
		{model, "--out", "x.png", "--at", "1e9"},
		{},
	} {
		if rc, _, stderr := dgRun(bad...); rc != exitBadInput || stderr == "" {
			t.Errorf("%v: exit %d, %q; want %d with a message", bad, rc, stderr, exitBadInput)
		}
	}
}

func dgRun(args ...string) (rc int, stdout, stderr string) {
	var out, errb bytes.Buffer
	rc = dispatch(append([]string{"diagram"}, args...), &out, &errb)
	return rc, out.String(), errb.String()
}
