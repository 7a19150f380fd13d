package network

import (
	"fmt"
	"slices"

	"kinetarium/network/expr"
)

// Sensitivities across events.
//
// An event at time τ maps the state y⁻ just before it to y⁺ = h(y⁻, q):
// an add raises y_S by amount/V, a set gives y_S a value. Differentiating
// y⁺(q) = h(y⁻(τ(q), q), q) gives the jump of the sensitivities
// (Hindmarsh et al., ACM TOMS 31, 2005, for CVODES's treatment of
// discontinuities; Galán, Feehery & Barton, Appl. Numer. Math. 31, 1999,
// for hybrid systems; common practice):
//
//	s⁺ = (∂h/∂y)·s⁻ + ∂h/∂q + ((∂h/∂y)·f⁻ + ∂h/∂t − f⁺)·dτ/dq,
//
// with f⁻ = f(τ, y⁻) and f⁺ = f(τ, y⁺). For a timed event τ = at + k·every
// (k-th occurrence), so dτ/dq is 1 or k for the parameter or knob that
// gives at or every, and 0 otherwise; for a condition g(t, y, q) = 0,
// dτ/dq = −(∇g·s⁻ + ∂g/∂q)/(∇g·f⁻ + ∂g/∂t). Amounts and values may be
// expressions of species and parameters; every derivative is symbolic.
//
// Not carried by the rule, and to be taken by central differences of
// whole solves instead (SensJump.Inexact says which and why): quantities
// on which an infusion's rate or times depend (and the volume of an
// infused species' compartment), a parameter that an event sets, and
// every quantity when an event sets a parameter to an expression or when
// an event that sets a parameter has a time that depends on the
// quantities.

// SensKind says what kind of quantity a sensitivity is taken to.
type SensKind int

// The kinds of SensTarget.
const (
	SensParameter SensKind = iota // a parameter: Index in System.Parameters
	SensInitial                   // an initial value: Index in the state
	SensVolume                    // a compartment's volume: Index in System.Compartments
	SensEvent                     // an event quantity: Event is "E.FIELD"
)

// SensTarget is one quantity whose forward sensitivities a solve carries.
type SensTarget struct {
	Kind  SensKind
	Index int    // for SensParameter, SensInitial and SensVolume
	Event string // for SensEvent: "NAME.FIELD", as System.EventValue reads it
}

// DiffExpr is an expression over the state, the parameters and t (the
// model's assignments written out), compiled with its derivatives by the
// state variables, the parameters and t that it reads. Its programs read
// the vector [y | parameters | t] that System.LoadVars fills.
type DiffExpr struct {
	prog   *expr.Program
	dy, dp []dterm
	dt     *expr.Program // ∂/∂t, or nil
}

type dterm struct {
	i    int
	prog *expr.Program
}

// VarsLen is the length of the vector that DiffExpr programs read.
func (s *System) VarsLen() int { return s.n + len(s.parNames) + 1 }

// LoadVars writes [y | the current parameter values | t] into vars (of
// length VarsLen).
func (s *System) LoadVars(vars []float64, t float64, y []float64) {
	copy(vars, y[:s.n])
	for i := range s.parNames {
		vars[s.n+i] = s.Parameter(i)
	}
	vars[len(vars)-1] = t
}

// DiffExpr compiles n, with every assignment written out, and its
// derivatives for sys, the Net's compiled System.
func (net *Net) DiffExpr(sys *System, n expr.Node) (*DiffExpr, error) {
	if n == nil {
		return nil, fmt.Errorf("the expression was not checked")
	}
	n = net.inlineAssignments(n)
	slot := func(name string) (int, bool) {
		if name == "t" {
			return sys.VarsLen() - 1, true
		}
		if i, ok := sys.SpeciesIndex(name); ok {
			return i, true
		}
		if i, ok := sys.ParameterIndex(name); ok {
			return sys.Dim() + i, true
		}
		return 0, false
	}
	p, err := expr.Compile(n, slot)
	if err != nil {
		return nil, err
	}
	d := &DiffExpr{prog: p}
	for _, v := range expr.Vars(n) {
		dn := expr.Simplify(expr.Diff(n, v))
		if c, ok := expr.Const(dn); ok && c == 0 {
			continue
		}
		dp, err := expr.Compile(dn, slot)
		if err != nil {
			return nil, err
		}
		if i, ok := sys.SpeciesIndex(v); ok {
			d.dy = append(d.dy, dterm{i, dp})
		} else if i, ok := sys.ParameterIndex(v); ok {
			d.dp = append(d.dp, dterm{i, dp})
		} else if v == "t" {
			d.dt = dp
		}
	}
	return d, nil
}

// Eval is the expression's value at vars.
func (d *DiffExpr) Eval(vars []float64) float64 { return d.prog.Eval(vars) }

// Along is the derivative along a quantity at vars: ∇_y·s (s the state's
// sensitivities to it; nil for none) plus ∂/∂p_param when the quantity is
// parameter param (−1 when it is not a parameter).
func (d *DiffExpr) Along(vars, s []float64, param int) float64 {
	var v float64
	if s != nil {
		for _, dt := range d.dy {
			v += dt.prog.Eval(vars) * s[dt.i]
		}
	}
	if param >= 0 {
		for _, dt := range d.dp {
			if dt.i == param {
				v += dt.prog.Eval(vars)
			}
		}
	}
	return v
}

// gradDot is ∇_y d · v at vars.
func (d *DiffExpr) gradDot(vars, v []float64) float64 {
	var g float64
	for _, dt := range d.dy {
		g += dt.prog.Eval(vars) * v[dt.i]
	}
	return g
}

// timeDeriv is ∂d/∂t at vars.
func (d *DiffExpr) timeDeriv(vars []float64) float64 {
	if d.dt == nil {
		return 0
	}
	return d.dt.Eval(vars)
}

// SensJump carries forward sensitivities across the events of a compiled
// System by the rule above; its Jump method is the solver's hook
// (solve.SensSettings.Jump). A SensJump belongs to one System and is used
// by one solve at a time.
type SensJump struct {
	sys       *System
	targets   []SensTarget
	overrides map[string]bool
	rules     []*eventRule
	byName    map[string]*eventRule
	inexact   []string
	vars      []float64
	ycur      []float64
	ynext     []float64
	fm, fp    []float64
	corr      []float64
	ds        [][]float64
	dtau      []float64
	addVals   []float64
	setVals   []float64
}

// eventRule is what the jump needs of one event.
type eventRule struct {
	name                string
	kind                EventKind
	atParam, everyParam int    // parameter giving at or every, or −1
	atRef, everyRef     string // the event quantities "E.at", "E.every"
	adds, sets          []actRule
	cond                *DiffExpr // lhs − rhs of a condition
	given               int       // occurrences fired in this solve
}

// actRule is an add or a set of a species.
type actRule struct {
	sp, comp int
	ref      string // the event quantity of an add's amount, "E.add.S"
	val      *DiffExpr
}

// SensJump prepares the jump rule of sys (compiled from net) for the
// targets. overrides names the event quantities ("E.FIELD") whose values
// are set on the System from outside (System.SetEventValue), so that the
// model's formula for them no longer applies; every SensEvent target
// must be among them.
func (net *Net) SensJump(sys *System, targets []SensTarget, overrides map[string]bool) (*SensJump, error) {
	j := &SensJump{sys: sys, targets: slices.Clone(targets), overrides: overrides, byName: map[string]*eventRule{},
		inexact: make([]string, len(targets)), vars: make([]float64, sys.VarsLen())}
	if j.overrides == nil {
		j.overrides = map[string]bool{}
	}
	n := sys.Dim()
	j.ycur, j.ynext, j.fm, j.fp, j.corr = make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	j.ds = make([][]float64, len(targets))
	for k := range j.ds {
		j.ds[k] = make([]float64, n)
	}
	j.dtau = make([]float64, len(targets))
	mark := func(k int, why string) {
		if j.inexact[k] == "" {
			j.inexact[k] = why
		}
	}
	all := func(why string) {
		for k := range targets {
			mark(k, why)
		}
	}
	isParam := func(k, p int) bool { return targets[k].Kind == SensParameter && targets[k].Index == p }
	isKnob := func(k int, ref string) bool { return targets[k].Kind == SensEvent && targets[k].Event == ref }
	for _, ce := range net.Events {
		me := &net.Model.Events[ce.Index]
		r := &eventRule{name: ce.Name, kind: ce.Kind, atParam: -1, everyParam: -1,
			atRef: ce.Name + ".at", everyRef: ce.Name + ".every"}
		param := func(v Value) int {
			if v.Set && v.Name != "" {
				if i, ok := sys.ParameterIndex(v.Name); ok {
					return i
				}
			}
			return -1
		}
		r.atParam, r.everyParam = param(me.At), param(me.Every)
		// Does the event's time depend on target k?
		timeDepends := func(k int) bool {
			switch ce.Kind {
			case Triggered:
				return true
			case Timed:
				return (!j.overrides[r.atRef] && r.atParam >= 0 && isParam(k, r.atParam)) || isKnob(k, r.atRef) ||
					(!j.overrides[r.everyRef] && r.everyParam >= 0 && isParam(k, r.everyParam)) || isKnob(k, r.everyRef)
			}
			return false
		}
		for _, ch := range ce.Set {
			if !ch.Parameter {
				continue
			}
			for k := range targets {
				if isParam(k, ch.Index) {
					mark(k, fmt.Sprintf("event %q sets it", ce.Name))
				}
				if timeDepends(k) {
					mark(k, fmt.Sprintf("the time of event %q, which sets parameter %q, depends on it", ce.Name, ch.Target))
				}
			}
			if len(expr.Vars(ch.Expr)) > 0 {
				all(fmt.Sprintf("event %q sets parameter %q to an expression", ce.Name, ch.Target))
			}
		}
		if ce.Kind == Infusion {
			times := []struct {
				v   Value
				ref string
			}{{me.From, ce.Name + ".from"}, {me.To, ce.Name + ".to"}, {me.Every, ce.Name + ".every"}}
			for k := range targets {
				for _, tv := range times {
					if isKnob(k, tv.ref) || (!j.overrides[tv.ref] && param(tv.v) >= 0 && isParam(k, param(tv.v))) {
						mark(k, fmt.Sprintf("the times of infusion %q depend on it", ce.Name))
					}
				}
			}
			for _, ch := range ce.Infuse {
				ref := ce.Name + ".infuse." + ch.Target
				vars := expr.Vars(net.inlineAssignments(ch.Expr))
				for _, v := range vars {
					if _, ok := sys.SpeciesIndex(v); ok {
						all(fmt.Sprintf("the rate of infusion %q depends on the state", ce.Name))
					}
				}
				comp := sys.SpeciesCompartment(ch.Index)
				for k, t := range targets {
					switch {
					case isKnob(k, ref):
						mark(k, fmt.Sprintf("it is the rate of infusion %q", ce.Name))
					case t.Kind == SensParameter && !j.overrides[ref] && slices.Contains(vars, sys.Parameters()[t.Index]):
						mark(k, fmt.Sprintf("the rate of infusion %q depends on it", ce.Name))
					case t.Kind == SensVolume && t.Index == comp:
						mark(k, fmt.Sprintf("infusion %q feeds a species of that compartment", ce.Name))
					}
				}
			}
			continue
		}
		for _, ch := range ce.Add {
			d, err := net.DiffExpr(sys, ch.Expr)
			if err != nil {
				return nil, fmt.Errorf("event %q: add %s: %w", ce.Name, ch.Target, err)
			}
			r.adds = append(r.adds, actRule{sp: ch.Index, comp: sys.SpeciesCompartment(ch.Index), ref: ce.Name + ".add." + ch.Target, val: d})
		}
		for _, ch := range ce.Set {
			if ch.Parameter {
				continue
			}
			d, err := net.DiffExpr(sys, ch.Expr)
			if err != nil {
				return nil, fmt.Errorf("event %q: set %s: %w", ce.Name, ch.Target, err)
			}
			r.sets = append(r.sets, actRule{sp: ch.Index, val: d})
		}
		if ce.Kind == Triggered {
			d, err := net.DiffExpr(sys, expr.Sub(ce.Cond[0], ce.Cond[1]))
			if err != nil {
				return nil, fmt.Errorf("event %q: condition: %w", ce.Name, err)
			}
			r.cond = d
		}
		// The solver's indices of species are the model's.
		j.rules = append(j.rules, r)
		j.byName[r.name] = r
	}
	na, ns := 0, 0
	for _, r := range j.rules {
		na, ns = max(na, len(r.adds)), max(ns, len(r.sets))
	}
	j.addVals, j.setVals = make([]float64, na), make([]float64, ns)
	return j, nil
}

// Inexact returns, for each target the rule cannot carry across the
// events, why (its sensitivities are then to be taken by differences of
// whole solves); "" for the others.
func (j *SensJump) Inexact() []string { return slices.Clone(j.inexact) }

// Reset starts a solve: no event has fired.
func (j *SensJump) Reset() {
	for _, r := range j.rules {
		r.given = 0
	}
}

// param is target k's parameter index, or −1.
func (j *SensJump) param(k int) int {
	if j.targets[k].Kind == SensParameter {
		return j.targets[k].Index
	}
	return -1
}

// value returns an action's value at the point loaded.
func (j *SensJump) value(a *actRule) float64 {
	if a.ref != "" && j.overrides[a.ref] {
		v, _ := j.sys.EventValue(a.ref)
		return v
	}
	return a.val.Eval(j.vars)
}

// actionDeriv is the derivative of an action's value along target k, with
// the state's sensitivities s to it.
func (j *SensJump) actionDeriv(a *actRule, k int, s []float64) float64 {
	if a.ref != "" && j.overrides[a.ref] {
		if t := j.targets[k]; t.Kind == SensEvent && t.Event == a.ref {
			return 1
		}
		return 0
	}
	return a.val.Along(j.vars, s, j.param(k))
}

// Jump is the solver's hook: it carries the sensitivities s (s[k] for
// target k, in place) across the events fired at t, one event at a time
// in the order they acted; before and after are the state around them.
func (j *SensJump) Jump(t float64, fired []string, before, after []float64, s [][]float64) {
	sys := j.sys
	ycur, ynext := j.ycur, j.ynext
	copy(ycur, before)
	for _, name := range fired {
		r := j.byName[name]
		if r == nil {
			continue // an infusion's start or end: the state does not jump
		}
		occ := r.given
		r.given++
		sys.LoadVars(j.vars, t, ycur)
		// The new state.
		copy(ynext, ycur)
		addVals, setVals := j.addVals[:len(r.adds)], j.setVals[:len(r.sets)]
		for i := range r.adds {
			addVals[i] = j.value(&r.adds[i])
		}
		for i := range r.sets {
			setVals[i] = j.value(&r.sets[i])
		}
		for i, a := range r.adds {
			ynext[a.sp] += addVals[i] / sys.AmountVolume(a.comp)
		}
		for i, a := range r.sets {
			ynext[a.sp] = setVals[i]
		}
		// dτ/dq for each target.
		var gdot float64
		needF := false
		dtau := j.dtau
		clear(dtau)
		if r.kind == Triggered {
			sys.RHS(t, ycur, j.fm)
			sys.LoadVars(j.vars, t, ycur)
			gdot = r.cond.gradDot(j.vars, j.fm) + r.cond.timeDeriv(j.vars)
		}
		for k, tg := range j.targets {
			switch r.kind {
			case Triggered:
				if gdot != 0 {
					dtau[k] = -r.cond.Along(j.vars, s[k], j.param(k)) / gdot
				}
			case Timed:
				if (tg.Kind == SensEvent && tg.Event == r.atRef) || (!j.overrides[r.atRef] && r.atParam >= 0 && tg.Kind == SensParameter && tg.Index == r.atParam) {
					dtau[k]++
				}
				if (tg.Kind == SensEvent && tg.Event == r.everyRef) || (!j.overrides[r.everyRef] && r.everyParam >= 0 && tg.Kind == SensParameter && tg.Index == r.everyParam) {
					dtau[k] += float64(occ)
				}
			}
			needF = needF || dtau[k] != 0
		}
		// (∂h/∂y)·f⁻ + ∂h/∂t − f⁺, when some dτ/dq is not zero.
		corr := j.corr
		if needF {
			sys.RHS(t, ycur, j.fm)
			sys.RHS(t, ynext, j.fp)
			sys.LoadVars(j.vars, t, ycur)
			copy(corr, j.fm)
			for _, a := range r.adds {
				if a.ref != "" && j.overrides[a.ref] {
					continue
				}
				v := a.val.gradDot(j.vars, j.fm) + a.val.timeDeriv(j.vars)
				corr[a.sp] += v / sys.AmountVolume(a.comp)
			}
			for _, a := range r.sets {
				corr[a.sp] = a.val.gradDot(j.vars, j.fm) + a.val.timeDeriv(j.vars)
			}
			for i := range corr {
				corr[i] -= j.fp[i]
			}
		}
		// The new sensitivities, all from the old ones.
		for k, tg := range j.targets {
			sk, dk := s[k], j.ds[k]
			copy(dk, sk)
			for i, a := range r.adds {
				v := sys.AmountVolume(a.comp)
				d := j.actionDeriv(&r.adds[i], k, sk) / v
				if tg.Kind == SensVolume && tg.Index == a.comp {
					// The knob is the volume in its own unit, v/VolumeScale.
					d -= addVals[i] / (v * v) * sys.VolumeScale(a.comp)
				}
				dk[a.sp] += d
			}
			for i, a := range r.sets {
				dk[a.sp] = j.actionDeriv(&r.sets[i], k, sk)
			}
			if dtau[k] != 0 {
				for i := range dk {
					dk[i] += corr[i] * dtau[k]
				}
			}
		}
		for k := range j.targets {
			copy(s[k], j.ds[k])
		}
		copy(ycur, ynext)
	}
}
