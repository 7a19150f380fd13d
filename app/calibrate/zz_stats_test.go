package calibrate

import (
	"context"
	"fmt"
	"testing"
)

func TestZZStats(t *testing.T) {
	spec, _ := LoadSpec("../../examples/fits/protease-fit.json")
	p, err := NewProblem(spec)
	if err != nil {
		t.Fatal(err)
	}
	x := make([]float64, len(p.Params))
	for j, q := range p.Params {
		x[j] = q.Start
	}
	for _, e := range p.Exps {
		q := make([]float64, len(e.pidx))
		for j, pi := range e.pidx {
			q[j] = x[pi]
		}
		r0, _ := e.ev.Solve(context.Background(), q, false)
		r1, _ := e.ev.Solve(context.Background(), q, true)
		fmt.Printf("%s plain %+v\n sens %+v\n", e.Name, r0.Stats, r1.Stats)
		fmt.Println(e.ev.set.Method, e.ev.set.RTol, e.ev.set.ATol)
	}
}
