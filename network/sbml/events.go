package sbml

import (
	"fmt"

	"kinetarium/network"
	"kinetarium/network/expr"
)

// events adds SBML's events (without delay) as the model's events: a
// trigger "time ≥ T" becomes an event at T; any other trigger a condition
// ("when"), which fires as SBML's do, each time it turns from false to
// true. A trigger that holds at the start fires then only when its
// initialValue is false; that firing becomes an event at time 0.
// Assignments become "set" actions, evaluated with the values just before
// the event, as SBML's are without a delay (so persistence and
// useValuesFromTriggerTime make no difference).
func (im *importer) events(m *network.Model, model *node) {
	used := map[string]bool{}
	for k, e := range model.kids("listOfEvents", "event") {
		id, _ := e.attr("id")
		w := fmt.Sprintf("event %q", id)
		if id == "" {
			id = fmt.Sprintf("event_%d", k+1)
			w = fmt.Sprintf("event %d", k+1)
		}
		name := id
		for j := 2; used[name]; j++ {
			name = fmt.Sprintf("%s_%d", id, j)
		}
		used[name] = true
		ev := network.Event{Name: name, Note: noteOf(e, id)}
		for _, ea := range e.kids("listOfEventAssignments", "eventAssignment") {
			v, _ := ea.attr("variable")
			s := im.ids[v]
			mth := ea.kid("math")
			if s == nil || mth == nil {
				if mth == nil {
					im.warnAt(ea, w, "the assignment to %q has no math and was left out", v)
				}
				continue
			}
			t, ok := im.model(mth, nil, w)
			if !ok {
				continue
			}
			var c *sym
			if s.kind == kSpecies {
				c = im.ids[s.comp]
			}
			switch {
			case s.assignment, s.ar != nil:
				im.errAt(ea, w, "%q is set by an assignment rule and cannot be assigned by an event", v)
				continue
			case c != nil && c.variable && !s.hosu:
				t = expr.Mul(t, expr.Var(c.name)) // held as its amount
			case c != nil && s.hosu && !c.variable:
				t = expr.Div(t, expr.Num(c.vol))
			case s.kind == kSpecies, s.kind == kParameter, s.variable:
			default:
				continue // refused while reading
			}
			ev.Set = append(ev.Set, network.Change{Target: s.name, Value: t.String()})
		}
		trig := e.kid("trigger")
		var tm *node
		if trig != nil {
			tm = trig.kid("math")
		}
		if tm == nil {
			im.warnAt(e, w, "the event has no trigger and never fires; left out")
			continue
		}
		if len(ev.Set) == 0 {
			im.warnAt(e, w, "the event changes nothing; left out")
			continue
		}
		initialValue := true
		if v, ok := trig.attr("initialValue"); ok {
			initialValue = v == "true" || v == "1"
		} else if im.level == 3 {
			im.errAt(trig, w, "the required attribute initialValue of the trigger is missing")
			continue
		}
		root, err := im.mr.root(tm)
		if err != nil {
			im.addErr(err, tm, w)
			continue
		}
		// At the start: does the trigger hold?
		cond, err := im.mr.truth(root, nil)
		if err != nil {
			im.addErr(err, tm, w)
			continue
		}
		if err := im.mr.checkSize(root, cond(expr.Num(1), expr.Num(0))); err != nil {
			im.addErr(err, tm, w)
			continue
		}
		atStart, err := im.evalTree(cond(expr.Num(1), expr.Num(0)), w)
		if err != nil {
			im.errAt(tm, w, "%v", err)
			continue
		}
		holds := atStart == 1
		if at, ok := im.timeTrigger(root); ok {
			switch {
			case at > 0:
				ev.At = network.Number(at)
				m.Events = append(m.Events, ev)
			case !initialValue:
				ev.At = network.Number(0)
				m.Events = append(m.Events, ev)
			default:
				im.warnAt(e, w, "the trigger holds from the start and its initialValue is true, so the event never fires; left out")
			}
			continue
		}
		l, op, r, ok := im.comparison(root, w)
		if !ok {
			continue
		}
		ev.When = l.String() + " " + op + " " + r.String()
		if holds && !initialValue {
			first := ev
			first.Name = im.eventName(used, name+"_at_start")
			first.When = ""
			first.At = network.Number(0)
			first.Note = fmt.Sprintf("event %s firing at the start, where its trigger holds", id)
			m.Events = append(m.Events, first)
		}
		m.Events = append(m.Events, ev)
	}
}

func (im *importer) eventName(used map[string]bool, want string) string {
	name := want
	for j := 2; used[name]; j++ {
		name = fmt.Sprintf("%s_%d", want, j)
	}
	used[name] = true
	return name
}

// timeTrigger recognises a trigger time ≥ T (or >, or T ≤ time, T <
// time) with T a constant, and returns T.
func (im *importer) timeTrigger(root *node) (float64, bool) {
	if root.Name != "apply" || len(root.Kids) != 3 {
		return 0, false
	}
	op := unwrap(root.Kids[0]).Name
	a, b := unwrap(root.Kids[1]), unwrap(root.Kids[2])
	isTime := func(n *node) bool {
		url, _ := n.attr("definitionURL")
		return n.Name == "csymbol" && symbolName(url) == "time"
	}
	var other *node
	switch {
	case (op == "geq" || op == "gt") && isTime(a):
		other = b
	case (op == "leq" || op == "lt") && isTime(b):
		other = a
	default:
		return 0, false
	}
	t, err := im.mr.num(other, nil)
	if err != nil {
		return 0, false
	}
	for _, id := range expr.Vars(t) {
		s, ok := im.ids[id]
		if !ok || s.kind != kParameter && s.kind != kCompartment || !s.constant || s.rr != nil || s.ar != nil || s.eventTarget != nil || s.ia != nil {
			return 0, false
		}
	}
	v, err := im.evalTree(t, "trigger")
	if err != nil || !finite(v) {
		return 0, false
	}
	return v, true
}

// comparison turns a trigger into the model's condition "L op R": a
// relation between two numbers stays one; any other trigger (logic,
// equality, a function) becomes its truth value, 1 or 0, compared with
// 1/2.
func (im *importer) comparison(root *node, w string) (l expr.Node, op string, r expr.Node, ok bool) {
	ops := map[string]string{"lt": "<", "gt": ">", "leq": "<=", "geq": ">="}
	if root.Name == "apply" && len(root.Kids) == 3 {
		if o, rel := ops[unwrap(root.Kids[0]).Name]; rel {
			a, err := im.mr.num(root.Kids[1], nil)
			if err != nil {
				im.addErr(err, root, w)
				return nil, "", nil, false
			}
			b, err := im.mr.num(root.Kids[2], nil)
			if err != nil {
				im.addErr(err, root, w)
				return nil, "", nil, false
			}
			for _, x := range []expr.Node{a, b} {
				if err := im.mr.checkSize(root, x); err != nil {
					im.addErr(err, root, w)
					return nil, "", nil, false
				}
			}
			la, ok1 := im.subst(a, root, w, 0)
			lb, ok2 := im.subst(b, root, w, 0)
			return la, o, lb, ok1 && ok2
		}
	}
	sel, err := im.mr.truth(root, nil)
	if err != nil {
		im.addErr(err, root, w)
		return nil, "", nil, false
	}
	t, ok := im.subst(sel(expr.Num(1), expr.Num(0)), root, w, 0)
	return t, ">", expr.Num(0.5), ok
}
