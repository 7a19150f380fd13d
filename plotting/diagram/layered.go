package diagram

import (
	"math"
	"sort"
	"strconv"
)

// formatCoef writes a coefficient in its shortest form.
func formatCoef(c float64) string { return strconv.FormatFloat(c, 'g', -1, 64) }

// layered is a layered (Sugiyama-style) layout in progress: cycles are
// broken by turning a small set of edges round (Eades, Lin and Smyth's
// greedy heuristic), nodes go in rows by longest path, long edges get a
// bend point in every row they cross, rows are ordered by barycentres to
// cross few edges, and x positions are fitted to the neighbours' under the
// rows' spacing by isotonic regression.
type layered struct {
	d        *Diagram
	n        int     // real nodes
	succ     [][]int // of the acyclic graph, real nodes only
	layer    []int   // of every node, bends included
	feedback float64 // fraction of edges turned round
	layers   int
	across   bool // rows run left to right (columns) instead of top to bottom

	// Nodes of the rows: real nodes 0..n-1, then bends.
	region []int
	left   []float64 // extent of each node left of its x
	right  []float64 // and right of it
	x      []float64
	up     [][]int // neighbours in the row above
	down   [][]int // and below
	rows   [][]int
	chains [][]int // for each edge, its bends from From to To
}

// newLayered breaks the cycles and assigns rows.
func newLayered(d *Diagram) *layered {
	n := len(d.Nodes)
	lg := &layered{d: d, n: n}
	type pair struct{ a, b int }
	seen := map[pair]bool{}
	succ := make([][]int, n)
	pred := make([][]int, n)
	var pairs []pair
	for _, e := range d.Edges {
		p := pair{e.From, e.To}
		if e.From == e.To || seen[p] {
			continue
		}
		seen[p] = true
		pairs = append(pairs, p)
		succ[p.a] = append(succ[p.a], p.b)
		pred[p.b] = append(pred[p.b], p.a)
	}
	// Edges that return material to a species present at the start (a
	// catalyst released, a phosphatase's substrate restored) are turned
	// round first, so that the flow runs down from where material starts;
	// any cycle left is broken by a depth-first search.
	returns := map[[2]int]bool{}
	for _, p := range pairs {
		if d.Nodes[p.a].Kind == Reaction && d.Nodes[p.b].Kind == Species && d.Nodes[p.b].Present {
			returns[[2]int{p.a, p.b}] = true
		}
	}
	turned := func(p pair) (int, int) {
		if returns[[2]int{p.a, p.b}] {
			return p.b, p.a
		}
		return p.a, p.b
	}
	s2 := make([][]int, n)
	p2 := make([][]int, n)
	for _, p := range pairs {
		a, b := turned(p)
		s2[a] = append(s2[a], b)
		p2[b] = append(p2[b], a)
	}
	back := backEdges(d, s2, p2)
	lg.succ = make([][]int, n)
	dagPred := make([][]int, n)
	reversed := 0
	for _, p := range pairs {
		a, b := turned(p)
		if back[[2]int{a, b}] {
			a, b = b, a
		}
		if a != p.a && !returns[[2]int{p.a, p.b}] {
			reversed++
		}
		if !contains(lg.succ[a], b) {
			lg.succ[a] = append(lg.succ[a], b)
			dagPred[b] = append(dagPred[b], a)
		}
	}
	order := topoOrder(n, lg.succ, dagPred)
	if len(pairs) > 0 {
		lg.feedback = float64(reversed) / float64(len(pairs))
	}
	// Longest path from the sources, in the acyclic order.
	layer := make([]int, n)
	for _, v := range order {
		for _, u := range dagPred[v] {
			layer[v] = max(layer[v], layer[u]+1)
		}
	}
	// Sources go just above their first successor, not at the top.
	for k := n - 1; k >= 0; k-- {
		v := order[k]
		if len(dagPred[v]) > 0 || len(lg.succ[v]) == 0 {
			continue
		}
		lo := math.MaxInt
		for _, s := range lg.succ[v] {
			lo = min(lo, layer[s]-1)
		}
		layer[v] = lo
	}
	top := math.MaxInt
	for _, l := range layer {
		top = min(top, l)
	}
	for i := range layer {
		layer[i] -= top
		lg.layers = max(lg.layers, layer[i]+1)
	}
	lg.layer = layer
	return lg
}

func contains(l []int, x int) bool {
	for _, y := range l {
		if y == x {
			return true
		}
	}
	return false
}

// backEdges returns the edges to turn round so that the graph has no
// cycle: the edges that close a cycle in a depth-first search that starts
// from the species present at the start (in index order), then from nodes
// nothing points to, then from any node left, following edges in order.
// Starting where the material starts keeps the flow downwards and turns
// round the edges that return a catalyst or close a cycle of
// modification.
func backEdges(d *Diagram, succ, pred [][]int) map[[2]int]bool {
	n := len(succ)
	state := make([]int8, n) // 0 new, 1 on the path, 2 done
	back := map[[2]int]bool{}
	type frame struct{ v, next int }
	visit := func(root int) {
		stack := []frame{{root, 0}}
		state[root] = 1
		for len(stack) > 0 {
			f := &stack[len(stack)-1]
			if f.next == len(succ[f.v]) {
				state[f.v] = 2
				stack = stack[:len(stack)-1]
				continue
			}
			w := succ[f.v][f.next]
			f.next++
			switch state[w] {
			case 1:
				back[[2]int{f.v, w}] = true
			case 0:
				state[w] = 1
				stack = append(stack, frame{w, 0})
			}
		}
	}
	for v := 0; v < n; v++ {
		if d.Nodes[v].Present && state[v] == 0 {
			visit(v)
		}
	}
	for v := 0; v < n; v++ {
		if len(pred[v]) == 0 && state[v] == 0 {
			visit(v)
		}
	}
	for v := 0; v < n; v++ {
		if state[v] == 0 {
			visit(v)
		}
	}
	return back
}

// topoOrder returns the nodes of an acyclic graph so that every edge
// points forwards (Kahn's algorithm, lowest index first).
func topoOrder(n int, succ, pred [][]int) []int {
	ind := make([]int, n)
	for v := range pred {
		ind[v] = len(pred[v])
	}
	var order, ready []int
	for v := 0; v < n; v++ {
		if ind[v] == 0 {
			ready = append(ready, v)
		}
	}
	for len(ready) > 0 {
		sort.Ints(ready)
		v := ready[0]
		ready = ready[1:]
		order = append(order, v)
		for _, w := range succ[v] {
			if ind[w]--; ind[w] == 0 {
				ready = append(ready, w)
			}
		}
	}
	return order
}

// run orders the rows, places the nodes and records the bends; it returns
// the number of crossings between rows.
func (lg *layered) run() int {
	d := lg.d
	n := lg.n
	lg.region = make([]int, n)
	lg.left = make([]float64, n)
	lg.right = make([]float64, n)
	for i := range d.Nodes {
		d.Nodes[i].X, d.Nodes[i].Y = 0, 0
		b := d.Box(i)
		lg.left[i], lg.right[i] = -b.Min.X, b.Max.X
		if lg.across {
			lg.left[i], lg.right[i] = -b.Min.Y, b.Max.Y
		}
		lg.region[i] = d.Nodes[i].Region
	}
	lg.up = make([][]int, n)
	lg.down = make([][]int, n)
	link := func(a, b int) { // a in the row above b
		lg.down[a] = append(lg.down[a], b)
		lg.up[b] = append(lg.up[b], a)
	}
	type span struct{ a, b int }
	made := map[span][]int{}
	lg.chains = make([][]int, len(d.Edges))
	for ei, e := range d.Edges {
		a, b := e.From, e.To
		flip := lg.layer[a] > lg.layer[b]
		if flip {
			a, b = b, a
		}
		if a == b || lg.layer[a] == lg.layer[b] {
			continue
		}
		if chain, ok := made[span{a, b}]; ok {
			lg.chains[ei] = orient(chain, flip)
			continue
		}
		var chain []int
		prev := a
		for l := lg.layer[a] + 1; l < lg.layer[b]; l++ {
			v := len(lg.layer)
			lg.layer = append(lg.layer, l)
			lg.region = append(lg.region, lg.region[a])
			lg.left, lg.right = append(lg.left, 1), append(lg.right, 1)
			lg.up, lg.down = append(lg.up, nil), append(lg.down, nil)
			link(prev, v)
			chain = append(chain, v)
			prev = v
		}
		link(prev, b)
		made[span{a, b}] = chain
		lg.chains[ei] = orient(chain, flip)
	}
	total := len(lg.layer)
	lg.rows = make([][]int, lg.layers)
	for v := 0; v < total; v++ {
		lg.rows[lg.layer[v]] = append(lg.rows[lg.layer[v]], v)
	}
	crossings := lg.order()
	lg.place()
	// Rows' thickness and place: y for rows, x for columns.
	at := 0.0
	rowAt := make([]float64, lg.layers)
	gap := layerGap
	if lg.across {
		gap = 1.5 * layerGap
	}
	for l, row := range lg.rows {
		h := 0.0
		for _, v := range row {
			if v < n {
				b := d.Box(v)
				if lg.across {
					h = math.Max(h, b.Max.X-b.Min.X)
				} else {
					h = math.Max(h, b.Max.Y-b.Min.Y)
				}
			}
		}
		if h == 0 {
			h = speciesH / 2
		}
		rowAt[l] = at + h/2
		at += h + gap
	}
	for v := 0; v < n; v++ {
		if lg.across {
			// Centre each box in its column.
			b := d.Box(v) // at (0, 0)
			d.Nodes[v].X = rowAt[lg.layer[v]] - (b.Min.X+b.Max.X)/2
			d.Nodes[v].Y = lg.x[v]
		} else {
			d.Nodes[v].X, d.Nodes[v].Y = lg.x[v], rowAt[lg.layer[v]]
		}
	}
	for ei, chain := range lg.chains {
		if len(chain) == 0 {
			continue
		}
		pts := make([]Point, len(chain))
		for k, v := range chain {
			if lg.across {
				pts[k] = Point{rowAt[lg.layer[v]], lg.x[v]}
			} else {
				pts[k] = Point{lg.x[v], rowAt[lg.layer[v]]}
			}
		}
		d.Bends[ei] = pts
	}
	return crossings
}

// orient returns chain, reversed when flip is set.
func orient(chain []int, flip bool) []int {
	if !flip {
		return chain
	}
	out := make([]int, len(chain))
	for i, v := range chain {
		out[len(chain)-1-i] = v
	}
	return out
}

// order sorts every row by the barycentres of its neighbours, sweeping
// down and up, keeping the best order found; nodes of a region stay
// together, regions in index order. It returns the crossings of the
// order kept.
func (lg *layered) order() int {
	total := len(lg.layer)
	pos := make([]float64, total)
	setPos := func() {
		for _, row := range lg.rows {
			for i, v := range row {
				pos[v] = float64(i)
			}
		}
	}
	sortRow := func(row []int, key func(v int) float64) {
		keys := make(map[int]float64, len(row))
		for _, v := range row {
			keys[v] = key(v)
		}
		sort.SliceStable(row, func(a, b int) bool {
			va, vb := row[a], row[b]
			if lg.region[va] != lg.region[vb] {
				return lg.region[va] < lg.region[vb]
			}
			return keys[va] < keys[vb]
		})
	}
	keyOf := func(nbs [][]int) func(v int) float64 {
		return func(v int) float64 {
			if len(nbs[v]) == 0 {
				return pos[v]
			}
			s := 0.0
			for _, u := range nbs[v] {
				s += pos[u]
			}
			return s / float64(len(nbs[v]))
		}
	}
	// Start: every row by region, then index (model order).
	for _, row := range lg.rows {
		sortRow(row, func(v int) float64 { return float64(v) })
	}
	setPos()
	for l := 1; l < len(lg.rows); l++ {
		sortRow(lg.rows[l], keyOf(lg.up))
		setPos()
	}
	best := lg.crossings(pos)
	saved := lg.saveRows()
	for it := 0; it < 12 && best > 0; it++ {
		if it%2 == 0 {
			for l := 1; l < len(lg.rows); l++ {
				sortRow(lg.rows[l], keyOf(lg.up))
				setPos()
			}
		} else {
			for l := len(lg.rows) - 2; l >= 0; l-- {
				sortRow(lg.rows[l], keyOf(lg.down))
				setPos()
			}
		}
		if c := lg.crossings(pos); c < best {
			best, saved = c, lg.saveRows()
		}
	}
	lg.rows = saved
	return best
}

func (lg *layered) saveRows() [][]int {
	out := make([][]int, len(lg.rows))
	for i, r := range lg.rows {
		out[i] = append([]int(nil), r...)
	}
	return out
}

// crossings counts pairs of edges between adjacent rows that cross.
func (lg *layered) crossings(pos []float64) int {
	total := 0
	for l := 0; l+1 < len(lg.rows); l++ {
		type e struct{ a, b float64 }
		var es []e
		for _, v := range lg.rows[l] {
			for _, w := range lg.down[v] {
				es = append(es, e{pos[v], pos[w]})
			}
		}
		sort.Slice(es, func(i, j int) bool {
			if es[i].a != es[j].a {
				return es[i].a < es[j].a
			}
			return es[i].b < es[j].b
		})
		// Count inversions of b with a Fenwick tree over the row below.
		size := len(lg.rows[l+1]) + 1
		tree := make([]int, size+1)
		seen := 0
		for _, x := range es {
			k := int(x.b) + 1
			// Edges seen so far that end right of k.
			le := 0
			for i := k; i > 0; i -= i & -i {
				le += tree[i]
			}
			total += seen - le
			for i := k; i <= size; i += i & -i {
				tree[i]++
			}
			seen++
		}
	}
	return total
}

// place sets x: rows packed, then alternately fitted to the mean x of the
// neighbours above and below, keeping each row's order and spacing; then
// regions are moved apart so that their columns do not overlap.
func (lg *layered) place() {
	total := len(lg.layer)
	lg.x = make([]float64, total)
	gap := func(a, b int) float64 {
		g := nodeGap
		if a >= lg.n || b >= lg.n {
			g = dummyGap
		}
		if lg.region[a] != lg.region[b] {
			g = 2*regionPad + regionGap
		}
		return lg.right[a] + g + lg.left[b]
	}
	for _, row := range lg.rows {
		x := 0.0
		for i, v := range row {
			if i > 0 {
				x += gap(row[i-1], v)
			}
			lg.x[v] = x
		}
	}
	want := make([]float64, 0, 64)
	fit := func(row []int, nbs func(v int) []int) {
		want = want[:0]
		for _, v := range row {
			s, w := 0.0, 0.0
			for _, u := range nbs(v) {
				k := 1.0
				if v >= lg.n && u >= lg.n {
					k = 4 // keep long edges straight
				}
				s += k * lg.x[u]
				w += k
			}
			if w == 0 {
				want = append(want, lg.x[v])
			} else {
				want = append(want, s/w)
			}
		}
		gaps := make([]float64, len(row))
		for i := 1; i < len(row); i++ {
			gaps[i] = gap(row[i-1], row[i])
		}
		xs := isotonic(want, gaps)
		for i, v := range row {
			lg.x[v] = xs[i]
		}
	}
	both := func(v int) []int { return append(append([]int(nil), lg.up[v]...), lg.down[v]...) }
	for it := 0; it < 16; it++ {
		if it%2 == 0 {
			for l := 1; l < len(lg.rows); l++ {
				fit(lg.rows[l], func(v int) []int { return lg.up[v] })
			}
		} else {
			for l := len(lg.rows) - 2; l >= 0; l-- {
				fit(lg.rows[l], func(v int) []int { return lg.down[v] })
			}
		}
	}
	for it := 0; it < 4; it++ {
		for _, row := range lg.rows {
			fit(row, both)
		}
	}
	// Regions side by side, in index order.
	regions := map[int]bool{}
	for _, r := range lg.region {
		regions[r] = true
	}
	var rs []int
	for r := range regions {
		rs = append(rs, r)
	}
	sort.Ints(rs)
	prevMax := math.Inf(-1)
	for _, r := range rs {
		lo, hi := math.Inf(1), math.Inf(-1)
		for v := 0; v < total; v++ {
			if lg.region[v] == r {
				lo = math.Min(lo, lg.x[v]-lg.left[v])
				hi = math.Max(hi, lg.x[v]+lg.right[v])
			}
		}
		if r >= 0 {
			lo -= regionPad
			hi += regionPad
		}
		if need := prevMax + regionGap - lo; need > 0 {
			for v := 0; v < total; v++ {
				if lg.region[v] >= r {
					lg.x[v] += need
				}
			}
			hi += need
		}
		prevMax = hi
	}
	lo := math.Inf(1)
	for v := 0; v < total; v++ {
		lo = math.Min(lo, lg.x[v]-lg.left[v])
	}
	for v := range lg.x {
		lg.x[v] -= lo
	}
}

// isotonic returns the x closest to want in least squares with
// x[i] − x[i−1] ≥ gaps[i]: with y[i] = x[i] − Σgaps[..i] the constraint
// is y ascending, solved by pooling adjacent violators.
func isotonic(want, gaps []float64) []float64 {
	n := len(want)
	c := make([]float64, n)
	for i := 1; i < n; i++ {
		c[i] = c[i-1] + gaps[i]
	}
	type block struct {
		sum   float64
		count int
	}
	var bs []block
	for i := 0; i < n; i++ {
		bs = append(bs, block{want[i] - c[i], 1})
		for len(bs) > 1 {
			a, b := bs[len(bs)-2], bs[len(bs)-1]
			if a.sum/float64(a.count) <= b.sum/float64(b.count) {
				break
			}
			bs = bs[:len(bs)-2]
			bs = append(bs, block{a.sum + b.sum, a.count + b.count})
		}
	}
	out := make([]float64, 0, n)
	for _, b := range bs {
		m := b.sum / float64(b.count)
		for k := 0; k < b.count; k++ {
			out = append(out, m)
		}
	}
	for i := range out {
		out[i] += c[i]
	}
	return out
}
