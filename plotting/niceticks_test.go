package plotting

import (
	"reflect"
	"testing"
)

// Labelled ticks fall on round numbers 1, 2 or 5 × 10^k apart (Heckbert,
// "Nice numbers for graph labels", Graphics Gems, 1990).
func TestNiceTicks(t *testing.T) {
	for _, c := range []struct {
		min, max float64
		want     []string
	}{
		{0, 50, []string{"0", "10", "20", "30", "40", "50"}},
		{0.2, 49.7, []string{"10", "20", "30", "40"}},
		{0, 1, []string{"0.0", "0.2", "0.4", "0.6", "0.8", "1.0"}},
		{-3, 3, []string{"-2", "0", "2"}},
		{1000, 1600, []string{"1000", "1200", "1400", "1600"}},
		{0, 0.003, []string{"0.000", "0.001", "0.002", "0.003"}},
	} {
		var got []string
		for _, tk := range (niceTicks{}).Ticks(c.min, c.max) {
			if tk.Label != "" {
				got = append(got, tk.Label)
			}
		}
		if !reflect.DeepEqual(got, c.want) {
			t.Errorf("ticks on [%g, %g] = %q, want %q", c.min, c.max, got, c.want)
		}
	}
}
