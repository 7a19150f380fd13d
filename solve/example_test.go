package solve_test

import (
	"context"
	"fmt"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve"
)

// conversion is A → B with rate constant k: [A]' = −k[A], [B]' = k[A].
type conversion struct{ k float64 }

func (c conversion) Dim() int { return 2 }

func (c conversion) RHS(_ float64, y, dy []float64) {
	dy[0] = -c.k * y[0]
	dy[1] = c.k * y[0]
}

func (c conversion) Jacobian(_ float64, _ []float64, j *mat.Dense) {
	j.Set(0, 0, -c.k)
	j.Set(0, 1, 0)
	j.Set(1, 0, c.k)
	j.Set(1, 1, 0)
}

func ExampleSolve() {
	res, err := solve.Solve(context.Background(), conversion{k: 0.5}, 0, 4, []float64{1, 0},
		solve.Settings{Method: solve.Rosenbrock, RTol: 1e-8, Times: solve.LinearTimes(0, 4, 3)})
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, t := range res.T {
		fmt.Printf("t = %.0f: A = %.6f, B = %.6f\n", t, res.Y[i][0], res.Y[i][1])
	}
	// Output:
	// t = 0: A = 1.000000, B = 0.000000
	// t = 2: A = 0.367879, B = 0.632121
	// t = 4: A = 0.135335, B = 0.864665
}

func ExampleSolver() {
	// One Solver, reused for several rate constants.
	sv := solve.NewSolver(conversion{k: 1}, solve.Settings{RTol: 1e-8, Times: []float64{1}})
	for _, k := range []float64{0.5, 1, 2} {
		sv.SetSystem(conversion{k: k})
		res, err := sv.Solve(context.Background(), 0, 1, []float64{1, 0})
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("k = %g: A(1) = %.6f\n", k, res.Y[0][0])
	}
	// Output:
	// k = 0.5: A(1) = 0.606531
	// k = 1: A(1) = 0.367879
	// k = 2: A(1) = 0.135335
}

func ExampleLogTimes() {
	fmt.Println(solve.LogTimes(0.01, 100, 5))
	// Output:
	// [0.01 0.1 1 10 100]
}
