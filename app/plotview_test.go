package main

import (
	"context"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/test"

	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/plotting"
)

// decayOutcome simulates A -> B at rate k·A; A(t) = exp(−t) is the closed
// form of first-order decay (common practice).
func decayOutcome(t *testing.T) *run.Outcome {
	t.Helper()
	m := &network.Model{
		Species:    []network.Species{{Name: "A", Initial: 1}, {Name: "B"}},
		Parameters: []network.Parameter{{Name: "k", Value: 1}},
		Reactions: []network.Reaction{{Name: "r", Equation: "A -> B",
			Rate: network.NewRate(network.MassAction, "k", network.Named("k"))}},
		Simulation: network.Simulation{TEnd: 4, Output: network.Output{Points: 401}},
	}
	o, err := run.Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	return o
}

func TestPlotViewReadoutAndZoom(t *testing.T) {
	test.NewTempApp(t)
	v := newPlotView()
	w := test.NewWindow(v)
	defer w.Close()
	w.Resize(fyne.NewSize(640, 420))
	o := decayOutcome(t)
	v.Set(o, run.View{Hidden: map[string]bool{"B": true}})
	v.Resize(fyne.NewSize(600, 400))
	if v.scale == 0 {
		t.Fatal("figure not drawn")
	}

	// Point the mouse at A(2) = exp(−2) on the drawn line.
	px, py, ok := v.frame.ToPixel(2, 0.1353352832366127)
	if !ok {
		t.Fatal("ToPixel failed")
	}
	s := v.scale
	v.MouseMoved(&desktop.MouseEvent{PointEvent: fyne.PointEvent{Position: fyne.NewPos(float32(px)/s, float32(py)/s)}})
	if !v.readout.Visible() {
		t.Fatal("no readout under the pointer")
	}
	if !strings.HasPrefix(v.readout.Text, "A ") || !strings.Contains(v.readout.Text, "t = 2 ") {
		t.Errorf("readout %q, want species A at t = 2", v.readout.Text)
	}
	if !strings.Contains(v.readout.Text, "0.1353") {
		t.Errorf("readout %q, want A = exp(−2) = 0.1353", v.readout.Text)
	}
	v.MouseOut()
	if v.readout.Visible() {
		t.Error("readout stays after the pointer left")
	}

	// Drag a rectangle from (t=1, 0.6) to (t=3, 0.1) to zoom.
	x0, y0, _ := v.frame.ToPixel(1, 0.6)
	x1, y1, _ := v.frame.ToPixel(3, 0.1)
	p0 := fyne.NewPos(float32(x0)/s, float32(y0)/s)
	p1 := fyne.NewPos(float32(x1)/s, float32(y1)/s)
	v.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: p1}, Dragged: fyne.NewDelta(p1.X-p0.X, p1.Y-p0.Y)})
	v.DragEnd()
	z := v.view.Zoom
	if z == nil {
		t.Fatal("no zoom after dragging a rectangle")
	}
	near := func(a, b float64) bool { return a-b < 0.02 && b-a < 0.02 }
	if !near(z.XMin, 1) || !near(z.XMax, 3) || !near(z.YMin, 0.1) || !near(z.YMax, 0.6) {
		t.Errorf("zoom = %+v, want about t 1–3, value 0.1–0.6", *z)
	}
}

// The readout gives each column its own unit: in the twice-daily example
// the assignment body_amount is an amount in mg beside concentrations in
// mg/L, and the marker takes the series' colour slot.
func TestPlotViewReadoutColumnUnit(t *testing.T) {
	test.NewTempApp(t)
	v := newPlotView()
	w := test.NewWindow(v)
	defer w.Close()
	w.Resize(fyne.NewSize(640, 420))
	o, err := run.Run(context.Background(), exampleModel(t, "twice-daily-oral-dose.json"), nil)
	if err != nil {
		t.Fatal(err)
	}
	hidden := map[string]bool{}
	j := len(o.Names) - 1
	for _, n := range o.Names[:j] {
		hidden[n] = true
	}
	if o.Names[j] != "body_amount" {
		t.Fatalf("last column %s, want body_amount", o.Names[j])
	}
	slots := map[string]int{"body_amount": 2}
	v.Set(o, run.View{Hidden: hidden, Slots: slots})
	v.Resize(fyne.NewSize(600, 400))
	i := len(o.T) / 2
	px, py, ok := v.frame.ToPixel(o.T[i], o.Y[i][j])
	if !ok {
		t.Fatal("ToPixel failed")
	}
	s := v.scale
	v.MouseMoved(&desktop.MouseEvent{PointEvent: fyne.PointEvent{Position: fyne.NewPos(float32(px)/s, float32(py)/s)}})
	if !strings.HasPrefix(v.readout.Text, "body_amount ") || !strings.HasSuffix(v.readout.Text, " mg") {
		t.Errorf("readout %q, want body_amount in mg", v.readout.Text)
	}
	if v.marker.StrokeColor != plotting.Colour(2) {
		t.Errorf("marker colour %v, want slot 2's %v", v.marker.StrokeColor, plotting.Colour(2))
	}
}
