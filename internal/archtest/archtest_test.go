package archtest

import (
	"bytes"
	"os/exec"
	"strings"
	"testing"
)

// The module's real imports break no rule of DEVELOPERS.md's table.
func TestModuleKeepsTheLayout(t *testing.T) {
	cmd := exec.Command("go", "list", "-f", `{{.ImportPath}} {{join .Deps " "}}`, "kinetarium/...")
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("go list: %v\n%s", err, stderr.String())
	}
	l, err := ParseListing(bytes.NewReader(out))
	if err != nil {
		t.Fatal(err)
	}
	// Each rule must hold for at least one real package, or it guards
	// nothing (a renamed package would otherwise pass silently).
	for _, r := range Rules {
		found := false
		for pkg := range l {
			found = found || match(r.Packages, pkg)
		}
		if !found {
			t.Errorf("rule %q forbids %q for no package of the module", r.Packages, r.Forbid)
		}
	}
	for _, v := range Check(l, Rules) {
		t.Error(v)
	}
}

// The checker finds what a rule forbids, directly or through another
// package, and only that: a made-up listing with known violations.
func TestCheckFindsForbiddenImports(t *testing.T) {
	listing := `kinetarium/solve gonum.org/v1/gonum/mat kinetarium/network kinetarium/network/expr
kinetarium/solve/explore kinetarium/solve
kinetarium/app/batch kinetarium/app/study fyne.io/fyne/v2 fyne.io/fyne/v2/widget
kinetarium/app kinetarium/app/run fyne.io/fyne/v2
kinetarium/app/run kinetarium/solve kinetarium/network
kinetarium/networks/other fyne.io/fyne/v2
`
	l, err := ParseListing(strings.NewReader(listing))
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, v := range Check(l, Rules) {
		got = append(got, v.Package+" -> "+v.Dependency)
	}
	want := []string{
		"kinetarium/app/batch -> fyne.io/fyne/v2",
		"kinetarium/app/batch -> fyne.io/fyne/v2/widget",
		"kinetarium/solve -> kinetarium/network",
		"kinetarium/solve -> kinetarium/network/expr",
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("violations:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	// A deliberately wrong rule (the window may not use Fyne) fails on
	// the real-looking listing.
	wrong := []Rule{{"kinetarium/app", fyne, "deliberately wrong"}}
	if v := Check(l, wrong); len(v) != 1 || v[0].Package != "kinetarium/app" {
		t.Errorf("a wrong rule gives %v, want one violation by kinetarium/app", v)
	}
}

// A listing that names a package twice, or none, is refused with the line.
func TestParseListingErrors(t *testing.T) {
	if _, err := ParseListing(strings.NewReader("a b\na c\n")); err == nil || !strings.Contains(err.Error(), "line 2") {
		t.Errorf("duplicate package: %v", err)
	}
	if _, err := ParseListing(strings.NewReader("\n\n")); err == nil {
		t.Error("an empty listing was accepted")
	}
}
