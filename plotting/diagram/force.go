package diagram

import (
	"math"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/graph"
	"gonum.org/v1/gonum/graph/iterator"
	"gonum.org/v1/gonum/graph/layout"
	"gonum.org/v1/gonum/graph/simple"
	"gonum.org/v1/gonum/spatial/r2"
)

// forceEdge is the length edges are scaled to, in points.
const forceEdge = 64.0

// forceLayout places the nodes by force direction: each connected part
// of each region on its own with gonum's EadesR2 (started from a fixed
// random seed over nodes in index order, so the result is always the
// same), scaled to a readable edge length, moved apart until no two boxes
// overlap; parts are packed in rows inside their region and regions are
// put side by side.
func forceLayout(d *Diagram) {
	adj := d.adjacency()
	n := len(d.Nodes)
	// Parts: connected components within a region, in index order.
	part := make([]int, n)
	for i := range part {
		part[i] = -1
	}
	var parts [][]int
	for i := 0; i < n; i++ {
		if part[i] >= 0 {
			continue
		}
		k := len(parts)
		stack := []int{i}
		part[i] = k
		var members []int
		for len(stack) > 0 {
			v := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			members = append(members, v)
			for _, u := range adj[v] {
				if part[u] < 0 && d.Nodes[u].Region == d.Nodes[i].Region {
					part[u] = k
					stack = append(stack, u)
				}
			}
		}
		sort.Ints(members)
		parts = append(parts, members)
	}
	boxes := make([]Rect, len(parts))
	for k, members := range parts {
		eades(d, members, adj)
		separate(d, members)
		boxes[k] = d.boundsOfList(members)
	}
	// Pack parts into their regions, largest first, in rows about as wide
	// as the square root of their total area.
	byRegion := map[int][]int{}
	var regions []int
	for k, members := range parts {
		r := d.Nodes[members[0]].Region
		if _, ok := byRegion[r]; !ok {
			regions = append(regions, r)
		}
		byRegion[r] = append(byRegion[r], k)
	}
	sort.Ints(regions)
	x0 := 0.0
	for _, r := range regions {
		ks := byRegion[r]
		sort.SliceStable(ks, func(a, b int) bool {
			ha, hb := boxes[ks[a]].Max.Y-boxes[ks[a]].Min.Y, boxes[ks[b]].Max.Y-boxes[ks[b]].Min.Y
			if ha != hb {
				return ha > hb
			}
			return ks[a] < ks[b]
		})
		area := 0.0
		for _, k := range ks {
			area += (boxes[k].Max.X - boxes[k].Min.X + nodeGap) * (boxes[k].Max.Y - boxes[k].Min.Y + nodeGap)
		}
		width := math.Max(math.Sqrt(area)*1.4, 1)
		pad := 0.0
		if r >= 0 {
			pad = regionPad
		}
		x, y, rowH, right := 0.0, regionTop, 0.0, 0.0
		for _, k := range ks {
			b := boxes[k]
			w, h := b.Max.X-b.Min.X, b.Max.Y-b.Min.Y
			if x > 0 && x+w > width {
				x, y, rowH = 0, y+rowH+2*nodeGap, 0
			}
			dx, dy := x0+pad+x-b.Min.X, pad+y-b.Min.Y
			for _, v := range parts[k] {
				d.Nodes[v].X += dx
				d.Nodes[v].Y += dy
			}
			x += w + 2*nodeGap
			rowH = math.Max(rowH, h)
			right = math.Max(right, x)
		}
		regionW := right - 2*nodeGap + 2*pad
		if r >= 0 && r < len(d.Regions) {
			regionW = math.Max(regionW, textWidth(d.regionLabel(r), regionFont)+2*regionPad)
		}
		x0 += regionW + regionGap
	}
}

// orderedGraph is an undirected graph whose nodes iterate in ID order,
// so that EadesR2 starts the same way every time.
type orderedGraph struct {
	nodes []graph.Node
	adj   [][]int64 // by ID, ascending
}

func (g *orderedGraph) Node(id int64) graph.Node {
	if id < 0 || int(id) >= len(g.nodes) {
		return nil
	}
	return g.nodes[id]
}
func (g *orderedGraph) Nodes() graph.Nodes { return iterator.NewOrderedNodes(g.nodes) }
func (g *orderedGraph) From(id int64) graph.Nodes {
	out := make([]graph.Node, len(g.adj[id]))
	for i, u := range g.adj[id] {
		out[i] = g.nodes[u]
	}
	return iterator.NewOrderedNodes(out)
}
func (g *orderedGraph) HasEdgeBetween(x, y int64) bool {
	for _, u := range g.adj[x] {
		if u == y {
			return true
		}
	}
	return false
}
func (g *orderedGraph) Edge(u, v int64) graph.Edge {
	if !g.HasEdgeBetween(u, v) {
		return nil
	}
	return simple.Edge{F: g.nodes[u], T: g.nodes[v]}
}

// eades places members (one connected part) with EadesR2 and scales the
// result so that the median edge is forceEdge long.
func eades(d *Diagram, members []int, adj [][]int) {
	if len(members) == 1 {
		d.Nodes[members[0]].X, d.Nodes[members[0]].Y = 0, 0
		return
	}
	local := make(map[int]int64, len(members))
	g := &orderedGraph{}
	for k, v := range members {
		local[v] = int64(k)
		g.nodes = append(g.nodes, simple.Node(k))
	}
	g.adj = make([][]int64, len(members))
	for k, v := range members {
		for _, u := range adj[v] {
			if j, ok := local[u]; ok {
				g.adj[k] = append(g.adj[k], j)
			}
		}
	}
	e := layout.EadesR2{Repulsion: 1, Rate: 0.05, Updates: 150, Theta: 0.2, Src: rand.NewPCG(1, 2)}
	o := layout.NewOptimizerR2(g, e.Update)
	// EadesR2 can drive two nodes onto one point, after which its
	// forces are not numbers; keep the last positions that were, and
	// stop there.
	good := make([]r2.Vec, len(members))
	for steps := 0; o.Update(); steps++ {
		ok := true
		for k := range members {
			c := o.Coord2(int64(k))
			if math.IsNaN(c.X) || math.IsNaN(c.Y) || math.IsInf(c.X, 0) || math.IsInf(c.Y, 0) || math.Abs(c.X) > 1e12 || math.Abs(c.Y) > 1e12 {
				ok = false
				break
			}
		}
		if !ok {
			if steps == 0 {
				for k := range good {
					good[k] = r2.Vec{X: float64(k % 8), Y: float64(k / 8)}
				}
			}
			break
		}
		for k := range members {
			good[k] = o.Coord2(int64(k))
		}
	}
	var lengths []float64
	for k := range members {
		for _, j := range g.adj[k] {
			if int64(k) < j {
				a, b := good[k], good[j]
				lengths = append(lengths, math.Hypot(a.X-b.X, a.Y-b.Y))
			}
		}
	}
	sort.Float64s(lengths)
	scale := 1.0
	if len(lengths) > 0 && lengths[len(lengths)/2] > 0 {
		scale = forceEdge / lengths[len(lengths)/2]
	}
	for k, v := range members {
		c := good[k]
		x, y := c.X*scale, c.Y*scale
		if math.IsNaN(x) || math.IsInf(x, 0) || math.IsNaN(y) || math.IsInf(y, 0) {
			x, y = float64(k)*forceEdge, 0
		}
		d.Nodes[v].X, d.Nodes[v].Y = x, y
	}
}

// separate moves members apart until no two boxes (with a margin)
// overlap: first by pushing overlapping pairs apart along the axis that
// needs the smaller move, then, for any overlap left, by settling nodes
// one by one into free places.
func separate(d *Diagram, members []int) {
	const margin = nodeGap / 2
	for round := 0; round < 200; round++ {
		moved := false
		idx := append([]int(nil), members...)
		boxes := make(map[int]Rect, len(idx))
		for _, v := range idx {
			boxes[v] = d.Box(v).Grow(margin / 2)
		}
		sort.SliceStable(idx, func(a, b int) bool { return boxes[idx[a]].Min.X < boxes[idx[b]].Min.X })
		for a := 0; a < len(idx); a++ {
			ba := boxes[idx[a]]
			for b := a + 1; b < len(idx) && boxes[idx[b]].Min.X < ba.Max.X; b++ {
				bb := boxes[idx[b]]
				if !ba.Overlaps(bb) {
					continue
				}
				u, v := idx[a], idx[b]
				ox := math.Min(ba.Max.X, bb.Max.X) - math.Max(ba.Min.X, bb.Min.X)
				oy := math.Min(ba.Max.Y, bb.Max.Y) - math.Max(ba.Min.Y, bb.Min.Y)
				cu := (ba.Min.Y + ba.Max.Y) / 2
				cv := (bb.Min.Y + bb.Max.Y) / 2
				if oy <= ox {
					s := 1.0
					if cv < cu || cv == cu && v < u {
						s = -1
					}
					d.Nodes[u].Y -= s * (oy/2 + 0.5)
					d.Nodes[v].Y += s * (oy/2 + 0.5)
				} else {
					s := 1.0
					if (bb.Min.X+bb.Max.X)/2 < (ba.Min.X+ba.Max.X)/2 {
						s = -1
					}
					d.Nodes[u].X -= s * (ox/2 + 0.5)
					d.Nodes[v].X += s * (ox/2 + 0.5)
				}
				moved = true
				ba = d.Box(u).Grow(margin / 2)
				boxes[u] = ba
				boxes[v] = d.Box(v).Grow(margin / 2)
			}
		}
		if !moved {
			return
		}
	}
	// Still overlapping: settle each node in turn into a free place.
	var placed []Rect
	for _, v := range members {
		b := d.Box(v).Grow(margin / 2)
		free := true
		for _, p := range placed {
			if b.Overlaps(p) {
				free = false
				break
			}
		}
		if free {
			placed = append(placed, d.Box(v))
			continue
		}
		placed = d.settle(v, placed)
	}
}

// boundsOfList returns the box of the listed nodes.
func (d *Diagram) boundsOfList(members []int) Rect {
	b := d.Box(members[0])
	for _, v := range members[1:] {
		b = b.union(d.Box(v))
	}
	return b
}
