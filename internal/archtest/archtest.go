// Package archtest keeps the package layout of DEVELOPERS.md true: it
// holds the imports the layout forbids (Rules) and checks a listing of
// packages and their dependencies against them. Its test runs
// "go list -deps" over the module, so that a forbidden import fails
// "go test ./...".
package archtest

import (
	"bufio"
	"fmt"
	"io"
	"sort"
	"strings"
)

// Rule forbids packages to depend on others. A pattern is an import path
// ("kinetarium/solve") or a path followed by "/..." for it and every
// package below it.
type Rule struct {
	Packages string // the packages the rule holds for
	Forbid   string // what they may not import, directly or indirectly
	Why      string // the reason, as DEVELOPERS.md gives it
}

// fyne is every package of the Fyne toolkit.
const fyne = "fyne.io/fyne/v2/..."

// Rules are the forbidden imports of the table in DEVELOPERS.md.
var Rules = []Rule{
	{"kinetarium/network/...", fyne, "the model builds and tests without cgo"},
	{"kinetarium/solve/...", fyne, "the solver builds and tests without cgo"},
	{"kinetarium/plotting/...", fyne, "figures are drawn without cgo"},
	{"kinetarium/app/batch/...", fyne, "the headless command builds with CGO_ENABLED=0"},
	{"kinetarium/app/run/...", fyne, "the run pipeline is a service without widgets"},
	{"kinetarium/app/study/...", fyne, "studies are a service without widgets"},
	{"kinetarium/app/sliders/...", fyne, "slider sessions are a service without widgets"},
	{"kinetarium/app/conformance/...", fyne, "the SBML conformance runner is a service without widgets"},
	{"kinetarium/app/calibrate/...", fyne, "sensitivities and fits are a service without widgets"},
	{"kinetarium/app/ensemble/...", fyne, "stochastic ensembles are a service without widgets"},
	{"kinetarium/app/diagram/...", fyne, "the diagram is a service without widgets"},
	{"kinetarium/app/analyse/...", fyne, "steady states, continuation and sensitivity are a service without widgets"},
	{"kinetarium/solve/...", "kinetarium/network/...", "a network.System satisfies solve.System by its method set alone"},
	{"kinetarium/network/...", "kinetarium/solve/...", "the model knows nothing of integrators"},
	{"kinetarium/network/units", "kinetarium/network", "unit algebra is a leaf: the model reads units, not the other way round"},
}

// match reports whether path matches pattern (see Rule).
func match(pattern, path string) bool {
	if base, ok := strings.CutSuffix(pattern, "/..."); ok {
		return path == base || strings.HasPrefix(path, base+"/")
	}
	return path == pattern
}

// Violation is a package that depends on what a rule forbids.
type Violation struct {
	Package, Dependency string
	Rule                Rule
}

func (v Violation) String() string {
	return fmt.Sprintf("%s imports %s, which %s forbids: %s", v.Package, v.Dependency, v.Rule.Forbid, v.Rule.Why)
}

// Listing maps each package to its dependencies.
type Listing map[string][]string

// ParseListing reads lines "PACKAGE DEP DEP …", the output of
//
//	go list -f '{{.ImportPath}} {{join .Deps " "}}' ./...
func ParseListing(r io.Reader) (Listing, error) {
	l := Listing{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 1<<16), 1<<24)
	for n := 1; sc.Scan(); n++ {
		f := strings.Fields(sc.Text())
		if len(f) == 0 {
			continue
		}
		if _, dup := l[f[0]]; dup {
			return nil, fmt.Errorf("line %d: package %s is listed twice", n, f[0])
		}
		l[f[0]] = f[1:]
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	if len(l) == 0 {
		return nil, fmt.Errorf("the listing names no package")
	}
	return l, nil
}

// Check returns every dependency of the listing that a rule forbids,
// sorted by package and dependency.
func Check(l Listing, rules []Rule) []Violation {
	var out []Violation
	for pkg, deps := range l {
		for _, r := range rules {
			if !match(r.Packages, pkg) {
				continue
			}
			for _, d := range deps {
				if match(r.Forbid, d) {
					out = append(out, Violation{Package: pkg, Dependency: d, Rule: r})
				}
			}
		}
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Package != out[j].Package {
			return out[i].Package < out[j].Package
		}
		return out[i].Dependency < out[j].Dependency
	})
	return out
}
