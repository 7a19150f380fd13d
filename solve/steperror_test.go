package solve

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Describe names the component at fault in the caller's words, and Error
// by its index; the Reason never holds the index, so no message text needs
// rewriting. The rate of component 1 becomes NaN from t = 1 on (a square
// root of a negative number; IEEE 754 semantics, common practice).
func TestStepErrorDescribe(t *testing.T) {
	sys := funcSystem{n: 2, f: func(tt float64, y, dy []float64) {
		dy[0] = -y[0]
		dy[1] = math.Sqrt(1 - tt)
	}, j: func(float64, []float64, *mat.Dense) {}}
	_, err := Solve(context.Background(), sys, 0, 2, []float64{1, 0}, Settings{Method: Explicit})
	var se *StepError
	if !errors.As(err, &se) || se.Component != 1 {
		t.Fatalf("error %v, want a *StepError at component 1", err)
	}
	if strings.Contains(se.Reason, "component") {
		t.Errorf("Reason %q holds the component", se.Reason)
	}
	named := se.Describe(func(i int) string { return fmt.Sprintf("species %q", []string{"A", "B"}[i]) })
	if !strings.Contains(named, `species "B" became NaN`) || strings.Contains(named, "component") {
		t.Errorf("Describe gave %q, want species \"B\" named and no component index", named)
	}
	if !strings.Contains(se.Error(), "component 1 became NaN") {
		t.Errorf("Error gave %q, want component 1 named", se.Error())
	}
	if se.Describe(func(int) string { return "" }) != se.Error() {
		t.Error("an empty name does not fall back to the index")
	}
	whole := &StepError{T: 1, H: 0.1, Component: -1, Reason: "the step size fell"}
	if got := whole.Describe(func(int) string { t.Error("name called with no component"); return "x" }); !strings.HasSuffix(got, ": the step size fell") {
		t.Errorf("no component: %q", got)
	}
}
