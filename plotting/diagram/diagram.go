// Package diagram lays out and draws the diagram of a reaction network:
// species as boxes, each reaction as a small node joined to its reactants,
// products and modifiers, compartments as rounded regions around their
// species. It knows nothing of the model file or the solver: a Diagram is
// built from plain nodes and edges (app/diagram builds one from a checked
// network), Layout places it deterministically, and Plot draws it through
// gonum/plot's canvases, so the same picture shows on screen and exports
// to SVG, PDF and PNG with plotting.Save.
//
// Coordinates are in points (1/72 inch), x to the right and y downwards.
package diagram

import (
	"image/color"
	"math"
	"sync"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
)

// Kind is what a node stands for.
type Kind int

// Kinds of nodes.
const (
	Species  Kind = iota // a species: a box with its name
	Reaction             // a reaction: a small node with its name beside it
	Source               // the empty set a reaction makes something from
	Sink                 // the empty set a reaction turns something into
)

// Mark says whether a node's item has problems.
type Mark int

// Marks of nodes.
const (
	NoMark Mark = iota
	Warning
	Error
)

// Node is one node of a diagram.
type Node struct {
	Kind Kind
	// Name is the species' or reaction's name; for a Source or Sink, its
	// reaction's name.
	Name string
	// Region is the index in Diagram.Regions of the compartment the node
	// belongs to, or -1.
	Region int
	// Fixed marks a species held constant; Reversible a reversible
	// reaction.
	Fixed, Reversible bool
	// Present marks a species with material at the start; a layered
	// layout lets the flow run down from such species.
	Present bool
	// Mark colours the node's outline for its item's problems.
	Mark Mark
	// Fill, when not nil, fills a species (a replay frame's colour).
	Fill color.Color
	// X and Y are the centre of a species or empty set and the centre of
	// a reaction's node (its name is to its right).
	X, Y float64
	// Pinned says that X and Y are given and Layout must keep them.
	Pinned bool
	// Info is the text shown when the pointer rests on the node (a
	// reaction's rate formula, say); it is not drawn.
	Info string
}

// Role is what an edge says.
type Role int

// Roles of edges. Consumes runs from a species to a reaction, Produces
// from a reaction to a species (or from a Source to its reaction, and from
// a reaction to its Sink), and the modifier roles from a species to a
// reaction.
const (
	Consumes Role = iota
	Produces
	Activates
	Inhibits
	Modulates
	Catalyses // an enzyme or a catalyst written on both sides
)

// Modifier reports whether r is one of the modifier roles.
func (r Role) Modifier() bool { return r >= Activates }

// Edge joins two nodes.
type Edge struct {
	From, To int // indices in Diagram.Nodes
	Role     Role
	// Coef is the stoichiometric coefficient; 0 and 1 are not written.
	Coef float64
	// Width, when above zero, is the line width in diagram points (a
	// replay frame's flux); zero means the style's width.
	Width float64
	// Backward says that the reaction runs backwards at the moment a
	// replay frame shows (a reversible reaction's net rate below zero).
	Backward bool
}

// Region is a compartment: a labelled rounded region around its nodes.
type Region struct {
	Name  string
	Label string // drawn at its top left; "" means Name
	// Min and Max are the corners of the region, set by Layout.
	Min, Max Point
}

// Point is a position in the diagram.
type Point struct{ X, Y float64 }

// Rect is an axis-aligned rectangle.
type Rect struct{ Min, Max Point }

// Overlaps reports whether r and o share interior points.
func (r Rect) Overlaps(o Rect) bool {
	return r.Min.X < o.Max.X && o.Min.X < r.Max.X && r.Min.Y < o.Max.Y && o.Min.Y < r.Max.Y
}

// Contains reports whether p is inside r (edges included).
func (r Rect) Contains(p Point) bool {
	return p.X >= r.Min.X && p.X <= r.Max.X && p.Y >= r.Min.Y && p.Y <= r.Max.Y
}

// Grow returns r with d added on every side.
func (r Rect) Grow(d float64) Rect {
	return Rect{Point{r.Min.X - d, r.Min.Y - d}, Point{r.Max.X + d, r.Max.Y + d}}
}

// union returns the smallest rectangle holding r and o.
func (r Rect) union(o Rect) Rect {
	return Rect{Point{math.Min(r.Min.X, o.Min.X), math.Min(r.Min.Y, o.Min.Y)},
		Point{math.Max(r.Max.X, o.Max.X), math.Max(r.Max.Y, o.Max.Y)}}
}

// Label is a piece of text placed by Layout: a stoichiometric
// coefficient beside its edge, or a region's name.
type Label struct {
	Text string
	Box  Rect
	Edge int // the edge it belongs to, or -1
}

// Diagram is a network to lay out and draw.
type Diagram struct {
	Nodes   []Node
	Edges   []Edge
	Regions []Region
	// Labels are placed by Layout.
	Labels []Label
	// Bends holds, for each edge, the points it passes through between
	// its ends (set by a layered layout for edges that span several
	// layers; nil for a straight edge).
	Bends [][]Point
}

// Sizes of the drawing, in points.
const (
	speciesFont  = 9.0
	reactionFont = 7.5
	coefFont     = 7.5
	regionFont   = 9.0
	speciesH     = 20.0
	speciesPadX  = 7.0
	speciesMinW  = 30.0
	reactionSide = 8.0
	labelGap     = 3.0
	emptyR       = 6.0
	regionPad    = 12.0
)

var (
	facesOnce sync.Once
	faces     map[float64]*font.Face
)

// face returns the diagram's font at size pt.
func face(pt float64) *font.Face {
	facesOnce.Do(func() { faces = map[float64]*font.Face{} })
	f, ok := faces[pt]
	if !ok {
		fnt := plot.DefaultFont
		fnt.Variant = "Sans"
		fnt.Size = vg.Points(pt)
		ff := plot.DefaultTextHandler.Cache().Lookup(fnt, vg.Points(pt))
		f = &ff
		faces[pt] = f
	}
	return f
}

var (
	faceMu sync.Mutex
	widths = map[widthKey]float64{}
)

type widthKey struct {
	s  string
	pt float64
}

// textWidth returns the width of s at size pt, in points.
func textWidth(s string, pt float64) float64 {
	faceMu.Lock()
	defer faceMu.Unlock()
	k := widthKey{s, pt}
	if w, ok := widths[k]; ok {
		return w
	}
	w := face(pt).Width(s).Points()
	if len(widths) > 1<<16 {
		clear(widths)
	}
	widths[k] = w
	return w
}

// Box returns the rectangle node i covers, its label included.
func (d *Diagram) Box(i int) Rect {
	n := &d.Nodes[i]
	switch n.Kind {
	case Species:
		w := math.Max(speciesMinW, textWidth(n.Name, speciesFont)+2*speciesPadX)
		return Rect{Point{n.X - w/2, n.Y - speciesH/2}, Point{n.X + w/2, n.Y + speciesH/2}}
	case Reaction:
		h := math.Max(reactionSide, reactionFont*1.25)
		w := reactionSide/2 + labelGap + textWidth(n.Name, reactionFont)
		return Rect{Point{n.X - reactionSide/2, n.Y - h/2}, Point{n.X + w, n.Y + h/2}}
	}
	return Rect{Point{n.X - emptyR, n.Y - emptyR}, Point{n.X + emptyR, n.Y + emptyR}}
}

// shape returns the rectangle of node i's glyph, without its label: the
// part edges end at.
func (d *Diagram) shape(i int) Rect {
	n := &d.Nodes[i]
	if n.Kind == Reaction {
		h := reactionSide / 2
		return Rect{Point{n.X - h, n.Y - h}, Point{n.X + h, n.Y + h}}
	}
	return d.Box(i)
}

// Bounds returns the rectangle holding every node, region and label.
func (d *Diagram) Bounds() Rect {
	if len(d.Nodes) == 0 {
		return Rect{Max: Point{1, 1}}
	}
	b := d.Box(0)
	for i := range d.Nodes {
		b = b.union(d.Box(i))
	}
	for _, r := range d.Regions {
		if r.Max.X > r.Min.X {
			b = b.union(Rect{r.Min, r.Max})
		}
	}
	for _, l := range d.Labels {
		b = b.union(l.Box)
	}
	return b
}

// NodeAt returns the topmost node whose box holds p, or -1.
func (d *Diagram) NodeAt(p Point) int {
	for i := len(d.Nodes) - 1; i >= 0; i-- {
		if d.Box(i).Grow(1).Contains(p) {
			return i
		}
	}
	return -1
}

// Find returns the index of the node of kind k named name, or -1.
func (d *Diagram) Find(k Kind, name string) int {
	for i, n := range d.Nodes {
		if n.Kind == k && n.Name == name {
			return i
		}
	}
	return -1
}

// regionLabel returns the text drawn for region r.
func (d *Diagram) regionLabel(r int) string {
	if l := d.Regions[r].Label; l != "" {
		return l
	}
	return d.Regions[r].Name
}
