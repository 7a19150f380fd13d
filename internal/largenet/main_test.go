package main

import (
	"strings"
	"testing"
	"time"

	"kinetarium/internal/stages"
)

// The report has a row per stage and a column per model; a run stopped in
// a stage shows "stopped" there and says why under its table, and stages
// it never reached show a dash.
func TestMarkdown(t *testing.T) {
	rs := []result{
		{family: "cascade", species: 52, stages: []stages.Stage{
			{Name: "read", Seconds: 0.0005, CPU: 0.0004, Alloc: 300000, Peak: 9e6},
			{Name: "check", Seconds: 0.25, CPU: 0.2, Alloc: 1e6, Peak: 1e7},
		}, failed: "stopped after 5m0s"},
	}
	md := markdown(rs, 5*time.Minute, 20000)
	for _, want := range []string{
		"| stage | 52 species |",
		"| read | 500 µs (400 µs) · 0.3 MB · 9 MB |",
		"| check | 250.0 ms (200.0 ms) · 1.0 MB · 10 MB |",
		"| compile | stopped |",
		"| solve | — |",
		"52 species: stopped after 5m0s.",
	} {
		if !strings.Contains(md, want) {
			t.Errorf("report lacks %q:\n%s", want, md)
		}
	}
	if strings.Contains(md, "## feedback") {
		t.Errorf("a table for a family without runs:\n%s", md)
	}
}
