package diagram

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"kinetarium/examples"
	"kinetarium/network"
	"kinetarium/plotting"
	pd "kinetarium/plotting/diagram"
)

func loadExample(t testing.TB, name string) *network.Model {
	b, err := examples.Open(name)
	if err != nil {
		t.Fatal(err)
	}
	m, err := network.Read(bytes.NewReader(b), name)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func laidOut(t testing.TB, m *network.Model) (*pd.Diagram, pd.Stats) {
	net, _ := network.Check(m)
	d := Build(net)
	st := Arrange(d)
	return d, st
}

// overlaps lists every pair of nodes, labels and regions of d that
// overlap: node boxes (a reaction's name included) with each other, labels
// (coefficients and region names) with each other and with node boxes,
// and regions with each other when none was placed by hand.
func overlaps(d *pd.Diagram) []string {
	var out []string
	name := func(i int) string { return fmt.Sprintf("%v %q", d.Nodes[i].Kind, d.Nodes[i].Name) }
	for i := range d.Nodes {
		for j := i + 1; j < len(d.Nodes); j++ {
			if d.Box(i).Overlaps(d.Box(j)) {
				out = append(out, fmt.Sprintf("nodes %s and %s", name(i), name(j)))
			}
		}
	}
	for a, la := range d.Labels {
		for b := a + 1; b < len(d.Labels); b++ {
			if la.Box.Overlaps(d.Labels[b].Box) {
				out = append(out, fmt.Sprintf("labels %q and %q", la.Text, d.Labels[b].Text))
			}
		}
		for i := range d.Nodes {
			if la.Box.Overlaps(d.Box(i)) {
				out = append(out, fmt.Sprintf("label %q and node %s", la.Text, name(i)))
			}
		}
	}
	for a, ra := range d.Regions {
		for b := a + 1; b < len(d.Regions); b++ {
			rb := d.Regions[b]
			if ra.Max.X > ra.Min.X && rb.Max.X > rb.Min.X && (pd.Rect{Min: ra.Min, Max: ra.Max}).Overlaps(pd.Rect{Min: rb.Min, Max: rb.Max}) {
				out = append(out, fmt.Sprintf("regions %q and %q", ra.Name, rb.Name))
			}
		}
	}
	// Every node lies inside its region.
	for i, n := range d.Nodes {
		if n.Region < 0 {
			continue
		}
		r := d.Regions[n.Region]
		b := d.Box(i)
		if !(pd.Rect{Min: r.Min, Max: r.Max}).Contains(b.Min) || !(pd.Rect{Min: r.Min, Max: r.Max}).Contains(b.Max) {
			out = append(out, fmt.Sprintf("node %s outside its region %q", name(i), r.Name))
		}
	}
	return out
}

// Every example is laid out with no two nodes, labels or regions
// overlapping, checked on the boxes of the drawing (common practice for
// readable network drawings: no glyph or text hides another).
func TestExamplesDoNotOverlap(t *testing.T) {
	for _, name := range examples.Names() {
		m := loadExample(t, name)
		d, st := laidOut(t, m)
		for _, o := range overlaps(d) {
			t.Errorf("%s (%s): %s overlap", name, st.Method, o)
		}
		t.Logf("%s: %s, %d nodes, feedback %.2f, %d crossings, %v", name, st.Method, len(d.Nodes), st.Feedback, st.Crossings, st.Elapsed)
		if dir := os.Getenv("DIAGRAM_OUT"); dir != "" {
			for _, style := range []pd.Style{pd.Plain, pd.SBGN} {
				p := pd.Plot(d, pd.Options{Style: style, Title: m.Title})
				b := d.Bounds()
				w, h := (b.Max.X-b.Min.X)+40, (b.Max.Y-b.Min.Y)+60
				if err := saveFigure(p, filepath.Join(dir, fmt.Sprintf("%s-%d.png", name, style)), w, h); err != nil {
					t.Fatal(err)
				}
			}
		}
	}
}

// The same model gives the same coordinates, every time, whichever
// method lays it out.
func TestLayoutDeterministic(t *testing.T) {
	for _, name := range examples.Names() {
		for _, method := range []pd.Method{pd.Layered, pd.Force} {
			var first []pd.Node
			for run := 0; run < 3; run++ {
				m := loadExample(t, name)
				net, _ := network.Check(m)
				d := Build(net)
				pd.Layout(d, pd.Settings{Method: method})
				if run == 0 {
					first = d.Nodes
					continue
				}
				for i := range first {
					if d.Nodes[i].X != first[i].X || d.Nodes[i].Y != first[i].Y {
						t.Errorf("%s, %s, run %d: node %q at (%v, %v), first at (%v, %v)", name, method, run, d.Nodes[i].Name, d.Nodes[i].X, d.Nodes[i].Y, first[i].X, first[i].Y)
						break
					}
				}
			}
		}
	}
}

// The force-directed layout keeps nodes apart too.
func TestForceLayoutDoesNotOverlap(t *testing.T) {
	for _, name := range examples.Names() {
		m := loadExample(t, name)
		net, _ := network.Check(m)
		d := Build(net)
		pd.Layout(d, pd.Settings{Method: pd.Force})
		for _, o := range overlaps(d) {
			t.Errorf("%s (force): %s overlap", name, o)
		}
	}
}

// Positions laid out, stored in the model's layout section, written to a
// file and read back give the same diagram, and a model so read keeps
// every node where it was.
func TestPositionsRoundTrip(t *testing.T) {
	for _, name := range examples.Names() {
		m := loadExample(t, name)
		d, _ := laidOut(t, m)
		Store(&m.Layout, d)
		m.Layout.Style = "sbgn"
		var b bytes.Buffer
		if err := m.Write(&b); err != nil {
			t.Fatal(err)
		}
		back, err := network.Read(&b, name)
		if err != nil {
			t.Fatal(err)
		}
		d2, st := laidOut(t, back)
		if st.Placed != 0 {
			t.Errorf("%s: %d nodes placed again after reading the layout back", name, st.Placed)
		}
		for i := range d.Nodes {
			if dx, dy := d2.Nodes[i].X-d.Nodes[i].X, d2.Nodes[i].Y-d.Nodes[i].Y; dx*dx+dy*dy > 2*0.005*0.005 {
				t.Errorf("%s: node %q read back at (%v, %v), stored at (%v, %v)", name, d.Nodes[i].Name, d2.Nodes[i].X, d2.Nodes[i].Y, d.Nodes[i].X, d.Nodes[i].Y)
			}
		}
		if pd.StyleNamed(back.Layout.Style) != pd.SBGN {
			t.Errorf("%s: style read back as %q", name, back.Layout.Style)
		}
	}
}

// A species added to a laid-out model goes near its neighbours; nothing
// that was placed moves.
func TestNewSpeciesPlacedNearNeighbours(t *testing.T) {
	m := loadExample(t, "protease-inhibitor.json")
	d, _ := laidOut(t, m)
	Store(&m.Layout, d)
	m.Species = append(m.Species, network.Species{Name: "Q"})
	m.Reactions = append(m.Reactions, network.Reaction{Name: "leak", Equation: "P -> Q", Rate: network.NewRate(network.MassAction, "k", 1)})
	d2, st := laidOut(t, m)
	if st.Placed != 2 { // Q and leak
		t.Errorf("placed %d nodes, want 2 (Q and leak)", st.Placed)
	}
	for i := range d.Nodes {
		j := d2.Find(d.Nodes[i].Kind, d.Nodes[i].Name)
		if math.Abs(d2.Nodes[j].X-d.Nodes[i].X) > 0.005 || math.Abs(d2.Nodes[j].Y-d.Nodes[i].Y) > 0.005 {
			t.Errorf("node %q moved", d.Nodes[i].Name)
		}
	}
	p := d2.Nodes[d2.Find(pd.Species, "P")]
	leak := d2.Nodes[d2.Find(pd.Reaction, "leak")]
	if dist := (leak.X-p.X)*(leak.X-p.X) + (leak.Y-p.Y)*(leak.Y-p.Y); dist > 150*150 {
		t.Errorf("leak placed %.0f pt from P, want it near", dist)
	}
	for _, o := range overlaps(d2) {
		t.Errorf("after adding Q: %s overlap", o)
	}
}

func saveFigure(p *plot.Plot, path string, w, h float64) error {
	return plotting.Save(p, path, vg.Points(w), vg.Points(h), 110, nil)
}
