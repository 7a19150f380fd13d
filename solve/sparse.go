package solve

import (
	"fmt"
	"math"
	"slices"
)

// sparseMinSize is the system size from which the driver considers a
// SparseLU for a SparsePatternSystem (when Settings.LinearSolver is nil).
// Measured with BenchmarkPaths in internal/gennet (whole BDF and RODAS4
// solves of generated networks, sparse against dense path, on a shared
// 2-core machine where repeated runs vary by up to 2×): at 20 species the
// two are within that noise, at 48 the sparse path took 0.4–1.0 of the
// dense one's time, at 100 0.2–0.3 and at 200 0.1–0.25. (With the earlier
// sparse LU, which gathered from a dense matrix and refined every solve,
// the break-even was 100.)
const sparseMinSize = 40

// sparseFlopRatio is how much more one floating-point operation of the
// sparse numeric factorization costs than one of the dense LU (indirect
// addressing). Measured with BenchmarkLinearSolvers in package network
// (factorization and solve of the iteration matrix of random networks with
// 3n reactions, whose factors fill to 20–250 entries per row): 0.8–1.8 for
// n = 50 to 1,000, time per estimated flop, sparse over dense (it was 2–6
// with the earlier sparse LU, which gathered from a dense matrix and
// refined every solve). The driver uses the sparse LU only when it is
// cheaper by this measure.
const sparseFlopRatio = 2

// pivotTol is the threshold of partial pivoting: the diagonal entry is the
// pivot when it is at least pivotTol times the largest candidate in its
// column, else the largest candidate is; a refactorization that reuses a
// pivot sequence accepts each pivot by the same test. It bounds the
// multipliers of L by 1/pivotTol. 0.001 is the default of UMFPACK and KLU
// for preferring diagonal pivots (Davis, "Algorithm 832: UMFPACK", ACM TOMS
// 30, 2004; Davis & Palamadai Natarajan, "Algorithm 907: KLU", ACM TOMS 37,
// 2010; from memory).
const pivotTol = 1e-3

// SparseLU is an allocation-free LU factorization of n×n matrices with a
// fixed sparsity pattern, for the iteration matrices c·I − J of the implicit
// methods on large sparse systems.
//
// NewSparseLU analyses the pattern once (Davis, Direct Methods for Sparse
// Linear Systems, SIAM 2006, chapters 6 and 7, is the reference for every
// step):
//
//   - Block triangular form: the strongly connected components of the
//     pattern's graph (Tarjan 1972), in topological order, permute the
//     matrix symmetrically to block upper triangular form (Duff & Reid,
//     "An implementation of Tarjan's algorithm for the block
//     triangularization of a matrix", ACM TOMS 4, 1978). The diagonal is
//     in the pattern, so no matching is needed. Each diagonal block is
//     factorized on its own, 1×1 blocks trivially, and a solve is a block
//     back-substitution. Feed-forward cascades fall apart into 1×1 blocks.
//   - Ordering of each larger block by measured fill: minimum degree on the
//     pattern of A + Aᵀ (exact external degrees on the elimination graph,
//     with degree lists, dense rows ordered last, Tinney & Walker 1967;
//     George & Liu, SIAM Review 31, 1989) and minimum degree on the pattern
//     of AᵀA (the column-ordering objective of COLAMD, Davis, Gilbert,
//     Larimore & Ng, ACM TOMS 30, 2004; rows with many entries dropped as
//     COLAMD does, from memory). The symbolic factorization of each with
//     diagonal pivots counts its fill, and the one with less is kept.
//
// The first factorization of a block is left-looking with threshold
// partial pivoting (Gilbert & Peierls, SIAM J. Sci. Stat. Comput. 9,
// 1988): the pattern of each column of L and U is found by a depth-first
// search in the graph of L, and the diagonal is the pivot unless it fails
// the pivotTol test. Later factorizations reuse the pivot sequence and the
// patterns and redo only the numbers (as KLU's refactorization does); when
// a reused pivot fails the test, that block is factorized with pivoting
// again. Only that re-analysis may allocate (when the factors grow).
//
// Factor reads a dense row-major matrix (the LinearSolver interface);
// FactorShifted assembles a·I + b·J from the values of J on the pattern
// through a scatter map computed once, so that no n×n array is needed.
type SparseLU struct {
	sym *luSymbolic
	num *luNumeric[realScalar]
	rhs []realScalar // Solve's work vector
}

// NewSparseLU analyses the pattern of n×n matrices given in compressed
// sparse row form (the columns of row i are colIdx[rowPtr[i]:rowPtr[i+1]];
// duplicates are allowed) and returns a SparseLU for matrices with that
// pattern plus the diagonal. It reports an error when the pattern is
// malformed.
func NewSparseLU(n int, rowPtr, colIdx []int) (*SparseLU, error) {
	sym, err := analyse(n, rowPtr, colIdx)
	if err != nil {
		return nil, err
	}
	return newSparseLUFrom(sym), nil
}

func newSparseLUFrom(sym *luSymbolic) *SparseLU {
	return &SparseLU{sym: sym, num: newNumeric[realScalar](sym), rhs: make([]realScalar, sym.n)}
}

// Dim is the order of the matrices.
func (f *SparseLU) Dim() int { return f.sym.n }

// FactorNonzeros is the number of entries of the factors: L and U of the
// diagonal blocks, diagonal included, plus the entries above the diagonal
// blocks, which the block back-substitution uses as they are. Before the
// first factorization it is the count of the symbolic analysis (diagonal
// pivots).
func (f *SparseLU) FactorNonzeros() int {
	if !f.num.analysed() {
		return f.sym.fill
	}
	return f.num.nonzeros()
}

// FactorFlops is the number of floating-point operations of one numeric
// factorization by the symbolic analysis (diagonal pivots); the dense LU
// takes about 2n³/3.
func (f *SparseLU) FactorFlops() float64 { return f.sym.flops }

// Blocks returns the number of diagonal blocks of the block triangular form
// and the order of the largest.
func (f *SparseLU) Blocks() (count, largest int) {
	for b := range len(f.sym.bs) - 1 {
		largest = max(largest, f.sym.bs[b+1]-f.sym.bs[b])
	}
	return len(f.sym.bs) - 1, largest
}

// Counts reports how many factorizations reused the pivot sequence of the
// analysis (numeric only) and how many chose pivots anew (the first one,
// and one for each time a reused pivot failed the threshold test).
func (f *SparseLU) Counts() (numeric, pivoting int) { return f.num.refactors, f.num.pivotings }

// Factor factorizes the n×n row-major matrix m (left unchanged), reading
// only the entries in the pattern. It returns an error only when m is
// singular (or not finite).
func (f *SparseLU) Factor(m []float64) error {
	n := f.sym.n
	if len(m) < n*n {
		return fmt.Errorf("sparse LU: matrix has %d entries; %d×%d needs %d", len(m), n, n, n*n)
	}
	for p, off := range f.sym.aOff {
		f.num.aVal[p] = realScalar(m[off])
	}
	return f.num.factor()
}

// FactorShifted factorizes a·I + b·J, where vals holds the entries of J in
// the order of the pattern given to NewSparseLU (duplicates are summed).
// It returns an error when the matrix is singular or not finite.
func (f *SparseLU) FactorShifted(a, b float64, vals []float64) error {
	if len(vals) < len(f.sym.src) {
		return fmt.Errorf("sparse LU: %d values given for a pattern of %d entries", len(vals), len(f.sym.src))
	}
	av := f.num.aVal
	clear(av)
	for p, e := range f.sym.src {
		av[e] += realScalar(b * vals[p])
	}
	for _, e := range f.sym.aDiag {
		av[e] += realScalar(a)
	}
	return f.num.factor()
}

// Solve overwrites b with the solution of M x = b for the last factorized M.
func (f *SparseLU) Solve(b []float64) {
	x := f.rhs
	for k, v := range f.sym.q {
		x[k] = realScalar(b[v])
	}
	f.num.solve(x)
	for k, v := range f.sym.q {
		b[v] = float64(x[k])
	}
}

// share returns a SparseLU with the symbolic analysis of f and its own
// values, factors and work space.
func (f *SparseLU) share() *SparseLU { return newSparseLUFrom(f.sym) }

// sparseCLU factorizes complex matrices (ar + i·ai)·I + b·J with the
// symbolic analysis of a SparseLU: Radau IIA's complex system.
type sparseCLU struct {
	sym *luSymbolic
	num *luNumeric[complexScalar]
	rhs []complexScalar
}

func newSparseCLU(sym *luSymbolic) *sparseCLU {
	return &sparseCLU{sym: sym, num: newNumeric[complexScalar](sym), rhs: make([]complexScalar, sym.n)}
}

// factorShifted factorizes (ar + i·ai)·I + b·J, J by its pattern values.
func (f *sparseCLU) factorShifted(ar, ai, b float64, vals []float64) error {
	av := f.num.aVal
	clear(av)
	for p, e := range f.sym.src {
		av[e] += complexScalar(complex(b*vals[p], 0))
	}
	d := complexScalar(complex(ar, ai))
	for _, e := range f.sym.aDiag {
		av[e] += d
	}
	return f.num.factor()
}

// solve overwrites br + i·bi with the solution of M x = b.
func (f *sparseCLU) solve(br, bi []float64) {
	x := f.rhs
	for k, v := range f.sym.q {
		x[k] = complexScalar(complex(br[v], bi[v]))
	}
	f.num.solve(x)
	for k, v := range f.sym.q {
		br[v], bi[v] = real(x[k]), imag(x[k])
	}
}

// realScalar and complexScalar are the entries of real and complex
// factorizations; mag is the magnitude used for pivoting (|re| + |im| for
// complex entries, as in LAPACK's complex pivoting by the 1-norm of the
// parts, from memory).
type realScalar float64
type complexScalar complex128

func (v realScalar) mag() float64    { return math.Abs(float64(v)) }
func (v complexScalar) mag() float64 { return math.Abs(real(v)) + math.Abs(imag(v)) }

type scalar interface {
	~float64 | ~complex128
	mag() float64
}

// luSymbolic is the analysis of a pattern, shared by the real and complex
// factorizations of every stepper.
type luSymbolic struct {
	n       int
	q, qinv []int // symmetric permutation: q[k] is the original index of new index k
	bs      []int // diagonal block k is new indices bs[k]:bs[k+1]
	// The pattern plus the diagonal by new column k: entries aPtr[k]:aMid[k]
	// lie in the column's diagonal block, aMid[k]:aPtr[k+1] above it. aRow
	// is the new row index.
	aPtr, aMid, aRow []int
	aDiag            []int // entry of the diagonal of each new column
	aOff             []int // row-major offset of each entry in the original n×n matrix
	src              []int // entry of each position of the CSR pattern (the scatter map)
	blockOf          []int // block of each new index
	fill             int   // nonzeros of the factors with diagonal pivots
	flops            float64
}

// analyse checks a CSR pattern and computes the block triangular form, the
// orderings of the blocks and the scatter maps.
func analyse(n int, rowPtr, colIdx []int) (*luSymbolic, error) {
	if n <= 0 {
		return nil, fmt.Errorf("sparse LU: order %d must be positive", n)
	}
	if len(rowPtr) != n+1 {
		return nil, fmt.Errorf("sparse LU: row pointer has %d entries; %d rows need %d", len(rowPtr), n, n+1)
	}
	if rowPtr[0] != 0 || rowPtr[n] > len(colIdx) {
		return nil, fmt.Errorf("sparse LU: row pointer runs from %d to %d; it must start at 0 and end within the %d column indices", rowPtr[0], rowPtr[n], len(colIdx))
	}
	for i := range n {
		if rowPtr[i+1] < rowPtr[i] {
			return nil, fmt.Errorf("sparse LU: row pointer decreases at row %d (%d after %d)", i, rowPtr[i+1], rowPtr[i])
		}
		for _, j := range colIdx[rowPtr[i]:rowPtr[i+1]] {
			if j < 0 || j >= n {
				return nil, fmt.Errorf("sparse LU: row %d has column index %d; columns run from 0 to %d", i, j, n-1)
			}
		}
	}
	// rows[i]: the distinct off-diagonal columns of row i.
	// (One flat array holds them all: the analysis allocates O(1) times
	// per matrix, plus a few times per block larger than 1×1.)
	rows := make([][]int, n)
	flat := slices.Clone(colIdx[:rowPtr[n]])
	for i := range n {
		r := flat[rowPtr[i]:rowPtr[i+1]:rowPtr[i+1]]
		slices.Sort(r)
		r = slices.Compact(r)
		if k, found := slices.BinarySearch(r, i); found {
			r = slices.Delete(r, k, k+1)
		}
		rows[i] = r
	}
	s := &luSymbolic{n: n}
	order, ends := strongComponents(n, rows)
	// Tarjan's algorithm emits a component after every component its rows
	// reach; reversed, the order makes the matrix block upper triangular.
	s.q = make([]int, 0, n)
	s.bs = make([]int, 1, len(ends)+1)
	local := make([]int, n) // block-local index of a vertex, −1 outside the block
	for i := range local {
		local[i] = -1
	}
	var ow orderWork
	for c := len(ends) - 1; c >= 0; c-- {
		start := 0
		if c > 0 {
			start = ends[c-1]
		}
		s.q = append(s.q, orderBlock(order[start:ends[c]], rows, local, &ow, &s.fill, &s.flops)...)
		s.bs = append(s.bs, len(s.q))
	}
	s.qinv = make([]int, n)
	for k, v := range s.q {
		s.qinv[v] = k
	}
	s.blockOf = make([]int, n)
	for b := range len(s.bs) - 1 {
		for k := s.bs[b]; k < s.bs[b+1]; k++ {
			s.blockOf[k] = b
		}
	}
	// Columns in the new order: rows (new indices), ascending.
	s.aPtr = make([]int, n+1)
	s.aMid = make([]int, n)
	for i := range n {
		s.aPtr[s.qinv[i]+1]++
		for _, j := range rows[i] {
			s.aPtr[s.qinv[j]+1]++
		}
	}
	for k := range n {
		s.aPtr[k+1] += s.aPtr[k]
	}
	nnz := s.aPtr[n]
	colFlat := make([]int, nnz)
	next := slices.Clone(s.aPtr[:n])
	for i := range n {
		ni := s.qinv[i]
		colFlat[next[ni]] = ni
		next[ni]++
		for _, j := range rows[i] {
			nj := s.qinv[j]
			colFlat[next[nj]] = ni
			next[nj]++
		}
	}
	cols := make([][]int, n)
	for k := range n {
		cols[k] = colFlat[s.aPtr[k]:s.aPtr[k+1]]
		slices.Sort(cols[k])
	}
	s.aRow = make([]int, nnz)
	s.aOff = make([]int, nnz)
	s.aDiag = make([]int, n)
	for k := range n {
		b0 := s.bs[s.blockOf[k]]
		// In-block rows first, then the rows of earlier blocks.
		p := s.aPtr[k]
		for _, r := range cols[k] {
			if r >= b0 {
				if r >= s.bs[s.blockOf[k]+1] { // cannot happen: Tarjan's order
					return nil, fmt.Errorf("sparse LU: internal error: entry (%d, %d) below the diagonal blocks", s.q[r], s.q[k])
				}
				s.aRow[p] = r
				p++
			}
		}
		s.aMid[k] = p
		for _, r := range cols[k] {
			if r < b0 {
				s.aRow[p] = r
				p++
			}
		}
		for e := s.aPtr[k]; e < s.aPtr[k+1]; e++ {
			s.aOff[e] = s.q[s.aRow[e]]*n + s.q[k]
			if s.aRow[e] == k {
				s.aDiag[k] = e
			}
		}
	}
	// Fill: the blocks' factors (added by orderBlock for the larger
	// ones), the 1×1 blocks and the entries above the blocks.
	for b := range len(s.bs) - 1 {
		if s.bs[b+1]-s.bs[b] == 1 {
			s.fill++
		}
	}
	for k := range n {
		s.fill += s.aPtr[k+1] - s.aMid[k]
	}
	s.src = make([]int, len(colIdx[:rowPtr[n]]))
	for i := range n {
		for p := rowPtr[i]; p < rowPtr[i+1]; p++ {
			s.src[p] = s.entry(s.qinv[i], s.qinv[colIdx[p]])
		}
	}
	return s, nil
}

// entry returns the entry of (new) row r in new column k.
func (s *luSymbolic) entry(r, k int) int {
	lo, hi := s.aPtr[k], s.aMid[k]
	if r < s.bs[s.blockOf[k]] {
		lo, hi = s.aMid[k], s.aPtr[k+1]
	}
	i, _ := slices.BinarySearch(s.aRow[lo:hi], r)
	return lo + i
}

// strongComponents returns the strongly connected components of the graph
// with an edge i → j for every j in rows[i], in the order Tarjan's
// algorithm completes them (Tarjan, SIAM J. Comput. 1, 1972): a component
// comes after every component it reaches. Component c is
// order[ends[c−1]:ends[c]] (ends[−1] = 0), sorted. The search is iterative.
func strongComponents(n int, rows [][]int) (order, ends []int) {
	index := make([]int, n)
	low := make([]int, n)
	onStack := make([]bool, n)
	for i := range index {
		index[i] = -1
	}
	order = make([]int, 0, n)
	var st []int // Tarjan's stack
	type frame struct{ v, next int }
	var call []frame
	counter := 0
	for v0 := range n {
		if index[v0] >= 0 {
			continue
		}
		call = append(call[:0], frame{v0, 0})
		index[v0], low[v0] = counter, counter
		counter++
		st = append(st, v0)
		onStack[v0] = true
		for len(call) > 0 {
			f := &call[len(call)-1]
			v := f.v
			if f.next < len(rows[v]) {
				w := rows[v][f.next]
				f.next++
				if index[w] < 0 {
					index[w], low[w] = counter, counter
					counter++
					st = append(st, w)
					onStack[w] = true
					call = append(call, frame{w, 0})
				} else if onStack[w] {
					low[v] = min(low[v], index[w])
				}
				continue
			}
			call = call[:len(call)-1]
			if len(call) > 0 {
				u := call[len(call)-1].v
				low[u] = min(low[u], low[v])
			}
			if low[v] == index[v] {
				start := len(order)
				for {
					w := st[len(st)-1]
					st = st[:len(st)-1]
					onStack[w] = false
					order = append(order, w)
					if w == v {
						break
					}
				}
				slices.Sort(order[start:])
				ends = append(ends, len(order))
			}
		}
	}
	return order, ends
}

// orderWork is work space that orderBlock and symbolicFill reuse from one
// block to the next, so that the analysis allocates a few times per block
// rather than per vertex.
type orderWork struct {
	rp, ri, cp, ci []int // the block's off-diagonal pattern by rows and by columns (local)
	pp, pi         []int // a candidate's permuted columns
	inv            []int
	mark, stack    []int
	reach          []int
	lPtr, lIdx     []int // the pattern of L while counting fill
}

// grow returns s with length n, reusing its storage when it can.
func grow(s []int, n int) []int {
	if cap(s) < n {
		return make([]int, n, max(n, 2*cap(s)))
	}
	return s[:n]
}

// orderBlock orders the vertices of one strongly connected component by
// the candidate with less measured fill and adds its fill and flops.
// local is −1 for every vertex on entry and on return.
func orderBlock(comp []int, rows [][]int, local []int, w *orderWork, fill *int, flops *float64) []int {
	m := len(comp)
	switch m {
	case 1:
		return comp
	case 2: // both orders fill the 2×2 block: 4 entries, 3 flops
		*fill += 4
		*flops += 3
		return comp
	}
	for i, v := range comp {
		local[v] = i
	}
	defer func() {
		for _, v := range comp {
			local[v] = -1
		}
	}()
	// The block's pattern by rows and by columns (off-diagonal, local).
	w.rp = grow(w.rp, m+1)
	w.cp = grow(w.cp, m+1)
	clear(w.cp)
	w.ri = w.ri[:0]
	w.rp[0] = 0
	for i, v := range comp {
		for _, j := range rows[v] {
			if lj := local[j]; lj >= 0 {
				w.ri = append(w.ri, lj)
				w.cp[lj+1]++
			}
		}
		w.rp[i+1] = len(w.ri)
	}
	for j := range m {
		w.cp[j+1] += w.cp[j]
	}
	w.ci = grow(w.ci, len(w.ri))
	next := grow(w.pp, m) // borrowed for the scatter
	copy(next, w.cp[:m])
	for i := range m {
		for _, j := range w.ri[w.rp[i]:w.rp[i+1]] {
			w.ci[next[j]] = i
			next[j]++
		}
	}
	// Candidate 1: minimum degree on A + Aᵀ.
	sym := make([][]int, m)
	for i := range m {
		a := make([]int, 0, w.rp[i+1]-w.rp[i]+w.cp[i+1]-w.cp[i])
		a = append(append(a, w.ri[w.rp[i]:w.rp[i+1]]...), w.ci[w.cp[i]:w.cp[i+1]]...)
		slices.Sort(a)
		sym[i] = slices.Compact(a)
	}
	cands := [][]int{minimumDegree(m, sym)}
	// Candidate 2: minimum degree on AᵀA, without rows of many entries.
	dense := max(16, int(10*math.Sqrt(float64(m))))
	ata := sym // reuse the headers; minimumDegree copied what it needs
	for i := range ata {
		ata[i] = ata[i][:0]
	}
	for i := range m {
		r := w.ri[w.rp[i]:w.rp[i+1]]
		if len(r)+1 > dense {
			continue
		}
		for _, a := range r {
			ata[a] = append(ata[a], i)
			ata[i] = append(ata[i], a)
			for _, b := range r {
				if a != b {
					ata[a] = append(ata[a], b)
				}
			}
		}
	}
	for i := range m {
		slices.Sort(ata[i])
		ata[i] = slices.Compact(ata[i])
	}
	cands = append(cands, minimumDegree(m, ata))
	best, bestFill, bestFlops := -1, math.MaxInt, 0.0
	w.inv = grow(w.inv, m)
	for c, perm := range cands {
		for k, v := range perm {
			w.inv[v] = k
		}
		// Column j of the candidate is column perm[j] of the block.
		w.pp = grow(w.pp, m+1)
		w.pi = w.pi[:0]
		for j, v := range perm {
			w.pp[j] = len(w.pi)
			for _, r := range w.ci[w.cp[v]:w.cp[v+1]] {
				w.pi = append(w.pi, w.inv[r])
			}
		}
		w.pp[m] = len(w.pi)
		f, fl := symbolicFill(m, w.pp, w.pi, bestFill, w)
		if f < bestFill {
			best, bestFill, bestFlops = c, f, fl
		}
	}
	*fill += bestFill
	*flops += bestFlops
	out := make([]int, m)
	for k, v := range cands[best] {
		out[k] = comp[v]
	}
	return out
}

// symbolicFill counts the entries of L and U (diagonal included) of the
// m×m matrix whose column j has the off-diagonal rows
// colIdx[colPtr[j]:colPtr[j+1]] (and the diagonal), factorized with
// diagonal pivots, and the flops of a left-looking numeric factorization
// (Davis 2006, sections 4.2 and 6.2). It stops early, returning a count
// above limit, once the count exceeds limit ≥ 0. w is work space (nil for
// a fresh one).
func symbolicFill(m int, colPtr, colIdx []int, limit int, w *orderWork) (fill int, flops float64) {
	if w == nil {
		w = &orderWork{}
	}
	w.mark = grow(w.mark, m)
	for i := range w.mark {
		w.mark[i] = -1
	}
	w.lPtr = grow(w.lPtr, m+1)
	w.lPtr[0] = 0
	w.lIdx = w.lIdx[:0]
	lcol := func(v int) []int { return w.lIdx[w.lPtr[v]:w.lPtr[v+1]] }
	for j := range m {
		// Reach of the column's rows in the graph of L: row i < j leads to
		// the rows of L's column i.
		w.reach = w.reach[:0]
		visit := func(r int) {
			if w.mark[r] == j {
				return
			}
			w.mark[r] = j
			w.stack = append(w.stack[:0], r)
			for len(w.stack) > 0 {
				v := w.stack[len(w.stack)-1]
				w.stack = w.stack[:len(w.stack)-1]
				w.reach = append(w.reach, v)
				if v < j {
					for _, u := range lcol(v) {
						if w.mark[u] != j {
							w.mark[u] = j
							w.stack = append(w.stack, u)
						}
					}
				}
			}
		}
		visit(j)
		for _, r := range colIdx[colPtr[j]:colPtr[j+1]] {
			visit(r)
		}
		nl := 0
		for _, v := range w.reach {
			switch {
			case v < j:
				fill++ // U
				flops += 2 * float64(w.lPtr[v+1]-w.lPtr[v])
			case v > j:
				w.lIdx = append(w.lIdx, v)
				nl++
			}
		}
		w.lPtr[j+1] = len(w.lIdx)
		fill += 1 + nl
		flops += float64(nl)
		if limit >= 0 && fill > limit {
			return fill, flops
		}
	}
	return fill, flops
}

// minimumDegree orders the vertices of the graph adj (sorted neighbour
// lists without self-loops) by minimum degree: it repeatedly eliminates a
// vertex of least degree from the elimination graph, joining its neighbours
// into a clique (Tinney & Walker 1967, scheme 2; George & Liu 1989). Degree
// lists make each choice O(1). Vertices of degree above
// max(16, 10·√m) are set aside and ordered last, as approximate minimum
// degree does with dense rows (Amestoy, Davis & Duff, SIAM J. Matrix Anal.
// Appl. 17, 1996; the threshold from memory).
func minimumDegree(m int, adj [][]int) []int {
	g := make([][]int, m)
	dense := max(16, int(10*math.Sqrt(float64(m))))
	isDense := make([]bool, m)
	for i := range m {
		isDense[i] = len(adj[i]) > dense
	}
	for i := range m {
		if isDense[i] {
			continue
		}
		for _, w := range adj[i] {
			if !isDense[w] {
				g[i] = append(g[i], w)
			}
		}
	}
	head := make([]int, m+1)
	next := make([]int, m)
	prev := make([]int, m)
	deg := make([]int, m)
	for i := range head {
		head[i] = -1
	}
	insert := func(v, d int) {
		deg[v] = d
		prev[v] = -1
		next[v] = head[d]
		if head[d] >= 0 {
			prev[head[d]] = v
		}
		head[d] = v
	}
	remove := func(v int) {
		if prev[v] >= 0 {
			next[prev[v]] = next[v]
		} else {
			head[deg[v]] = next[v]
		}
		if next[v] >= 0 {
			prev[next[v]] = prev[v]
		}
	}
	// Insert in descending index so that the lowest index is taken first
	// among equals.
	live := 0
	for i := m - 1; i >= 0; i-- {
		if !isDense[i] {
			insert(i, len(g[i]))
			live++
		}
	}
	perm := make([]int, 0, m)
	var merged []int
	mindeg := 0
	for range live {
		for head[mindeg] < 0 {
			mindeg++
		}
		v := head[mindeg]
		remove(v)
		perm = append(perm, v)
		nv := g[v]
		g[v] = nil
		for _, a := range nv {
			// g[a] ← (g[a] ∪ nv) \ {a, v}, both sorted.
			merged = merged[:0]
			x, y := g[a], nv
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
			g[a] = append(g[a][:0], merged...)
			remove(a)
			insert(a, len(g[a]))
			mindeg = min(mindeg, len(g[a]))
		}
	}
	for i := range m {
		if isDense[i] {
			perm = append(perm, i)
		}
	}
	return perm
}

// luNumeric holds the numeric factorization of every diagonal block.
type luNumeric[T scalar] struct {
	sym    *luSymbolic
	aVal   []T // the matrix entries, by luSymbolic's entries
	dinv   []T // reciprocals of U's diagonal, by new column (solves multiply)
	blocks []*luBlock[T]
	w      []T // work vector, all zero between calls

	refactors, pivotings int
}

// luBlock is the factorization P·A_b = L·U of one diagonal block of order
// m > 1, in local indices: pinv maps a local row to its pivot position,
// and the rows of L's and U's columns are pivot positions (U's ascending).
type luBlock[T scalar] struct {
	b0, m      int
	pinv       []int
	lPtr, lRow []int
	lVal       []T
	uPtr, uRow []int
	uVal       []T
	done       bool // factorized with pivoting at least once

	// Work space of the pivoting factorization.
	mark, stk, pos, reach []int
	stamp                 int
}

func newNumeric[T scalar](sym *luSymbolic) *luNumeric[T] {
	nm := &luNumeric[T]{sym: sym, aVal: make([]T, sym.aPtr[sym.n]), dinv: make([]T, sym.n),
		blocks: make([]*luBlock[T], len(sym.bs)-1), w: make([]T, sym.n)}
	for b := range nm.blocks {
		b0, b1 := sym.bs[b], sym.bs[b+1]
		if m := b1 - b0; m > 1 {
			nm.blocks[b] = &luBlock[T]{b0: b0, m: m, pinv: make([]int, m), lPtr: make([]int, m+1), uPtr: make([]int, m+1),
				mark: make([]int, m), stk: make([]int, m), pos: make([]int, m)}
		}
	}
	return nm
}

func (nm *luNumeric[T]) analysed() bool {
	for _, bk := range nm.blocks {
		if bk != nil && !bk.done {
			return false
		}
	}
	return nm.refactors+nm.pivotings > 0
}

func (nm *luNumeric[T]) nonzeros() int {
	s := nm.sym
	nz := s.n
	for k := range s.n {
		nz += s.aPtr[k+1] - s.aMid[k]
	}
	for _, bk := range nm.blocks {
		if bk != nil {
			nz += len(bk.lRow) + len(bk.uRow)
		}
	}
	return nz
}

// factor factorizes the matrix in aVal, block by block.
func (nm *luNumeric[T]) factor() error {
	s := nm.sym
	pivoted := false
	for b, bk := range nm.blocks {
		if bk == nil {
			k := s.bs[b]
			d := nm.aVal[s.aDiag[k]]
			if d == 0 || notFinite(d.mag()) {
				return errSingular
			}
			nm.dinv[k] = 1 / d
			continue
		}
		if bk.done && bk.refactor(nm) {
			continue
		}
		pivoted = true
		if err := bk.pivot(nm); err != nil {
			bk.done = false
			return err
		}
		bk.done = true
	}
	if pivoted {
		nm.pivotings++
	} else {
		nm.refactors++
	}
	return nil
}

func notFinite(v float64) bool { return math.IsNaN(v) || math.IsInf(v, 0) }

// refactor factorizes the block with the stored pivot sequence and
// patterns. It reports false, with the work vector clean, when a pivot
// fails the threshold test.
func (bk *luBlock[T]) refactor(nm *luNumeric[T]) bool {
	s := nm.sym
	x := nm.w[:bk.m]
	for j := range bk.m {
		k := bk.b0 + j
		for p := s.aPtr[k]; p < s.aMid[k]; p++ {
			x[bk.pinv[s.aRow[p]-bk.b0]] = nm.aVal[p]
		}
		u0, u1 := bk.uPtr[j], bk.uPtr[j+1]
		uv := bk.uVal[u0:u1]
		for t, i := range bk.uRow[u0:u1] {
			xi := x[i]
			uv[t] = xi
			x[i] = 0
			if xi == 0 {
				continue
			}
			l0, l1 := bk.lPtr[i], bk.lPtr[i+1]
			lv := bk.lVal[l0:l1]
			for t2, r := range bk.lRow[l0:l1] {
				x[r] -= lv[t2] * xi
			}
		}
		piv := x[j]
		x[j] = 0
		l0, l1 := bk.lPtr[j], bk.lPtr[j+1]
		var big float64
		for _, r := range bk.lRow[l0:l1] {
			big = math.Max(big, x[r].mag())
		}
		pm := piv.mag()
		if !(pm >= pivotTol*big) || pm == 0 || notFinite(pm) || notFinite(big) {
			for _, r := range bk.lRow[l0:l1] {
				x[r] = 0
			}
			return false
		}
		ip := 1 / piv
		nm.dinv[k] = ip
		lv := bk.lVal[l0:l1]
		for t, r := range bk.lRow[l0:l1] {
			lv[t] = x[r] * ip
			x[r] = 0
		}
	}
	return true
}

// pivot factorizes the block left-looking with threshold partial pivoting
// (Gilbert & Peierls 1988; Davis 2006, section 6.3) and stores the pivot
// sequence and patterns for refactor.
func (bk *luBlock[T]) pivot(nm *luNumeric[T]) error {
	s := nm.sym
	m, b0 := bk.m, bk.b0
	x := nm.w[:m] // indexed by local row during this factorization
	for i := range bk.pinv {
		bk.pinv[i] = -1
	}
	bk.lRow, bk.lVal = bk.lRow[:0], bk.lVal[:0]
	bk.uRow, bk.uVal = bk.uRow[:0], bk.uVal[:0]
	bk.lPtr[0], bk.uPtr[0] = 0, 0
	for j := range m {
		k := b0 + j
		// Pattern: the rows reachable from the column's rows in the graph
		// of L (rows of pivotal columns lead to L's column), in
		// topological order (reverse post-order of the search).
		bk.stamp++
		if bk.stamp == math.MaxInt {
			clear(bk.mark)
			bk.stamp = 1
		}
		bk.reach = bk.reach[:0]
		for p := s.aPtr[k]; p < s.aMid[k]; p++ {
			if r := s.aRow[p] - b0; bk.mark[r] != bk.stamp {
				bk.dfs(r)
			}
		}
		for p := s.aPtr[k]; p < s.aMid[k]; p++ {
			x[s.aRow[p]-b0] = nm.aVal[p]
		}
		for t := len(bk.reach) - 1; t >= 0; t-- {
			r := bk.reach[t]
			i := bk.pinv[r]
			if i < 0 {
				continue
			}
			xr := x[r]
			if xr == 0 {
				continue
			}
			for p := bk.lPtr[i]; p < bk.lPtr[i+1]; p++ {
				x[bk.lRow[p]] -= bk.lVal[p] * xr
			}
		}
		// Choose the pivot among the rows not yet pivotal.
		piv, big := -1, 0.0
		for _, r := range bk.reach {
			if bk.pinv[r] < 0 {
				if v := x[r].mag(); v > big || piv < 0 || math.IsNaN(v) {
					piv, big = r, v
					if math.IsNaN(v) {
						break
					}
				}
			}
		}
		if bk.pinv[j] < 0 && bk.mark[j] == bk.stamp && x[j].mag() >= pivotTol*big {
			piv = j
		}
		if piv < 0 || big == 0 || notFinite(big) || notFinite(x[piv].mag()) || x[piv] == 0 {
			for _, r := range bk.reach {
				x[r] = 0
			}
			return errSingular
		}
		pv := x[piv]
		ip := 1 / pv
		nm.dinv[k] = ip
		for _, r := range bk.reach {
			switch i := bk.pinv[r]; {
			case i >= 0:
				bk.uRow = append(bk.uRow, i)
				bk.uVal = append(bk.uVal, x[r])
			case r != piv:
				bk.lRow = append(bk.lRow, r) // local row; made a position below
				bk.lVal = append(bk.lVal, x[r]*ip)
			}
			x[r] = 0
		}
		bk.pinv[piv] = j
		bk.lPtr[j+1], bk.uPtr[j+1] = len(bk.lRow), len(bk.uRow)
		sortPairs(bk.uRow[bk.uPtr[j]:], bk.uVal[bk.uPtr[j]:])
	}
	for p, r := range bk.lRow {
		bk.lRow[p] = bk.pinv[r]
	}
	return nil
}

// dfs adds to bk.reach, in post-order, the rows reachable from r that are
// not yet marked (Davis 2006, cs_dfs, iterative).
func (bk *luBlock[T]) dfs(r int) {
	top := 0
	bk.stk[0] = r
	bk.mark[r] = bk.stamp
	bk.pos[0] = 0
	if i := bk.pinv[r]; i >= 0 {
		bk.pos[0] = bk.lPtr[i]
	}
	for top >= 0 {
		v := bk.stk[top]
		i := bk.pinv[v]
		pushed := false
		if i >= 0 {
			for p := bk.pos[top]; p < bk.lPtr[i+1]; p++ {
				w := bk.lRow[p]
				if bk.mark[w] == bk.stamp {
					continue
				}
				bk.pos[top] = p + 1
				bk.mark[w] = bk.stamp
				top++
				bk.stk[top] = w
				bk.pos[top] = 0
				if iw := bk.pinv[w]; iw >= 0 {
					bk.pos[top] = bk.lPtr[iw]
				}
				pushed = true
				break
			}
		}
		if !pushed {
			top--
			bk.reach = append(bk.reach, v)
		}
	}
}

// sortPairs sorts keys ascending and vals along (insertion sort: the
// columns are short).
func sortPairs[T any](keys []int, vals []T) {
	for i := 1; i < len(keys); i++ {
		k, v := keys[i], vals[i]
		j := i - 1
		for j >= 0 && keys[j] > k {
			keys[j+1], vals[j+1] = keys[j], vals[j]
			j--
		}
		keys[j+1], vals[j+1] = k, v
	}
}

// solve overwrites x (in the new order) with the solution by block
// back-substitution.
func (nm *luNumeric[T]) solve(x []T) {
	s := nm.sym
	for b := len(nm.blocks) - 1; b >= 0; b-- {
		b0, b1 := s.bs[b], s.bs[b+1]
		if bk := nm.blocks[b]; bk == nil {
			x[b0] *= nm.dinv[b0]
		} else {
			bk.solve(nm, x[b0:b1])
		}
		for k := b0; k < b1; k++ {
			xk := x[k]
			if xk == 0 {
				continue
			}
			for p := s.aMid[k]; p < s.aPtr[k+1]; p++ {
				x[s.aRow[p]] -= nm.aVal[p] * xk
			}
		}
	}
}

// solve overwrites x (the block's part of the right-hand side, in local
// rows) with the block's solution (in local columns).
func (bk *luBlock[T]) solve(nm *luNumeric[T], x []T) {
	m := bk.m
	w := nm.w[:m]
	x = x[:m]
	for r, i := range bk.pinv {
		w[i] = x[r]
	}
	// The columns are walked by one running position p over the whole
	// factor (columns are stored in order), which costs less per column
	// than slicing each: the columns of reaction networks' factors are
	// short.
	lPtr, lRow, lVal := bk.lPtr[:m+1], bk.lRow, bk.lVal
	lVal = lVal[:len(lRow)]
	p := lPtr[0]
	for j, wj := range w {
		p1 := lPtr[j+1]
		if wj != 0 {
			for ; p < p1; p++ {
				w[lRow[p]] -= lVal[p] * wj
			}
		}
		p = p1
	}
	uPtr, uRow, uVal := bk.uPtr[:m+1], bk.uRow, bk.uVal
	uVal = uVal[:len(uRow)]
	dinv := nm.dinv[bk.b0 : bk.b0+m]
	p = uPtr[m]
	for j := m - 1; j >= 0; j-- {
		wj := w[j] * dinv[j]
		w[j] = 0
		x[j] = wj
		p0 := uPtr[j]
		if wj != 0 {
			for q := p0; q < p; q++ {
				w[uRow[q]] -= uVal[q] * wj
			}
		}
		p = p0
	}
}

// sparseFor returns the symbolic analysis for sys when it is a
// SparsePatternSystem of at least sparseMinSize variables whose sparse
// factorization is expected to be faster than the dense one, else nil.
func sparseFor(sys System) *luSymbolic {
	ps, ok := sys.(SparsePatternSystem)
	n := sys.Dim()
	if !ok || n < sparseMinSize {
		return nil
	}
	rp, ci := ps.JacobianPattern()
	s, err := analyse(n, rp, ci)
	if err != nil || sparseFlopRatio*s.flops > 2*float64(n)*float64(n)*float64(n)/3 {
		return nil
	}
	return s
}

// samePattern reports whether a and b have the same Jacobian pattern (as
// far as the sparse solver is concerned: both without one counts as same).
func samePattern(a, b System) bool {
	pa, oka := a.(SparsePatternSystem)
	pb, okb := b.(SparsePatternSystem)
	if !oka || !okb {
		return oka == okb
	}
	_, sa := a.(SparseJacobianSystem)
	_, sb := b.(SparseJacobianSystem)
	if sa != sb {
		return false
	}
	ra, ca := pa.JacobianPattern()
	rb, cb := pb.JacobianPattern()
	return slices.Equal(ra, rb) && slices.Equal(ca, cb)
}
