package solve

import (
	"bufio"
	"context"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// vdpSystem is the Van der Pol oscillator in its classic form y1' = y2,
// y2' = μ(1 − y1²)·y2 − y1, stiff for large μ (relaxation period about
// (3 − 2 ln 2)·μ).
type vdpSystem struct{ mu float64 }

func (v vdpSystem) Dim() int         { return 2 }
func (v vdpSystem) Autonomous() bool { return true }
func (v vdpSystem) RHS(_ float64, y, dy []float64) {
	dy[0] = y[1]
	dy[1] = v.mu*(1-y[0]*y[0])*y[1] - y[0]
}
func (v vdpSystem) Jacobian(_ float64, y []float64, j *mat.Dense) {
	j.Set(0, 0, 0)
	j.Set(0, 1, 1)
	j.Set(1, 0, -2*v.mu*y[0]*y[1]-1)
	j.Set(1, 1, v.mu*(1-y[0]*y[0]))
}

// readVdPReference reads testdata/vdp_mu1000.csv, written by
// scripts/vdp_reference.py with SciPy's Radau at rtol = atol = 1e-12.
func readVdPReference(t *testing.T) (ts []float64, ys [][]float64) {
	f, err := os.Open("testdata/vdp_mu1000.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") || strings.HasPrefix(line, "t,") || line == "" {
			continue
		}
		var v [3]float64
		for i, s := range strings.Split(line, ",") {
			if v[i], err = strconv.ParseFloat(s, 64); err != nil {
				t.Fatalf("vdp_mu1000.csv: %q: %v", line, err)
			}
		}
		ts = append(ts, v[0])
		ys = append(ys, []float64{v[1], v[2]})
	}
	return ts, ys
}

// TestVanDerPol compares with SciPy's Radau solution (python3-scipy,
// rtol = atol = 1e-12; see scripts/vdp_reference.py) at t = 0, 500, …, 3000.
//
// The bound: the tolerance governs local errors; over the relaxation
// cycles the global error grows with the number of fast transitions
// crossed (a phase error), so we ask for a scaled error ≤ 100 at rtol 1e-8
// (absolute error about 1e-6 in y1 of size 2, and in y2 where the scale is
// the same); a method that drifted by a fraction of a cycle would be off
// by O(1). Multistep BDF, Auto's stiff method at this tolerance, has
// larger error constants and accumulates more phase error per cycle
// (measured 184 at rtol 1e-8), so its bound is 1000: still far below the
// O(1e8) of a method that lost a fraction of a cycle.
func TestVanDerPol(t *testing.T) {
	ts, ref := readVdPReference(t)
	if len(ts) != 7 || ts[len(ts)-1] != 3000 {
		t.Fatalf("reference has times %v, want 0, 500, …, 3000", ts)
	}
	const rtol, atol = 1e-8, 1e-8
	bound := map[Method]float64{Rosenbrock: 100, Radau: 100, BDF: 1000, Auto: 1000}
	for _, m := range []Method{Rosenbrock, Radau, BDF, Auto} {
		res, err := Solve(context.Background(), vdpSystem{mu: 1000}, 0, 3000, []float64{2, 0},
			Settings{Method: m, RTol: rtol, ATol: atol, Times: ts})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		var worst float64
		for i := range ts {
			worst = math.Max(worst, scaledError(res.Y[i], ref[i], rtol, atol))
		}
		t.Logf("%s: scaled error %.3g, %d steps, %d rejected; %s", m, worst, res.Steps, res.Rejected, res.Choice)
		if worst > bound[m] {
			t.Errorf("%s: scaled error %.3g > %g", m, worst, bound[m])
		}
	}
}
