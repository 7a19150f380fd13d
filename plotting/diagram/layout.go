package diagram

import (
	"math"
	"sort"
	"time"
)

// Method is a way of placing the nodes.
type Method int

// Layout methods.
const (
	// Auto chooses Layered for mostly linear networks (few edges must be
	// turned round to make the network flow one way, and the rows cross
	// at most one pair of edges for every two edges) and Force otherwise.
	Auto Method = iota
	// Layered puts the nodes in rows that follow the flow from reactants
	// to products, ordered to cross few edges.
	Layered
	// Force places the nodes so that their distances follow the graph's
	// (classical scaling, then stress majorization: the energy of springs
	// as long as the paths between nodes), then moves them apart until no
	// two overlap.
	Force
)

// String names the method: "automatic", "layered" or "force-directed".
func (m Method) String() string {
	switch m {
	case Layered:
		return "layered"
	case Force:
		return "force-directed"
	}
	return "automatic"
}

// Settings control Layout. The zero value chooses the method by the
// network's shape.
type Settings struct {
	Method Method
	// MaxFeedback is the largest fraction of edges a layered layout may
	// turn round (to break cycles) for Auto to choose it; zero means 0.3.
	MaxFeedback float64
}

// Stats describe a layout.
type Stats struct {
	Method    Method // the method used (Layered or Force; Auto when every node was pinned)
	Placed    int    // nodes placed (those not pinned)
	Feedback  float64
	Crossings int  // crossings between layers, for a layered layout
	Across    bool // the layers run left to right
	Elapsed   time.Duration
}

// Spacing of the layout, in points.
const (
	nodeGap   = 16.0 // between neighbours in a row
	dummyGap  = 6.0  // beside a bend of a long edge
	layerGap  = 24.0 // between rows
	regionGap = 14.0 // between regions
	regionTop = 14.0 // room for a region's name above its nodes
)

// Layout places every node that is not pinned, then places the labels
// and works out each region's extent. With no node pinned it lays the
// whole network out afresh; otherwise each new node goes near its placed
// neighbours, and pinned nodes stay where they are. The same diagram
// always gives the same positions.
func Layout(d *Diagram, s Settings) Stats {
	start := time.Now()
	st := Stats{Method: s.Method}
	pinned := 0
	for _, n := range d.Nodes {
		if n.Pinned {
			pinned++
		}
	}
	st.Placed = len(d.Nodes) - pinned
	d.Bends = make([][]Point, len(d.Edges))
	switch {
	case len(d.Nodes) == 0:
	case pinned == 0:
		lg := newLayered(d)
		st.Feedback = lg.feedback
		maxFB := s.MaxFeedback
		if maxFB == 0 {
			maxFB = 0.3
		}
		if s.Method != Force {
			st.Method = Layered
			st.Crossings = lg.run()
			// A tall, narrow picture (a long chain) may read better in
			// columns from left to right: keep whichever is nearer a
			// landscape page (3:2).
			if b := d.Bounds(); b.Max.Y-b.Min.Y > 2*(b.Max.X-b.Min.X) {
				down := saveNodes(d)
				bends := d.Bends
				tall := aspectMiss(b)
				d.Bends = make([][]Point, len(d.Edges))
				across := newLayered(d)
				across.across = true
				c := across.run()
				if aspectMiss(d.Bounds()) < tall {
					st.Crossings, st.Across = c, true
				} else {
					restoreNodes(d, down)
					d.Bends = bends
				}
			}
		}
		// Auto keeps the rows for a network that flows mostly one way and
		// crosses few edges (at most one crossing for every two edges).
		tangled := lg.feedback > maxFB || lg.layers < 3 || st.Crossings > len(d.Edges)/2
		if s.Method == Force || s.Method == Auto && tangled {
			st.Method, st.Crossings, st.Across = Force, 0, false
			d.Bends = make([][]Point, len(d.Edges))
			forceLayout(d)
		}
	case pinned < len(d.Nodes):
		st.Method = Auto
		placeNear(d)
	default:
		st.Method = Auto
	}
	d.placeRegions()
	d.placeLabels()
	st.Elapsed = time.Since(start)
	return st
}

// placeNear places each node that is not pinned near its placed
// neighbours (below them), in index order, then moves it down until it
// overlaps nothing placed.
func placeNear(d *Diagram) {
	n := len(d.Nodes)
	adj := d.adjacency()
	placed := make([]bool, n)
	for i, nd := range d.Nodes {
		placed[i] = nd.Pinned
	}
	var boxes []Rect
	for i := range d.Nodes {
		if placed[i] {
			boxes = append(boxes, d.Box(i))
		}
	}
	all := d.boundsOf(placed)
	// Nodes with placed neighbours first, repeatedly, then the rest.
	left := 0
	for _, p := range placed {
		if !p {
			left++
		}
	}
	for left > 0 {
		progress := false
		for i := range d.Nodes {
			if placed[i] {
				continue
			}
			sx, sy, k := 0.0, 0.0, 0
			for _, j := range adj[i] {
				if placed[j] {
					sx += d.Nodes[j].X
					sy += d.Nodes[j].Y
					k++
				}
			}
			if k == 0 {
				continue
			}
			d.Nodes[i].X, d.Nodes[i].Y = sx/float64(k), sy/float64(k)+speciesH+layerGap
			boxes = d.settle(i, boxes)
			placed[i], progress = true, true
			left--
		}
		if progress {
			continue
		}
		// A node with no placed neighbour: below everything.
		for i := range d.Nodes {
			if !placed[i] {
				d.Nodes[i].X, d.Nodes[i].Y = all.Min.X+d.Box(i).Max.X-d.Box(i).Min.X, all.Max.Y+layerGap+speciesH
				boxes = d.settle(i, boxes)
				placed[i] = true
				left--
				break
			}
		}
	}
}

// settle moves node i right and down in steps until its box, with a
// margin, overlaps none of boxes, and returns boxes with its box added.
func (d *Diagram) settle(i int, boxes []Rect) []Rect {
	x0, y0 := d.Nodes[i].X, d.Nodes[i].Y
	for step := 0; ; step++ {
		// Try a ring of positions at distance step around the wish.
		ring := ringOffsets(step)
		for _, o := range ring {
			d.Nodes[i].X, d.Nodes[i].Y = x0+o.X*(nodeGap+24), y0+o.Y*(speciesH+layerGap/2)
			b := d.Box(i).Grow(nodeGap / 4)
			free := true
			for _, o := range boxes {
				if b.Overlaps(o) {
					free = false
					break
				}
			}
			if free {
				return append(boxes, d.Box(i))
			}
		}
	}
}

// ringOffsets returns the grid offsets at Chebyshev distance k, nearest
// first, below before above.
func ringOffsets(k int) []Point {
	if k == 0 {
		return []Point{{}}
	}
	var out []Point
	for dy := -k; dy <= k; dy++ {
		for dx := -k; dx <= k; dx++ {
			if max(abs(dx), abs(dy)) == k {
				out = append(out, Point{float64(dx), float64(dy)})
			}
		}
	}
	sort.SliceStable(out, func(a, b int) bool {
		da, db := math.Hypot(out[a].X, out[a].Y), math.Hypot(out[b].X, out[b].Y)
		if da != db {
			return da < db
		}
		return out[a].Y > out[b].Y
	})
	return out
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// boundsOf returns the box of the nodes marked in which (or a unit box).
func (d *Diagram) boundsOf(which []bool) Rect {
	var b Rect
	first := true
	for i := range d.Nodes {
		if !which[i] {
			continue
		}
		if first {
			b, first = d.Box(i), false
		} else {
			b = b.union(d.Box(i))
		}
	}
	return b
}

// adjacency returns each node's neighbours, once each, in index order.
func (d *Diagram) adjacency() [][]int {
	adj := make([][]int, len(d.Nodes))
	seen := map[[2]int]bool{}
	for _, e := range d.Edges {
		a, b := e.From, e.To
		if a == b || seen[[2]int{a, b}] {
			continue
		}
		seen[[2]int{a, b}], seen[[2]int{b, a}] = true, true
		adj[a] = append(adj[a], b)
		adj[b] = append(adj[b], a)
	}
	for _, l := range adj {
		sort.Ints(l)
	}
	return adj
}

// placeRegions sets each region's extent: the boxes of its nodes with a
// margin, and room for its name at the top.
func (d *Diagram) placeRegions() {
	for r := range d.Regions {
		var b Rect
		found := false
		for i, n := range d.Nodes {
			if n.Region != r {
				continue
			}
			if !found {
				b, found = d.Box(i), true
			} else {
				b = b.union(d.Box(i))
			}
		}
		if !found {
			d.Regions[r].Min, d.Regions[r].Max = Point{}, Point{}
			continue
		}
		b = b.Grow(regionPad)
		b.Min.Y -= regionTop
		if w := textWidth(d.regionLabel(r), regionFont) + 2*regionPad; b.Max.X-b.Min.X < w {
			b.Max.X = b.Min.X + w
		}
		d.Regions[r].Min, d.Regions[r].Max = b.Min, b.Max
	}
}

// regionLabelBox returns where region r's name is drawn.
func (d *Diagram) regionLabelBox(r int) Rect {
	g := d.Regions[r]
	w := textWidth(d.regionLabel(r), regionFont)
	x, y := g.Min.X+regionPad/2+2, g.Min.Y+3
	return Rect{Point{x, y}, Point{x + w, y + regionFont*1.2}}
}

// placeLabels places the coefficient of every edge that has one beside
// the edge near its species, where it overlaps no node, region name or
// other label if there is such a place.
func (d *Diagram) placeLabels() {
	d.Labels = d.Labels[:0]
	var taken []Rect
	for i := range d.Nodes {
		taken = append(taken, d.Box(i))
	}
	for r, g := range d.Regions {
		if g.Max.X > g.Min.X {
			b := d.regionLabelBox(r)
			d.Labels = append(d.Labels, Label{Text: d.regionLabel(r), Box: b, Edge: -1})
			taken = append(taken, b)
		}
	}
	for ei, e := range d.Edges {
		if e.Coef == 0 || e.Coef == 1 {
			continue
		}
		text := formatCoef(e.Coef)
		w, h := textWidth(text, coefFont)+2, coefFont*1.15
		// The segment at the species' end.
		sp, other := e.From, e.To
		if d.Nodes[e.To].Kind == Species {
			sp, other = e.To, e.From
		}
		a := Point{d.Nodes[sp].X, d.Nodes[sp].Y}
		b := Point{d.Nodes[other].X, d.Nodes[other].Y}
		if bs := d.Bends[ei]; len(bs) > 0 {
			if sp == e.From {
				b = bs[0]
			} else {
				b = bs[len(bs)-1]
			}
		}
		a = clipToRect(b, a, d.shape(sp))
		dx, dy := b.X-a.X, b.Y-a.Y
		l := math.Hypot(dx, dy)
		if l == 0 {
			l, dx = 1, 1
		}
		ux, uy := dx/l, dy/l
		px, py := -uy, ux
		best, bestHits := Rect{}, -1
		for _, frac := range []float64{0.25, 0.45, 0.1, 0.65, 0.8} {
			for _, side := range []float64{1, -1} {
				for _, off := range []float64{7, 13} {
					cx := a.X + ux*l*frac + px*side*(off+w/2)
					cy := a.Y + uy*l*frac + py*side*(off+h/2)
					box := Rect{Point{cx - w/2, cy - h/2}, Point{cx + w/2, cy + h/2}}
					hits := 0
					for _, t := range taken {
						if box.Overlaps(t) {
							hits++
						}
					}
					if bestHits < 0 || hits < bestHits {
						best, bestHits = box, hits
					}
					if hits == 0 {
						goto found
					}
				}
			}
		}
	found:
		d.Labels = append(d.Labels, Label{Text: text, Box: best, Edge: ei})
		taken = append(taken, best)
	}
}

// clipToRect returns where the segment from outside point p to the
// centre c of r meets r's border (c itself when p is inside r).
func clipToRect(p, c Point, r Rect) Point {
	dx, dy := p.X-c.X, p.Y-c.Y
	hw, hh := (r.Max.X-r.Min.X)/2, (r.Max.Y-r.Min.Y)/2
	if dx == 0 && dy == 0 {
		return c
	}
	t := math.Inf(1)
	if dx != 0 {
		t = math.Min(t, hw/math.Abs(dx))
	}
	if dy != 0 {
		t = math.Min(t, hh/math.Abs(dy))
	}
	if t >= 1 {
		return c
	}
	return Point{c.X + dx*t, c.Y + dy*t}
}

// aspectMiss is how far r's shape is from 3:2 landscape, as |log|.
func aspectMiss(r Rect) float64 {
	w, h := math.Max(r.Max.X-r.Min.X, 1), math.Max(r.Max.Y-r.Min.Y, 1)
	return math.Abs(math.Log(w / h / 1.5))
}

func saveNodes(d *Diagram) []Point {
	out := make([]Point, len(d.Nodes))
	for i, n := range d.Nodes {
		out[i] = Point{n.X, n.Y}
	}
	return out
}

func restoreNodes(d *Diagram, p []Point) {
	for i := range d.Nodes {
		d.Nodes[i].X, d.Nodes[i].Y = p[i].X, p[i].Y
	}
}
