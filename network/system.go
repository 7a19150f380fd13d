package network

import (
	"fmt"
	"math"
	"slices"
	"sort"

	"gonum.org/v1/gonum/mat"

	"kinetarium/network/expr"
)

// System is a compiled reaction network: the ODE system
// d[species]/dt = f(t, [species]) with its exact Jacobian. It satisfies the
// System interface of package solve.
//
// Parameters, initial concentrations and volumes can be changed without
// recompiling. RHS, Jacobian and JacobianCSR allocate nothing. A System is
// not safe for concurrent use (it keeps scratch space); give each goroutine
// its own Clone.
type System struct {
	n        int // state variables: species, then parameters carried in the state
	nSpecies int
	parState []int  // state index of each parameter carried in the state, else -1
	nonNeg   []bool // which state variables are species; nil when all are
	names    []string
	initial  []float64
	fixed    []bool
	spComp   []int
	parNames []string
	parIx    map[string]int
	spIx     map[string]int
	rxNames  []string
	comps    []string
	volumes  []float64 // in the model's unit of volume (Model.VolumeUnit)
	volModel []float64 // as the model gives them, each in its compartment's unit
	volScale []float64 // volumes[i] = volModel[i]·volScale[i]
	volUnit  string    // the model's unit of volume, "" when none is given

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
	depPar []int     // parameters each rate depends on
	dp     []float64 // ∂rate/∂p for each parameter dependency (scratch)
	progs  []program

	asgNames []string
	asgUnits []string  // declared or inferred, per assignment
	asgProgs []program // each assignment, inlined, over [y | parameters | t]

	pbase      []float64 // parameter values set from outside, restored at ResetEvents
	events     []cevent
	nCond      int       // triggered events
	inflow     []float64 // infusion input per species, concentration per time
	infusing   int       // infusions running
	maxActions int
	actVals    []float64 // scratch for the values of an event's actions
	fired      []string  // names returned by Fire

	rowPtr, colIdx []int
	jpos           []int     // CSR position of each (contribution, dependency) pair
	jvals          []float64 // scratch for the dense Jacobian

	pColPtr, pRowIdx []int     // CSC pattern of ∂f/∂(parameters, volumes)
	ppos             []int     // CSC position of each (contribution, parameter dependency) pair
	vpos             []int     // CSC positions of each contribution's volume entries (2 per contribution)
	pvals            []float64 // scratch for the dense parameter Jacobian
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
	d0, d1     int // species dependencies
	p0, p1     int // parameter dependencies
	j0         int // start in jpos
	q0         int // start in ppos
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
	// progs[prog] is the rate, progs[prog+1+i] its derivative by species
	// dependency i, then its derivatives by parameter dependency.
	prog int
}

// Compile checks m and turns it into a System. A model with errors is
// refused with an ErrorList (see Check) listing them; warnings are
// ignored.
func Compile(m *Model) (*System, error) {
	net, probs := Check(m)
	if err := probs.Err(); err != nil {
		return nil, err
	}
	return net.Compile()
}

// builder assembles a System from a Net.
type builder struct {
	s       *System
	net     *Net
	inlined map[string]expr.Node // each assignment with assignments inlined
}

// value returns the compiled form of a rate field.
func (b *builder) value(v Value) val {
	if v.Name != "" {
		return val{p: b.s.parIx[v.Name]}
	}
	return val{p: -1, c: v.Num}
}

// depSlot returns the dependency slot of species sp in reaction r, adding
// one if needed.
func (b *builder) depSlot(r *rxn, sp int) int {
	s := b.s
	for d := r.d0; d < len(s.depSp); d++ {
		if s.depSp[d] == sp {
			return d
		}
	}
	s.depSp = append(s.depSp, sp)
	return len(s.depSp) - 1
}

// paramDep declares that reaction r depends on the parameter of v (a
// number declares nothing).
func (b *builder) paramDep(r *rxn, v val) {
	if v.p < 0 {
		return
	}
	s := b.s
	for d := r.p0; d < len(s.depPar); d++ {
		if s.depPar[d] == v.p {
			return
		}
	}
	s.depPar = append(s.depPar, v.p)
}

// addTerms adds the terms of an equation side to reaction r.
func (b *builder) addTerms(r *rxn, ts []Term) (int, int) {
	s := b.s
	a := len(s.terms)
	for _, t := range ts {
		sp := s.spIx[t.Species]
		s.terms = append(s.terms, term{sp: sp, coef: t.Coef, slot: b.depSlot(r, sp)})
	}
	return a, len(s.terms)
}

// slot maps a name of an expression to its place in System.vars.
func (b *builder) slot(name string) (int, bool) {
	s := b.s
	if i, ok := s.spIx[name]; ok {
		return i, true
	}
	if i, ok := s.parIx[name]; ok {
		return s.n + i, true
	}
	if name == TimeName {
		s.usesTime = true
		return len(s.vars) - 1, true
	}
	return 0, false
}

// compile compiles an expression tree.
func (b *builder) compile(n expr.Node) (program, error) { return expr.Compile(n, b.slot) }

// compileExpression sets up a reaction whose rate is compiled bytecode,
// with its derivatives by species and by parameters.
func (b *builder) compileExpression(r *rxn, cr *CheckedReaction) error {
	s := b.s
	r.kind = kindExpr
	s.hasExpr = true
	tree := b.inline(cr.Expr)
	var wrtSp, wrtPar []string
	for _, v := range expr.Vars(tree) {
		if sp, ok := s.spIx[v]; ok {
			b.depSlot(r, sp)
			wrtSp = append(wrtSp, v)
		} else if p, ok := s.parIx[v]; ok {
			b.paramDep(r, val{p: p})
			wrtPar = append(wrtPar, v)
		}
	}
	rate, err := b.compile(tree)
	if err != nil {
		return err
	}
	r.prog = len(s.progs)
	s.progs = append(s.progs, rate)
	for _, w := range append(wrtSp, wrtPar...) {
		d, err := b.compile(expr.Simplify(expr.Diff(tree, w)))
		if err != nil {
			return fmt.Errorf("derivative by %s: %w", w, err)
		}
		s.progs = append(s.progs, d)
	}
	return nil
}

// Compile turns a checked network without errors into a System.
func (net *Net) Compile() (*System, error) {
	if err := net.Problems.Err(); err != nil {
		return nil, err
	}
	m := net.Model
	statePars := net.stateParameters()
	// A network without errors names each parameter and species once, so
	// the Net's maps of their places are the System's (read-only from
	// here on); the species map is made anew when parameters join the
	// state.
	s := &System{n: len(m.Species) + len(statePars), nSpecies: len(m.Species), parIx: net.paramIx, spIx: net.speciesIx}
	if len(statePars) > 0 {
		s.spIx = make(map[string]int, len(m.Species)+len(statePars))
	}
	// Sized once: a large network would otherwise copy each list many
	// times as it grows.
	s.names = make([]string, 0, s.n)
	s.initial = make([]float64, 0, s.n)
	s.fixed = make([]bool, 0, s.n)
	s.spComp = make([]int, 0, s.n)
	s.parNames = make([]string, 0, len(m.Parameters))
	s.rxNames = make([]string, 0, len(net.Reactions))
	s.rx = make([]rxn, 0, len(net.Reactions)+len(net.Rates))
	// The terms and contributions are at most one per species named by
	// an equation: lists of that length do not grow by copies.
	nterms := 0
	for i := range net.Reactions {
		nterms += len(net.Reactions[i].Equation.Reactants) + len(net.Reactions[i].Equation.Products)
	}
	s.terms = make([]term, 0, nterms)
	s.cSp, s.cNet = make([]int, 0, nterms), make([]float64, 0, nterms)
	b := &builder{s: s, net: net}
	n := s.n
	compIx := map[string]int{}
	if len(m.Compartments) == 0 {
		s.comps = []string{DefaultCompartment}
		s.volumes = []float64{1}
		s.volScale = []float64{1}
		compIx[DefaultCompartment] = 0
	}
	volUnit, volScale := m.VolumeUnit()
	s.volUnit = volUnit
	for i, c := range m.Compartments {
		s.comps = append(s.comps, c.Name)
		s.volumes = append(s.volumes, c.Volume*volScale[i])
		s.volScale = append(s.volScale, volScale[i])
		compIx[c.Name] = i
	}
	s.volModel = make([]float64, len(s.volumes))
	for i := range s.volumes {
		s.volModel[i] = 1
	}
	for i, c := range m.Compartments {
		s.volModel[i] = c.Volume
	}
	for i, sp := range m.Species {
		s.names = append(s.names, sp.Name)
		s.initial = append(s.initial, sp.Initial)
		s.fixed = append(s.fixed, sp.Fixed)
		s.spComp = append(s.spComp, compIx[sp.Compartment]) // "" gives 0, the first
		if len(statePars) > 0 {
			s.spIx[sp.Name] = i
		}
	}
	s.parState = make([]int, len(m.Parameters))
	for i := range s.parState {
		s.parState[i] = -1
	}
	for k, p := range statePars {
		i := s.nSpecies + k
		s.parState[p] = i
		s.names = append(s.names, m.Parameters[p].Name)
		s.initial = append(s.initial, m.Parameters[p].Value)
		s.fixed = append(s.fixed, true) // reactions do not change it
		s.spComp = append(s.spComp, 0)
		s.spIx[m.Parameters[p].Name] = i
		if s.nonNeg == nil {
			s.nonNeg = make([]bool, n)
			for j := range s.nSpecies {
				s.nonNeg[j] = true
			}
		}
	}
	s.vars = make([]float64, n+len(m.Parameters)+1)
	for i, p := range m.Parameters {
		s.parNames = append(s.parNames, p.Name)
		s.vars[n+i] = p.Value
	}
	var order []int
	var coefs []float64
	for ci := range net.Reactions {
		cr := &net.Reactions[ci]
		s.rxNames = append(s.rxNames, cr.Name)
		eq := cr.Equation
		r := rxn{k: val{p: -1}, kr: val{p: -1}, vmax: val{p: -1}, kcat: val{p: -1}, km: val{p: -1}}
		if len(eq.Reactants) > 0 {
			r.comp = s.spComp[s.spIx[eq.Reactants[0].Species]]
		} else {
			r.comp = s.spComp[s.spIx[eq.Products[0].Species]]
		}
		r.d0, r.p0 = len(s.depSp), len(s.depPar)
		_, ma := cr.Law.(massAction)
		_, mm := cr.Law.(michaelisMenten)
		fast := !b.readsStateParameter(cr) // else through its expression
		switch {
		case ma && fast:
			b.compileMassAction(&r, cr)
		case mm && fast:
			b.compileMichaelisMenten(&r, cr)
		default:
			if err := b.compileExpression(&r, cr); err != nil {
				return nil, fmt.Errorf("reaction %q: rate: %w", cr.Name, err)
			}
		}
		r.d1, r.p1 = len(s.depSp), len(s.depPar)
		// Contributions: net coefficient of each non-fixed species.
		r.c0 = len(s.cSp)
		// A reaction names a few species: a list, not a map.
		order, coefs = order[:0], coefs[:0]
		addNet := func(name string, c float64) {
			sp := s.spIx[name]
			if k := slices.Index(order, sp); k >= 0 {
				coefs[k] += c
				return
			}
			order, coefs = append(order, sp), append(coefs, c)
		}
		for _, t := range eq.Reactants {
			addNet(t.Species, -t.Coef)
		}
		for _, t := range eq.Products {
			addNet(t.Species, t.Coef)
		}
		for k, sp := range order {
			if coefs[k] != 0 && !s.fixed[sp] {
				s.cSp = append(s.cSp, sp)
				s.cNet = append(s.cNet, coefs[k])
			}
		}
		r.c1 = len(s.cSp)
		s.rx = append(s.rx, r)
	}
	if err := b.compileRates(); err != nil {
		return nil, err
	}
	if err := b.compileAssignments(); err != nil {
		return nil, err
	}
	s.pbase = append([]float64(nil), s.vars[n:n+len(m.Parameters)]...)
	if err := b.compileEvents(); err != nil {
		return nil, err
	}
	s.cScale = make([]float64, len(s.cSp))
	s.updateScales()
	s.dr = make([]float64, len(s.depSp))
	s.dp = make([]float64, len(s.depPar))
	s.buildPattern()
	s.buildParamPattern()
	s.jvals = make([]float64, len(s.colIdx))
	s.pvals = make([]float64, len(s.pRowIdx))
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
	pairs := 0 // counted first, so that the lists are made at their size
	for _, r := range s.rx {
		pairs += (r.c1 - r.c0) * (r.d1 - r.d0)
	}
	major, minor := make([]int, 0, pairs), make([]int, 0, pairs)
	for _, r := range s.rx {
		for c := r.c0; c < r.c1; c++ {
			for d := r.d0; d < r.d1; d++ {
				major = append(major, s.cSp[c])
				minor = append(minor, s.depSp[d])
			}
		}
	}
	s.rowPtr, s.colIdx = compressed(s.n, major, minor, true)
	s.jpos = slices.Grow(s.jpos[:0], pairs)
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

// pw returns x^c with fast paths for small whole c. The first power,
// by far the most common in mass action, is tested here so that pw
// inlines into the rate loops; the others go through pwOther.
func pw(x, c float64) float64 {
	if c == 1 {
		return x
	}
	return pwOther(x, c)
}

func pwOther(x, c float64) float64 {
	switch c {
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
		return s.massActionRate(r, y)
	case kindMM:
		return s.mmRate(r, y)
	default:
		return s.progs[r.prog].Eval(s.vars)
	}
}

// rateDeriv writes ∂rate/∂y of reaction r into its dependency slots of dr.
func (s *System) rateDeriv(r *rxn, y []float64) {
	dr := s.dr[r.d0:r.d1]
	for i := range dr {
		dr[i] = 0
	}
	switch r.kind {
	case kindMassAction:
		s.massActionSpeciesDeriv(r, y)
	case kindMM:
		s.mmSpeciesDeriv(r, y)
	default:
		for i := range dr {
			dr[i] = s.progs[r.prog+1+i].Eval(s.vars)
		}
	}
}

// rateParamDeriv writes ∂rate/∂p of reaction r into its parameter slots of
// dp.
func (s *System) rateParamDeriv(r *rxn, y []float64) {
	dp := s.dp[r.p0:r.p1]
	for i := range dp {
		dp[i] = 0
	}
	switch r.kind {
	case kindMassAction:
		s.massActionParamDeriv(r, y)
	case kindMM:
		s.mmParamDeriv(r, y)
	default:
		first := r.prog + 1 + (r.d1 - r.d0)
		for i := range dp {
			dp[i] = s.progs[first+i].Eval(s.vars)
		}
	}
}

// pslot returns the slot in dp of parameter p of reaction r.
func (s *System) pslot(r *rxn, p int) int {
	for d := r.p0; d < r.p1; d++ {
		if s.depPar[d] == p {
			return d
		}
	}
	panic("network: parameter slot missing") // compileX declared every parameter it reads
}

// Dim returns the number of species.
func (s *System) Dim() int { return s.n }

// RHS writes the time derivatives of the concentrations at (t, y) into dydt.
func (s *System) RHS(t float64, y, dydt []float64) {
	s.load(t, y)
	dydt = dydt[:s.n]
	clear(dydt)
	// Locals, so that the stores into dydt do not make the loop reload
	// the System's slices.
	cSp, cScale := s.cSp, s.cScale
	cScale = cScale[:len(cSp)]
	for ri := range s.rx {
		r := &s.rx[ri]
		v := s.rate(r, y)
		for c := r.c0; c < r.c1; c++ {
			dydt[cSp[c]] += cScale[c] * v
		}
	}
	if s.infusing > 0 {
		for i, v := range s.inflow {
			dydt[i] += v
		}
	}
}

// Rates writes the rate of every reaction at (t, y), in the concentration
// units of its compartment per time, into rates (net rate for reversible
// reactions).
func (s *System) Rates(t float64, y, rates []float64) {
	s.load(t, y)
	for ri := range s.rxNames { // the model's reactions come first, then the rates
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

// Species returns the names of the state variables in state order: the
// species in model order, then the parameters that change during a run
// (StateParameters). The caller must not modify the slice.
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
func (s *System) SetParameter(i int, v float64) {
	s.vars[s.n+i] = v
	s.pbase[i] = v
	if j := s.parState[i]; j >= 0 {
		s.initial[j] = v // its value at the start of a run
	}
}

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

// Volume returns the volume of compartment i in its own unit, as the
// model gives it.
func (s *System) Volume(i int) float64 { return s.volModel[i] }

// SetVolume sets the volume of compartment i, in its own unit.
func (s *System) SetVolume(i int, v float64) {
	s.volModel[i] = v
	s.volumes[i] = v * s.volScale[i]
	s.updateScales()
}

// AmountVolume returns the volume of compartment i in the model's unit of
// volume (Model.VolumeUnit), the one amounts use: an amount is a
// concentration times AmountVolume. It equals Volume when the
// compartments give no units or all the same one.
func (s *System) AmountVolume(i int) float64 { return s.volumes[i] }

// VolumeUnit returns the unit of AmountVolume: the model's unit of
// volume (Model.VolumeUnit), "" when the compartments give none.
func (s *System) VolumeUnit() string { return s.volUnit }

// VolumeScale returns AmountVolume(i)/Volume(i), the factor from
// compartment i's own unit of volume to the model's.
func (s *System) VolumeScale(i int) float64 { return s.volScale[i] }

// Clone returns an independent copy of s for use by another goroutine.
func (s *System) Clone() *System {
	c := *s
	c.initial = append([]float64(nil), s.initial...)
	c.volumes = append([]float64(nil), s.volumes...)
	c.volModel = append([]float64(nil), s.volModel...)
	c.vars = append([]float64(nil), s.vars...)
	c.cScale = append([]float64(nil), s.cScale...)
	c.dr = make([]float64, len(s.dr))
	c.dp = make([]float64, len(s.dp))
	c.pbase = append([]float64(nil), s.pbase...)
	c.inflow = append([]float64(nil), s.inflow...)
	c.actVals = make([]float64, len(s.actVals))
	c.fired = nil
	c.events = append([]cevent(nil), s.events...)
	for i := range c.events {
		e := &c.events[i]
		e.rates = append([]float64(nil), e.rates...)
		if e.lhs != nil {
			e.lhs, e.rhs = cloneProgram(e.lhs), cloneProgram(e.rhs)
		}
		for _, list := range []*[]caction{&e.add, &e.set, &e.infuse} {
			cp := append([]caction(nil), (*list)...)
			for k := range cp {
				cp[k].prog = cloneProgram(cp[k].prog)
			}
			*list = cp
		}
	}
	c.pvals = make([]float64, len(s.pvals))
	c.asgProgs = make([]program, len(s.asgProgs))
	for i, p := range s.asgProgs {
		c.asgProgs[i] = cloneProgram(p)
	}
	c.jvals = make([]float64, len(s.jvals))
	c.progs = make([]program, len(s.progs))
	for i, p := range s.progs {
		c.progs[i] = cloneProgram(p)
	}
	return &c
}
