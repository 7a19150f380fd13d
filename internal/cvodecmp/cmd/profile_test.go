//go:build sundials

package main

import "testing"

// Each stack goes to the innermost frame that names a stage; what is left
// in package solve is step logic, the rest the Go runtime's.
func TestClassify(t *testing.T) {
	for _, c := range []struct {
		stack []string
		want  string
	}{
		{[]string{"kinetarium/solve.(*SparseLU).factorSparse", "kinetarium/solve.(*SparseLU).Factor", "kinetarium/solve.(*bdf).factor", "kinetarium/solve.(*bdf).step"}, "factorization (LU of the Newton matrix)"},
		{[]string{"runtime.asyncPreempt", "kinetarium/solve.(*SparseLU).solvePerm", "kinetarium/solve.(*SparseLU).Solve", "kinetarium/solve.(*bdf).newton"}, "triangular solves"},
		{[]string{"kinetarium/network.(*System).massActionRate", "kinetarium/network.(*System).rate", "kinetarium/network.(*System).RHS", "kinetarium/solve.(*problem).rhs", "kinetarium/solve.(*bdf).newton"}, "right-hand side"},
		{[]string{"runtime.memclrNoHeapPointers", "kinetarium/network.(*System).Jacobian", "kinetarium/solve.(*problem).jac", "kinetarium/solve.(*bdf).step"}, "Jacobian evaluation"},
		{[]string{"kinetarium/solve.(*bdf).factor", "kinetarium/solve.(*bdf).step"}, "forming the Newton matrix"},
		{[]string{"kinetarium/solve.(*bdf).dense", "kinetarium/solve.(*Solver).Solve"}, "output (dense output at the output times)"},
		{[]string{"kinetarium/solve.wrms", "kinetarium/solve.(*bdf).newton", "kinetarium/solve.(*bdf).step"}, stepLogic},
		{[]string{"runtime.gcBgMarkWorker", "runtime.goexit"}, runtimeGC},
		{[]string{"kinetarium/solve.(*Solver).Solve", "main.profileStages"}, stepLogic},
	} {
		if got := classify(c.stack); got != c.want {
			t.Errorf("%v: %q, want %q", c.stack, got, c.want)
		}
	}
}
