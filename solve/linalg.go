package solve

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// jacobian holds ∂f/∂y in the form the linear algebra of a solve uses:
// dense, or (on the sparse path, for a SparseJacobianSystem) as the values
// of its CSR pattern, so that no n×n array exists.
type jacobian struct {
	dense          *mat.Dense // nil on the sparse path
	vals           []float64  // CSR values on the sparse path
	rowPtr, colIdx []int
}

// newJacobian returns storage for the problem's Jacobian.
func (p *problem) newJacobian() *jacobian {
	if p.csr != nil {
		rp, ci := p.csr.JacobianPattern()
		return &jacobian{vals: make([]float64, rp[p.n]), rowPtr: rp, colIdx: ci}
	}
	return &jacobian{dense: mat.NewDense(max(p.n, 1), max(p.n, 1), nil)}
}

// jac evaluates the Jacobian into j and counts it.
func (p *problem) jac(t float64, y []float64, j *jacobian) {
	p.stats.JacobianEvals++
	if j.dense == nil {
		p.csr.JacobianCSR(t, y, j.vals)
		return
	}
	p.sys.Jacobian(t, y, j.dense)
}

// mulVec writes J·x + add into out (add may be nil; out must not alias x).
func (j *jacobian) mulVec(x, add, out []float64) {
	if j.dense == nil {
		for i := range out {
			var v float64
			for p := j.rowPtr[i]; p < j.rowPtr[i+1]; p++ {
				v += j.vals[p] * x[j.colIdx[p]]
			}
			if add != nil {
				v += add[i]
			}
			out[i] = v
		}
		return
	}
	raw := j.dense.RawMatrix()
	n := len(out)
	for i := range out {
		row := raw.Data[i*raw.Stride : i*raw.Stride+n]
		var v float64
		for k, a := range row {
			v += a * x[k]
		}
		if add != nil {
			v += add[i]
		}
		out[i] = v
	}
}

// maxRowSum is the largest absolute row sum (NaN when an entry is NaN).
func (j *jacobian) maxRowSum(n int) float64 {
	var rate float64
	for i := range n {
		var s float64
		if j.dense == nil {
			for _, v := range j.vals[j.rowPtr[i]:j.rowPtr[i+1]] {
				s += math.Abs(v)
			}
		} else {
			raw := j.dense.RawMatrix()
			for _, v := range raw.Data[i*raw.Stride : i*raw.Stride+n] {
				s += math.Abs(v)
			}
		}
		if math.IsNaN(s) {
			return math.NaN()
		}
		rate = math.Max(rate, s)
	}
	return rate
}

// iterMatrix is the real iteration matrix a·I + b·J of an implicit method,
// factorized: on the sparse path assembled straight into a SparseLU's
// storage, else formed densely and given to the LinearSolver.
type iterMatrix struct {
	n  int
	m  []float64 // dense path: a·I + b·J, row-major
	ls LinearSolver
	sp *SparseLU // sparse path
}

// newIterMatrix returns the problem's real iteration matrix: the
// LinearSolver of Settings.LinearSolver, else a SparseLU for a large,
// sparse SparsePatternSystem (see sparseFor), else the dense LU.
func (p *problem) newIterMatrix() *iterMatrix {
	if p.csr != nil {
		sp := newSparseLUFrom(p.sparse)
		p.sparseLUs = append(p.sparseLUs, sp)
		return &iterMatrix{n: p.n, sp: sp}
	}
	im := &iterMatrix{n: p.n, m: make([]float64, p.n*p.n)}
	if p.linear != nil {
		im.ls = p.linear(p.n)
	}
	if im.ls == nil && p.sparse != nil {
		sp := newSparseLUFrom(p.sparse)
		p.sparseLUs = append(p.sparseLUs, sp)
		im.ls = sp
	}
	if im.ls == nil {
		im.ls = NewLU(p.n)
	}
	return im
}

// solver is the LinearSolver behind the matrix (for tests and stats).
func (im *iterMatrix) solver() LinearSolver {
	if im.sp != nil {
		return im.sp
	}
	return im.ls
}

// factor forms and factorizes a·I + b·J.
func (im *iterMatrix) factor(a, b float64, j *jacobian) error {
	if im.sp != nil {
		return im.sp.FactorShifted(a, b, j.vals)
	}
	n := im.n
	raw := j.dense.RawMatrix()
	for i := range n {
		row := raw.Data[i*raw.Stride : i*raw.Stride+n]
		m := im.m[i*n : (i+1)*n]
		for k, v := range row {
			m[k] = b * v
		}
		m[i] += a
	}
	return im.ls.Factor(im.m)
}

// solve overwrites x with the solution of (a·I + b·J)·z = x.
func (im *iterMatrix) solve(x []float64) {
	if im.sp != nil {
		im.sp.Solve(x)
		return
	}
	im.ls.Solve(x)
}

// cIterMatrix is the complex iteration matrix (ar + i·ai)·I + b·J of
// Radau IIA: sparse on the sparse path, else dense.
type cIterMatrix struct {
	n      int
	re, im []float64
	clu    *cLU
	sp     *sparseCLU
}

func (p *problem) newCIterMatrix() *cIterMatrix {
	if p.csr != nil {
		return &cIterMatrix{n: p.n, sp: newSparseCLU(p.sparse)}
	}
	return &cIterMatrix{n: p.n, re: make([]float64, p.n*p.n), im: make([]float64, p.n*p.n), clu: newCLU(p.n)}
}

// factor forms and factorizes (ar + i·ai)·I + b·J.
func (cm *cIterMatrix) factor(ar, ai, b float64, j *jacobian) error {
	if cm.sp != nil {
		return cm.sp.factorShifted(ar, ai, b, j.vals)
	}
	n := cm.n
	raw := j.dense.RawMatrix()
	for i := range n {
		row := raw.Data[i*raw.Stride : i*raw.Stride+n]
		er, ei := cm.re[i*n:(i+1)*n], cm.im[i*n:(i+1)*n]
		for k, v := range row {
			er[k] = b * v
			ei[k] = 0
		}
		er[i] += ar
		ei[i] = ai
	}
	return cm.clu.factor(cm.re, cm.im)
}

// solve overwrites re + i·im with the solution.
func (cm *cIterMatrix) solve(re, im []float64) {
	if cm.sp != nil {
		cm.sp.solve(re, im)
		return
	}
	cm.clu.solve(re, im)
}
