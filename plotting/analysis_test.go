package plotting

import (
	"math"
	"testing"
)

// The bifurcation diagram draws the stable part solid and the unstable
// part dashed: along the dashed part's row the line's colour comes and
// goes, along the solid part's it does not. A special point is drawn
// black. Mismatched inputs are refused with a message.
func TestBifurcationPlot(t *testing.T) {
	var b Branch
	b.Names = []string{"x"}
	b.Values = [][]float64{nil}
	for k := 0; k <= 100; k++ {
		p := float64(k) / 100
		b.P = append(b.P, p)
		b.Values[0] = append(b.Values[0], 0.5) // a horizontal line
		b.Stable = append(b.Stable, p < 0.5)
	}
	b.Marks = []Mark{{Kind: "hopf", P: 0.5, Values: []float64{0.5}}}
	p, err := BifurcationPlot(b, Options{Title: "t", XLabel: "p", YLabel: "x"})
	if err != nil {
		t.Fatal(err)
	}
	img := Render(p, 800, 500)
	line := Colour(0)
	lr, lg, lb, _ := line.RGBA()
	isLine := func(x, y int) bool {
		r, g, bb, _ := img.At(x, y).RGBA()
		d := math.Abs(float64(r)-float64(lr)) + math.Abs(float64(g)-float64(lg)) + math.Abs(float64(bb)-float64(lb))
		return d < 3*0x1800
	}
	// Find the line's row.
	row := -1
	for y := 0; y < 500 && row < 0; y++ {
		n := 0
		for x := 0; x < 800; x++ {
			if isLine(x, y) {
				n++
			}
		}
		if n > 100 {
			row = y
		}
	}
	if row < 0 {
		t.Fatal("no line drawn")
	}
	// Count runs of line pixels in the left and right thirds of the row.
	bounds := img.Bounds()
	runs := func(x0, x1 int) int {
		k, in := 0, false
		for x := x0; x < x1; x++ {
			on := isLine(x, row) || isLine(x, row-1) || isLine(x, row+1)
			if on && !in {
				k++
			}
			in = on
		}
		return k
	}
	w := bounds.Dx()
	left, right := runs(w/6, w/3), runs(w/2+w/12, 2*w/3)
	if left != 1 || right < 4 {
		t.Errorf("solid part has %d runs (want 1), dashed part %d (want several)", left, right)
	}
	if _, err := BifurcationPlot(Branch{P: []float64{1}, Stable: nil}, Options{}); err == nil {
		t.Error("mismatched stability flags accepted")
	}
	if _, err := IndexBars([]string{"a"}, nil, nil, Options{}); err == nil {
		t.Error("missing indices accepted")
	}
	if _, err := DoseResponsePlot([]float64{1, 2}, []float64{1}, nil, "", Options{}); err == nil {
		t.Error("mismatched doses accepted")
	}
}
