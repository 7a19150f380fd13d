package steady_test

import (
	"context"
	"fmt"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve/steady"
)

// binding is E + S <=> C with kon = 2, koff = 1: y = (E, S, C), and two
// conservation laws, E + C and S + C.
type binding struct{ kon float64 }

func (b *binding) Dim() int { return 3 }
func (b *binding) RHS(_ float64, y, dy []float64) {
	v := b.kon*y[0]*y[1] - y[2]
	dy[0], dy[1], dy[2] = -v, -v, v
}
func (b *binding) Jacobian(_ float64, y []float64, j *mat.Dense) {
	j.Zero()
	for i, s := range []float64{-1, -1, 1} {
		j.Set(i, 0, s*b.kon*y[1])
		j.Set(i, 1, s*b.kon*y[0])
		j.Set(i, 2, -s)
	}
}
func (b *binding) SetParameter(p float64)    { b.kon = p }
func (b *binding) ParamDeriv(y, d []float64) { d[0], d[1], d[2] = -y[0]*y[1], -y[0]*y[1], y[0]*y[1] }

func ExampleFind() {
	laws := mat.NewDense(2, 3, []float64{1, 0, 1, 0, 1, 1}) // E + C, S + C
	r, err := steady.Find(context.Background(), &binding{kon: 2}, []float64{1, 1, 0}, steady.Settings{Laws: laws})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("C = %.6f (totals %v), %s\n", r.Y[2], r.Totals, r.Class)
	// Output: C = 0.500000 (totals [1 1]), stable node
}

func ExampleContinue() {
	laws := mat.NewDense(2, 3, []float64{1, 0, 1, 0, 1, 1})
	br, err := steady.Continue(context.Background(), &binding{kon: 0.1}, 0.1, []float64{1, 1, 0},
		steady.ContinueSettings{Settings: steady.Settings{Laws: laws}, Min: 0.1, Max: 100, Log: true})
	if err != nil {
		fmt.Println(err)
		return
	}
	last := br.Points[len(br.Points)-1]
	fmt.Printf("kon = %g: C = %.4f; %d special points; %s\n", last.P, last.Y[2], len(br.Specials), br.Stop)
	// Output: kon = 100: C = 0.9049; 0 special points; reached the end of the range at p = 100
}
