package calibrate

import (
	"fmt"
	"slices"

	"kinetarium/app/sliders"
	"kinetarium/network"
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
// Not integrated with the state, and taken by central differences of
// whole solves instead (Evaluator.Inexact says so): targets on which an
// infusion's rate or times depend (and the volume of an infused species'
// compartment), a parameter that an event sets, and every target when an
// event sets a parameter to an expression or when an event that sets a
// parameter has a time that depends on the targets.

// eventRule is what the jump needs of one event.
type eventRule struct {
	name                string
	kind                network.EventKind
	atParam, everyParam int    // parameter giving at or every, or −1
	atRef, everyRef     string // the event knobs "E.at", "E.every"
	adds, sets          []actRule
	cond                *dexpr // lhs − rhs of a condition
	given               int    // occurrences fired in this solve
}

// actRule is an add or a set of a species.
type actRule struct {
	sp, comp int
	ref      string // the event knob of an add's amount, "E.add.S"
	val      *dexpr
}

// markInexact records that target j's sensitivities are taken by
// differences, and why.
func (e *Evaluator) markInexact(j int, why string) {
	if e.exact[j] {
		e.exact[j] = false
		e.inexactBy[j] = why
	}
}

// buildRules compiles the events' jump rules and decides which targets
// have exact sensitivities.
func (e *Evaluator) buildRules() error {
	nq := len(e.targets)
	e.exact = make([]bool, nq)
	e.inexactBy = make([]string, nq)
	for j := range e.exact {
		e.exact[j] = true
	}
	e.byName = map[string]*eventRule{}
	all := func(why string) {
		for j := range e.targets {
			e.markInexact(j, why)
		}
	}
	isParam := func(j, p int) bool { return e.targets[j].Kind == sliders.Parameter && e.targets[j].index == p }
	isKnob := func(j int, ref string) bool { return e.targets[j].Kind == sliders.Event && e.targets[j].Name == ref }
	for _, ce := range e.net.Events {
		me := &e.model.Events[ce.Index]
		r := &eventRule{name: ce.Name, kind: ce.Kind, atParam: -1, everyParam: -1,
			atRef: ce.Name + ".at", everyRef: ce.Name + ".every"}
		param := func(v network.Value) int {
			if v.Set && v.Name != "" {
				if i, ok := e.sys.ParameterIndex(v.Name); ok {
					return i
				}
			}
			return -1
		}
		r.atParam, r.everyParam = param(me.At), param(me.Every)
		// Does the event's time depend on target j?
		timeDepends := func(j int) bool {
			switch ce.Kind {
			case network.Triggered:
				return true
			case network.Timed:
				return (!e.overrides[r.atRef] && r.atParam >= 0 && isParam(j, r.atParam)) || isKnob(j, r.atRef) ||
					(!e.overrides[r.everyRef] && r.everyParam >= 0 && isParam(j, r.everyParam)) || isKnob(j, r.everyRef)
			}
			return false
		}
		for _, ch := range ce.Set {
			if !ch.Parameter {
				continue
			}
			for j := range e.targets {
				if isParam(j, ch.Index) {
					e.markInexact(j, fmt.Sprintf("event %q sets it", ce.Name))
				}
				if timeDepends(j) {
					e.markInexact(j, fmt.Sprintf("the time of event %q, which sets parameter %q, depends on it", ce.Name, ch.Target))
				}
			}
			if len(expr.Vars(ch.Expr)) > 0 {
				all(fmt.Sprintf("event %q sets parameter %q to an expression", ce.Name, ch.Target))
			}
		}
		if ce.Kind == network.Infusion {
			times := []struct {
				v   network.Value
				ref string
			}{{me.From, ce.Name + ".from"}, {me.To, ce.Name + ".to"}, {me.Every, ce.Name + ".every"}}
			for j := range e.targets {
				for _, tv := range times {
					if isKnob(j, tv.ref) || (!e.overrides[tv.ref] && param(tv.v) >= 0 && isParam(j, param(tv.v))) {
						e.markInexact(j, fmt.Sprintf("the times of infusion %q depend on it", ce.Name))
					}
				}
			}
			for _, ch := range ce.Infuse {
				ref := ce.Name + ".infuse." + ch.Target
				vars := expr.Vars(e.inline(ch.Expr))
				for _, v := range vars {
					if _, ok := e.sys.SpeciesIndex(v); ok {
						all(fmt.Sprintf("the rate of infusion %q depends on the state", ce.Name))
					}
				}
				comp := e.sys.SpeciesCompartment(ch.Index)
				for j, t := range e.targets {
					switch {
					case isKnob(j, ref):
						e.markInexact(j, fmt.Sprintf("it is the rate of infusion %q", ce.Name))
					case t.Kind == sliders.Parameter && !e.overrides[ref] && slices.Contains(vars, t.Name):
						e.markInexact(j, fmt.Sprintf("the rate of infusion %q depends on it", ce.Name))
					case t.Kind == sliders.Volume && t.index == comp:
						e.markInexact(j, fmt.Sprintf("infusion %q feeds a species of that compartment", ce.Name))
					}
				}
			}
			continue
		}
		for _, ch := range ce.Add {
			d, err := e.compileD(ch.Expr)
			if err != nil {
				return fmt.Errorf("event %q: add %s: %w", ce.Name, ch.Target, err)
			}
			r.adds = append(r.adds, actRule{sp: ch.Index, comp: e.sys.SpeciesCompartment(ch.Index), ref: ce.Name + ".add." + ch.Target, val: d})
		}
		for _, ch := range ce.Set {
			if ch.Parameter {
				continue
			}
			d, err := e.compileD(ch.Expr)
			if err != nil {
				return fmt.Errorf("event %q: set %s: %w", ce.Name, ch.Target, err)
			}
			r.sets = append(r.sets, actRule{sp: ch.Index, val: d})
		}
		if ce.Kind == network.Triggered {
			d, err := e.compileD(expr.Sub(ce.Cond[0], ce.Cond[1]))
			if err != nil {
				return fmt.Errorf("event %q: condition: %w", ce.Name, err)
			}
			r.cond = d
		}
		// The solver's indices of species are the model's.
		e.rules = append(e.rules, r)
		e.byName[r.name] = r
	}
	return nil
}

// resetRules starts a solve: no event has fired.
func (e *Evaluator) resetRules() {
	for _, r := range e.rules {
		r.given = 0
	}
}

// value returns an action's value at the point loaded.
func (e *Evaluator) value(a *actRule) float64 {
	if a.ref != "" && e.overrides[a.ref] {
		v, _ := e.sys.EventValue(a.ref)
		return v
	}
	return a.val.prog.Eval(e.vars)
}

// actionDeriv is the derivative of an action's value along target j, with
// the state's sensitivities s to it.
func (e *Evaluator) actionDeriv(a *actRule, j int, s []float64) float64 {
	if a.ref != "" && e.overrides[a.ref] {
		if t := e.targets[j]; t.Kind == sliders.Event && t.Name == a.ref {
			return 1
		}
		return 0
	}
	return e.deriv(a.val, j, s)
}

// gradDot is ∇_y d · v at the point loaded.
func (e *Evaluator) gradDot(d *dexpr, v []float64) float64 {
	var g float64
	for _, dt := range d.dy {
		g += dt.prog.Eval(e.vars) * v[dt.i]
	}
	return g
}

// jump is the solver's Jump hook: it carries the sensitivities across the
// events fired at t, one event at a time in the order they acted.
func (e *Evaluator) jump(t float64, fired []string, before, after []float64, s [][]float64) {
	sys := e.sys
	n := sys.Dim()
	ycur := e.ytmp
	copy(ycur, before)
	ynext := make([]float64, n)
	for j := range e.ds {
		if e.ds[j] == nil {
			e.ds[j] = make([]float64, n)
		}
	}
	for _, name := range fired {
		r := e.byName[name]
		if r == nil {
			continue // an infusion's start or end: the state does not jump
		}
		k := r.given
		r.given++
		e.load(t, ycur)
		// The new state.
		copy(ynext, ycur)
		addVals := make([]float64, len(r.adds))
		for i := range r.adds {
			addVals[i] = e.value(&r.adds[i])
		}
		setVals := make([]float64, len(r.sets))
		for i := range r.sets {
			setVals[i] = e.value(&r.sets[i])
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
		dtau := make([]float64, len(e.targets))
		if r.kind == network.Triggered {
			sys.RHS(t, ycur, e.fm)
			e.load(t, ycur)
			gdot = e.gradDot(r.cond, e.fm)
			if r.cond.dt != nil {
				gdot += r.cond.dt.Eval(e.vars)
			}
		}
		for j, tg := range e.targets {
			switch r.kind {
			case network.Triggered:
				if gdot != 0 {
					dtau[j] = -e.deriv(r.cond, j, s[j]) / gdot
				}
			case network.Timed:
				if (tg.Kind == sliders.Event && tg.Name == r.atRef) || (!e.overrides[r.atRef] && r.atParam >= 0 && tg.Kind == sliders.Parameter && tg.index == r.atParam) {
					dtau[j]++
				}
				if (tg.Kind == sliders.Event && tg.Name == r.everyRef) || (!e.overrides[r.everyRef] && r.everyParam >= 0 && tg.Kind == sliders.Parameter && tg.index == r.everyParam) {
					dtau[j] += float64(k)
				}
			}
			needF = needF || dtau[j] != 0
		}
		// (∂h/∂y)·f⁻ + ∂h/∂t − f⁺, when some dτ/dq is not zero.
		var corr []float64
		if needF {
			sys.RHS(t, ycur, e.fm)
			sys.RHS(t, ynext, e.fp)
			e.load(t, ycur)
			corr = make([]float64, n)
			copy(corr, e.fm)
			for _, a := range r.adds {
				if a.ref != "" && e.overrides[a.ref] {
					continue
				}
				v := e.gradDot(a.val, e.fm)
				if a.val.dt != nil {
					v += a.val.dt.Eval(e.vars)
				}
				corr[a.sp] += v / sys.AmountVolume(a.comp)
			}
			for _, a := range r.sets {
				v := e.gradDot(a.val, e.fm)
				if a.val.dt != nil {
					v += a.val.dt.Eval(e.vars)
				}
				corr[a.sp] = v
			}
			for i := range corr {
				corr[i] -= e.fp[i]
			}
		}
		// The new sensitivities, all from the old ones.
		for j, tg := range e.targets {
			sj, dj := s[j], e.ds[j]
			copy(dj, sj)
			for i, a := range r.adds {
				v := sys.AmountVolume(a.comp)
				d := e.actionDeriv(&r.adds[i], j, sj) / v
				if tg.Kind == sliders.Volume && tg.index == a.comp {
					// The knob is the volume in its own unit, v/VolumeScale.
					d -= addVals[i] / (v * v) * sys.VolumeScale(a.comp)
				}
				dj[a.sp] += d
			}
			for i, a := range r.sets {
				dj[a.sp] = e.actionDeriv(&r.sets[i], j, sj)
			}
			if dtau[j] != 0 {
				for i := range dj {
					dj[i] += corr[i] * dtau[j]
				}
			}
		}
		for j := range e.targets {
			copy(s[j], e.ds[j])
		}
		copy(ycur, ynext)
	}
}
