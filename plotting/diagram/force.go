package diagram

import (
	"math"
	"sort"
)

// forceEdge is the length edges are scaled to, in points.
const forceEdge = 64.0

// forceLayout places the nodes by their graph distances: each connected
// part of each region on its own (see stress), moved apart until no two
// boxes overlap; parts are packed in rows inside their region and regions
// are put side by side.
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
		stress(d, members, adj)
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

// stress places members (one connected part) so that the distance of
// every two nodes follows the number of edges between them times
// forceEdge: classical (Torgerson) scaling of the graph distances gives
// the start, and stress majorization (Gansner, Koren and North, 2004)
// with weights 1/d² refines it. Both are deterministic.
func stress(d *Diagram, members []int, adj [][]int) {
	n := len(members)
	if n == 1 {
		d.Nodes[members[0]].X, d.Nodes[members[0]].Y = 0, 0
		return
	}
	local := make(map[int]int, n)
	for k, v := range members {
		local[v] = k
	}
	// Graph distances by breadth-first search from every node.
	dist := make([]float64, n*n)
	queue := make([]int, 0, n)
	for s := 0; s < n; s++ {
		row := dist[s*n : (s+1)*n]
		for i := range row {
			row[i] = -1
		}
		row[s] = 0
		queue = append(queue[:0], s)
		for len(queue) > 0 {
			v := queue[0]
			queue = queue[1:]
			for _, u := range adj[members[v]] {
				if j, ok := local[u]; ok && row[j] < 0 {
					row[j] = row[v] + 1
					queue = append(queue, j)
				}
			}
		}
	}
	for i, x := range dist {
		if x < 0 {
			dist[i] = float64(n) // not reached: cannot happen within a part
		}
	}
	x, y := classicalScaling(dist, n)
	// Stress majorization.
	nx, ny := make([]float64, n), make([]float64, n)
	for it := 0; it < 60; it++ {
		for i := 0; i < n; i++ {
			sx, sy, sw := 0.0, 0.0, 0.0
			for j := 0; j < n; j++ {
				if i == j {
					continue
				}
				dij := dist[i*n+j] * forceEdge
				w := 1 / (dij * dij)
				ex, ey := x[i]-x[j], y[i]-y[j]
				l := math.Hypot(ex, ey)
				if l < 1e-9 {
					l = 1e-9
					ex = 1e-9 * float64((i-j)%3)
				}
				sx += w * (x[j] + dij*ex/l)
				sy += w * (y[j] + dij*ey/l)
				sw += w
			}
			nx[i], ny[i] = sx/sw, sy/sw
		}
		x, nx = nx, x
		y, ny = ny, y
	}
	for k, m := range members {
		xi, yi := x[k], y[k]
		if math.IsNaN(xi) || math.IsInf(xi, 0) || math.IsNaN(yi) || math.IsInf(yi, 0) {
			xi, yi = float64(k)*forceEdge, 0
		}
		d.Nodes[m].X, d.Nodes[m].Y = xi, yi
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

// classicalScaling returns the two-dimensional classical (Torgerson)
// scaling of the n×n distances dist (row-major), in points: the top two
// eigenvectors of the double-centred matrix B = −½·J·D²·J, found by power
// iteration from fixed start vectors, scaled by the square roots of their
// eigenvalues. gonum's stat/mds computes the same with a full eigen
// decomposition, which for 500 nodes took most of a second.
func classicalScaling(dist []float64, n int) (x, y []float64) {
	b := make([]float64, n*n)
	row := make([]float64, n)
	all := 0.0
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			d := dist[i*n+j] * forceEdge
			b[i*n+j] = d * d
			row[i] += d * d
		}
		all += row[i]
		row[i] /= float64(n)
	}
	all /= float64(n * n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			b[i*n+j] = -0.5 * (b[i*n+j] - row[i] - row[j] + all)
		}
	}
	vecs := make([][]float64, 2)
	vals := make([]float64, 2)
	next := make([]float64, n)
	for k := 0; k < 2; k++ {
		v := make([]float64, n)
		for i := range v {
			v[i] = math.Cos(float64(i*(k+1)) + 0.5*float64(k))
		}
		lambda := 0.0
		for it := 0; it < 200; it++ {
			for _, u := range vecs[:k] { // deflate: stay orthogonal to the first
				dot := 0.0
				for i := range v {
					dot += v[i] * u[i]
				}
				for i := range v {
					v[i] -= dot * u[i]
				}
			}
			norm := 0.0
			for _, vi := range v {
				norm += vi * vi
			}
			norm = math.Sqrt(norm)
			if norm == 0 {
				break
			}
			for i := range v {
				v[i] /= norm
			}
			lambda = 0
			for i := 0; i < n; i++ {
				s := 0.0
				r := b[i*n : (i+1)*n]
				for j, vj := range v {
					s += r[j] * vj
				}
				next[i] = s
				lambda += v[i] * s
			}
			copy(v, next)
		}
		norm := 0.0
		for _, vi := range v {
			norm += vi * vi
		}
		norm = math.Sqrt(norm)
		for i := range v {
			if norm > 0 {
				v[i] /= norm
			}
		}
		vecs[k], vals[k] = v, lambda
	}
	x, y = make([]float64, n), make([]float64, n)
	for i := 0; i < n; i++ {
		x[i] = vecs[0][i] * math.Sqrt(math.Max(vals[0], 0))
		y[i] = vecs[1][i] * math.Sqrt(math.Max(vals[1], 0))
		if vals[1] <= 0 { // a path: keep the nodes off one line
			y[i] = float64(i%2) * forceEdge / 4
		}
	}
	return x, y
}
