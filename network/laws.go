package network

import (
	"math"
	"math/big"
	"slices"
	"strconv"
)

// Conservation laws by exact sparse elimination.
//
// The laws are the left null space of the stoichiometry N over the free
// (non-fixed) species. Their basis is read from the reduced row echelon
// form R of Nᵀ (one row per reaction, one column per free species in model
// order): each column without a pivot gives the law with weight 1 there
// and −R[r][p] at the pivot column p of each row r. R is unique, so any
// way of computing it gives the same laws; here it is computed on sparse
// integer rows (fraction-free: a row is replaced by a·row − b·pivot row
// and divided by the gcd of its entries), columns in model order, the
// pivot row of a column being the shortest candidate. Stoichiometric
// matrices are very sparse and their rows stay short, so the work follows
// the number of nonzero coefficients instead of (species)²·(reactions) of
// a dense elimination, and no dense matrix is held.
//
// The sign improvement and shrinking (improveSigns, shrink) combine laws
// only where their species overlap: a combination of two laws without a
// species in common never lowers the number of negative weights, and
// never leaves one law non-negative after subtracting the other. So they
// run on each cluster of overlapping laws separately, on vectors as long
// as the cluster's species, and give the same laws as on the whole basis.

// srow is a sparse row of integers, columns increasing, no zeros.
type srow struct {
	cols []int
	vals []*big.Int
}

func (r *srow) at(c int) *big.Int {
	if k, ok := slices.BinarySearch(r.cols, c); ok {
		return r.vals[k]
	}
	return nil
}

// combine sets r to a·r − b·p, dropping zeros, and divides the result by
// the gcd of its entries. It returns the columns that are new in r.
func (r *srow) combine(a, b *big.Int, p *srow, added []int) []int {
	cols := make([]int, 0, len(r.cols)+len(p.cols))
	vals := make([]*big.Int, 0, len(r.cols)+len(p.cols))
	tmp := new(big.Int)
	i, j := 0, 0
	for i < len(r.cols) || j < len(p.cols) {
		switch {
		case j == len(p.cols) || i < len(r.cols) && r.cols[i] < p.cols[j]:
			cols = append(cols, r.cols[i])
			vals = append(vals, new(big.Int).Mul(a, r.vals[i]))
			i++
		case i == len(r.cols) || p.cols[j] < r.cols[i]:
			cols = append(cols, p.cols[j])
			vals = append(vals, new(big.Int).Neg(tmp.Mul(b, p.vals[j])))
			added = append(added, p.cols[j])
			j++
		default:
			v := new(big.Int).Mul(a, r.vals[i])
			v.Sub(v, tmp.Mul(b, p.vals[j]))
			if v.Sign() != 0 {
				cols = append(cols, r.cols[i])
				vals = append(vals, v)
			}
			i++
			j++
		}
	}
	r.cols, r.vals = cols, vals
	r.normalise()
	return added
}

// normalise divides the row by the gcd of its entries.
func (r *srow) normalise() {
	g := new(big.Int)
	abs := new(big.Int)
	for _, v := range r.vals {
		g.GCD(nil, nil, g, abs.Abs(v))
		if g.IsInt64() && g.Int64() == 1 {
			return
		}
	}
	if g.Sign() == 0 {
		return
	}
	for _, v := range r.vals {
		v.Quo(v, g)
	}
}

// stoichRows returns the rows of Nᵀ over the free species as integer rows
// (each scaled by the least common multiple of its denominators, which
// leaves its echelon form unchanged), columns numbered by free[], and the
// number of free species. Coefficients are summed per species and
// reaction as floating-point numbers (reactants subtracted, then products
// added, in the order of the equation) and read as the shortest decimal
// that gives them back.
func (net *Net) stoichRows() ([]*srow, int) {
	m := net.Model
	ix := make(map[string]int, len(m.Species))
	for i, s := range m.Species {
		if _, dup := ix[s.Name]; !dup {
			ix[s.Name] = i
		}
	}
	col := make([]int, len(m.Species)) // column of each species, -1 when fixed
	nfree := 0
	for i, s := range m.Species {
		col[i] = -1
		if !s.Fixed {
			col[i] = nfree
			nfree++
		}
	}
	var rows []*srow
	type entry struct {
		sp int
		x  float64
	}
	var es []entry
	add := func(sp int, x float64) {
		for k := range es {
			if es[k].sp == sp {
				es[k].x += x
				return
			}
		}
		es = append(es, entry{sp, x})
	}
	var rats []*big.Rat
	for _, cr := range net.Reactions {
		if !cr.EqOK {
			continue
		}
		es = es[:0]
		for _, t := range cr.Equation.Reactants {
			if i, ok := ix[t.Species]; ok {
				add(i, -t.Coef)
			}
		}
		for _, t := range cr.Equation.Products {
			if i, ok := ix[t.Species]; ok {
				add(i, t.Coef)
			}
		}
		slices.SortFunc(es, func(a, b entry) int { return a.sp - b.sp })
		r := &srow{}
		rats = rats[:0]
		whole := true
		for _, e := range es {
			if col[e.sp] < 0 || e.x == 0 || math.IsNaN(e.x) || math.IsInf(e.x, 0) {
				continue
			}
			q := new(big.Rat)
			if e.x == math.Trunc(e.x) && math.Abs(e.x) < 1<<53 {
				q.SetInt64(int64(e.x))
			} else {
				// The shortest decimal that reads back as x: a
				// coefficient written 0.1 is the rational 1/10, not
				// the binary fraction nearest to it.
				q.SetString(strconv.FormatFloat(e.x, 'g', -1, 64))
				whole = whole && q.IsInt()
			}
			if q.Sign() == 0 {
				continue
			}
			r.cols = append(r.cols, col[e.sp])
			rats = append(rats, q)
		}
		if len(r.cols) == 0 {
			continue
		}
		if whole {
			for _, q := range rats {
				r.vals = append(r.vals, new(big.Int).Set(q.Num()))
			}
		} else {
			r.vals = integerVector(rats)
		}
		r.normalise()
		rows = append(rows, r)
	}
	return rows, nfree
}

// reducedEchelon brings rows to reduced row echelon form in place (up to
// a scale of each row) and returns the pivot row of each column (-1 where
// a column has none).
func reducedEchelon(rows []*srow, ncol int) []int {
	colRows := make([][]int32, ncol)
	for r, row := range rows {
		for _, c := range row.cols {
			colRows[c] = append(colRows[c], int32(r))
		}
	}
	pivot := make([]int, ncol)
	used := make([]bool, len(rows))
	seen := make([]int, len(rows)) // the column each row was last a candidate of, plus 1
	var cands []int
	var added []int
	a, b := new(big.Int), new(big.Int)
	for c := range ncol {
		pivot[c] = -1
		cands = cands[:0]
		for _, r32 := range colRows[c] {
			r := int(r32)
			// Rows not yet pivots have nothing left before column c.
			if used[r] || seen[r] == c+1 || len(rows[r].cols) == 0 || rows[r].cols[0] != c {
				continue
			}
			seen[r] = c + 1
			cands = append(cands, r)
		}
		colRows[c] = nil // done with
		if len(cands) == 0 {
			continue
		}
		p := cands[0]
		for _, r := range cands[1:] {
			if len(rows[r].cols) < len(rows[p].cols) || len(rows[r].cols) == len(rows[p].cols) && r < p {
				p = r
			}
		}
		used[p], pivot[c] = true, p
		pr := rows[p]
		for _, r := range cands {
			if r == p {
				continue
			}
			a.Set(pr.vals[0])
			b.Set(rows[r].vals[0])
			added = rows[r].combine(a, b, pr, added[:0])
			for _, ac := range added {
				colRows[ac] = append(colRows[ac], int32(r))
			}
		}
	}
	// Back substitution, last pivot first: each pivot row loses its
	// entries in the columns of later pivots, whose rows are reduced
	// already and bring in columns without pivots only.
	var later []int
	for c := ncol - 1; c >= 0; c-- {
		if pivot[c] < 0 {
			continue
		}
		row := rows[pivot[c]]
		later = later[:0]
		for _, k := range row.cols[1:] {
			if pivot[k] >= 0 {
				later = append(later, k)
			}
		}
		for _, k := range later {
			q := rows[pivot[k]]
			a.Set(q.vals[0])
			b.Set(row.at(k))
			row.combine(a, b, q, nil)
		}
	}
	return pivot
}

// ConservationLaws returns the conserved totals of the checked network, as
// Model.ConservationLaws describes.
func (net *Net) ConservationLaws() []ConservationLaw {
	m := net.Model
	var free []int // free[k] is the species of column k
	for i, s := range m.Species {
		if !s.Fixed {
			free = append(free, i)
		}
	}
	if len(free) == 0 {
		return nil
	}
	rows, ncol := net.stoichRows()
	pivot := reducedEchelon(rows, ncol)
	// The entries of the reduced rows in the columns without a pivot,
	// by column: law fc has weight 1 at fc and −R[r][p] at each pivot p.
	type ent struct {
		p   int // pivot column
		num *big.Int
		den *big.Int
	}
	byCol := make([][]ent, ncol)
	for p, r := range pivot {
		if r < 0 {
			continue
		}
		row := rows[r]
		for k, c := range row.cols[1:] {
			byCol[c] = append(byCol[c], ent{p, row.vals[k+1], row.vals[0]})
		}
	}
	// Each law as a sparse vector over columns.
	type vec struct {
		cols []int
		vals []*big.Int
	}
	var basis []vec
	var w []*big.Rat
	for fc := range ncol {
		if pivot[fc] >= 0 {
			continue
		}
		es := byCol[fc]
		slices.SortFunc(es, func(a, b ent) int { return a.p - b.p })
		v := vec{cols: make([]int, 0, len(es)+1)}
		w = w[:0]
		for _, e := range es {
			v.cols = append(v.cols, e.p)
			w = append(w, new(big.Rat).SetFrac(new(big.Int).Neg(e.num), e.den))
		}
		v.cols = append(v.cols, fc) // after every pivot: pivots of its rows come before it
		w = append(w, new(big.Rat).SetInt64(1))
		v.vals = integerVector(w)
		basis = append(basis, v)
	}
	// Clusters of laws that share species (union–find over columns).
	parent := make([]int, ncol)
	for c := range parent {
		parent[c] = c
	}
	var find func(int) int
	find = func(c int) int {
		for parent[c] != c {
			parent[c] = parent[parent[c]]
			c = parent[c]
		}
		return c
	}
	for _, v := range basis {
		for _, c := range v.cols[1:] {
			if a, b := find(v.cols[0]), find(c); a != b {
				parent[a] = b
			}
		}
	}
	clusters := map[int][]int{} // root column → laws, in basis order
	var roots []int
	for k, v := range basis {
		root := find(v.cols[0])
		if _, ok := clusters[root]; !ok {
			roots = append(roots, root)
		}
		clusters[root] = append(clusters[root], k)
	}
	for _, root := range roots {
		ks := clusters[root]
		if len(ks) == 1 {
			v := basis[ks[0]]
			improveSigns([][]*big.Int{v.vals}) // flips signs only
			continue
		}
		// Dense vectors over the cluster's columns.
		var cols []int
		for _, k := range ks {
			cols = append(cols, basis[k].cols...)
		}
		slices.Sort(cols)
		cols = slices.Compact(cols)
		local := make([][]*big.Int, len(ks))
		for j, k := range ks {
			local[j] = make([]*big.Int, len(cols))
			for q := range local[j] {
				local[j][q] = new(big.Int)
			}
			v := basis[k]
			for q, c := range v.cols {
				i, _ := slices.BinarySearch(cols, c)
				local[j][i] = v.vals[q]
			}
		}
		improveSigns(local)
		shrink(local)
		for j, k := range ks {
			v := vec{}
			for q, x := range local[j] {
				if x.Sign() != 0 {
					v.cols = append(v.cols, cols[q])
					v.vals = append(v.vals, x)
				}
			}
			basis[k] = v
		}
	}
	var laws []ConservationLaw
basis:
	for _, b := range basis {
		order := make([]int, len(b.cols))
		for q := range order {
			order[q] = q
		}
		slices.SortFunc(order, func(x, y int) int { return b.cols[x] - b.cols[y] })
		law := ConservationLaw{Terms: make([]LawTerm, 0, len(b.cols))}
		for _, q := range order {
			x := b.vals[q]
			if x.Sign() == 0 {
				continue
			}
			if !x.IsInt64() || int64(int(x.Int64())) != x.Int64() {
				continue basis // a weight too large for an int: not listed
			}
			law.Terms = append(law.Terms, LawTerm{Species: free[b.cols[q]], Weight: int(x.Int64())})
		}
		law.Text = lawText(m, law.Terms)
		laws = append(laws, law)
	}
	return laws
}
