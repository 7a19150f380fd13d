package solve

import (
	"context"
	"fmt"
	"testing"
)

// testSetCase is one published problem with its reference values.
type testSetCase struct {
	name string
	sys  func() System
	y0   func() []float64
	tEnd float64
	ref  []float64
	atol float64
}

// testSetCases are HIRES and POLLU from the Test Set for IVP Solvers
// (Mazzia & Magherini, Univ. Bari, release 2.4), with the absolute
// tolerances the Test Set's reports use for them.
var testSetCases = []testSetCase{
	{"HIRES", func() System { return hiresSystem{} }, hiresY0, hiresTEnd, hiresRef, 1e-12},
	{"POLLU", func() System { return polluSystem() }, polluY0, polluTEnd, polluRef, 1e-14},
}

// runTestSet solves c with method m at rtol and returns the scaled error
// at the end point and the stats.
func runTestSet(t testing.TB, c testSetCase, m Method, rtol float64) (float64, Stats) {
	t.Helper()
	res, err := Solve(context.Background(), c.sys(), 0, c.tEnd, c.y0(),
		Settings{Method: m, RTol: rtol, ATol: c.atol, Times: []float64{c.tEnd}})
	if err != nil {
		t.Fatalf("%s %s rtol %g: %v", c.name, m, rtol, err)
	}
	return scaledError(res.Y[0], c.ref, rtol, c.atol), res.Stats
}

// TestTestSetRosenbrock checks RODAS4 against the published reference
// solutions of HIRES and POLLU (Test Set for IVP Solvers, release 2.4):
// scaled error ≤ 10 at rtol 1e-6, 1e-8 and 1e-10.
func TestTestSetRosenbrock(t *testing.T) {
	for _, c := range testSetCases {
		for _, rtol := range []float64{1e-6, 1e-8, 1e-10} {
			t.Run(fmt.Sprintf("%s/rtol=%g", c.name, rtol), func(t *testing.T) {
				e, st := runTestSet(t, c, Rosenbrock, rtol)
				t.Logf("%s RODAS4 rtol %g: scaled error %.3g, steps %d, rejected %d, rhs %d, jac %d, LU %d",
					c.name, rtol, e, st.Steps, st.Rejected, st.RHSEvals, st.JacobianEvals, st.Factorizations)
				if e > 10 {
					t.Errorf("scaled error %.3g > 10", e)
				}
			})
		}
	}
}
