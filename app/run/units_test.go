package run

import (
	"context"
	"math"
	"strings"
	"testing"

	"kinetarium/network"
)

// unitDecayModel is A -> B at rate k·A in uM and seconds, k = 2e-4 1/s,
// A(0) = 5 uM, a dose of 2 uM of A at t = 3600 s, and three assignments:
// total = A + B in uM (a concentration), flux = k·A in uM/s (not one) and
// frac = A/(A + B) without a unit.
func unitDecayModel() *network.Model {
	return &network.Model{
		Title:      "decay in uM and s",
		Units:      network.Units{Time: "s", Amount: "uM"},
		Species:    []network.Species{{Name: "A", Initial: 5}, {Name: "B"}},
		Parameters: []network.Parameter{{Name: "k", Value: 2e-4, Unit: "1/s"}},
		Assignments: []network.Assignment{
			{Name: "total", Expression: "A + B", Unit: "uM"},
			{Name: "flux", Expression: "k*A", Unit: "uM/s"},
			{Name: "frac", Expression: "A/(A + B)"},
		},
		Reactions: []network.Reaction{{Name: "r", Equation: "A -> B",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Events: []network.Event{{Name: "dose", At: network.Number(3600), Add: []network.Change{{Target: "A", Value: "2"}}}},
		Simulation: network.Simulation{TEnd: 7200, Output: network.Output{Points: 41}, RTol: 1e-10, ATol: 1e-14,
			Display: network.Display{Time: "h", Concentration: "nM"}},
	}
}

// A model in uM and s shown in nM and h: times are divided by 3600 and
// concentrations multiplied by 1000 (the SI prefixes; 1 h = 3600 s,
// common practice), checked against the closed form of first-order decay
// with a dose, A(t) = A0·exp(−k t) before it and (A(td⁻) + D)·exp(−k (t −
// td)) after (common practice), through Run: output times, species,
// assignments, events, jumps, the end time, the CSV header and the
// figure's axis labels.
func TestDisplayUnitsThroughRun(t *testing.T) {
	m := unitDecayModel()
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	m.Simulation.Display = network.Display{}
	raw, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	const k, td = 2e-4, 3600.0
	closed := func(ts float64) float64 { // A in uM at ts seconds
		if ts < td {
			return 5 * math.Exp(-k*ts)
		}
		return (5*math.Exp(-k*td) + 2) * math.Exp(-k*(ts-td))
	}
	if o.TimeUnit != "h" || o.AmountUnit != "nM" || o.TEnd != 2 {
		t.Fatalf("shown in %q and %q up to %v, want h and nM up to 2", o.TimeUnit, o.AmountUnit, o.TEnd)
	}
	if len(o.T) != len(raw.T) || len(o.T) != 41 {
		t.Fatalf("%d times shown, %d computed, want 41", len(o.T), len(raw.T))
	}
	for i, th := range o.T {
		if th != raw.T[i]/3600 {
			t.Fatalf("time %d shown as %v h, want %v s / 3600 = %v", i, th, raw.T[i], raw.T[i]/3600)
		}
		ts := th * 3600
		a, b := closed(ts), 5-closed(ts)
		if ts >= td {
			b += 2
		}
		// Bound: the solver's error at rtol 1e-10 is far below 1e-4 nM
		// (2e-8 of A); a wrong factor is off by orders of magnitude.
		for j, want := range []float64{1000 * a, 1000 * b, 1000 * (a + b)} {
			if d := math.Abs(o.Y[i][j] - want); d > 1e-4 {
				t.Fatalf("%s(%v h) = %v nM, want %v nM", o.Names[j], th, o.Y[i][j], want)
			}
			if o.Y[i][j] != raw.Y[i][j]*1000 {
				t.Fatalf("%s(%v h) = %v nM, want exactly 1000 × %v uM", o.Names[j], th, o.Y[i][j], raw.Y[i][j])
			}
		}
		// flux (uM/s) and frac (no unit) are shown as computed.
		if o.Y[i][3] != raw.Y[i][3] || o.Y[i][4] != raw.Y[i][4] {
			t.Fatalf("flux and frac at %v h = %v, %v; want them as computed, %v, %v", th, o.Y[i][3], o.Y[i][4], raw.Y[i][3], raw.Y[i][4])
		}
	}
	if len(o.Events) != 1 || o.Events[0].T != 1 {
		t.Fatalf("events %+v, want the dose at 1 h", o.Events)
	}
	if len(o.Jumps) != 1 || o.Jumps[0].T != 1 {
		t.Fatalf("jumps %+v, want one at 1 h", o.Jumps)
	}
	before := 1000 * 5 * math.Exp(-k*td)
	if j := o.Jumps[0]; math.Abs(j.Before[0]-before) > 1e-4 || math.Abs(j.After[0]-(before+2000)) > 1e-4 || j.After[2] != raw.Jumps[0].After[2]*1000 {
		t.Errorf("jump of A from %v to %v nM, total after %v; want %v to %v nM, total 1000 × %v", j.Before[0], j.After[0], j.After[2], before, before+2000, raw.Jumps[0].After[2])
	}
	// The computed outcome is untouched by the conversion of the other.
	if raw.TimeUnit != "s" || raw.AmountUnit != "uM" || raw.T[len(raw.T)-1] != 7200 {
		t.Errorf("the run without display units is in %q, %q up to %v", raw.TimeUnit, raw.AmountUnit, raw.T[len(raw.T)-1])
	}
	if len(o.Notes) != 2 || !strings.Contains(o.Notes[0], "flux is in uM/s") || !strings.Contains(o.Notes[1], "frac is a pure number") {
		// frac declares no unit; network infers a pure number from its
		// expression, so the note says that rather than "no unit".
		t.Errorf("notes %q, want one for flux and one for frac", o.Notes)
	}
	if len(raw.Notes) != 0 {
		t.Errorf("notes without display units: %q", raw.Notes)
	}
	head := strings.Join(Header(o), ",")
	if want := "time (h),A (nM),B (nM),total (nM),flux (uM/s),frac"; head != want {
		t.Errorf("CSV header %q, want %q", head, want)
	}
	if head, want := strings.Join(Header(raw), ","), "time (s),A (uM),B (uM),total (uM),flux (uM/s),frac"; head != want {
		t.Errorf("CSV header without display units %q, want %q", head, want)
	}
	p, err := Figure(o, View{})
	if err != nil {
		t.Fatal(err)
	}
	if p.X.Label.Text != "time (h)" || p.Y.Label.Text != "concentration (nM)" {
		t.Errorf("axis labels %q and %q, want time (h) and concentration (nM)", p.X.Label.Text, p.Y.Label.Text)
	}
	if p.X.Max > 2.0001 {
		t.Errorf("time axis ends at %v, want the end time 2 h", p.X.Max)
	}
}

// Conversions that cannot be made are errors that name the unit, and leave
// the outcome as it was.
func TestConvertRefuses(t *testing.T) {
	o := &Outcome{Names: []string{"A"}, Species: 1, TimeUnit: "s", AmountUnit: "uM", T: []float64{0, 1}, Y: [][]float64{{1}, {2}}}
	for _, c := range []struct {
		d    network.Display
		want string
	}{
		{network.Display{Time: "nM"}, "cannot show times in nM: it is concentration, not a unit of time"},
		{network.Display{Concentration: "mg/L"}, "cannot show concentrations in mg/L: cannot convert"},
		{network.Display{Concentration: "h"}, "cannot show concentrations in h: it is time, not a concentration"},
		{network.Display{Time: "hr"}, `cannot show times in "hr": column 1: unknown unit "hr"`},
	} {
		got, err := o.Convert(c.d)
		if err == nil || !strings.HasPrefix(err.Error(), c.want) || got != o {
			t.Errorf("Convert(%+v) = %p, %v; want o itself and an error starting %q", c.d, got, err, c.want)
		}
	}
	o.TimeUnit = ""
	if _, err := o.Convert(network.Display{Time: "h"}); err == nil || !strings.Contains(err.Error(), "the model's unit \"\" is not a unit of time") {
		t.Errorf("Convert without the model's time unit: %v", err)
	}
	if got, err := o.Convert(network.Display{}); err != nil || got != o {
		t.Errorf("Convert to no display units = %p, %v; want o itself", got, err)
	}
}

// A previous run shown in other units is drawn in the present run's: a run
// in uM beneath one in nM is scaled by 1000 (1 uM = 1000 nM, common
// practice), and one that cannot be converted is left out.
func TestPreviousRunFollowsDisplayUnits(t *testing.T) {
	m := unitDecayModel()
	now, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	m.Simulation.Display = network.Display{}
	before, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	prev := sameUnits(before, now)
	if prev == nil || prev.AmountUnit != "nM" || prev.Y[0][0] != 5000 || prev.T[len(prev.T)-1] != 2 {
		t.Fatalf("previous run %+v, want it in nM and h", prev)
	}
	before.AmountUnit = "mg/L"
	if sameUnits(before, now) != nil {
		t.Error("a previous run in mg/L is drawn beneath one in nM")
	}
	if sameUnits(now, now) != now {
		t.Error("a previous run in the same units is converted")
	}
}

// BenchmarkConvert converts 200 output times of 50 columns to other units,
// the cost each run pays when display units are chosen.
func BenchmarkConvert(b *testing.B) {
	o := &Outcome{TimeUnit: "s", AmountUnit: "uM", Species: 50, T: make([]float64, 200), Y: make([][]float64, 200)}
	for j := 0; j < 50; j++ {
		o.Names = append(o.Names, "S")
	}
	for i := range o.Y {
		o.T[i], o.Y[i] = float64(i), make([]float64, 50)
	}
	d := network.Display{Time: "h", Concentration: "nM"}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := o.Convert(d); err != nil {
			b.Fatal(err)
		}
	}
}

// Amounts are concentration × volume in the compartments' unit: A in uM
// in a 2 mL well is A·2 nmol (1 uM·mL = 1 nmol, SI prefixes, common
// practice), and the header says nmol; without a unit of volume the
// header gives no unit rather than the concentration's.
func TestAmountsNameTheirUnit(t *testing.T) {
	m := unitDecayModel()
	m.Simulation.Display = network.Display{}
	m.Compartments = []network.Compartment{{Name: "well", Volume: 2, Unit: "mL"}}
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	sys, err := network.Compile(m)
	if err != nil {
		t.Fatal(err)
	}
	a := o.Amounts(sys)
	if h := strings.Join(Header(a), ","); h != "time (s),A (nmol),B (nmol),total (uM),flux (uM/s),frac" {
		t.Errorf("header %q", h)
	}
	if got, want := a.Y[3][0], 2*o.Y[3][0]; got != want {
		t.Errorf("amount of A %v, want 2 × %v", got, o.Y[3][0])
	}
	m.Compartments[0].Unit = ""
	sys, _ = network.Compile(m)
	if h := Header(o.Amounts(sys)); h[1] != "A" {
		t.Errorf("without a volume unit the amount column is %q, want A", h[1])
	}
}
