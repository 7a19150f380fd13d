package solve

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// randomSparse returns a random n×n row-major matrix with about perRow
// off-diagonal entries per row, its CSR pattern (off-diagonal only, to check
// that the diagonal is added), and, when dominant, a diagonal that
// dominates its column strictly.
func randomSparse(rng *rand.Rand, n, perRow int, dominant bool) (m []float64, rowPtr, colIdx []int) {
	m = make([]float64, n*n)
	rowPtr = []int{0}
	for i := range n {
		for range perRow {
			j := rng.IntN(n)
			if j == i {
				continue
			}
			m[i*n+j] = rng.Float64()*2 - 1
			colIdx = append(colIdx, j) // duplicates allowed
		}
		rowPtr = append(rowPtr, len(colIdx))
	}
	for j := range n {
		var s float64
		for i := range n {
			s += math.Abs(m[i*n+j])
		}
		if dominant {
			m[j*n+j] = (1 + s + rng.Float64()) * float64(1-2*rng.IntN(2))
		} else {
			m[j*n+j] = rng.Float64()*2 - 1
		}
	}
	return m, rowPtr, colIdx
}

// gonumSolve solves the row-major n×n system m·x = b with gonum's LU
// (LAPACK's dgetrf/dgetrs in Go: partial pivoting), the reference library
// for the sparse factorizations.
func gonumSolve(t *testing.T, n int, m, b []float64) []float64 {
	t.Helper()
	var lu mat.LU
	lu.Factorize(mat.NewDense(n, n, append([]float64(nil), m...)))
	var x mat.VecDense
	if err := lu.SolveVecTo(&x, false, mat.NewVecDense(n, append([]float64(nil), b...))); err != nil {
		t.Fatalf("gonum LU: %v", err)
	}
	return x.RawVector().Data
}

// maxDiff is the largest |a − b| and the largest |b|.
func maxDiff(a, b []float64) (diff, norm float64) {
	for i := range a {
		diff = math.Max(diff, math.Abs(a[i]-b[i]))
		norm = math.Max(norm, math.Abs(b[i]))
	}
	return diff, norm
}

// TestSparseLURandom compares SparseLU with gonum's dense LU on random
// sparse systems, diagonally dominant ones (static diagonal pivots) and
// ones with random diagonals, which need pivoting: relative difference of
// the solutions ≤ 1e-12 for the dominant ones (both backward stable, well
// conditioned; common practice) and ≤ 1e-8·cond-ish for the others, where
// the bound is scaled by the solution's size. A second factorization of
// the same matrix reuses the pivot sequence (numeric only).
func TestSparseLURandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, dominant := range []bool{true, false} {
		for _, n := range []int{1, 2, 5, 40, 200, 500} {
			for _, per := range []int{0, 1, 3, 8} {
				m, rp, ci := randomSparse(rng, n, per, dominant)
				f, err := NewSparseLU(n, rp, ci)
				if err != nil {
					t.Fatal(err)
				}
				if err := f.Factor(m); err != nil {
					t.Fatalf("n %d: %v", n, err)
				}
				if err := f.Factor(m); err != nil {
					t.Fatalf("n %d: %v", n, err)
				}
				// Only blocks larger than 1×1 choose pivots.
				wantPiv := 0
				if _, big := f.Blocks(); big > 1 {
					wantPiv = 1
				}
				if num, piv := f.Counts(); num != 2-wantPiv || piv != wantPiv {
					t.Errorf("n %d per row %d: %d numeric and %d pivoting factorizations, want %d and %d", n, per, num, piv, 2-wantPiv, wantPiv)
				}
				b := make([]float64, n)
				for i := range b {
					b[i] = rng.NormFloat64()
				}
				xs := append([]float64(nil), b...)
				f.Solve(xs)
				xd := gonumSolve(t, n, m, b)
				diff, norm := maxDiff(xs, xd)
				tol := 1e-12
				if !dominant {
					tol = 1e-8
				}
				if diff > tol*norm {
					t.Errorf("dominant %v n %d per row %d: sparse and gonum solutions differ by %.3g (norm %.3g)", dominant, n, per, diff, norm)
				}
				if n >= 200 && per == 3 {
					c, big := f.Blocks()
					t.Logf("dominant %v n %d, %d pattern entries: %d entries in the factors, %d blocks (largest %d)", dominant, n, len(ci)+n, f.FactorNonzeros(), c, big)
				}
			}
		}
	}
}

// TestSparseLUPivoting checks threshold partial pivoting: a nonsingular
// matrix with a zero (or tiny) diagonal entry is factorized with another
// pivot and solved right; a singular matrix is reported.
func TestSparseLUPivoting(t *testing.T) {
	// [[0 1 0],[1 0 2],[0 3 1]]: zero diagonal entry first.
	m := []float64{0, 1, 0, 1, 0, 2, 0, 3, 1}
	rp := []int{0, 1, 3, 4}
	ci := []int{1, 0, 2, 1}
	f, err := NewSparseLU(3, rp, ci)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Factor(m); err != nil {
		t.Fatal(err)
	}
	// Solution of M x = (1, 9, 7): x = (1, 1, 4) by hand.
	b := []float64{1, 9, 7}
	f.Solve(b)
	for i, want := range []float64{1, 1, 4} {
		if math.Abs(b[i]-want) > 1e-14 {
			t.Errorf("x[%d] = %v, want %v", i, b[i], want)
		}
	}
	// A fresh factorization of a dominant matrix pivots on the diagonal;
	// a tiny diagonal entry (1e-9 above a 1 in its column fails the 1e-3
	// test) then makes the reused sequence fail and pivots anew; the
	// dominant matrix again accepts that sequence (its pivot 1 is ≥ 1e-3
	// times 4).
	g, err := NewSparseLU(3, rp, ci)
	if err != nil {
		t.Fatal(err)
	}
	dom := []float64{4, 1, 0, 1, 4, 2, 0, 3, 4}
	tiny := []float64{1e-9, 1, 0, 1, 1, 2, 0, 3, 1}
	for i, c := range [][]float64{dom, tiny, dom} {
		if err := g.Factor(c); err != nil {
			t.Fatal(err)
		}
		rhs := []float64{1, -2, 0.5}
		x := append([]float64(nil), rhs...)
		g.Solve(x)
		if d, nm := maxDiff(x, gonumSolve(t, 3, c, rhs)); d > 1e-12*nm {
			t.Errorf("matrix %d: differs from gonum's solution by %.3g", i, d)
		}
	}
	if num, piv := g.Counts(); num != 1 || piv != 2 {
		t.Errorf("%d numeric and %d pivoting factorizations, want 1 and 2", num, piv)
	}
	// Singular: the third row is twice the first.
	sing := []float64{0, 1, 0, 1, 0, 2, 0, 2, 0}
	if err := f.Factor(sing); err == nil {
		t.Error("singular matrix factorized without error")
	}
	// NaN entries are reported too.
	nan := []float64{math.NaN(), 1, 0, 1, 4, 2, 0, 3, 4}
	if err := f.Factor(nan); err == nil {
		t.Error("matrix with NaN factorized without error")
	}
	// And it recovers.
	if err := f.Factor(m); err != nil {
		t.Fatal(err)
	}
}

// blockPattern builds the CSR pattern of n×n matrices with the given
// off-diagonal entries (row, column).
func blockPattern(n int, entries [][2]int) (rp, ci []int, m []float64) {
	rows := make([][]int, n)
	for _, e := range entries {
		rows[e[0]] = append(rows[e[0]], e[1])
	}
	m = make([]float64, n*n)
	rp = []int{0}
	for i := range n {
		ci = append(ci, rows[i]...)
		rp = append(rp, len(ci))
		for _, j := range rows[i] {
			m[i*n+j] = 0.3 + float64((i*7+j*3)%5)/10
		}
		m[i*n+i] = -0.5 - float64(i%3)/4 // some diagonals smaller than the rest of their column
	}
	return rp, ci, m
}

// TestSparseBTF checks the block triangular form on patterns whose blocks
// are known by construction: a feed-forward chain (n blocks of 1), a ring
// (one block of n), and two rings joined by a feed-forward link plus two
// free vertices (blocks 5, 3, 1, 1), and the solutions against gonum's LU.
func TestSparseBTF(t *testing.T) {
	chain := [][2]int{}
	for i := 1; i < 30; i++ {
		chain = append(chain, [2]int{i, i - 1}, [2]int{i, max(0, i-5)})
	}
	ring := [][2]int{}
	for i := range 30 {
		ring = append(ring, [2]int{i, (i + 1) % 30})
	}
	two := [][2]int{{0, 1}, {1, 2}, {2, 3}, {3, 4}, {4, 0}, {5, 6}, {6, 7}, {7, 5}, {5, 2}, {9, 7}, {8, 9}}
	for _, c := range []struct {
		name        string
		n           int
		entries     [][2]int
		blocks, big int
	}{
		{"chain", 30, chain, 30, 1},
		{"ring", 30, ring, 1, 30},
		{"two rings", 10, two, 4, 5},
	} {
		rp, ci, m := blockPattern(c.n, c.entries)
		f, err := NewSparseLU(c.n, rp, ci)
		if err != nil {
			t.Fatal(err)
		}
		if nb, big := f.Blocks(); nb != c.blocks || big != c.big {
			t.Errorf("%s: %d blocks, largest %d; want %d and %d", c.name, nb, big, c.blocks, c.big)
		}
		// The permuted pattern is block upper triangular.
		s := f.sym
		for k := range c.n {
			for p := s.aPtr[k]; p < s.aPtr[k+1]; p++ {
				if s.blockOf[s.aRow[p]] > s.blockOf[k] {
					t.Errorf("%s: entry (%d, %d) lies below the diagonal blocks", c.name, s.aRow[p], k)
				}
			}
		}
		if err := f.Factor(m); err != nil {
			t.Fatal(err)
		}
		b := make([]float64, c.n)
		for i := range b {
			b[i] = float64(i%4) - 1.5
		}
		x := append([]float64(nil), b...)
		f.Solve(x)
		if d, nm := maxDiff(x, gonumSolve(t, c.n, m, b)); d > 1e-12*nm {
			t.Errorf("%s: differs from gonum's solution by %.3g", c.name, d)
		}
	}
}

// TestSparseOrderingFill checks the ordering on an arrow pattern (one
// vertex coupled to all others), whose minimum-degree order eliminates the
// hub last with no fill at all: the factors then have exactly 3n − 2
// entries (n diagonal, n − 1 in the hub's row of U and column of L; George
// & Liu 1981, the arrowhead example, from memory), against n² for the hub
// first.
func TestSparseOrderingFill(t *testing.T) {
	const n = 60
	var entries [][2]int
	for i := 1; i < n; i++ {
		entries = append(entries, [2]int{0, i}, [2]int{i, 0})
	}
	rp, ci, m := blockPattern(n, entries)
	for i := 1; i < n; i++ {
		m[i*n+i] = 4 // keep the diagonal pivots
	}
	m[0] = 100
	f, err := NewSparseLU(n, rp, ci)
	if err != nil {
		t.Fatal(err)
	}
	if got := f.FactorNonzeros(); got != 3*n-2 {
		t.Errorf("symbolic: %d entries in the factors, want 3n − 2 = %d", got, 3*n-2)
	}
	if err := f.Factor(m); err != nil {
		t.Fatal(err)
	}
	if got := f.FactorNonzeros(); got != 3*n-2 {
		t.Errorf("numeric: %d entries in the factors, want %d", got, 3*n-2)
	}
	// symbolicFill with the hub first fills the whole matrix.
	colPtr, colIdx := []int{0}, []int{}
	for j := range n {
		if j == 0 {
			for i := 1; i < n; i++ {
				colIdx = append(colIdx, i)
			}
		} else {
			colIdx = append(colIdx, 0)
		}
		colPtr = append(colPtr, len(colIdx))
	}
	if fill, _ := symbolicFill(n, colPtr, colIdx, -1, nil); fill != n*n {
		t.Errorf("hub first: %d entries, want n² = %d", fill, n*n)
	}
}

// TestSparseShiftedAndComplex checks FactorShifted against Factor of the
// same matrix formed densely, and the complex factorization of
// (ar + i·ai)·I + b·J against gonum's LU of the equivalent real system
// [[Re, −Im], [Im, Re]] of order 2n.
func TestSparseShiftedAndComplex(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	const n = 80
	jm, rp, ci := randomSparse(rng, n, 3, false)
	vals := make([]float64, len(ci))
	for i := range n {
		for p := rp[i]; p < rp[i+1]; p++ {
			vals[p] = jm[i*n+ci[p]]
		}
	}
	// Duplicates in the pattern: the CSR values are summed, so give the
	// whole entry to the first and zero to the rest.
	for i := range n {
		seen := map[int]bool{}
		for p := rp[i]; p < rp[i+1]; p++ {
			if seen[ci[p]] {
				vals[p] = 0
			}
			seen[ci[p]] = true
		}
	}
	const a, bb = 0.7, -1.3
	dense := make([]float64, n*n)
	for i := range n {
		for j := range n {
			if j != i {
				dense[i*n+j] = bb * jm[i*n+j]
			}
		}
		dense[i*n+i] = a // the diagonal of J is not in the pattern: zero
	}
	f, err := NewSparseLU(n, rp, ci)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.FactorShifted(a, bb, vals); err != nil {
		t.Fatal(err)
	}
	rhs := make([]float64, n)
	for i := range rhs {
		rhs[i] = rng.NormFloat64()
	}
	x := append([]float64(nil), rhs...)
	f.Solve(x)
	if d, nm := maxDiff(x, gonumSolve(t, n, dense, rhs)); d > 1e-10*nm {
		t.Errorf("FactorShifted: differs from gonum's solution by %.3g (norm %.3g)", d, nm)
	}
	const ar, ai = 0.4, 2.5
	big := make([]float64, 4*n*n)
	for i := range n {
		for j := range n {
			re := dense[i*n+j]
			if i == j {
				re = ar
			}
			im := 0.0
			if i == j {
				im = ai
			}
			big[i*2*n+j], big[i*2*n+n+j] = re, -im
			big[(n+i)*2*n+j], big[(n+i)*2*n+n+j] = im, re
		}
	}
	c := newSparseCLU(f.sym)
	if err := c.factorShifted(ar, ai, bb, vals); err != nil {
		t.Fatal(err)
	}
	br, bi := make([]float64, n), make([]float64, n)
	for i := range n {
		br[i], bi[i] = rng.NormFloat64(), rng.NormFloat64()
	}
	want := gonumSolve(t, 2*n, big, append(append([]float64(nil), br...), bi...))
	c.solve(br, bi)
	got := append(append([]float64(nil), br...), bi...)
	if d, nm := maxDiff(got, want); d > 1e-10*nm {
		t.Errorf("complex: differs from gonum's real equivalent by %.3g (norm %.3g)", d, nm)
	}
	if a := testing.AllocsPerRun(10, func() {
		_ = c.factorShifted(ar, ai, bb, vals)
		c.solve(br, bi)
		_ = f.FactorShifted(a, bb, vals)
		f.Solve(x)
	}); a != 0 {
		t.Errorf("FactorShifted and Solve, real and complex: %v allocations per run", a)
	}
}

// TestSparseLUBadPattern checks the messages for malformed patterns.
func TestSparseLUBadPattern(t *testing.T) {
	for _, c := range []struct {
		n      int
		rp, ci []int
		want   string
	}{
		{0, []int{0}, nil, "order 0"},
		{2, []int{0, 1}, []int{0}, "2 rows need 3"},
		{2, []int{0, 1, 3}, []int{0, 1}, "within the 2 column indices"},
		{2, []int{0, 2, 1}, []int{0, 1}, "decreases at row 1"},
		{2, []int{0, 1, 2}, []int{0, 5}, "row 1 has column index 5"},
	} {
		_, err := NewSparseLU(c.n, c.rp, c.ci)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("NewSparseLU(%d, %v, %v) = %v, want an error mentioning %q", c.n, c.rp, c.ci, err, c.want)
		}
	}
}

// TestSparseLUAllocs checks that Factor and Solve do not allocate, when
// the pivot sequence is reused and (once the factors have reached their
// size) when two matrices that need different pivots alternate.
func TestSparseLUAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	m, rp, ci := randomSparse(rng, 100, 3, true)
	f, err := NewSparseLU(100, rp, ci)
	if err != nil {
		t.Fatal(err)
	}
	b := make([]float64, 100)
	if a := testing.AllocsPerRun(20, func() { _ = f.Factor(m); f.Solve(b) }); a != 0 {
		t.Errorf("Factor+Solve: %v allocations per run", a)
	}
	bad := append([]float64(nil), m...)
	for i := range 100 {
		bad[i*100+i] *= 1e-6 // small diagonals: other pivots
	}
	_ = f.Factor(bad)
	_ = f.Factor(m)
	_, p0 := f.Counts()
	if a := testing.AllocsPerRun(20, func() { _ = f.Factor(bad); f.Solve(b); _ = f.Factor(m); f.Solve(b) }); a != 0 {
		t.Errorf("alternating pivot sequences: %v allocations per run", a)
	}
	if _, p1 := f.Counts(); p1-p0 < 40 {
		t.Errorf("%d pivoting factorizations while alternating, want ≥ 40", p1-p0)
	}
}

// patterned adds a Jacobian pattern, read off the Jacobian at a random
// positive state, to a System.
type patterned struct {
	System
	rp, ci []int
}

func (p patterned) JacobianPattern() ([]int, []int) { return p.rp, p.ci }

func withPattern(sys System) patterned {
	n := sys.Dim()
	rng := rand.New(rand.NewPCG(5, 6))
	y := make([]float64, n)
	for i := range y {
		y[i] = 0.5 + rng.Float64()
	}
	j := mat.NewDense(n, n, nil)
	sys.Jacobian(0, y, j)
	p := patterned{System: sys, rp: []int{0}}
	for r := range n {
		for c := range n {
			if j.At(r, c) != 0 {
				p.ci = append(p.ci, c)
			}
		}
		p.rp = append(p.rp, len(p.ci))
	}
	return p
}

// TestSparseTestSet solves HIRES and POLLU with SparseLU given through
// Settings.LinearSolver and checks the published reference solutions (Test
// Set for IVP Solvers, Mazzia & Magherini, release 2.4): scaled error ≤ 10,
// as for the dense solver, for every implicit method.
func TestSparseTestSet(t *testing.T) {
	for _, c := range testSetCases {
		p := withPattern(c.sys())
		for _, m := range []Method{Rosenbrock, Radau, BDF} {
			t.Run(fmt.Sprintf("%s/%s", c.name, m), func(t *testing.T) {
				var made []*SparseLU
				s := Settings{Method: m, RTol: 1e-8, ATol: c.atol, Times: []float64{c.tEnd},
					LinearSolver: func(n int) LinearSolver {
						f, err := NewSparseLU(n, p.rp, p.ci)
						if err != nil {
							t.Fatal(err)
						}
						made = append(made, f)
						return f
					}}
				res, err := Solve(context.Background(), c.sys(), 0, c.tEnd, c.y0(), s)
				if err != nil {
					t.Fatal(err)
				}
				e := scaledError(res.Y[0], c.ref, 1e-8, c.atol)
				var sp, dn int
				for _, f := range made {
					a, b := f.Counts()
					sp, dn = sp+a, dn+b
				}
				t.Logf("%s %s sparse: scaled error %.3g, %d sparse and %d dense factorizations", c.name, m, e, sp, dn)
				if e > 10 {
					t.Errorf("scaled error %.3g > 10", e)
				}
				if sp == 0 {
					t.Error("the sparse factorization was never used")
				}
			})
		}
	}
}

// bindingChain is sequential binding of a ligand L to a polymer with m
// sites: S_i + L ⇌ S_{i+1} (i = 0..m−1), mass action with forward rate
// constants kf[i] and backward kb[i]. State: S_0..S_m, then L.
type bindingChain struct {
	m      int
	kf, kb []float64
}

func newBindingChain(m int) *bindingChain {
	c := &bindingChain{m: m, kf: make([]float64, m), kb: make([]float64, m)}
	rng := rand.New(rand.NewPCG(7, 8))
	for i := range m {
		c.kf[i] = math.Pow(10, 3*rng.Float64()) // 1 … 1000 per unit time and concentration
		// K_i·L ≈ 1 at L = 100, between 0.7 and 1.4.
		c.kb[i] = c.kf[i] * 100 / (0.7 + 0.7*rng.Float64())
	}
	return c
}

func (c *bindingChain) Dim() int         { return c.m + 2 }
func (c *bindingChain) Autonomous() bool { return true }

func (c *bindingChain) RHS(_ float64, y, f []float64) {
	l := c.m + 1
	for i := range f {
		f[i] = 0
	}
	for i := range c.m {
		v := c.kf[i]*y[i]*y[l] - c.kb[i]*y[i+1]
		f[i] -= v
		f[i+1] += v
		f[l] -= v
	}
}

func (c *bindingChain) Jacobian(_ float64, y []float64, j *mat.Dense) {
	l := c.m + 1
	j.Zero()
	for i := range c.m {
		a, b, d := c.kf[i]*y[l], c.kf[i]*y[i], -c.kb[i] // ∂v/∂S_i, ∂v/∂L, ∂v/∂S_{i+1}
		for _, r := range []struct {
			row int
			s   float64
		}{{i, -1}, {i + 1, 1}, {l, -1}} {
			j.Set(r.row, i, j.At(r.row, i)+r.s*a)
			j.Set(r.row, l, j.At(r.row, l)+r.s*b)
			j.Set(r.row, i+1, j.At(r.row, i+1)+r.s*d)
		}
	}
}

// JacobianPattern: row S_i has S_{i−1}, S_i, S_{i+1}, L; row L has all.
func (c *bindingChain) JacobianPattern() (rowPtr, colIdx []int) {
	n, l := c.m+2, c.m+1
	rowPtr = []int{0}
	for i := 0; i <= c.m; i++ {
		for _, k := range []int{i - 1, i, i + 1, l} {
			if k >= 0 && k <= l { // i+1 == l for the last S: a duplicate
				colIdx = append(colIdx, k)
			}
		}
		rowPtr = append(rowPtr, len(colIdx))
	}
	for k := range n {
		colIdx = append(colIdx, k)
	}
	rowPtr = append(rowPtr, len(colIdx))
	return rowPtr, colIdx
}

// equilibrium returns the equilibrium of the chain for total polymer p and
// total ligand lt from the binding polynomial (Wyman & Gill, Binding and
// Linkage, 1990): S_i ∝ c_i·L^i with c_i = ∏_{k<i} kf_k/kb_k, and the free
// ligand L solves lt = L + p·Σ i c_i L^i / Σ c_i L^i (bisection; the right
// side increases with L).
func (c *bindingChain) equilibrium(p, lt float64) []float64 {
	logc := make([]float64, c.m+1)
	for i := range c.m {
		logc[i+1] = logc[i] + math.Log(c.kf[i]/c.kb[i])
	}
	weights := func(l float64) []float64 {
		w := make([]float64, c.m+1)
		mx := math.Inf(-1)
		for i := range w {
			w[i] = logc[i] + float64(i)*math.Log(l)
			mx = math.Max(mx, w[i])
		}
		var s float64
		for i := range w {
			w[i] = math.Exp(w[i] - mx)
			s += w[i]
		}
		for i := range w {
			w[i] /= s
		}
		return w
	}
	lo, hi := 0.0, lt
	for range 200 {
		mid := (lo + hi) / 2
		var bound float64
		for i, w := range weights(mid) {
			bound += float64(i) * w
		}
		if mid+p*bound > lt {
			hi = mid
		} else {
			lo = mid
		}
	}
	l := (lo + hi) / 2
	y := weights(l)
	for i := range y {
		y[i] *= p
	}
	return append(y, l)
}

// TestSparseBindingChain solves a 300-species binding chain, which the
// driver factorizes with SparseLU on its own (SparsePatternSystem), with
// each implicit method. At t = 0.05 it compares with the same solve through
// the dense LU (scaled difference ≤ 10), and at t = 1e4 with the
// equilibrium from the binding polynomial (scaled error ≤ 10).
func TestSparseBindingChain(t *testing.T) {
	c := newBindingChain(298)
	n := c.Dim()
	y0 := make([]float64, n)
	y0[0], y0[n-1] = 1, 300 // polymer 1, ligand 300
	eq := c.equilibrium(1, 300)
	const rtol, atol = 1e-7, 1e-12
	times := []float64{0.05, 1e4}
	for _, m := range []Method{Rosenbrock, Radau, BDF} {
		t.Run(string(m), func(t *testing.T) {
			sv := NewSolver(c, Settings{Method: m, RTol: rtol, ATol: atol, Times: times, NonNegative: true})
			var ls LinearSolver
			switch m {
			case Rosenbrock:
				ls = sv.ros.lu.solver()
			case Radau:
				ls = sv.radau.(*radau).lu.solver()
			case BDF:
				ls = sv.bdf.(*bdf).lu.solver()
			}
			sp, ok := ls.(*SparseLU)
			if !ok {
				t.Fatalf("the driver chose %T for a %d-species sparse system, want *SparseLU", ls, n)
			}
			res, err := sv.Solve(context.Background(), 0, times[1], y0)
			if err != nil {
				t.Fatal(err)
			}
			s, d := sp.Counts()
			dense, err := Solve(context.Background(), c, 0, times[1], y0, Settings{Method: m, RTol: rtol, ATol: atol,
				Times: times, NonNegative: true, LinearSolver: func(n int) LinearSolver { return NewLU(n) }})
			if err != nil {
				t.Fatal(err)
			}
			diff := scaledError(res.Y[0], dense.Y[0], rtol, atol)
			e := scaledError(res.Y[1], eq, rtol, atol)
			t.Logf("steps %d/%d rejected %d/%d, dense equilibrium error %.3g", res.Steps, dense.Steps, res.Rejected, dense.Rejected, scaledError(dense.Y[1], eq, rtol, atol))
			t.Logf("%s: %d sparse / %d dense factorizations (%d in the dense run), sparse vs dense at t = %g: %.3g, equilibrium error %.3g; %v vs %v",
				m, s, d, dense.Factorizations, times[0], diff, e, res.Wall, dense.Wall)
			if s == 0 {
				t.Error("no sparse factorization")
			}
			if diff > 10 {
				t.Errorf("sparse and dense solutions differ at t = %g: scaled %.3g > 10", times[0], diff)
			}
			if e > 10 {
				t.Errorf("scaled error at equilibrium %.3g > 10", e)
			}
		})
	}
}

// TestSparseSetSystem checks that a Solver keeps its work space for a
// system with the same Jacobian pattern and rebuilds it for another one.
func TestSparseSetSystem(t *testing.T) {
	c := newBindingChain(148)
	sv := NewSolver(c, Settings{Method: BDF})
	p0 := sv.p
	if _, ok := sv.bdf.(*bdf).lu.solver().(*SparseLU); !ok {
		t.Fatal("no sparse LU for the chain")
	}
	sv.SetSystem(newBindingChain(148))
	if sv.p != p0 {
		t.Error("SetSystem rebuilt the work space for a system with the same pattern")
	}
	other := patterned{System: c, rp: make([]int, c.Dim()+1)} // diagonal only
	sv.SetSystem(other)
	if sv.p == p0 {
		t.Fatal("SetSystem kept the work space for a system with another pattern")
	}
	if f, ok := sv.bdf.(*bdf).lu.solver().(*SparseLU); !ok || f.FactorNonzeros() != c.Dim() {
		t.Errorf("after SetSystem the linear solver is %T, want a diagonal *SparseLU", sv.bdf.(*bdf).lu.solver())
	}
}

// FuzzSparseLU feeds NewSparseLU arbitrary patterns (well-formed or not)
// and values: it must return an error or a factorization, never panic,
// and a factorization that succeeds must solve the system (residual
// checked against the matrix itself, relative to its size).
func FuzzSparseLU(f *testing.F) {
	f.Add([]byte{3, 1, 0, 2, 1, 0, 9, 7})
	f.Add([]byte{5, 0, 1, 1, 2, 2, 3, 3, 4, 4, 0, 200, 7})
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) < 2 {
			return
		}
		n := int(data[0]%12) + 1
		data = data[1:]
		// Pairs (row, column); a column byte ≥ 240 is kept out of range to
		// exercise the checks.
		rows := make([][]int, n)
		m := make([]float64, n*n)
		for i := 0; i+2 < len(data); i += 3 {
			r, c := int(data[i])%n, int(data[i+1])
			if c < 240 {
				c %= n
			}
			rows[r] = append(rows[r], c)
			if c < n {
				m[r*n+c] = float64(int(data[i+2])-128) / 16
			}
		}
		rp, ci := []int{0}, []int{}
		for _, r := range rows {
			ci = append(ci, r...)
			rp = append(rp, len(ci))
		}
		for i := range n {
			m[i*n+i] += float64(i%3) - 1
		}
		lu, err := NewSparseLU(n, rp, ci)
		if err != nil {
			return
		}
		if lu.Factor(m) != nil {
			return
		}
		b := make([]float64, n)
		for i := range b {
			b[i] = 1
		}
		x := append([]float64(nil), b...)
		lu.Solve(x)
		var res, scale float64
		for i := range n {
			s := -b[i]
			for j := range n {
				s += m[i*n+j] * x[j]
				scale = math.Max(scale, math.Abs(m[i*n+j]*x[j]))
			}
			res = math.Max(res, math.Abs(s))
		}
		if res > 1e-8*(1+scale) {
			t.Errorf("residual %.3g (scale %.3g) for n %d, pattern %v %v", res, scale, n, rp, ci)
		}
	})
}
