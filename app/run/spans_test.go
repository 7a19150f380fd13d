package run

import "testing"

func TestSpansDecades(t *testing.T) {
	o := &Outcome{Y: [][]float64{{0, 50}, {0.01, 49}, {-1e-30, 1}}}
	if !SpansDecades(o, 3) { // 0.01 … 50 is 3.7 decades
		t.Error("0.01 … 50 should span more than 3 decades")
	}
	if SpansDecades(o, 4) {
		t.Error("0.01 … 50 should not span more than 4 decades")
	}
	if SpansDecades(&Outcome{Y: [][]float64{{0, 0}}}, 1) {
		t.Error("all-zero values span nothing")
	}
}
