package calibrate

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"strings"
	"testing"

	"kinetarium/examples"
	"kinetarium/network"
	"kinetarium/solve"
)

// loadExample reads an example model.
func loadExample(t testing.TB, name string) *network.Model {
	t.Helper()
	b, err := examples.Open(name)
	if err != nil {
		t.Fatal(err)
	}
	m, err := network.Read(bytes.NewReader(b), name)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// exampleTargets picks targets of every kind the example has: up to six
// parameters, two initial concentrations (nonzero ones first), the
// compartments' volumes and the event quantities.
func exampleTargets(m *network.Model) []string {
	var out []string
	for i, p := range m.Parameters {
		if i >= 6 {
			break
		}
		out = append(out, p.Name)
	}
	k := 0
	for _, s := range m.Species {
		if s.Initial > 0 && k < 2 {
			out = append(out, "init:"+s.Name)
			k++
		}
	}
	for _, c := range m.Compartments {
		out = append(out, "volume:"+c.Name)
	}
	for _, q := range m.EventQuantities() {
		out = append(out, "event:"+q)
	}
	return out
}

// TestSensitivitiesAgainstDifferences compares the integrated
// sensitivities of every example, for every stiff method, with central
// differences of whole solves at a tight tolerance (common practice for
// checking derivatives), across doses and triggered events too. Scaled
// sensitivities (x/max|y|)·∂y/∂x are compared: the bound is 2e-4 of the
// largest over the run plus 1e-5 (the sensitivities at rtol 1e-8 with
// error control; the differences with a relative step 1e-6 at rtol 1e-12,
// whose rounding error is about 1e-12/1e-6 = 1e-6 relative to max|y|).
// Output times where the three runs of a difference saw a different
// number of events (a jump moved across the time) are left out.
func TestSensitivitiesAgainstDifferences(t *testing.T) {
	names := examples.Names()
	if testing.Short() {
		names = []string{"protease-inhibitor.json", "twice-daily-oral-dose.json", "substrate-feeding.json"}
	}
	ctx := context.Background()
	for _, name := range names {
		m := loadExample(t, name)
		targets := exampleTargets(m)
		ref, err := NewEvaluator(m, Options{Targets: targets, RTol: 1e-12, ATol: 1e-16, Method: solve.Radau})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		base := ref.Base()
		r0, err := ref.Solve(ctx, nil, false)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		// Central differences, one target at a time.
		fd := make([][][]float64, len(targets)) // [j][i][k]
		// skip[j][i]: the runs for target j's differences saw different
		// numbers of events by output i, so a jump lies between them.
		skip := make([][]bool, len(targets))
		fired := func(r *Result, t float64) int {
			c := 0
			for _, f := range r.Events {
				if f.T <= t {
					c++
				}
			}
			return c
		}
		for j := range targets {
			h := 1e-6 * math.Max(math.Abs(base[j]), 1e-3)
			if strings.HasPrefix(targets[j], "event:") {
				h = 1e-6 * math.Max(math.Abs(base[j]), 1)
			}
			x := append([]float64(nil), base...)
			x[j] = base[j] + h
			rp, err := ref.Solve(ctx, x, false)
			if err != nil {
				t.Fatalf("%s %s+h: %v", name, targets[j], err)
			}
			lo := base[j] - h
			div := 2 * h
			if lo < 0 {
				lo, div = base[j], h
			}
			x[j] = lo
			rm, err := ref.Solve(ctx, x, false)
			if err != nil {
				t.Fatalf("%s %s−h: %v", name, targets[j], err)
			}
			fd[j] = make([][]float64, len(rp.T))
			skip[j] = make([]bool, len(rp.T))
			for i := range rp.T {
				c := fired(r0, rp.T[i])
				skip[j][i] = fired(rp, rp.T[i]) != c || fired(rm, rp.T[i]) != c
				fd[j][i] = make([]float64, len(rp.Y[i]))
				for k := range rp.Y[i] {
					fd[j][i][k] = (rp.Y[i][k] - rm.Y[i][k]) / div
				}
			}
		}
		for _, method := range []solve.Method{solve.Rosenbrock, solve.Radau, solve.BDF} {
			ev, err := NewEvaluator(m, Options{Targets: targets, RTol: 1e-8, ATol: 1e-14, Method: method, ErrorControl: true})
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			res, err := ev.Solve(ctx, nil, true)
			if err != nil {
				t.Fatalf("%s %s: %v", name, method, err)
			}
			nq := len(targets)
			for j, tg := range targets {
				if !res.Exact[j] {
					t.Logf("%s: %s by differences: %s", name, tg, ev.Inexact()[j])
				}
				for k, out := range res.Names {
					// Compare scaled sensitivities (x/max|y|)·∂y/∂x.
					var ymax float64
					for i := range res.T {
						ymax = math.Max(ymax, math.Abs(res.Y[i][k]))
					}
					if ymax == 0 {
						ymax = 1
					}
					xs := math.Max(math.Abs(base[j]), 1e-3) / ymax
					var scale, worst float64
					wi := 0
					for i := range res.T {
						if skip[j][i] {
							continue
						}
						scale = math.Max(scale, xs*math.Abs(fd[j][i][k]))
					}
					for i := range res.T {
						if skip[j][i] {
							continue
						}
						d := xs * math.Abs(res.D[i][k*nq+j]-fd[j][i][k])
						if d > worst {
							worst, wi = d, i
						}
					}
					if worst > 2e-4*scale+1e-5 {
						t.Errorf("%s %s: ∂%s/∂%s at t=%g: %.8g, differences %.8g (largest |∂| %.3g)", name, method, out, tg,
							res.T[wi], res.D[wi][k*nq+j], fd[j][wi][k], scale)
					}
				}
			}
			if testing.Verbose() {
				fmt.Printf("%s %s: %d steps, %d Jacobians, %d ∂f/∂q\n", name, method, res.Stats.Steps, res.Stats.JacobianEvals, res.Stats.ParamJacobianEvals)
			}
		}
	}
}

// ScaledGrid gives ∂ln A/∂ln k = −k·t for A → B at rate k·A (closed form
// of first-order decay, ../shared/reference/analytic-checks.md) and NaN
// where the output is zero (B at t = 0).
func TestScaledGridDecay(t *testing.T) {
	m := &network.Model{
		Species:    []network.Species{{Name: "A", Initial: 2}, {Name: "B"}},
		Parameters: []network.Parameter{{Name: "k", Value: 0.5}},
		Reactions: []network.Reaction{{Name: "r", Equation: "A -> B",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: 4, Output: network.Output{Points: 9}, RTol: 1e-10, ATol: 1e-12},
	}
	ev, err := NewEvaluator(m, Options{Targets: []string{"k"}})
	if err != nil {
		t.Fatal(err)
	}
	res, err := ev.Solve(context.Background(), nil, true)
	if err != nil {
		t.Fatal(err)
	}
	z := ScaledGrid(res, 0, ev.Base())
	for i, tt := range res.T {
		if want := -0.5 * tt; math.Abs(z[0][i]-want) > 1e-6 {
			t.Errorf("∂ln A/∂ln k at t = %g: %g, want %g", tt, z[0][i], want)
		}
	}
	if b := ScaledGrid(res, 1, ev.Base()); !math.IsNaN(b[0][0]) {
		t.Errorf("scaled sensitivity of B at t = 0 (B = 0) is %g, want NaN", b[0][0])
	}
}
