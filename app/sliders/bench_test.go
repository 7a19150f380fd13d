package sliders

import (
	"bytes"
	"context"
	"image"
	"testing"
	"time"

	"kinetarium/app/run"
	"kinetarium/examples"
	"kinetarium/network"
	"kinetarium/plotting"
)

func loadExample(tb testing.TB, name string) *network.Model {
	tb.Helper()
	b, err := examples.Open(name)
	if err != nil {
		tb.Fatal(err)
	}
	m, err := network.Read(bytes.NewReader(b), name)
	if err != nil {
		tb.Fatal(err)
	}
	return m
}

// BenchmarkSliderDrag50 is the work of one frame while a slider is dragged
// on the 50-species example: set the new value on the compiled model,
// solve, build the figure and draw it into a reused 800×500 image. The
// slider sweeps a rate constant over its default range, a hundredth of the
// range per frame. It reports frames per second (redraws/s) and the time of
// the solve and of the drawing per frame.
func BenchmarkSliderDrag50(b *testing.B) {
	m := loadExample(b, "signalling-cascade-50.json")
	s, err := NewSession(m)
	if err != nil {
		b.Fatal(err)
	}
	var knob Knob
	for _, k := range Candidates(m) {
		if k.Kind == Parameter && k.Name == "kcat3" {
			knob = k
		}
	}
	if knob.Name == "" {
		b.Fatal("the example has no parameter kcat3")
	}
	knobs := []Knob{knob}
	img := image.NewRGBA(image.Rect(0, 0, 800, 500))
	view := run.View{LogX: true}
	var solveTime, drawTime time.Duration
	i := 0
	b.ReportAllocs()
	for b.Loop() {
		t0 := time.Now()
		knobs[0].Value = knob.At(float64(i%101) / 100)
		i++
		if err := s.Set(knobs); err != nil {
			b.Fatal(err)
		}
		o, err := s.Run(context.Background())
		if err != nil {
			b.Fatal(err)
		}
		t1 := time.Now()
		p, err := run.Figure(o, view)
		if err != nil {
			b.Fatal(err)
		}
		plotting.RenderInto(p, img)
		t2 := time.Now()
		solveTime += t1.Sub(t0)
		drawTime += t2.Sub(t1)
	}
	n := float64(b.N)
	b.ReportMetric(n/(solveTime+drawTime).Seconds(), "redraws/s")
	b.ReportMetric(solveTime.Seconds()*1e3/n, "solve-ms/op")
	b.ReportMetric(drawTime.Seconds()*1e3/n, "draw-ms/op")
}

// BenchmarkSliderSolve50 is the set-value and solve part of a frame alone,
// without the drawing.
func BenchmarkSliderSolve50(b *testing.B) {
	m := loadExample(b, "signalling-cascade-50.json")
	s, err := NewSession(m)
	if err != nil {
		b.Fatal(err)
	}
	knob := Candidates(m)[0]
	knobs := []Knob{knob}
	i := 0
	b.ReportAllocs()
	for b.Loop() {
		knobs[0].Value = knob.At(float64(i%101) / 100)
		i++
		if err := s.Set(knobs); err != nil {
			b.Fatal(err)
		}
		if _, err := s.Run(context.Background()); err != nil {
			b.Fatal(err)
		}
	}
}
