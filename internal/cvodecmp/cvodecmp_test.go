//go:build sundials

package cvodecmp

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"kinetarium/internal/gennet"
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
			y, w1, _, err := c.Solve(rtol, p.ATol)
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
			y, w2, _, err := c.Solve(rtol, p.ATol)
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
	rows := Measure(p, 1e-8, p.ATol, 3, []Contender{cv, KinetariumContender(p, solve.Radau, false)})
	for _, r := range rows {
		if r.Failed != "" || !(r.Err < 1000) || r.Wall <= 0 || r.MinWall > r.Wall || r.Work.Factorizations == 0 {
			t.Errorf("%s on HIRES: %+v", r.Solver, r)
		}
	}
}

// The CSC pattern and values handed to KLU must be the network's exact
// Jacobian, transposed from its CSR form: checked entry by entry against
// the dense Jacobian of the same network.System (common practice).
func TestCSCJacobianMatchesDense(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 2))
	ps := problems(t)
	g, err := NetworkProblem("NET40", gennet.Signalling(10), 1000)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range append(ps, g) {
		c := newCSCSystem(p.Sys.Clone())
		n := c.n
		y := randomState(rng, n)
		rowPtr, colIdx := p.Sys.JacobianPattern()
		c.sys.JacobianCSR(0, y, c.vals)
		csc := make([]float64, len(c.vals))
		for k, v := range c.vals {
			csc[c.perm[k]] = v
		}
		dense := mat.NewDense(n, n, nil)
		p.Sys.Jacobian(0, y, dense)
		seen := mat.NewDense(n, n, nil)
		for j := 0; j < n; j++ {
			if c.colPtr[j] > c.colPtr[j+1] {
				t.Fatalf("%s: column pointers decrease at %d", p.Name, j)
			}
			for k := c.colPtr[j]; k < c.colPtr[j+1]; k++ {
				i := int(c.rowIdx[k])
				if csc[k] != dense.At(i, j) {
					t.Fatalf("%s: CSC entry (%d, %d) = %g, dense Jacobian %g", p.Name, i, j, csc[k], dense.At(i, j))
				}
				seen.Set(i, j, 1)
			}
		}
		for i := 0; i < n; i++ {
			if seen.At(i, i) != 1 {
				t.Errorf("%s: diagonal entry %d missing from the CSC pattern", p.Name, i)
			}
			for j := 0; j < n; j++ {
				if dense.At(i, j) != 0 && seen.At(i, j) != 1 {
					t.Errorf("%s: nonzero J[%d][%d] = %g outside the CSC pattern", p.Name, i, j, dense.At(i, j))
				}
			}
		}
		if int(c.colPtr[n]) != rowPtr[n] || len(c.rowIdx) != len(colIdx) {
			t.Errorf("%s: %d CSC entries, CSR has %d", p.Name, c.colPtr[n], rowPtr[n])
		}
	}
}

// CVODE with KLU must reach the published HIRES and POLLU reference states
// (Test Set for IVP Solvers, release 2.4) with the same bound as the dense
// variant, agree with the dense variant on a generated network (the same
// BDF with another direct solver: rounding differences change the step
// sequence, so the end states agree to about the tolerance and the work to
// within a quarter), and repeat itself after CVodeReInit.
func TestKLUReachesReference(t *testing.T) {
	const rtol = 1e-8
	for _, p := range problems(t) {
		k, err := NewKLU(p)
		if err != nil {
			t.Fatal(err)
		}
		y, w1, _, err := k.Solve(rtol, p.ATol)
		if err != nil {
			t.Fatal(err)
		}
		e := ScaledError(y, p.Ref, p.ATol, rtol)
		st := k.Stages()
		t.Logf("%s: scaled error %.3g, %+v, %+v", p.Name, e, w1, st)
		if !(e < 1000) {
			t.Errorf("%s: CVODE–KLU scaled error %g at rtol %g, want < 1000", p.Name, e, rtol)
		}
		if st.Factors != w1.Factorizations || st.Solves < w1.Steps || st.Total <= 0 || st.Other() < 0 {
			t.Errorf("%s: stage counters do not add up: %+v with %+v", p.Name, st, w1)
		}
		first := slices.Clone(y)
		y, w2, _, err := k.Solve(rtol, p.ATol)
		if err != nil {
			t.Fatal(err)
		}
		if w1 != w2 || !slices.Equal(y, first) {
			t.Errorf("%s: second solve did %+v ending at %v, first %+v at %v", p.Name, w2, y, w1, first)
		}
		k.Close()
	}
	g, err := NetworkProblem("NET40", gennet.Signalling(10), 1000)
	if err != nil {
		t.Fatal(err)
	}
	k, err := NewKLU(g)
	if err != nil {
		t.Fatal(err)
	}
	defer k.Close()
	d, err := NewCVODE(g, GoRHS)
	if err != nil {
		t.Fatal(err)
	}
	defer d.Close()
	yk, wk, _, err := k.Solve(1e-6, 1e-12)
	if err != nil {
		t.Fatal(err)
	}
	yd, wd, _, err := d.Solve(1e-6, 1e-12)
	if err != nil {
		t.Fatal(err)
	}
	if dg := Digits(yk, yd, DigitsFloor); !(dg > 5) || math.Abs(float64(wk.Steps-wd.Steps)) > 0.25*float64(wd.Steps) {
		t.Errorf("NET40: KLU and dense CVODE agree to %.1f digits only (KLU %+v, dense %+v)", dg, wk, wd)
	}
}

// AtDigits interpolates log wall time linearly in digits: halfway between
// 4 digits in 1 ms and 6 digits in 4 ms lies 5 digits in 2 ms.
func TestAtDigits(t *testing.T) {
	rows := []Row{
		{Problem: "P", Solver: "s", RTol: 1e-6, Digits: 6, MinWall: 4 * time.Millisecond},
		{Problem: "P", Solver: "s", RTol: 1e-4, Digits: 4, MinWall: 1 * time.Millisecond},
		{Problem: "P", Solver: "s", RTol: 1e-8, Digits: 8, MinWall: 9 * time.Millisecond},
		{Problem: "P", Solver: "other", RTol: 1e-4, Digits: 9, MinWall: 3 * time.Millisecond},
	}
	w, upper, ok := AtDigits(rows, "P", "s", 5)
	if !ok || upper || math.Abs(float64(w)-float64(2*time.Millisecond)) > 1e3 {
		t.Errorf("5 digits: %v (upper %v, ok %v), want 2ms", w, upper, ok)
	}
	w, upper, ok = AtDigits(rows, "P", "s", 8)
	if !ok || upper || math.Abs(float64(w)-float64(9*time.Millisecond)) > 1e3 {
		t.Errorf("8 digits: %v (upper %v, ok %v), want 9ms", w, upper, ok)
	}
	if _, _, ok = AtDigits(rows, "P", "s", 8.5); ok {
		t.Error("8.5 digits: read a time though no tolerance reaches them")
	}
	if w, upper, ok = AtDigits(rows, "P", "other", 5); !ok || !upper || w != 3*time.Millisecond {
		t.Errorf("other at 5 digits: %v (upper %v, ok %v), want an upper bound of 3ms", w, upper, ok)
	}
}

// Digits counts relative digits above the floor and absolute ones below.
func TestDigits(t *testing.T) {
	if d := Digits([]float64{1.001, 2e-9}, []float64{1, 1e-9}, 1e-6); math.Abs(d-3) > 1e-5 {
		t.Errorf("Digits = %g, want 3 (1e-3 relative on the first component; the second is 1e-9/1e-6 absolute)", d)
	}
	if d := Digits([]float64{1, 0.5}, []float64{1, 0.5}, 1e-6); !math.IsInf(d, 1) {
		t.Errorf("Digits of an exact answer = %g, want +Inf", d)
	}
}

// BenchmarkKLUNet200 solves the generated 200-species network with
// CVODE–KLU at rtol 1e-6, atol 1e-12, for profiling CVODE's side (for
// example under callgrind with -test.benchtime=1x).
func BenchmarkKLUNet200(b *testing.B) {
	g, err := NetworkProblem("NET200", gennet.Signalling(50), 1000)
	if err != nil {
		b.Fatal(err)
	}
	k, err := NewKLU(g)
	if err != nil {
		b.Fatal(err)
	}
	defer k.Close()
	for b.Loop() {
		if _, _, _, err := k.Solve(1e-6, 1e-12); err != nil {
			b.Fatal(err)
		}
	}
	st := k.Stages()
	b.ReportMetric(float64(st.Factors), "LU/op")
	b.ReportMetric(float64(st.Other().Nanoseconds())/float64(st.Total.Nanoseconds()), "other/total")
}
