package analyse

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"math"
	"math/cmplx"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"testing"

	"gonum.org/v1/gonum/mat"

	"kinetarium/examples"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/solve/steady"
)

var updateEigen = flag.Bool("update-eigen", false, "rewrite testdata/eigen/matrices.json (then run numpy_eigvals.py)")

type eigenCase struct {
	Name   string      `json:"name"`
	Matrix [][]float64 `json:"matrix"`
}

// eigenModels are the models whose reduced Jacobians at steady state are
// compared with numpy.
func eigenModels(t *testing.T) map[string]*network.Model {
	ms := map[string]*network.Model{"two-step chain": twoStep(), "brusselator b=1.5": brusselator(1, 1.5), "brusselator b=3": brusselator(1, 3)}
	for _, name := range examples.Names() {
		b, _ := examples.Open(name)
		m, err := network.Read(bytes.NewReader(b), name)
		if err != nil {
			t.Fatal(err)
		}
		ms[name] = m
	}
	// The cascades with a reporter that can be cleared (their own
	// reporter outgrows its saturable decay and has no steady state).
	for _, name := range []string{"signalling-cascade-20.json", "signalling-cascade-50.json"} {
		ms[name+" dp×100"] = withClearableReporter(t, ms[name])
	}
	return ms
}

// Eigenvalues of the reduced Jacobian at steady state, from gonum's
// mat.Eigen, against numpy.linalg.eigvals (Debian python3-numpy) as
// written by the committed script testdata/eigen/numpy_eigvals.py to
// numpy_eigvals.json; each eigenvalue within 1e-9 of the matrix's norm.
// When Debian's python3 with numpy is installed the script is also run
// now, so that the committed output is the script's.
func TestEigenvaluesAgainstNumpy(t *testing.T) {
	dir := filepath.Join("testdata", "eigen")
	var cases []eigenCase
	for name, mod := range eigenModels(t) {
		m, err := Prepare(mod)
		if err != nil {
			continue
		}
		s, err := m.FindSteady(context.Background())
		if err != nil || s.Reduced == nil {
			continue
		}
		r, c := s.Reduced.Dims()
		rows := make([][]float64, r)
		for i := range rows {
			rows[i] = make([]float64, c)
			for j := range rows[i] {
				rows[i][j] = s.Reduced.At(i, j)
			}
		}
		cases = append(cases, eigenCase{Name: name, Matrix: rows})
	}
	sort.Slice(cases, func(i, j int) bool { return cases[i].Name < cases[j].Name })
	if *updateEigen {
		b, _ := json.MarshalIndent(cases, "", " ")
		if err := atomicfile.Write(filepath.Join(dir, "matrices.json"), append(b, '\n')); err != nil {
			t.Fatal(err)
		}
	}
	var committed []eigenCase
	readJSON(t, filepath.Join(dir, "matrices.json"), &committed)
	byName := map[string][][]float64{}
	for _, c := range cases {
		byName[c.Name] = c.Matrix
	}
	// The committed matrices are today's.
	for _, c := range committed {
		now, ok := byName[c.Name]
		if !ok || len(now) != len(c.Matrix) {
			t.Fatalf("%s: the reduced Jacobian changed shape or is gone; rerun with -update-eigen and numpy_eigvals.py", c.Name)
		}
		for i := range now {
			for j := range now[i] {
				if d := math.Abs(now[i][j] - c.Matrix[i][j]); d > 1e-9*(1+math.Abs(c.Matrix[i][j])) {
					t.Fatalf("%s: reduced Jacobian [%d][%d] = %g, committed %g; rerun with -update-eigen and numpy_eigvals.py", c.Name, i, j, now[i][j], c.Matrix[i][j])
				}
			}
		}
	}
	if len(committed) < 5 {
		t.Fatalf("only %d matrices committed", len(committed))
	}
	type npOut struct {
		Cases []struct {
			Name        string       `json:"name"`
			Eigenvalues [][2]float64 `json:"eigenvalues"`
		} `json:"cases"`
	}
	var np npOut
	readJSON(t, filepath.Join(dir, "numpy_eigvals.json"), &np)
	if py := "/usr/bin/python3"; exec.Command(py, "-c", "import numpy").Run() == nil {
		live := filepath.Join(t.TempDir(), "live.json")
		cmd := exec.Command(py, filepath.Join(dir, "numpy_eigvals.py"), filepath.Join(dir, "matrices.json"), live)
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("numpy_eigvals.py: %v\n%s", err, out)
		}
		var now npOut
		readJSON(t, live, &now)
		if len(now.Cases) != len(np.Cases) {
			t.Fatalf("numpy now gives %d cases, committed %d", len(now.Cases), len(np.Cases))
		}
		for k := range now.Cases {
			for e := range now.Cases[k].Eigenvalues {
				a, b := now.Cases[k].Eigenvalues[e], np.Cases[k].Eigenvalues[e]
				if math.Abs(a[0]-b[0]) > 1e-12*(1+math.Abs(b[0])) || math.Abs(a[1]-b[1]) > 1e-12*(1+math.Abs(b[1])) {
					t.Errorf("%s: numpy now %v, committed %v", now.Cases[k].Name, a, b)
				}
			}
		}
	} else {
		t.Log("Debian's python3-numpy is not installed: compared with the committed numpy output only")
	}
	if len(np.Cases) != len(committed) {
		t.Fatalf("numpy_eigvals.json has %d cases for %d matrices", len(np.Cases), len(committed))
	}
	for k, c := range committed {
		a := mat.NewDense(len(c.Matrix), len(c.Matrix), nil)
		for i, row := range c.Matrix {
			a.SetRow(i, row)
		}
		st, err := steady.Classify(a)
		if err != nil {
			t.Fatal(err)
		}
		norm := mat.Norm(a, 2)
		want := np.Cases[k].Eigenvalues
		if len(want) != len(st.Eigenvalues) {
			t.Fatalf("%s: %d eigenvalues, numpy %d", c.Name, len(st.Eigenvalues), len(want))
		}
		used := make([]bool, len(want))
		for _, v := range st.Eigenvalues {
			best, bd := -1, math.Inf(1)
			for i, w := range want {
				if d := cmplx.Abs(v - complex(w[0], w[1])); !used[i] && d < bd {
					best, bd = i, d
				}
			}
			used[best] = true
			if bd > 1e-9*norm {
				t.Errorf("%s: eigenvalue %v, nearest numpy %v (|Δ| = %g, ‖A‖ = %g)", c.Name, v, want[best], bd, norm)
			}
		}
	}
}

func readJSON(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}
