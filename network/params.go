package network

import (
	"slices"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// The parameter Jacobian ∂f/∂q has one column per parameter, in model
// order, then one per compartment volume. Derivatives by initial
// concentrations are not here: they enter a sensitivity analysis through
// its initial condition.

// ParamDim returns the number of columns of the parameter Jacobian: the
// number of parameters plus the number of compartments.
func (s *System) ParamDim() int { return len(s.parNames) + len(s.volumes) }

// buildParamPattern builds the CSC pattern of ∂f/∂q and the positions of
// each (contribution, parameter dependency) pair and of each contribution's
// volume entries.
func (s *System) buildParamPattern() {
	np := len(s.parNames)
	pairs, entries := 0, 0 // counted first, so that the lists are made at their size
	for _, r := range s.rx {
		for c := r.c0; c < r.c1; c++ {
			pairs += r.p1 - r.p0
			if s.spComp[s.cSp[c]] != r.comp {
				entries += 2
			}
		}
	}
	// column (parameter or volume), row (species)
	major, minor := make([]int, 0, pairs+entries), make([]int, 0, pairs+entries)
	for _, r := range s.rx {
		for c := r.c0; c < r.c1; c++ {
			i := s.cSp[c]
			for d := r.p0; d < r.p1; d++ {
				major, minor = append(major, s.depPar[d]), append(minor, i)
			}
			if sc := s.spComp[i]; sc != r.comp {
				major, minor = append(major, np+r.comp), append(minor, i)
				major, minor = append(major, np+sc), append(minor, i)
			}
		}
	}
	s.pColPtr, s.pRowIdx = compressed(s.ParamDim(), major, minor, false)
	at := func(i, j int) int {
		rows := s.pRowIdx[s.pColPtr[j]:s.pColPtr[j+1]]
		return s.pColPtr[j] + sort.SearchInts(rows, i)
	}
	s.ppos = slices.Grow(s.ppos[:0], pairs)
	s.vpos = make([]int, 2*len(s.cSp))
	for ri := range s.rx {
		r := &s.rx[ri]
		r.q0 = len(s.ppos)
		for c := r.c0; c < r.c1; c++ {
			i := s.cSp[c]
			for d := r.p0; d < r.p1; d++ {
				s.ppos = append(s.ppos, at(i, s.depPar[d]))
			}
			s.vpos[2*c], s.vpos[2*c+1] = -1, -1
			if sc := s.spComp[i]; sc != r.comp {
				s.vpos[2*c] = at(i, np+r.comp)
				s.vpos[2*c+1] = at(i, np+sc)
			}
		}
	}
}

// ParamJacobianPattern returns the sparsity pattern of ∂f/∂q in
// compressed sparse column form: the rows of column j are
// rowIdx[colPtr[j]:colPtr[j+1]], ascending. Columns are the parameters in
// model order, then the compartment volumes. The caller must not modify
// the slices.
func (s *System) ParamJacobianPattern() (colPtr, rowIdx []int) { return s.pColPtr, s.pRowIdx }

// ParamJacobianCSC writes the values of ∂f/∂q at (t, y) into vals, in the
// order of ParamJacobianPattern. It allocates nothing.
func (s *System) ParamJacobianCSC(t float64, y []float64, vals []float64) {
	s.load(t, y)
	for i := range vals[:len(s.pRowIdx)] {
		vals[i] = 0
	}
	for ri := range s.rx {
		r := &s.rx[ri]
		if r.c0 == r.c1 {
			continue
		}
		if r.p1 > r.p0 {
			s.rateParamDeriv(r, y)
			q := r.q0
			for c := r.c0; c < r.c1; c++ {
				sc := s.cScale[c]
				for d := r.p0; d < r.p1; d++ {
					vals[s.ppos[q]] += sc * s.dp[d]
					q++
				}
			}
		}
		rate, have := 0.0, false
		for c := r.c0; c < r.c1; c++ {
			if s.vpos[2*c] < 0 {
				continue
			}
			if !have {
				rate, have = s.rate(r, y), true
			}
			// f_i += cNet·V_r/V_i·rate: by V_r it is cNet/V_i·rate, by V_i
			// it is −cNet·V_r/V_i²·rate.
			// The columns are by volumes in each compartment's own unit,
			// V = v·volScale.
			ci := s.spComp[s.cSp[c]]
			vi := s.volumes[ci]
			vals[s.vpos[2*c]] += s.cNet[c] / vi * rate * s.volScale[r.comp]
			vals[s.vpos[2*c+1]] -= s.cScale[c] / vi * rate * s.volScale[ci]
		}
	}
}

// ParamJacobian writes ∂f/∂q at (t, y) into dfdp, a Dim()×ParamDim()
// matrix (an empty dfdp is sized first): columns are the parameters in
// model order, then the compartment volumes.
func (s *System) ParamJacobian(t float64, y []float64, dfdp *mat.Dense) {
	if dfdp.IsEmpty() {
		dfdp.ReuseAs(s.n, s.ParamDim())
	}
	s.ParamJacobianCSC(t, y, s.pvals)
	dfdp.Zero()
	raw := dfdp.RawMatrix()
	for j := 0; j+1 < len(s.pColPtr); j++ {
		for p := s.pColPtr[j]; p < s.pColPtr[j+1]; p++ {
			raw.Data[s.pRowIdx[p]*raw.Stride+j] = s.pvals[p]
		}
	}
}
