package plotting

import (
	"image/color"
	"testing"
)

func TestEnsemblePlot(t *testing.T) {
	ts := []float64{0, 1, 2, 3}
	e := Ensemble{Name: "X", Times: ts, Mean: []float64{0, 2, 3, 3.5}, Lo5: []float64{0, 0, 1, 1}, Hi95: []float64{0, 4, 6, 7},
		Lo25: []float64{0, 1, 2, 2}, Hi75: []float64{0, 3, 4, 5}, ODE: []float64{0, 2.1, 3.1, 3.4},
		Runs: [][]float64{{0, 2, 2, 4}, {0, 1, 4, 3}}}
	p, err := EnsemblePlot(e, Options{Title: "ensemble", XLabel: "time", YLabel: "molecules"})
	if err != nil {
		t.Fatal(err)
	}
	img := Render(p, 400, 300)
	colours := map[color.RGBA]bool{}
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 3 {
		for x := b.Min.X; x < b.Max.X; x += 3 {
			r, g, bl, a := img.At(x, y).RGBA()
			colours[color.RGBA{uint8(r >> 8), uint8(g >> 8), uint8(bl >> 8), uint8(a >> 8)}] = true
		}
	}
	if len(colours) < 5 {
		t.Errorf("the figure has %d colours; expected bands, lines and text", len(colours))
	}
	e.ODE = []float64{1}
	if _, err := EnsemblePlot(e, Options{}); err == nil {
		t.Error("ODE of the wrong length: no error")
	}
	if sx, sy := steps([]float64{0, 1, 2}, []float64{5, 6, 7}); len(sx) != 5 || sy[1] != 5 || sx[1] != 1 || sy[2] != 6 {
		t.Errorf("steps %v %v", sx, sy)
	}
}
