package network

import (
	"fmt"
	"math"
)

// cevent is a compiled event.
type cevent struct {
	name                  string
	kind                  EventKind
	at, every, from, to   val
	count                 int // occurrences (1 for a single one)
	once                  bool
	cond                  int     // index among the watched conditions
	lhs, rhs              program // the sides of a condition
	sign                  float64 // +1 for > and >=, −1 for < and <=
	add, set, infuse      []caction
	given, rep            int  // occurrences fired; infusion repetitions ended
	active, firedOnce     bool // an infusion running; a once-event spent
	rates                 []float64
	startName, finishName string
	orig                  [4]val // at, every, from and to as compiled
}

// caction is a compiled action: its state variable (a species, or a
// parameter carried in the state) and the program of its value.
type caction struct {
	sp    int
	prog  program
	fixed bool    // value set from outside (SetEventValue) instead of prog
	value float64 // the value when fixed
}

// eval returns the action's value with the variables as loaded.
func (a *caction) eval(vars []float64) float64 {
	if a.fixed {
		return a.value
	}
	return a.prog.Eval(vars)
}

// compileEvents compiles the checked events.
func (b *builder) compileEvents() error {
	s := b.s
	for _, ce := range b.net.Events {
		e := &b.net.Model.Events[ce.Index]
		c := cevent{name: ce.Name, kind: ce.Kind, count: max(e.Count, 1), once: e.Once,
			at: b.value(e.At), every: b.value(e.Every), from: b.value(e.From), to: b.value(e.To),
			startName: ce.Name + " starts", finishName: ce.Name + " ends"}
		if ce.Kind == Triggered {
			var err error
			if c.lhs, err = b.compile(b.inline(ce.Cond[0])); err != nil {
				return fmt.Errorf("event %q: condition: %w", ce.Name, err)
			}
			if c.rhs, err = b.compile(b.inline(ce.Cond[1])); err != nil {
				return fmt.Errorf("event %q: condition: %w", ce.Name, err)
			}
			c.sign = 1
			if ce.Op[0] == '<' {
				c.sign = -1
			}
			c.cond = s.nCond
			s.nCond++
		}
		for _, list := range []struct {
			in  []CheckedChange
			out *[]caction
		}{{ce.Add, &c.add}, {ce.Set, &c.set}, {ce.Infuse, &c.infuse}} {
			for _, ch := range list.in {
				p, err := b.compile(b.inline(ch.Expr))
				if err != nil {
					return fmt.Errorf("event %q: %s: %w", ce.Name, ch.Target, err)
				}
				a := caction{sp: ch.Index, prog: p}
				if ch.Parameter {
					a.sp = s.parState[ch.Index] // set parameters are carried in the state
				}
				*list.out = append(*list.out, a)
			}
		}
		c.rates = make([]float64, len(c.infuse))
		c.orig = [4]val{c.at, c.every, c.from, c.to}
		s.maxActions = max(s.maxActions, len(c.add)+len(c.set))
		s.events = append(s.events, c)
	}
	s.inflow = make([]float64, s.n)
	s.actVals = make([]float64, s.maxActions)
	return nil
}

// ResetEvents makes every event pending again, stops every infusion and
// gives parameters changed by events their values from before the run
// (see solve.EventSystem).
func (s *System) ResetEvents(t0 float64) {
	for i := range s.events {
		e := &s.events[i]
		e.given, e.rep, e.active, e.firedOnce = 0, 0, false, false
	}
	for i := range s.inflow {
		s.inflow[i] = 0
	}
	s.infusing = 0
	copy(s.vars[s.n:s.n+len(s.parNames)], s.pbase)
}

// NextEvent returns the earliest time of a pending scheduled event or
// infusion boundary, or +Inf.
func (s *System) NextEvent(t float64) float64 {
	next := math.Inf(1)
	for i := range s.events {
		e := &s.events[i]
		switch e.kind {
		case Timed:
			if e.given < e.count {
				next = math.Min(next, s.get(e.at)+float64(e.given)*s.get(e.every))
			}
		case Infusion:
			if e.rep < e.count {
				shift := float64(e.rep) * s.get(e.every)
				if e.active {
					next = math.Min(next, s.get(e.to)+shift)
				} else {
					next = math.Min(next, s.get(e.from)+shift)
				}
			}
		}
	}
	return next
}

// Conditions returns the number of triggered events.
func (s *System) Conditions() int { return s.nCond }

// Watch writes, for each triggered event, a function that rises through
// zero when its condition turns true.
func (s *System) Watch(t float64, y, g []float64) {
	s.loadAll(t, y)
	for i := range s.events {
		e := &s.events[i]
		if e.kind == Triggered {
			g[e.cond] = e.sign * (e.lhs.Eval(s.vars) - e.rhs.Eval(s.vars))
		}
	}
}

// loadAll puts y and t into the variables that programs read.
func (s *System) loadAll(t float64, y []float64) {
	copy(s.vars[:s.n], y)
	s.vars[len(s.vars)-1] = t
}

// Fire applies, in model order, every scheduled event due at t and every
// triggered event whose condition rose, and returns the names of those
// that fired (an infusion fires as "NAME starts" and "NAME ends").
func (s *System) Fire(t float64, y []float64, rose []bool) []string {
	s.fired = s.fired[:0]
	for i := range s.events {
		e := &s.events[i]
		switch e.kind {
		case Timed:
			for e.given < e.count && s.get(e.at)+float64(e.given)*s.get(e.every) <= t {
				s.apply(e, t, y)
				e.given++
				s.fired = append(s.fired, e.name)
			}
		case Infusion:
			for e.rep < e.count {
				shift := float64(e.rep) * s.get(e.every)
				if !e.active && s.get(e.from)+shift <= t {
					s.loadAll(t, y)
					for k, a := range e.infuse {
						e.rates[k] = a.eval(s.vars) / s.volumes[s.spComp[a.sp]]
						s.inflow[a.sp] += e.rates[k]
					}
					e.active = true
					s.infusing++
					s.fired = append(s.fired, e.startName)
					continue
				}
				if e.active && s.get(e.to)+shift <= t {
					for k, a := range e.infuse {
						s.inflow[a.sp] -= e.rates[k]
					}
					e.active = false
					s.infusing--
					e.rep++
					if s.infusing == 0 {
						for j := range s.inflow { // no drift from the sums
							s.inflow[j] = 0
						}
					}
					s.fired = append(s.fired, e.finishName)
					continue
				}
				break
			}
		case Triggered:
			if rose != nil && rose[e.cond] && !(e.once && e.firedOnce) {
				s.apply(e, t, y)
				e.firedOnce = true
				s.fired = append(s.fired, e.name)
			}
		}
	}
	return s.fired
}

// apply performs the add and set actions of e on y and the parameters,
// with every value computed from the state just before the event.
func (s *System) apply(e *cevent, t float64, y []float64) {
	s.loadAll(t, y)
	vals := s.actVals[:0]
	for k := range e.add {
		vals = append(vals, e.add[k].eval(s.vars))
	}
	for k := range e.set {
		vals = append(vals, e.set[k].eval(s.vars))
	}
	for k, a := range e.add {
		y[a.sp] += vals[k] / s.volumes[s.spComp[a.sp]]
	}
	for k, a := range e.set {
		v := vals[len(e.add)+k]
		y[a.sp] = v
	}
	s.loadAll(t, y)
}
