package network

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// ProblemsError is returned by Compile for a model with errors. It lists
// every error Validate found.
type ProblemsError struct {
	Problems []Problem // the errors (warnings left out)
}

// Error lists the problems, one a line.
func (e *ProblemsError) Error() string {
	var b strings.Builder
	if len(e.Problems) == 1 {
		b.WriteString("the model has 1 error: ")
		b.WriteString(e.Problems[0].String())
		return b.String()
	}
	fmt.Fprintf(&b, "the model has %d errors:", len(e.Problems))
	for _, p := range e.Problems {
		b.WriteString("\n  ")
		b.WriteString(p.String())
	}
	return b.String()
}

// System is a compiled reaction network: the ODE system
// d[species]/dt = f(t, [species]) with its exact Jacobian. It satisfies the
// System interface of package solve.
//
// Parameters, initial concentrations and volumes can be changed without
// recompiling. RHS, Jacobian and JacobianCSR allocate nothing. A System is
// not safe for concurrent use (it keeps scratch space); give each goroutine
// its own Clone.
type System struct {
	n        int
	names    []string
	initial  []float64
	fixed    []bool
	spComp   []int
	parNames []string
	parIx    map[string]int
	spIx     map[string]int
	rxNames  []string
	comps    []string
	volumes  []float64

	vars     []float64 // [y (n) | parameters | t]
	hasExpr  bool
	usesTime bool // some rate expression reads t

	rx     []rxn
	terms  []term
	cSp    []int     // species of each contribution
	cNet   []float64 // net stoichiometric coefficient
	cScale []float64 // cNet·V(rate compartment)/V(species compartment)
	depSp  []int     // species each rate depends on
	dr     []float64 // ∂rate/∂y for each dependency (scratch)
	progs  []program

	rowPtr, colIdx []int
	jpos           []int     // CSR position of each (contribution, dependency) pair
	jvals          []float64 // scratch for the dense Jacobian
}

// Autonomous reports whether f does not depend on t explicitly (no rate
// expression reads t), so integrators may skip ∂f/∂t.
func (s *System) Autonomous() bool { return !s.usesTime }

// val is a rate constant: a parameter (p ≥ 0) or the constant c.
type val struct {
	p int
	c float64
}

type term struct {
	sp   int
	coef float64
	slot int // index into dr
}

const (
	kindMassAction = iota
	kindMM
	kindExpr
)

type rxn struct {
	kind       int
	comp       int // compartment whose concentration units the rate uses
	c0, c1     int // contributions
	d0, d1     int // dependencies
	j0         int // start in jpos
	k, kr      val
	reversible bool
	f0, f1     int // forward (reactant) terms
	b0, b1     int // reverse (product) terms
	vmax, km   val
	kcat       val
	useKcat    bool
	sub, enz   int
	subSlot    int
	enzSlot    int
	prog       int // progs[prog] is the rate, progs[prog+1+i] its derivative by dependency i
}

// Compile turns m into a System. A model with errors (see Validate) is
// refused with a *ProblemsError listing them; warnings are ignored.
func Compile(m *Model) (*System, error) {
	var errs []Problem
	for _, p := range m.Validate() {
		if p.Severity == Error {
			errs = append(errs, p)
		}
	}
	if len(errs) > 0 {
		return nil, &ProblemsError{Problems: errs}
	}
	s := &System{n: len(m.Species), parIx: map[string]int{}, spIx: map[string]int{}}
	n := s.n
	compIx := map[string]int{}
	if len(m.Compartments) == 0 {
		s.comps = []string{DefaultCompartment}
		s.volumes = []float64{1}
		compIx[DefaultCompartment] = 0
	}
	for i, c := range m.Compartments {
		s.comps = append(s.comps, c.Name)
		s.volumes = append(s.volumes, c.Volume)
		compIx[c.Name] = i
	}
	for i, sp := range m.Species {
		s.names = append(s.names, sp.Name)
		s.initial = append(s.initial, sp.Initial)
		s.fixed = append(s.fixed, sp.Fixed)
		s.spComp = append(s.spComp, compIx[sp.Compartment]) // "" gives 0, the first
		s.spIx[sp.Name] = i
	}
	s.vars = make([]float64, n+len(m.Parameters)+1)
	for i, p := range m.Parameters {
		s.parNames = append(s.parNames, p.Name)
		s.parIx[p.Name] = i
		s.vars[n+i] = p.Value
	}
	slot := func(name string) (int, bool) {
		if i, ok := s.spIx[name]; ok {
			return i, true
		}
		if i, ok := s.parIx[name]; ok {
			return n + i, true
		}
		if name == TimeName {
			s.usesTime = true
			return len(s.vars) - 1, true
		}
		return 0, false
	}
	value := func(v Value) val {
		if v.Name != "" {
			return val{p: s.parIx[v.Name]}
		}
		return val{p: -1, c: v.Num}
	}
	for ri := range m.Reactions {
		mr := &m.Reactions[ri]
		s.rxNames = append(s.rxNames, mr.Name)
		eq, err := ParseEquation(mr.Equation)
		if err != nil { // Validate already checked it
			return nil, fmt.Errorf("reaction %q: %w", mr.Name, err)
		}
		r := rxn{reversible: eq.Reversible, k: val{p: -1}, kr: val{p: -1}}
		if len(eq.Reactants) > 0 {
			r.comp = s.spComp[s.spIx[eq.Reactants[0].Species]]
		} else {
			r.comp = s.spComp[s.spIx[eq.Products[0].Species]]
		}
		// Dependencies: each species the rate depends on gets one slot.
		r.d0 = len(s.depSp)
		depSlot := func(sp int) int {
			for d := r.d0; d < len(s.depSp); d++ {
				if s.depSp[d] == sp {
					return d
				}
			}
			s.depSp = append(s.depSp, sp)
			return len(s.depSp) - 1
		}
		addTerms := func(ts []Term) (int, int) {
			a := len(s.terms)
			for _, t := range ts {
				sp := s.spIx[t.Species]
				s.terms = append(s.terms, term{sp: sp, coef: t.Coef, slot: depSlot(sp)})
			}
			return a, len(s.terms)
		}
		switch mr.Rate.Law {
		case MassAction:
			r.kind = kindMassAction
			r.k = value(mr.Rate.K)
			r.f0, r.f1 = addTerms(eq.Reactants)
			r.b0, r.b1 = r.f1, r.f1
			if eq.Reversible {
				r.kr = value(mr.Rate.KReverse)
				r.b0, r.b1 = addTerms(eq.Products)
			}
		case MichaelisMenten:
			r.kind = kindMM
			r.km = value(mr.Rate.Km)
			r.sub = s.spIx[eq.Reactants[0].Species]
			r.subSlot = depSlot(r.sub)
			if mr.Rate.Kcat.Set {
				r.useKcat = true
				r.kcat = value(mr.Rate.Kcat)
				r.enz = s.spIx[mr.Rate.Enzyme.Name]
				r.enzSlot = depSlot(r.enz)
			} else {
				r.vmax = value(mr.Rate.Vmax)
			}
		case Expression:
			r.kind = kindExpr
			s.hasExpr = true
			var wrt []string
			for _, v := range exprVars(mr.Rate.Expression) {
				if sp, ok := s.spIx[v]; ok {
					depSlot(sp)
					wrt = append(wrt, v)
				}
			}
			rate, ders, err := compileExpr(mr.Rate.Expression, slot, wrt)
			if err != nil {
				return nil, fmt.Errorf("reaction %q: rate expression: %w", mr.Name, err)
			}
			r.prog = len(s.progs)
			s.progs = append(s.progs, rate)
			s.progs = append(s.progs, ders...)
		}
		r.d1 = len(s.depSp)
		// Contributions: net coefficient of each non-fixed species.
		r.c0 = len(s.cSp)
		net := map[int]float64{}
		var order []int
		for _, t := range eq.Reactants {
			sp := s.spIx[t.Species]
			if _, ok := net[sp]; !ok {
				order = append(order, sp)
			}
			net[sp] -= t.Coef
		}
		for _, t := range eq.Products {
			sp := s.spIx[t.Species]
			if _, ok := net[sp]; !ok {
				order = append(order, sp)
			}
			net[sp] += t.Coef
		}
		for _, sp := range order {
			if net[sp] != 0 && !s.fixed[sp] {
				s.cSp = append(s.cSp, sp)
				s.cNet = append(s.cNet, net[sp])
			}
		}
		r.c1 = len(s.cSp)
		s.rx = append(s.rx, r)
	}
	s.cScale = make([]float64, len(s.cSp))
	s.updateScales()
	s.dr = make([]float64, len(s.depSp))
	s.buildPattern()
	s.jvals = make([]float64, len(s.colIdx))
	return s, nil
}

func (s *System) updateScales() {
	for _, r := range s.rx {
		for c := r.c0; c < r.c1; c++ {
			s.cScale[c] = s.cNet[c] * s.volumes[r.comp] / s.volumes[s.spComp[s.cSp[c]]]
		}
	}
}

// buildPattern builds the CSR pattern of the Jacobian (every diagonal entry
// included) and the position of each (contribution, dependency) pair.
func (s *System) buildPattern() {
	rows := make([]map[int]bool, s.n)
	for i := range rows {
		rows[i] = map[int]bool{i: true}
	}
	for _, r := range s.rx {
		for c := r.c0; c < r.c1; c++ {
			for d := r.d0; d < r.d1; d++ {
				rows[s.cSp[c]][s.depSp[d]] = true
			}
		}
	}
	s.rowPtr = make([]int, s.n+1)
	for i, row := range rows {
		cols := make([]int, 0, len(row))
		for j := range row {
			cols = append(cols, j)
		}
		sort.Ints(cols)
		s.colIdx = append(s.colIdx, cols...)
		s.rowPtr[i+1] = len(s.colIdx)
	}
	for ri := range s.rx {
		r := &s.rx[ri]
		r.j0 = len(s.jpos)
		for c := r.c0; c < r.c1; c++ {
			i := s.cSp[c]
			row := s.colIdx[s.rowPtr[i]:s.rowPtr[i+1]]
			for d := r.d0; d < r.d1; d++ {
				s.jpos = append(s.jpos, s.rowPtr[i]+sort.SearchInts(row, s.depSp[d]))
			}
		}
	}
}

func (s *System) get(v val) float64 {
	if v.p >= 0 {
		return s.vars[s.n+v.p]
	}
	return v.c
}

// pw returns x^c with fast paths for small whole c.
func pw(x, c float64) float64 {
	switch c {
	case 1:
		return x
	case 2:
		return x * x
	case 3:
		return x * x * x
	}
	return math.Pow(x, c)
}

// dpw returns the derivative of x^c by x.
func dpw(x, c float64) float64 {
	switch c {
	case 1:
		return 1
	case 2:
		return 2 * x
	case 3:
		return 3 * x * x
	}
	return c * math.Pow(x, c-1)
}

func (s *System) load(t float64, y []float64) {
	if s.hasExpr {
		copy(s.vars[:s.n], y)
		s.vars[len(s.vars)-1] = t
	}
}

func (s *System) rate(r *rxn, y []float64) float64 {
	switch r.kind {
	case kindMassAction:
		f := s.get(r.k)
		for _, tm := range s.terms[r.f0:r.f1] {
			f *= pw(y[tm.sp], tm.coef)
		}
		if r.reversible {
			b := s.get(r.kr)
			for _, tm := range s.terms[r.b0:r.b1] {
				b *= pw(y[tm.sp], tm.coef)
			}
			f -= b
		}
		return f
	case kindMM:
		v := s.get(r.vmax)
		if r.useKcat {
			v = s.get(r.kcat) * y[r.enz]
		}
		S := y[r.sub]
		return v * S / (s.get(r.km) + S)
	default:
		return s.progs[r.prog].Eval(s.vars)
	}
}

// massActionDeriv adds sign·∂(k·Π y^coef)/∂y into dr.
func (s *System) massActionDeriv(k float64, ts []term, y []float64, sign float64) {
	for j, tj := range ts {
		p := sign * k * dpw(y[tj.sp], tj.coef)
		for i, ti := range ts {
			if i != j {
				p *= pw(y[ti.sp], ti.coef)
			}
		}
		s.dr[tj.slot] += p
	}
}

func (s *System) rateDeriv(r *rxn, y []float64) {
	dr := s.dr[r.d0:r.d1]
	for i := range dr {
		dr[i] = 0
	}
	switch r.kind {
	case kindMassAction:
		s.massActionDeriv(s.get(r.k), s.terms[r.f0:r.f1], y, 1)
		if r.reversible {
			s.massActionDeriv(s.get(r.kr), s.terms[r.b0:r.b1], y, -1)
		}
	case kindMM:
		km := s.get(r.km)
		S := y[r.sub]
		den := km + S
		v := s.get(r.vmax)
		if r.useKcat {
			v = s.get(r.kcat) * y[r.enz]
			s.dr[r.enzSlot] += s.get(r.kcat) * S / den
		}
		s.dr[r.subSlot] += v * km / (den * den)
	default:
		for i := range dr {
			dr[i] = s.progs[r.prog+1+i].Eval(s.vars)
		}
	}
}

// Dim returns the number of species.
func (s *System) Dim() int { return s.n }

// RHS writes the time derivatives of the concentrations at (t, y) into dydt.
func (s *System) RHS(t float64, y, dydt []float64) {
	s.load(t, y)
	for i := range dydt[:s.n] {
		dydt[i] = 0
	}
	for ri := range s.rx {
		r := &s.rx[ri]
		v := s.rate(r, y)
		for c := r.c0; c < r.c1; c++ {
			dydt[s.cSp[c]] += s.cScale[c] * v
		}
	}
}

// Rates writes the rate of every reaction at (t, y), in the concentration
// units of its compartment per time, into rates (net rate for reversible
// reactions).
func (s *System) Rates(t float64, y, rates []float64) {
	s.load(t, y)
	for ri := range s.rx {
		rates[ri] = s.rate(&s.rx[ri], y)
	}
}

// JacobianPattern returns the sparsity pattern of ∂f/∂y in compressed
// sparse row form: the columns of row i are colIdx[rowPtr[i]:rowPtr[i+1]],
// ascending. Every diagonal entry is in the pattern. The caller must not
// modify the slices.
func (s *System) JacobianPattern() (rowPtr, colIdx []int) { return s.rowPtr, s.colIdx }

// JacobianCSR writes the values of ∂f/∂y at (t, y) into vals, in the order
// of JacobianPattern.
func (s *System) JacobianCSR(t float64, y []float64, vals []float64) {
	s.load(t, y)
	for i := range vals[:len(s.colIdx)] {
		vals[i] = 0
	}
	for ri := range s.rx {
		r := &s.rx[ri]
		if r.c0 == r.c1 {
			continue
		}
		s.rateDeriv(r, y)
		p := r.j0
		for c := r.c0; c < r.c1; c++ {
			sc := s.cScale[c]
			for d := r.d0; d < r.d1; d++ {
				vals[s.jpos[p]] += sc * s.dr[d]
				p++
			}
		}
	}
}

// Jacobian writes ∂f/∂y at (t, y) into jac, an n×n matrix (an empty jac is
// sized first).
func (s *System) Jacobian(t float64, y []float64, jac *mat.Dense) {
	if jac.IsEmpty() {
		jac.ReuseAs(s.n, s.n)
	}
	s.JacobianCSR(t, y, s.jvals)
	jac.Zero()
	raw := jac.RawMatrix()
	for i := 0; i < s.n; i++ {
		row := raw.Data[i*raw.Stride:]
		for p := s.rowPtr[i]; p < s.rowPtr[i+1]; p++ {
			row[s.colIdx[p]] = s.jvals[p]
		}
	}
}

// Species returns the species names in state order. The caller must not
// modify the slice.
func (s *System) Species() []string { return s.names }

// SpeciesIndex returns the state index of the named species.
func (s *System) SpeciesIndex(name string) (int, bool) {
	i, ok := s.spIx[name]
	return i, ok
}

// Fixed reports whether species i is held constant.
func (s *System) Fixed(i int) bool { return s.fixed[i] }

// Initial returns a copy of the initial concentrations.
func (s *System) Initial() []float64 { return append([]float64(nil), s.initial...) }

// SetInitial sets the initial concentration of species i.
func (s *System) SetInitial(i int, v float64) { s.initial[i] = v }

// Reactions returns the reaction names in model order.
func (s *System) Reactions() []string { return s.rxNames }

// Parameters returns the parameter names in model order. The caller must
// not modify the slice.
func (s *System) Parameters() []string { return s.parNames }

// Parameter returns the value of parameter i.
func (s *System) Parameter(i int) float64 { return s.vars[s.n+i] }

// SetParameter sets the value of parameter i.
func (s *System) SetParameter(i int, v float64) { s.vars[s.n+i] = v }

// ParameterIndex returns the index of the named parameter.
func (s *System) ParameterIndex(name string) (int, bool) {
	i, ok := s.parIx[name]
	return i, ok
}

// Compartments returns the compartment names ("default" when the model
// declares none). The caller must not modify the slice.
func (s *System) Compartments() []string { return s.comps }

// CompartmentIndex returns the index of the named compartment.
func (s *System) CompartmentIndex(name string) (int, bool) {
	for i, c := range s.comps {
		if c == name {
			return i, true
		}
	}
	return 0, false
}

// SpeciesCompartment returns the compartment index of species i.
func (s *System) SpeciesCompartment(i int) int { return s.spComp[i] }

// Volume returns the volume of compartment i.
func (s *System) Volume(i int) float64 { return s.volumes[i] }

// SetVolume sets the volume of compartment i.
func (s *System) SetVolume(i int, v float64) {
	s.volumes[i] = v
	s.updateScales()
}

// Clone returns an independent copy of s for use by another goroutine.
func (s *System) Clone() *System {
	c := *s
	c.initial = append([]float64(nil), s.initial...)
	c.volumes = append([]float64(nil), s.volumes...)
	c.vars = append([]float64(nil), s.vars...)
	c.cScale = append([]float64(nil), s.cScale...)
	c.dr = make([]float64, len(s.dr))
	c.jvals = make([]float64, len(s.jvals))
	c.progs = make([]program, len(s.progs))
	for i, p := range s.progs {
		c.progs[i] = cloneProgram(p)
	}
	return &c
}
