package solve

import (
	"fmt"
	"math"
	"slices"
)

// sparseMinSize is the system size from which the driver considers a
// SparseLU for a SparsePatternSystem (when Settings.LinearSolver is nil).
// Measured with BenchmarkLinearSolvers in package network on generated
// networks: at 20 and 50 species the dense LU is faster (its loops are
// contiguous), at 100 they are even, from 200 the sparse one wins.
const sparseMinSize = 100

// sparseFlopRatio is how much more one floating-point operation of the
// sparse factorization costs than one of the dense LU (indirect addressing;
// measured 2–6 with BenchmarkLinearSolvers for n = 100 to 1000). The driver
// uses the sparse LU only when it is cheaper by this measure.
const sparseFlopRatio = 4

// pivotTol is the threshold of the static-pivot test: a pivot is accepted
// when it is at least pivotTol times the largest entry below it in its
// column, which bounds the multipliers of L by 1/pivotTol. 0.001 is
// UMFPACK's default for preferring diagonal pivots (Davis, "Algorithm 832:
// UMFPACK", ACM TOMS 30, 2004; from memory).
const pivotTol = 1e-3

// SparseLU is an allocation-free LU factorization of n×n matrices with a
// fixed sparsity pattern, for the iteration matrices c·I − J of the implicit
// methods on large sparse systems.
//
// NewSparseLU orders the unknowns once by minimum degree on the symmetrized
// pattern (Tinney & Walker 1967; George & Liu, "The evolution of the minimum
// degree ordering algorithm", SIAM Review 31, 1989) and finds the fill of
// the factors by the same symbolic elimination. Factor then gathers the
// pattern entries of the dense matrix and factorizes them left-looking
// (column by column, Gilbert & Peierls 1988) with the diagonal as static
// pivot. When a pivot is smaller than pivotTol times the largest entry
// below it in its column, or is zero or not finite, Factor falls back to a
// dense LU with partial pivoting for this matrix, so that the result is as
// robust as the dense solver; DenseFallbacks counts those.
//
// Entries of the matrix outside the pattern (plus the diagonal) are
// ignored: they are taken to be zero.
type SparseLU struct {
	n    int
	perm []int // perm[k] is the original index of the k-th pivot

	// Left-looking structure of the permuted matrix, column by column.
	// gather: for column j, the entries gPtr[j]:gPtr[j+1] are (row gRow in
	// the new order, offset gOff into the row-major matrix).
	gPtr, gRow, gOff []int
	aVal             []float64 // the gathered entries, for refinement
	// uPtr/uRow: the rows k < j of U's column j, ascending, values uVal.
	uPtr, uRow []int
	uVal       []float64
	// lPtr/lRow: the rows i > j of L's column j, ascending, values lVal.
	lPtr, lRow []int
	lVal       []float64
	diag       []float64 // diagonal of U

	x, r []float64 // work vectors; x is all zero between calls

	dense    *LU  // fallback, allocated on first need
	useDense bool // the last Factor fell back to the dense LU

	sparseCount, denseCount int
}

// NewSparseLU analyses the pattern of n×n matrices given in compressed
// sparse row form (the columns of row i are colIdx[rowPtr[i]:rowPtr[i+1]];
// duplicates are allowed) and returns a SparseLU for matrices with that
// pattern plus the diagonal. It reports an error when the pattern is
// malformed.
func NewSparseLU(n int, rowPtr, colIdx []int) (*SparseLU, error) {
	adj, err := symmetrize(n, rowPtr, colIdx)
	if err != nil {
		return nil, err
	}
	perm, elim := minimumDegree(n, adj)
	f := &SparseLU{n: n, perm: perm, x: make([]float64, n), r: make([]float64, n), diag: make([]float64, n)}
	inv := make([]int, n)
	for k, v := range perm {
		inv[v] = k
	}

	// elim[k] holds the original indices of the neighbours of the k-th
	// pivot when it was eliminated: the pattern of column k of L and of
	// row k of U (the fill is symmetric).
	f.lPtr = make([]int, n+1)
	cnt := make([]int, n) // entries of U's columns
	for k := range n {
		f.lPtr[k+1] = f.lPtr[k] + len(elim[k])
		for _, v := range elim[k] {
			cnt[inv[v]]++
		}
	}
	f.lRow = make([]int, f.lPtr[n])
	f.uPtr = make([]int, n+1)
	for j := range n {
		f.uPtr[j+1] = f.uPtr[j] + cnt[j]
	}
	f.uRow = make([]int, f.uPtr[n])
	next := slices.Clone(f.uPtr[:n])
	for k := range n { // k ascending: U's columns come out sorted
		l := f.lRow[f.lPtr[k]:f.lPtr[k+1]]
		for t, v := range elim[k] {
			l[t] = inv[v]
		}
		slices.Sort(l)
		for _, i := range l {
			f.uRow[next[i]] = k
			next[i]++
		}
	}
	f.lVal = make([]float64, len(f.lRow))
	f.uVal = make([]float64, len(f.uRow))

	// Gather lists: the original pattern plus the diagonal, by new column.
	f.gPtr = make([]int, n+1)
	for j := range n {
		f.gPtr[j+1] = f.gPtr[j] + len(adj.orig[perm[j]])
	}
	f.gRow = make([]int, f.gPtr[n])
	f.gOff = make([]int, f.gPtr[n])
	f.aVal = make([]float64, f.gPtr[n])
	for j := range n {
		c := perm[j]
		p := f.gPtr[j]
		for _, r := range adj.orig[c] {
			f.gRow[p] = inv[r]
			f.gOff[p] = r*n + c
			p++
		}
	}
	return f, nil
}

// Dim is the order of the matrices.
func (f *SparseLU) Dim() int { return f.n }

// FactorNonzeros is the number of entries of L and U together, diagonal
// included.
func (f *SparseLU) FactorNonzeros() int { return f.n + len(f.lRow) + len(f.uRow) }

// FactorFlops is the number of floating-point operations of one sparse
// numeric factorization (the dense LU takes about 2n³/3).
func (f *SparseLU) FactorFlops() float64 {
	var fl float64
	for j := range f.n {
		d := float64(f.lPtr[j+1] - f.lPtr[j])
		fl += d + 2*d*d // scaling of L's column, update of the trailing block
	}
	return fl
}

// Counts reports how many factorizations were sparse and how many fell back
// to the dense LU.
func (f *SparseLU) Counts() (sparse, dense int) { return f.sparseCount, f.denseCount }

// Factor factorizes the n×n row-major matrix m (left unchanged), reading
// only the entries in the pattern. When a static pivot is unacceptable it
// factorizes m densely instead; it returns an error only when m is
// singular.
func (f *SparseLU) Factor(m []float64) error {
	if len(m) < f.n*f.n {
		return fmt.Errorf("sparse LU: matrix has %d entries; %d×%d needs %d", len(m), f.n, f.n, f.n*f.n)
	}
	if f.factorSparse(m) {
		f.useDense = false
		f.sparseCount++
		return nil
	}
	if f.dense == nil {
		f.dense = NewLU(f.n)
	}
	f.useDense = true
	f.denseCount++
	return f.dense.Factor(m)
}

// factorSparse is the left-looking numeric factorization. It reports false
// when a pivot fails the threshold test; x is zero again on return.
func (f *SparseLU) factorSparse(m []float64) bool {
	x := f.x
	for j := range f.n {
		for p := f.gPtr[j]; p < f.gPtr[j+1]; p++ {
			v := m[f.gOff[p]]
			f.aVal[p] = v
			x[f.gRow[p]] = v
		}
		// Solve with the columns k < j of L that reach column j.
		u0, u1 := f.uPtr[j], f.uPtr[j+1]
		for _, k := range f.uRow[u0:u1] {
			xk := x[k]
			if xk == 0 {
				continue
			}
			lv := f.lVal[f.lPtr[k]:f.lPtr[k+1]]
			for t, i := range f.lRow[f.lPtr[k]:f.lPtr[k+1]] {
				x[i] -= lv[t] * xk
			}
		}
		uv := f.uVal[u0:u1]
		for t, k := range f.uRow[u0:u1] {
			uv[t] = x[k]
			x[k] = 0
		}
		piv := x[j]
		x[j] = 0
		l0, l1 := f.lPtr[j], f.lPtr[j+1]
		var big float64
		for _, i := range f.lRow[l0:l1] {
			big = math.Max(big, math.Abs(x[i]))
		}
		if !(math.Abs(piv) >= pivotTol*big) || piv == 0 || math.IsInf(piv, 0) || math.IsNaN(big) {
			for _, i := range f.lRow[l0:l1] {
				x[i] = 0
			}
			return false
		}
		f.diag[j] = piv
		inv := 1 / piv
		lv := f.lVal[l0:l1]
		for t, i := range f.lRow[l0:l1] {
			lv[t] = x[i] * inv
			x[i] = 0
		}
	}
	return true
}

// Solve overwrites b with the solution of M x = b for the last factorized M.
func (f *SparseLU) Solve(b []float64) {
	if f.useDense {
		f.dense.Solve(b)
		return
	}
	x, r := f.x, f.r
	for k, v := range f.perm {
		x[k] = b[v]
		r[k] = b[v]
	}
	f.solvePerm(x)
	// One step of iterative refinement, r ← b − A·x, x ← x + LU\r, makes up
	// for the growth that static pivoting allows (Wilkinson 1963; Higham,
	// Accuracy and Stability of Numerical Algorithms, 2002, ch. 12).
	for j := range f.n {
		xj := x[j]
		for p := f.gPtr[j]; p < f.gPtr[j+1]; p++ {
			r[f.gRow[p]] -= f.aVal[p] * xj
		}
	}
	f.solvePerm(r)
	for k, v := range f.perm {
		b[v] = x[k] + r[k]
		x[k] = 0
	}
}

// solvePerm overwrites x, in the pivot order, with the solution of
// L U y = x.
func (f *SparseLU) solvePerm(x []float64) {
	for j := range f.n { // L, unit diagonal
		xj := x[j]
		if xj == 0 {
			continue
		}
		lv := f.lVal[f.lPtr[j]:f.lPtr[j+1]]
		for t, i := range f.lRow[f.lPtr[j]:f.lPtr[j+1]] {
			x[i] -= lv[t] * xj
		}
	}
	for j := f.n - 1; j >= 0; j-- { // U
		xj := x[j] / f.diag[j]
		x[j] = xj
		if xj == 0 {
			continue
		}
		uv := f.uVal[f.uPtr[j]:f.uPtr[j+1]]
		for t, i := range f.uRow[f.uPtr[j]:f.uPtr[j+1]] {
			x[i] -= uv[t] * xj
		}
	}
}

// sparseGraph is the symmetrized pattern: nb[i] are the neighbours of i
// (sorted, without i), orig[j] the rows of column j of the original pattern
// plus j itself (sorted).
type sparseGraph struct {
	nb, orig [][]int
}

// symmetrize checks a CSR pattern and builds its graph.
func symmetrize(n int, rowPtr, colIdx []int) (*sparseGraph, error) {
	if n <= 0 {
		return nil, fmt.Errorf("sparse LU: order %d must be positive", n)
	}
	if len(rowPtr) != n+1 {
		return nil, fmt.Errorf("sparse LU: row pointer has %d entries; %d rows need %d", len(rowPtr), n, n+1)
	}
	if rowPtr[0] != 0 || rowPtr[n] > len(colIdx) {
		return nil, fmt.Errorf("sparse LU: row pointer runs from %d to %d; it must start at 0 and end within the %d column indices", rowPtr[0], rowPtr[n], len(colIdx))
	}
	g := &sparseGraph{nb: make([][]int, n), orig: make([][]int, n)}
	for i := range n {
		g.orig[i] = append(g.orig[i], i)
		if rowPtr[i+1] < rowPtr[i] {
			return nil, fmt.Errorf("sparse LU: row pointer decreases at row %d (%d after %d)", i, rowPtr[i+1], rowPtr[i])
		}
		for _, j := range colIdx[rowPtr[i]:rowPtr[i+1]] {
			if j < 0 || j >= n {
				return nil, fmt.Errorf("sparse LU: row %d has column index %d; columns run from 0 to %d", i, j, n-1)
			}
			if j == i {
				continue
			}
			g.orig[j] = append(g.orig[j], i)
			g.nb[i] = append(g.nb[i], j)
			g.nb[j] = append(g.nb[j], i)
		}
	}
	for i := range n {
		slices.Sort(g.nb[i])
		g.nb[i] = slices.Compact(g.nb[i])
		slices.Sort(g.orig[i])
		g.orig[i] = slices.Compact(g.orig[i])
	}
	return g, nil
}

// minimumDegree orders the vertices of g by minimum degree: it repeatedly
// eliminates a vertex of least degree (the lowest index among equals) from
// the elimination graph, joining its neighbours into a clique (Tinney &
// Walker 1967, scheme 2; George & Liu 1989). It returns the order and, for
// each step, the neighbours of the eliminated vertex at that time.
func minimumDegree(n int, g *sparseGraph) (perm []int, elim [][]int) {
	adj := make([][]int, n)
	for i := range adj {
		adj[i] = slices.Clone(g.nb[i])
	}
	done := make([]bool, n)
	perm = make([]int, 0, n)
	elim = make([][]int, 0, n)
	var merged []int
	for range n {
		v, best := -1, math.MaxInt
		for i := range n {
			if !done[i] && len(adj[i]) < best {
				v, best = i, len(adj[i])
			}
		}
		done[v] = true
		nv := adj[v]
		perm = append(perm, v)
		elim = append(elim, nv)
		adj[v] = nil
		for _, a := range nv {
			// adj[a] ← (adj[a] ∪ nv) \ {a, v}, both sorted.
			merged = merged[:0]
			x, y := adj[a], nv
			for len(x) > 0 || len(y) > 0 {
				var w int
				switch {
				case len(y) == 0 || (len(x) > 0 && x[0] < y[0]):
					w, x = x[0], x[1:]
				case len(x) == 0 || y[0] < x[0]:
					w, y = y[0], y[1:]
				default:
					w, x, y = x[0], x[1:], y[1:]
				}
				if w != a && w != v {
					merged = append(merged, w)
				}
			}
			adj[a] = append(adj[a][:0], merged...)
		}
	}
	return perm, elim
}

// sparseFor returns a SparseLU for sys when it is a SparsePatternSystem of
// at least sparseMinSize variables whose sparse factorization is expected
// to be faster than the dense one, else nil.
func sparseFor(sys System) *SparseLU {
	ps, ok := sys.(SparsePatternSystem)
	n := sys.Dim()
	if !ok || n < sparseMinSize {
		return nil
	}
	rp, ci := ps.JacobianPattern()
	f, err := NewSparseLU(n, rp, ci)
	if err != nil || sparseFlopRatio*f.FactorFlops() > 2*float64(n)*float64(n)*float64(n)/3 {
		return nil
	}
	return f
}

// share returns a SparseLU with the symbolic analysis of f and its own
// values and work space.
func (f *SparseLU) share() *SparseLU {
	g := &SparseLU{n: f.n, perm: f.perm,
		gPtr: f.gPtr, gRow: f.gRow, gOff: f.gOff,
		uPtr: f.uPtr, uRow: f.uRow, uVal: make([]float64, len(f.uVal)),
		lPtr: f.lPtr, lRow: f.lRow, lVal: make([]float64, len(f.lVal)),
		aVal: make([]float64, len(f.aVal)),
		diag: make([]float64, f.n), x: make([]float64, f.n), r: make([]float64, f.n)}
	return g
}

// samePattern reports whether a and b have the same Jacobian pattern (as
// far as the sparse solver is concerned: both without one counts as same).
func samePattern(a, b System) bool {
	pa, oka := a.(SparsePatternSystem)
	pb, okb := b.(SparsePatternSystem)
	if !oka || !okb {
		return oka == okb
	}
	ra, ca := pa.JacobianPattern()
	rb, cb := pb.JacobianPattern()
	return slices.Equal(ra, rb) && slices.Equal(ca, cb)
}
