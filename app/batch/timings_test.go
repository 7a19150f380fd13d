package main

import (
	"strings"
	"testing"
)

// --timings prints a row for each stage of simulate to standard error,
// leaving the CSV on standard output as it is without the flag.
func TestSimulateTimings(t *testing.T) {
	rc, plain, _ := simRun(simTestdata + "decay.json")
	if rc != 0 {
		t.Fatalf("exit %d", rc)
	}
	rc, out, errs := simRun(simTestdata+"decay.json", "--timings")
	if rc != 0 {
		t.Fatalf("exit %d: %s", rc, errs)
	}
	if out != plain {
		t.Errorf("--timings changed the table on standard output")
	}
	for _, stage := range []string{"read", "check", "compile", "solve", "write", "total", "peak memory (MB)"} {
		if !strings.Contains(errs, stage) {
			t.Errorf("--timings: no %q in\n%s", stage, errs)
		}
	}
	if _, _, errs := simRun(simTestdata + "decay.json"); strings.Contains(errs, "peak memory") {
		t.Errorf("stage times printed without --timings:\n%s", errs)
	}
}

// check --timings counts the conservation laws and prints the stages; a
// second model file is refused. The protease example keeps three totals
// (mass balance, common practice): protease E + ES + EI + EIx, substrate
// S + ES + P and inhibitor I + EI + EIx.
func TestCheckTimings(t *testing.T) {
	rc, _, errs := checkRun("../../examples/protease-inhibitor.json", "--timings")
	if rc != exitOK {
		t.Fatalf("exit %d: %s", rc, errs)
	}
	for _, w := range []string{"protease-inhibitor.json: 3 conservation laws", "read", "check", "compile", "total"} {
		if !strings.Contains(errs, w) {
			t.Errorf("check --timings: no %q in\n%s", w, errs)
		}
	}
	if rc, _, errs := checkRun("a.json", "b.json"); rc != exitBadInput || !strings.Contains(errs, "usage") {
		t.Errorf("two files: exit %d, %q", rc, errs)
	}
}
