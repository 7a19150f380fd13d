package main

import (
	"bytes"
	"strings"
	"testing"
)

func checkRun(args ...string) (rc int, stdout, stderr string) {
	var out, errb bytes.Buffer
	rc = dispatch(append([]string{"check"}, args...), &out, &errb)
	return rc, out.String(), errb.String()
}

func TestCheckCommand(t *testing.T) {
	// Warnings only: exit 0, one line per problem with file, line and
	// field.
	rc, out, errs := checkRun("testdata/check/units-off.json")
	if rc != exitOK {
		t.Errorf("units-off: exit %d, want 0; %s", rc, errs)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 1 || !strings.HasPrefix(lines[0], "warning: testdata/check/units-off.json:15:") ||
		!strings.Contains(lines[0], `reaction "bind", rate.k: Forward constant uses kon in 1/(nM*s), but Forward constant is in 1/(uM·s)`) {
		t.Errorf("units-off: output\n%s", out)
	}
	if !strings.Contains(errs, "1 warning") {
		t.Errorf("units-off: summary %q", errs)
	}
	// An error: exit 2, located.
	rc, out, errs = checkRun("testdata/check/broken.json")
	if rc != exitBadInput || !strings.Contains(out, `testdata/check/broken.json:7:`) || !strings.Contains(out, `reaction "cut", rate.alpha_ki: mixed_inhibition needs alpha_ki`) {
		t.Errorf("broken: exit %d, output\n%s", rc, out)
	}
	if !strings.Contains(errs, "1 error") {
		t.Errorf("broken: summary %q", errs)
	}
	// A clean example: exit 0, nothing on standard output.
	rc, out, _ = checkRun("../../examples/protease-inhibitor.json")
	if rc != exitOK || out != "" {
		t.Errorf("example: exit %d, output %q", rc, out)
	}
	// A file that does not read, and a bad command line.
	if rc, _, errs := checkRun("testdata/check/missing.json"); rc != exitBadInput || !strings.Contains(errs, "missing.json") {
		t.Errorf("missing file: exit %d, %q", rc, errs)
	}
	if rc, _, _ := checkRun(); rc != exitBadInput {
		t.Errorf("no argument: exit %d", rc)
	}
}
