package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"kinetarium/app/run"
	"kinetarium/plotting"
)

// provenanceOf reads the provenance written beside the table at path.
func provenanceOf(t *testing.T, path string) *run.Provenance {
	t.Helper()
	b, err := os.ReadFile(run.ProvenancePath(path))
	if err != nil {
		t.Fatal(err)
	}
	p, err := run.ReadProvenance(b)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// figurePartial reports whether the PNG at path says it is partial in its
// provenance metadata.
func figurePartial(t *testing.T, path string) bool {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	md, err := plotting.PNGMetadata(f)
	if err != nil {
		t.Fatal(err)
	}
	var p run.Provenance
	if err := json.Unmarshal(md.Provenance, &p); err != nil {
		t.Fatal(err)
	}
	return p.Partial
}

// Cancel in the Population window marks the results shown and every
// export from them partial, as the batch command marks the outputs of a
// run stopped by a signal (issue 17: exports from a cancelled run did not
// say so); a run that finishes exports them unmarked.
func TestCancelMarksPopulationExportsPartial(t *testing.T) {
	p := openPopulation(t, tuneDecayModel())
	onUI(func() {
		p.size.SetText("1000000")
		p.ctl.run.OnTapped()
	})
	waitFor(t, "some progress", func() bool { return p.ctl.progress.Value > 0 })
	onUI(func() { p.ctl.cancel.OnTapped() })
	waitFor(t, "the run to stop", func() bool { return !p.ctl.running })
	if p.res == nil || !p.partial || !strings.Contains(p.ctl.status.Text, "partial") {
		t.Fatalf("after Cancel: partial %v, status %q", p.partial, p.ctl.status.Text)
	}
	saveShot(t, p.win, shotDir(t), "population-cancelled.png")
	dir := t.TempDir()
	check := func(wantPartial bool) {
		t.Helper()
		samples, bands, fig := filepath.Join(dir, "samples.csv"), filepath.Join(dir, "bands.csv"), filepath.Join(dir, "bands.png")
		if err := p.saveSamples(samples); err != nil {
			t.Fatal(err)
		}
		if err := p.saveBands(bands); err != nil {
			t.Fatal(err)
		}
		if err := saveStudyFigure(fig, "population", p.prep, p.partial, p.bandFigure); err != nil {
			t.Fatal(err)
		}
		for _, path := range []string{samples, bands} {
			if got := provenanceOf(t, path).Partial; got != wantPartial {
				t.Errorf("%s: partial %v, want %v", filepath.Base(path), got, wantPartial)
			}
		}
		if got := figurePartial(t, fig); got != wantPartial {
			t.Errorf("figure: partial %v, want %v", got, wantPartial)
		}
	}
	check(true)
	rows, err := os.ReadFile(filepath.Join(dir, "samples.csv"))
	if err != nil || strings.Count(string(rows), "\n") != p.res.Points-p.res.Failed+1 {
		t.Errorf("samples.csv has %d lines, want the %d samples done and a header", strings.Count(string(rows), "\n"), p.res.Points-p.res.Failed)
	}
	onUI(func() { p.size.SetText("50") })
	runAndWait(t, p.ctl)
	if p.partial || strings.Contains(p.ctl.status.Text, "partial") {
		t.Fatalf("a finished run: partial %v, status %q", p.partial, p.ctl.status.Text)
	}
	check(false)
}

// The same for the Sweep window.
func TestCancelMarksSweepExportsPartial(t *testing.T) {
	s := openSweep(t, tuneDecayModel())
	onUI(func() {
		s.first.points.SetText("300")
		s.useTwo.SetChecked(true)
		s.first.quantity.SetSelected("k (parameter)")
		s.second.quantity.SetSelected("A (initial concentration)")
		s.second.points.SetText("100")
		s.ctl.run.OnTapped()
	})
	waitFor(t, "some progress", func() bool { return s.ctl.progress.Value > 0 || !s.ctl.running })
	onUI(func() { s.ctl.cancel.OnTapped() })
	waitFor(t, "the run to stop", func() bool { return !s.ctl.running })
	if s.res == nil || s.res.Points >= s.res.Size || !s.partial || !strings.Contains(s.ctl.status.Text, "partial") {
		t.Fatalf("after Cancel: partial %v, status %q", s.partial, s.ctl.status.Text)
	}
	path := filepath.Join(t.TempDir(), "runs.csv")
	if err := s.saveRuns(path); err != nil {
		t.Fatal(err)
	}
	if !provenanceOf(t, path).Partial {
		t.Error("runs.csv of a cancelled sweep is not marked partial")
	}
}

// The same for the Stochastic window.
func TestCancelMarksStochasticExportsPartial(t *testing.T) {
	s := openStochastic(t, exampleModel(t, "bursty-reporter.json"))
	onUI(func() {
		s.runs.SetText("10000000")
		s.ctl.run.OnTapped()
	})
	waitFor(t, "some progress", func() bool { return s.ctl.progress.Value > 0 })
	onUI(func() { s.ctl.cancel.OnTapped() })
	waitFor(t, "the run to stop", func() bool { return !s.ctl.running })
	var partial bool
	var status string
	var prov *run.Provenance
	var err error
	onUI(func() {
		partial, status = s.partial, s.ctl.status.Text
		if s.res != nil {
			prov, err = s.provenance()
		}
	})
	if !partial || !strings.Contains(status, "partial") || err != nil || prov == nil || !prov.Partial {
		t.Fatalf("after Cancel: partial %v, status %q, provenance %+v (%v)", partial, status, prov, err)
	}
}
