package main

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"

	"kinetarium/network"
	pd "kinetarium/plotting/diagram"
)

// The Diagram view follows the tables and the tables follow it; dragging
// a node saves its place in the model as an edit that Undo takes back;
// search finds a node; the replay colours species after a run.
func TestDiagramView(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.ctrl.Deliver = onUI
	w.win.Resize(fyne.NewSize(1280, 800))
	var err error
	onUI(func() { err = w.openStart("") })
	if err != nil {
		t.Fatal(err)
	}
	waitFor(t, "the first run", func() bool { return w.current != nil && !w.ctrl.Running() })
	ui.Lock()
	defer ui.Unlock()
	w.showView(viewDiagram)
	p := w.diagram
	if p.d == nil || len(p.d.Nodes) == 0 {
		t.Fatal("no diagram after showing the Diagram view")
	}
	// Tables to diagram.
	w.ed.SelectRow("species", 2)
	m := w.doc.Model()
	if i := p.view.Selected(); i < 0 || p.d.Nodes[i].Name != m.Species[2].Name {
		t.Errorf("selecting species %q in the table selects node %d", m.Species[2].Name, i)
	}
	// Diagram to tables.
	ri := p.d.Find(pd.Reaction, m.Reactions[1].Name)
	p.view.OnSelect(ri)
	if tab, row := w.ed.SelectedRow(); tab != "Reactions" || row != 1 {
		t.Errorf("tapping reaction %q selects %s row %d", m.Reactions[1].Name, tab, row)
	}
	// Drag a node: saved in the layout, undone by Undo.
	si := p.d.Find(pd.Species, m.Species[0].Name)
	x0, y0 := p.d.Nodes[si].X, p.d.Nodes[si].Y
	p.view.dragging, p.view.dragNode, p.view.moved = true, si, true
	p.d.Nodes[si].X += 50
	p.view.DragEnd()
	if x, _, ok := w.doc.Model().Layout.Find(network.PlaceSpecies, m.Species[0].Name); !ok || x != round(x0+50) {
		t.Errorf("after the drag the layout holds x = %v (%v), want %v", x, ok, x0+50)
	}
	if d, ok := w.doc.CanUndo(); !ok || d == "" {
		t.Fatal("the move cannot be undone")
	}
	w.doc.Undo()
	if len(w.doc.Model().Layout.Places) != 0 {
		t.Errorf("Undo leaves the layout %+v", w.doc.Model().Layout)
	}
	if n := p.d.Nodes[p.d.Find(pd.Species, m.Species[0].Name)]; n.X != x0 || n.Y != y0 {
		t.Errorf("after Undo the node is at (%v, %v), was at (%v, %v)", n.X, n.Y, x0, y0)
	}
	// Search.
	if i := search(p.d, "ES"); i < 0 || p.d.Nodes[i].Name != "ES" {
		t.Errorf("search for ES finds %d", i)
	}
	if i := search(p.d, "no such thing"); i != -1 {
		t.Errorf("search for a missing name finds %d", i)
	}
	// The replay colours the species.
	if !p.replayC.Checked || p.replay == nil {
		t.Fatal("no replay after a run")
	}
	for _, n := range p.d.Nodes {
		if n.Kind == pd.Species && n.Fill == nil {
			t.Errorf("species %q is not coloured by the replay", n.Name)
		}
	}
	// Its colour scale names the concentrations' unit, in plain numbers.
	_, scale, _ := strings.Cut(p.tLabel.Text, "colour")
	if !strings.HasSuffix(scale, "(light) "+w.current.AmountUnit) || strings.Contains(scale, "e+") {
		t.Errorf("the replay's scale reads %q, want its ends in plain numbers and the unit %s", p.tLabel.Text, w.current.AmountUnit)
	}
	// The style is part of the model.
	p.style.SetSelected(styleSBGN)
	if w.doc.Model().Layout.Style != "sbgn" || p.view.opts.Style != pd.SBGN {
		t.Errorf("choosing SBGN gives style %q in the model, %v drawn", w.doc.Model().Layout.Style, p.view.opts.Style)
	}
}

func round(x float64) float64 { return float64(int64(x*100+0.5)) / 100 }
