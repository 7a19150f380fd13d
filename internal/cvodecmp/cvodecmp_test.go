//go:build sundials

package cvodecmp

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve"
)

func problems(t *testing.T) []Problem {
	t.Helper()
	ps, err := Problems("../../network/testdata")
	if err != nil {
		t.Fatal(err)
	}
	return ps
}

// randomState returns a positive state spread over several decades.
func randomState(rng *rand.Rand, n int) []float64 {
	y := make([]float64, n)
	for i := range y {
		y[i] = math.Pow(10, -4+3*rng.Float64())
	}
	return y
}

// The C right-hand sides are typed in from the Test Set for IVP Solvers
// (Mazzia and Magherini, University of Bari, release 2.4: hires.f, pollu.f);
// the Go ones come from the reaction networks in network/testdata. They must
// agree to rounding at any state.
func TestCRHSMatchesNetwork(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, p := range problems(t) {
		n := p.Sys.Dim()
		fc, fg := make([]float64, n), make([]float64, n)
		for trial := 0; trial < 20; trial++ {
			y := randomState(rng, n)
			cRHS(p, y, fc)
			p.Sys.RHS(0, y, fg)
			for i := range fc {
				if d := math.Abs(fc[i] - fg[i]); d > 1e-12*(math.Abs(fc[i])+math.Abs(fg[i]))+1e-300 {
					t.Fatalf("%s: f_%d at %v: C %g, Go network %g", p.Name, i+1, y, fc[i], fg[i])
				}
			}
		}
	}
}

// The C Jacobians must agree with the Go network's exact Jacobian and with
// central differences of the C right-hand side (common practice).
func TestCJacobianMatches(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	for _, p := range problems(t) {
		n := p.Sys.Dim()
		jc := make([]float64, n*n)
		jg := mat.NewDense(n, n, nil)
		fp, fm := make([]float64, n), make([]float64, n)
		for trial := 0; trial < 5; trial++ {
			y := randomState(rng, n)
			cJacobian(p, y, jc)
			p.Sys.Jacobian(0, y, jg)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					c, g := jc[i+j*n], jg.At(i, j)
					if math.Abs(c-g) > 1e-12*(math.Abs(c)+math.Abs(g)) {
						t.Fatalf("%s: J[%d][%d]: C %g, Go network %g", p.Name, i, j, c, g)
					}
				}
			}
			// Central differences: f is at most quadratic in each y_j, so
			// the difference quotient is exact up to rounding.
			for j := 0; j < n; j++ {
				h := 1e-6 * y[j]
				yp := append([]float64(nil), y...)
				ym := append([]float64(nil), y...)
				yp[j] += h
				ym[j] -= h
				cRHS(p, yp, fp)
				cRHS(p, ym, fm)
				for i := 0; i < n; i++ {
					fd := (fp[i] - fm[i]) / (2 * h)
					scale := math.Abs(jc[i+j*n]) + math.Abs(fp[i])/y[j]
					if math.Abs(fd-jc[i+j*n]) > 1e-6*scale+1e-300 {
						t.Fatalf("%s: J[%d][%d] = %g, central difference %g", p.Name, i, j, jc[i+j*n], fd)
					}
				}
			}
		}
	}
}

// CVODE must reach the published HIRES and POLLU reference states (Test Set
// for IVP Solvers, release 2.4) to within a sane multiple of the requested
// tolerance, with f and J from C and from Go, and a second solve after
// CVodeReInit must repeat the first exactly.
func TestCVODEReachesReference(t *testing.T) {
	for _, p := range problems(t) {
		for _, rhs := range []RHS{CRHS, GoRHS} {
			c, err := NewCVODE(p, rhs)
			if err != nil {
				t.Fatal(err)
			}
			const rtol = 1e-8
			y, w1, _, err := c.Solve(rtol)
			if err != nil {
				t.Fatal(err)
			}
			e := ScaledError(y, p.Ref, p.ATol, rtol)
			t.Logf("%s rhs %d: scaled error %.3g, %+v", p.Name, rhs, e, w1)
			if !(e < 1000) {
				t.Errorf("%s (rhs %d): CVODE scaled error %g at rtol %g, want < 1000", p.Name, rhs, e, rtol)
			}
			if w1.Steps < 50 || w1.Factorizations < 10 || w1.JacobianEvals < 1 {
				t.Errorf("%s: implausibly little work for a stiff problem: %+v", p.Name, w1)
			}
			first := append([]float64(nil), y...)
			y, w2, _, err := c.Solve(rtol)
			if err != nil {
				t.Fatal(err)
			}
			if w1 != w2 {
				t.Errorf("%s: second solve did %+v, first %+v", p.Name, w2, w1)
			}
			for i := range y {
				if y[i] != first[i] {
					t.Errorf("%s: second solve ends at y_%d = %g, first at %g", p.Name, i+1, y[i], first[i])
				}
			}
			c.Close()
		}
	}
}

// Measure reports every contender with its error, times and work.
func TestMeasure(t *testing.T) {
	p := problems(t)[0]
	cv, err := CVODEContender(p, CRHS)
	if err != nil {
		t.Fatal(err)
	}
	defer cv.Close()
	rows := Measure(p, 1e-8, 3, []Contender{cv, KinetariumContender(p, solve.Radau, false)})
	for _, r := range rows {
		if r.Failed != "" || !(r.Err < 1000) || r.Wall <= 0 || r.MinWall > r.Wall || r.Work.Factorizations == 0 {
			t.Errorf("%s on HIRES: %+v", r.Solver, r)
		}
	}
}
