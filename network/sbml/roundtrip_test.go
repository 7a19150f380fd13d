package sbml

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os/exec"
	"strings"
	"testing"

	"kinetarium/examples"
	"kinetarium/network"
	"kinetarium/solve"
)

func loadExample(t *testing.T, name string) *network.Model {
	t.Helper()
	m, err := readExample(name)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func readExample(name string) (*network.Model, error) {
	data, err := examples.Open(name)
	if err != nil {
		return nil, err
	}
	return network.Read(bytes.NewReader(data), name)
}

// simulate solves m at 60 times over its run, tightly (rtol 1e-12), and
// returns the state names and the rows.
func simulate(t *testing.T, m *network.Model) ([]string, [][]float64) {
	t.Helper()
	sys, err := network.Compile(m)
	if err != nil {
		t.Fatal(err)
	}
	tEnd := m.Simulation.WithDefaults().TEnd
	times := make([]float64, 61)
	for i := range times {
		times[i] = tEnd * float64(i) / 60
	}
	res, err := solve.Solve(context.Background(), sys, 0, tEnd, sys.Initial(),
		solve.Settings{RTol: 1e-12, ATol: 1e-20, Times: times, NonNegative: true, Method: solve.Radau})
	if err != nil {
		t.Fatal(err)
	}
	return sys.Species(), res.Y
}

// TestRoundTripExamples exports every example to SBML, imports it back and
// compares the two simulations: every value within 1e-10 relative (with
// values below a thousandth of the largest that quantity takes compared
// with 1e-13 times that largest value; both solved with Radau IIA at rtol 1e-12, so that the two
// runs differ by the models, not by the solver's error).
func TestRoundTripExamples(t *testing.T) {
	for _, name := range examples.Names() {
		t.Run(name, func(t *testing.T) {
			m := loadExample(t, name)
			data, err := Encode(m)
			if err != nil {
				t.Fatal(err)
			}
			imp, err := Parse(data, name+".xml")
			if err != nil {
				t.Fatalf("%v\n%s", err, data)
			}
			back := imp.Model
			back.Simulation = m.Simulation // SBML core has no simulation settings
			names, want := simulate(t, m)
			names2, got := simulate(t, back)
			worst := 0.0
			defer func() { t.Logf("largest relative difference %.2g", worst) }()
			col := map[string]int{}
			for j, n := range names2 {
				col[n] = j
			}
			for j, n := range names {
				k, ok := col[n]
				if !ok {
					t.Fatalf("%s is missing after the round trip (state: %v)", n, names2)
				}
				scale := 0.0
				for _, row := range want {
					scale = math.Max(scale, math.Abs(row[j]))
				}
				for i := range want {
					a, b := want[i][j], got[i][k]
					d := math.Abs(a - b)
					if d > 1e-10*math.Max(math.Abs(a), 1e-3*scale) {
						t.Errorf("%s at row %d: %.15g before, %.15g after the round trip", n, i, a, b)
						break
					}
					if a != 0 {
						worst = math.Max(worst, d/math.Abs(a))
					}
				}
			}
		})
	}
}

// TestLibSBMLConsistency runs libSBML's consistency check (Debian's
// python3-sbml5) on every example's export: no errors allowed.
func TestLibSBMLConsistency(t *testing.T) {
	py := "/usr/bin/python3" // Debian's, which sees python3-sbml5
	if _, err := exec.LookPath(py); err != nil {
		if py, err = exec.LookPath("python3"); err != nil {
			t.Skip("python3 is not installed; the libSBML check needs python3-sbml5")
		}
	}
	if out, err := exec.Command(py, "-c", "import libsbml").CombinedOutput(); err != nil {
		t.Skipf("libSBML's Python binding is missing (apt-get install python3-sbml5): %s", strings.TrimSpace(string(out)))
	}
	const script = `
import sys, json, libsbml
doc = libsbml.readSBMLFromString(sys.stdin.read())
doc.checkConsistency()
out = []
for i in range(doc.getNumErrors()):
    e = doc.getError(i)
    out.append({"severity": e.getSeverityAsString(), "category": e.getCategoryAsString(), "line": e.getLine(), "message": e.getMessage().strip()})
print(json.dumps(out))
`
	for _, name := range examples.Names() {
		m := loadExample(t, name)
		data, err := Encode(m)
		if err != nil {
			t.Fatal(err)
		}
		cmd := exec.Command(py, "-c", script)
		cmd.Stdin = bytes.NewReader(data)
		out, err := cmd.Output()
		if err != nil {
			t.Fatalf("%s: libSBML: %v", name, err)
		}
		var probs []struct {
			Severity, Category, Message string
			Line                        int
		}
		if err := json.Unmarshal(out, &probs); err != nil {
			t.Fatalf("%s: %v: %s", name, err, out)
		}
		warnings, other := 0, 0
		for _, p := range probs {
			switch {
			case p.Severity == "Error" || p.Severity == "Fatal":
				t.Errorf("%s: line %d: libSBML %s: %s", name, p.Line, p.Severity, p.Message)
			case p.Category == "SBML unit consistency" || strings.Contains(p.Message, "units"):
				warnings++
			default:
				other++
				t.Logf("%s: line %d: libSBML %s (%s): %s", name, p.Line, p.Severity, p.Category, p.Message)
			}
		}
		t.Logf("%s: %d bytes, no errors, %d warnings about undeclared units, %d others", name, len(data), warnings, other)
	}
}
