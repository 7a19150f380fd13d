package study

import (
	"context"
	"math"
	"reflect"
	"strconv"
	"testing"

	"kinetarium/network"
	"kinetarium/solve/explore"
)

// decayModel is A -> B at rate k·A in seconds and uM, with an assignment
// half = A/2 in uM and one without a unit; display picks the units shown.
func decayModel(display network.Display) *network.Model {
	return &network.Model{
		Units:      network.Units{Time: "s", Amount: "uM"},
		Species:    []network.Species{{Name: "A", Initial: 2}, {Name: "B"}},
		Parameters: []network.Parameter{{Name: "k", Value: 0.01, Unit: "1/s"}},
		Assignments: []network.Assignment{
			{Name: "half", Expression: "A/2", Unit: "uM"},
			{Name: "ratio", Expression: "A/(A + B)"},
		},
		Reactions: []network.Reaction{{Name: "r", Equation: "A -> B", Rate: network.NewRate(network.MassAction, "k", "k")}},
		Simulation: network.Simulation{TEnd: 600, RTol: 1e-10, ATol: 1e-14,
			Output: network.Output{Points: 601}, Display: display},
	}
}

func runDecaySweep(t *testing.T, display network.Display) (*Job, *explore.Result) {
	t.Helper()
	p, err := Prepare(decayModel(display))
	if err != nil {
		t.Fatal(err)
	}
	lvl := 1.0
	job, err := p.Sweep([]Axis{{Knob: "k", From: 0.005, To: 0.02, Points: 3}}, []ReadoutSpec{
		{Name: "endA", Kind: explore.Final, Species: "A"},
		{Name: "t1", Kind: explore.CrossDown, Species: "A", Level: &lvl},
		{Name: "area", Kind: explore.AUC, Species: "A"},
		{Name: "endRatio", Kind: explore.Final, Species: "ratio"},
	})
	if err != nil {
		t.Fatal(err)
	}
	res, err := job.Run(context.Background(), 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	return job, res
}

// A sweep of a model that shows results in min and nM writes its tables
// with units in the headers and its values converted, against the closed
// form of first-order decay, A(t) = A0·exp(−k t), its area
// A0·(1 − exp(−k T))/k and the time it falls to L, ln(A0/L)/k (common
// practice), with 1 min = 60 s and 1 uM = 1000 nM (SI definitions of the
// minute and of the prefixes micro and nano, common practice). Without
// display units the tables are those of RunRows, header and all.
func TestSweepTablesInDisplayUnits(t *testing.T) {
	job, res := runDecaySweep(t, network.Display{Time: "min", Concentration: "nM"})
	f := job.Figures()
	rows, err := f.RunRows(res)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"index", "k (1/s)", "endA (nM)", "t1 (min)", "area (nM·min)", "endRatio"}
	if !reflect.DeepEqual(rows[0], want) {
		t.Fatalf("header %q, want %q", rows[0], want)
	}
	const A0, T, L = 2.0, 600.0, 1.0
	for i, row := range rows[1:] {
		k, _ := strconv.ParseFloat(row[1], 64)
		num := func(j int) float64 { v, _ := strconv.ParseFloat(row[j], 64); return v }
		check := func(what string, got, want, rel float64) {
			if math.Abs(got-want) > rel*math.Abs(want) {
				t.Errorf("run %d %s = %.10g, want %.10g", i, what, got, want)
			}
		}
		check("final A in nM", num(2), 1000*A0*math.Exp(-k*T), 1e-7)
		// The crossing is interpolated on a 1 s grid: within 1 s of the
		// exact time, here in minutes.
		if got, w := num(3), math.Log(A0/L)/k/60; math.Abs(got-w) > 1.0/60 {
			t.Errorf("run %d crossing %.6g min, want %.6g", i, got, w)
		}
		// The trapezoidal area on a 1 s grid errs by about k²·h²/12 relative.
		check("area in nM·min", num(4), 1000*A0*(1-math.Exp(-k*T))/k/60, 1e-4)
		check("ratio, not converted", num(5), math.Exp(-k*T), 1e-7)
	}
	tr := f.TrajectoryRows(res)
	wantTr := []string{"index", "k (1/s)", "time (min)", "A (nM)", "B (nM)", "half (nM)", "ratio"}
	if !reflect.DeepEqual(tr[0], wantTr) {
		t.Fatalf("trajectory header %q, want %q", tr[0], wantTr)
	}
	// Row 61 of run 0 is t = 60 s = 1 min.
	if tr[61][2] != "1" {
		t.Errorf("time of row 61 = %s min, want 1", tr[61][2])
	}
	if f.Shown == nil || len(f.Shown.Notes) != 1 {
		t.Errorf("notes %v, want one naming ratio", f.Shown)
	}
	fr, err := f.FailureRows(res)
	if err != nil || !reflect.DeepEqual(fr[0], []string{"index", "k (1/s)", "error"}) {
		t.Errorf("failure header %q", fr[0])
	}

	plain, pres := runDecaySweep(t, network.Display{})
	pf := plain.Figures()
	if pf.Shown != nil {
		t.Fatal("no display units, but Shown is set")
	}
	got, err1 := pf.RunRows(pres)
	want2, err2 := RunRows(pres)
	if err1 != nil || err2 != nil || !reflect.DeepEqual(got, want2) {
		t.Errorf("without display units RunRows differ (%v, %v):\n%q\n%q", err1, err2, got[0], want2[0])
	}
	if got[0][2] != "endA" {
		t.Errorf("header without display units %q", got[0])
	}
	if tr := pf.TrajectoryRows(pres); tr[0][2] != "time" || tr[61][2] != "60" {
		t.Errorf("trajectory rows without display units: %q, %q", tr[0], tr[61])
	}
}

// Bands and readout summaries of a population follow the display units:
// the median of A at 60 s, shown at 1 min, is 1000 times its value in uM.
func TestPopulationTablesInDisplayUnits(t *testing.T) {
	for _, display := range []network.Display{{}, {Time: "min", Concentration: "nM"}} {
		p, err := Prepare(decayModel(display))
		if err != nil {
			t.Fatal(err)
		}
		job, err := p.Population([]Vary{{Knob: "k", Dist: explore.Uniform{Low: 0.009, High: 0.011}}}, 20, 1, explore.Random,
			[]ReadoutSpec{{Name: "endA", Kind: explore.Final, Species: "A"}}, []string{"A"})
		if err != nil {
			t.Fatal(err)
		}
		res, err := job.Run(context.Background(), 1, nil)
		if err != nil {
			t.Fatal(err)
		}
		f := job.Figures()
		b := f.BandRows(res.Bands, []string{"A"})
		r, err := f.ReadoutSummaryRows(res)
		if err != nil {
			t.Fatal(err)
		}
		if display.Time == "" {
			if !reflect.DeepEqual(b, BandRows(res.Bands, []string{"A"})) {
				t.Error("bands without display units differ from BandRows")
			}
			if r[1][0] != "endA" {
				t.Errorf("readout row %q", r[1])
			}
			continue
		}
		if want := []string{"species", "unit", "time (min)"}; !reflect.DeepEqual(b[0][:3], want) {
			t.Errorf("band header %q", b[0])
		}
		if b[61][1] != "nM" || b[61][2] != "1" {
			t.Errorf("band row at 1 min: %q", b[61])
		}
		raw := BandRows(res.Bands, []string{"A"})
		med, _ := strconv.ParseFloat(raw[61][4], 64)
		got, _ := strconv.ParseFloat(b[61][5], 64) // p50, after the unit column
		if math.Abs(got-1000*med) > 1e-9*got {
			t.Errorf("median at 1 min %v nM, want 1000 × %v", got, med)
		}
		if r[1][0] != "endA (nM)" {
			t.Errorf("readout row %q", r[1])
		}
	}
}
