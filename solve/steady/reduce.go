package steady

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// reduction splits the state into independent variables (indep) and
// dependent ones (dep), one per conservation law, such that the laws give
// y_dep = Γ_D⁻¹ (T − Γ_I y_indep). The dependent variable of each law is
// chosen by Gaussian elimination with complete pivoting on Γ, so that Γ_D
// is as well conditioned as the laws allow.
type reduction struct {
	n      int
	gamma  *mat.Dense // k×n, the laws
	indep  []int
	dep    []int      // dep[r] is the dependent variable of law row r
	link   *mat.Dense // k×(n−k): M = Γ_D⁻¹ Γ_I, so y_D = Γ_D⁻¹T − M y_I
	isDep  []bool
	lawRow []int // lawRow[i] = the law row whose pivot is variable i, or −1
}

// newReduction analyses the laws Γ (k×n, may be nil) of an n-variable
// system.
func newReduction(n int, gamma *mat.Dense) (*reduction, error) {
	r := &reduction{n: n, isDep: make([]bool, n), lawRow: make([]int, n)}
	for i := range r.lawRow {
		r.lawRow[i] = -1
	}
	if gamma == nil || gamma.IsEmpty() {
		for i := 0; i < n; i++ {
			r.indep = append(r.indep, i)
		}
		r.link = &mat.Dense{}
		return r, nil
	}
	k, c := gamma.Dims()
	if c != n {
		return nil, fmt.Errorf("steady: the conservation laws have %d columns; the system has %d variables", c, n)
	}
	if k > n {
		return nil, fmt.Errorf("steady: %d conservation laws for %d variables", k, n)
	}
	r.gamma = mat.DenseCopyOf(gamma)
	// Complete pivoting on a copy to choose the pivots.
	a := mat.DenseCopyOf(gamma)
	used := make([]bool, k)
	scale := 0.0
	for i := 0; i < k; i++ {
		for j := 0; j < n; j++ {
			scale = math.Max(scale, math.Abs(a.At(i, j)))
		}
	}
	r.dep = make([]int, k)
	for step := 0; step < k; step++ {
		bi, bj, bv := -1, -1, 0.0
		for i := 0; i < k; i++ {
			if used[i] {
				continue
			}
			for j := 0; j < n; j++ {
				if r.isDep[j] {
					continue
				}
				if v := math.Abs(a.At(i, j)); v > bv {
					bi, bj, bv = i, j, v
				}
			}
		}
		if bi < 0 || bv <= 1e-12*scale {
			return nil, fmt.Errorf("steady: the conservation laws are not independent")
		}
		used[bi] = true
		r.isDep[bj] = true
		r.dep[bi] = bj
		r.lawRow[bj] = bi
		piv := a.At(bi, bj)
		for i := 0; i < k; i++ {
			if i == bi {
				continue
			}
			f := a.At(i, bj) / piv
			if f == 0 {
				continue
			}
			for j := 0; j < n; j++ {
				a.Set(i, j, a.At(i, j)-f*a.At(bi, j))
			}
		}
	}
	for i := 0; i < n; i++ {
		if !r.isDep[i] {
			r.indep = append(r.indep, i)
		}
	}
	gd := mat.NewDense(k, k, nil)
	gi := mat.NewDense(k, max(1, len(r.indep)), nil)
	for row := 0; row < k; row++ {
		for c, j := range r.dep {
			gd.Set(row, c, gamma.At(row, j))
		}
		for c, j := range r.indep {
			gi.Set(row, c, gamma.At(row, j))
		}
	}
	r.link = &mat.Dense{}
	if len(r.indep) > 0 {
		var lu mat.LU
		lu.Factorize(gd)
		if err := lu.SolveTo(r.link, false, gi); err != nil {
			return nil, fmt.Errorf("steady: the conservation laws are not independent")
		}
	}
	return r, nil
}

// laws returns the number of conservation laws.
func (r *reduction) laws() int { return len(r.dep) }

// totals returns Γ·y.
func (r *reduction) totals(y []float64) []float64 {
	t := make([]float64, r.laws())
	for i := range t {
		s := 0.0
		for j, v := range y {
			s += r.gamma.At(i, j) * v
		}
		t[i] = s
	}
	return t
}

// reduced returns the Jacobian of the reduced system, J_II − J_ID·M, of
// the full Jacobian jac.
func (r *reduction) reduced(jac *mat.Dense) *mat.Dense {
	m := len(r.indep)
	if m == 0 {
		return nil
	}
	out := mat.NewDense(m, m, nil)
	for a, i := range r.indep {
		for b, j := range r.indep {
			v := jac.At(i, j)
			for c, d := range r.dep {
				v -= jac.At(i, d) * r.link.At(c, b)
			}
			out.Set(a, b, v)
		}
	}
	return out
}

// linkMatrix returns L (n×(n−k)) with dy = L·dy_I on the laws' surface.
func (r *reduction) linkMatrix() *mat.Dense {
	m := len(r.indep)
	if m == 0 {
		return nil
	}
	l := mat.NewDense(r.n, m, nil)
	for b, i := range r.indep {
		l.Set(i, b, 1)
	}
	for c, d := range r.dep {
		for b := range r.indep {
			l.Set(d, b, -r.link.At(c, b))
		}
	}
	return l
}
