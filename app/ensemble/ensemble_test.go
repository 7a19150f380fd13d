package ensemble

import (
	"context"
	"math"
	"testing"

	"kinetarium/network"
	"kinetarium/solve/stochastic"
)

// bimolecular is A + B → C (k1) and 2 A → D (k2), concentrations A = 1,
// B = 0.5, in a volume of 1 with the given molecules per amount.
func bimolecular(perAmount float64) *network.Model {
	return &network.Model{
		Title:        "bimolecular",
		Units:        network.Units{MoleculesPerAmount: perAmount},
		Compartments: []network.Compartment{{Name: "c", Volume: 1}},
		Species:      []network.Species{{Name: "A", Initial: 1}, {Name: "B", Initial: 0.5}, {Name: "C"}, {Name: "D"}},
		Parameters:   []network.Parameter{{Name: "k1", Value: 1}, {Name: "k2", Value: 0.5}},
		Reactions: []network.Reaction{
			{Name: "bind", Equation: "A + B -> C", Rate: network.NewRate(network.MassAction, "k", "k1")},
			{Name: "pair", Equation: "2 A -> D", Rate: network.NewRate(network.MassAction, "k", "k2")},
		},
		Simulation: network.Simulation{TEnd: 2, RTol: 1e-10, ATol: 1e-14, Output: network.Output{Points: 11}},
	}
}

// largeVolume returns, for each molecules-per-amount value, the largest
// relative difference over the output times t > 0 between the ensemble
// mean of A and the ODE solution (solved by app/run at rtol 1e-10), and
// the smallest ODE count of A. halvePair makes the 2 A channel's
// constant half what it should be (the k/Ω · n(n−1)/2 mistake).
func largeVolume(t *testing.T, pers []float64, runs int, halvePair bool) (rel, count []float64) {
	for _, per := range pers {
		j, err := Prepare(bimolecular(per), Spec{Runs: runs, Seed: 11})
		if err != nil {
			t.Fatal(err)
		}
		if halvePair {
			j.Network.Channels[1].C /= 2
		}
		e, err := j.Run(context.Background(), nil)
		if err != nil {
			t.Fatal(err)
		}
		ode, err := j.ODE(context.Background())
		if err != nil {
			t.Fatal(err)
		}
		worst, least := 0.0, math.Inf(1)
		for i := 1; i < len(e.Times); i++ {
			worst = math.Max(worst, math.Abs(e.Mean(i, 0)-ode[i][0])/ode[i][0])
			least = math.Min(least, ode[i][0])
		}
		rel, count = append(rel, worst), append(count, least)
	}
	return rel, count
}

// TestLargeVolumeLimit: as Ω grows the ensemble mean of a bimolecular
// network approaches the ODE solution (Kurtz's limit theorem; Gillespie
// 1977; Wilkinson, Stochastic Modelling for Systems Biology). The
// relative difference has two parts: the standard error of the mean of n
// runs, about √(Var/n)/count ≤ 1/√(n·count) for these counts, whose
// variance stays below their mean (a reactant that is only consumed), and
// the bias of the master equation's mean against the rate equation, of
// order 1/count. We require at every Ω
//
//	relative difference ≤ 4/√(n·count) + 2/count,
//
// which falls like 1/√count, and that the difference at the largest Ω is
// under 1 %. A 2 A → D channel with half its constant (the c = k/Ω with
// n(n − 1)/2 mistake) must fail.
func TestLargeVolumeLimit(t *testing.T) {
	pers := []float64{10, 100, 1000, 10000}
	const runs = 400
	check := func(rel, count []float64) (ok bool) {
		ok = true
		for k := range pers {
			bound := 4/math.Sqrt(runs*count[k]) + 2/count[k]
			if rel[k] > bound {
				ok = false
			}
			t.Logf("Ω = %g: least count %.0f, relative difference %.4f, bound %.4f", pers[k], count[k], rel[k], bound)
		}
		return ok && rel[len(rel)-1] < 0.01
	}
	rel, count := largeVolume(t, pers, runs, false)
	if !check(rel, count) {
		t.Errorf("the ensemble mean does not approach the ODE solution as the volume grows")
	}
	rel, count = largeVolume(t, pers, runs, true)
	if check(rel, count) {
		t.Errorf("a halved dimerisation constant passed the large-volume check")
	}
}

func TestPrepareErrors(t *testing.T) {
	m := bimolecular(0)
	if _, err := Prepare(m, Spec{}); err == nil {
		t.Error("no molecules per amount: no error")
	}
	m = bimolecular(10)
	for _, s := range []Spec{{Runs: -1}, {Method: "fast"}, {HistTimes: []float64{99}}, {Passages: []Passage{{"Q", 1}}}} {
		if _, err := Prepare(m, s); err == nil {
			t.Errorf("%+v: no error", s)
		}
	}
}

// TestModelEnsemble runs a model with an expression law and a timed dose
// through every method and checks the tables' shapes and the notes.
func TestModelEnsemble(t *testing.T) {
	m := &network.Model{
		Units:      network.Units{Amount: "molecules"},
		Species:    []network.Species{{Name: "G", Initial: 1, Fixed: true}, {Name: "P", Initial: 5}},
		Parameters: []network.Parameter{{Name: "v", Value: 20}, {Name: "K", Value: 10}, {Name: "d", Value: 1}},
		Reactions: []network.Reaction{
			{Name: "make", Equation: "G -> G + P", Rate: network.Rate{Law: network.Expression, Expression: "v*G/(1 + P/K)"}},
			{Name: "lose", Equation: "P ->", Rate: network.NewRate(network.MassAction, "k", "d")},
		},
		Events:     []network.Event{{Name: "pulse", At: network.Number(5), Add: []network.Change{{Target: "P", Value: "50"}}}},
		Simulation: network.Simulation{TEnd: 10, Output: network.Output{Points: 21}},
	}
	for _, meth := range stochastic.Methods {
		j, err := Prepare(m, Spec{Runs: 50, Seed: 2, Method: meth, HistTimes: []float64{10}, Passages: []Passage{{"P", 40}}})
		if err != nil {
			t.Fatal(err)
		}
		e, err := j.Run(context.Background(), nil)
		if err != nil || len(e.Failures) > 0 {
			t.Fatalf("%s: %v %v", meth, err, e.Failures)
		}
		if e.Stats.Events != 50 {
			t.Errorf("%s: %d events for 50 runs", meth, e.Stats.Events)
		}
		if got := e.Mean(10, 1); got < 40 { // just after the pulse of 50
			t.Errorf("%s: mean P at the pulse %v", meth, got)
		}
		if rows := MeanRows(e, nil); len(rows) != 22 || len(rows[0]) != 3 {
			t.Errorf("mean rows %d × %d", len(rows), len(rows[0]))
		}
		if rows := RunRows(e, nil); len(rows) != 1+10*21 {
			t.Errorf("run rows %d", len(rows))
		}
		reached, missed := PassageSummary(e, 0)
		if len(reached)+missed != 50 || len(reached) == 0 {
			t.Errorf("passages: %d reached, %d missed", len(reached), missed)
		}
		notes := j.Notes()
		if len(notes) < 2 {
			t.Errorf("notes %v: want the approximation of the expression law", notes)
		}
		ode, err := j.ODE(context.Background())
		if err != nil {
			t.Fatal(err)
		}
		if _, err := Figure(e, 1, ode, "h", false, nil); err != nil {
			t.Error(err)
		}
		if _, err := HistogramFigure(e, 0, 1, nil); err != nil {
			t.Error(err)
		}
		if _, err := PassageFigure(e, 0, nil); err != nil {
			t.Error(err)
		}
	}
}
