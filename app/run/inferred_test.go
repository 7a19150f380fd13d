package run

import (
	"context"
	"strings"
	"testing"

	"kinetarium/network"
)

// An assignment without a declared unit converts in the unit network
// infers from its expression: sum = A + B comes out in uM, so shown in nM
// it is 1000 × its computed value (1 uM = 1000 nM, common practice), its
// header names nM, and rate = k·A (uM/s inferred) is left as computed
// with its inferred unit named. Without display units the columns and
// the header are exactly those of the run as computed, no unit named
// where none is declared.
func TestInferredAssignmentUnitsConvert(t *testing.T) {
	m := unitDecayModel()
	m.Assignments = []network.Assignment{
		{Name: "sum", Expression: "A + B"},
		{Name: "rate", Expression: "k*A"},
		{Name: "declared", Expression: "A", Unit: "uM"},
	}
	o, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	m.Simulation.Display = network.Display{}
	raw, err := Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := strings.Join(Header(raw), ","), "time (s),A (uM),B (uM),sum,rate,declared (uM)"; got != want {
		t.Errorf("header without display units %q, want %q (as before units were inferred)", got, want)
	}
	if got, want := strings.Join(Header(o), ","), "time (h),A (nM),B (nM),sum (nM),rate (uM/s),declared (nM)"; got != want {
		t.Errorf("header in h and nM %q, want %q", got, want)
	}
	for i := range o.T {
		if o.Y[i][2] != 1000*raw.Y[i][2] || o.Y[i][4] != 1000*raw.Y[i][4] {
			t.Fatalf("sum, declared at %v h = %v, %v nM; want exactly 1000 × %v, %v uM", o.T[i], o.Y[i][2], o.Y[i][4], raw.Y[i][2], raw.Y[i][4])
		}
		if o.Y[i][3] != raw.Y[i][3] {
			t.Fatalf("rate at %v h = %v, want it as computed, %v uM/s", o.T[i], o.Y[i][3], raw.Y[i][3])
		}
	}
	if len(o.Notes) != 1 || !strings.Contains(o.Notes[0], "rate is in uM/s") {
		t.Errorf("notes %q, want one saying rate is in uM/s and left as it is", o.Notes)
	}
}
