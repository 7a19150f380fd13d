package network

import (
	"fmt"
	"strconv"
	"strings"
)

// Event quantities can be varied like parameters (by sliders, sweeps,
// populations and fits). Each is named "EVENT.FIELD": FIELD is "at",
// "every", "from" or "to", or "add.SPECIES" or "infuse.SPECIES" for the
// amount or rate of an action.

// splitEventRef splits "EVENT.FIELD".
func splitEventRef(ref string) (event, field string, ok bool) {
	event, field, ok = strings.Cut(ref, ".")
	return event, field, ok && event != "" && field != ""
}

// EventQuantities returns the names of the event quantities of m that hold
// a number or a parameter name, in model order.
func (m *Model) EventQuantities() []string {
	var out []string
	for _, e := range m.Events {
		for _, f := range []struct {
			key string
			v   Value
		}{{"at", e.At}, {"every", e.Every}, {"from", e.From}, {"to", e.To}} {
			if f.v.Set {
				out = append(out, e.Name+"."+f.key)
			}
		}
		for _, c := range e.Add {
			if _, ok := m.changeValue(c.Value); ok {
				out = append(out, e.Name+".add."+c.Target)
			}
		}
		for _, c := range e.Infuse {
			if _, ok := m.changeValue(c.Value); ok {
				out = append(out, e.Name+".infuse."+c.Target)
			}
		}
	}
	return out
}

// changeValue reads an action's value that is a number or a parameter name.
func (m *Model) changeValue(s string) (float64, bool) {
	s = strings.TrimSpace(s)
	if f, err := strconv.ParseFloat(s, 64); err == nil {
		return f, true
	}
	for _, p := range m.Parameters {
		if p.Name == s {
			return p.Value, true
		}
	}
	return 0, false
}

func (m *Model) valueOf(v Value) float64 {
	if v.Name == "" {
		return v.Num
	}
	for _, p := range m.Parameters {
		if p.Name == v.Name {
			return p.Value
		}
	}
	return 0
}

// eventField finds the event and, for an action, the change a reference
// names.
func (m *Model) eventField(ref string) (e *Event, field string, c *Change, ok bool) {
	name, field, ok := splitEventRef(ref)
	if !ok {
		return nil, "", nil, false
	}
	for i := range m.Events {
		if m.Events[i].Name != name {
			continue
		}
		e = &m.Events[i]
		for _, kind := range []struct {
			prefix string
			list   []Change
		}{{"add.", e.Add}, {"infuse.", e.Infuse}} {
			if sp, isAction := strings.CutPrefix(field, kind.prefix); isAction {
				for j := range kind.list {
					if kind.list[j].Target == sp {
						return e, field, &kind.list[j], true
					}
				}
				return nil, "", nil, false
			}
		}
		return e, field, nil, true
	}
	return nil, "", nil, false
}

// timeField returns a pointer to a time field of e.
func timeField(e *Event, field string) *Value {
	switch field {
	case "at":
		return &e.At
	case "every":
		return &e.Every
	case "from":
		return &e.From
	case "to":
		return &e.To
	}
	return nil
}

// EventValue returns the value in m of an event quantity ("dose.add.C",
// "dose.every"), and whether m has it as a number or a parameter name.
func (m *Model) EventValue(ref string) (float64, bool) {
	e, field, c, ok := m.eventField(ref)
	switch {
	case !ok:
		return 0, false
	case c != nil:
		return m.changeValue(c.Value)
	}
	if v := timeField(e, field); v != nil && v.Set {
		return m.valueOf(*v), true
	}
	return 0, false
}

// SetEventValue writes v into m as the number of an event quantity, and
// reports whether m has it.
func (m *Model) SetEventValue(ref string, v float64) bool {
	e, field, c, ok := m.eventField(ref)
	switch {
	case !ok:
		return false
	case c != nil:
		c.Value = strconv.FormatFloat(v, 'g', -1, 64)
		return true
	}
	if f := timeField(e, field); f != nil && f.Set {
		*f = Number(v)
		return true
	}
	return false
}

// compiledEvent finds a compiled event quantity.
func (s *System) compiledEvent(ref string) (e *cevent, t *val, a *caction, err error) {
	name, field, ok := splitEventRef(ref)
	if !ok {
		return nil, nil, nil, fmt.Errorf("%q is not an event quantity; expected EVENT.at, EVENT.every, EVENT.from, EVENT.to, EVENT.add.SPECIES or EVENT.infuse.SPECIES", ref)
	}
	for i := range s.events {
		e = &s.events[i]
		if e.name != name {
			continue
		}
		switch field {
		case "at":
			return e, &e.at, nil, nil
		case "every":
			return e, &e.every, nil, nil
		case "from":
			return e, &e.from, nil, nil
		case "to":
			return e, &e.to, nil, nil
		}
		for _, kind := range []struct {
			prefix string
			list   []caction
		}{{"add.", e.add}, {"infuse.", e.infuse}} {
			if sp, isAction := strings.CutPrefix(field, kind.prefix); isAction {
				for j := range kind.list {
					if s.names[kind.list[j].sp] == sp {
						return e, nil, &kind.list[j], nil
					}
				}
			}
		}
		return nil, nil, nil, fmt.Errorf("event %q has no %q", name, field)
	}
	return nil, nil, nil, fmt.Errorf("no event %q in the model", name)
}

// EventValue returns the value an event quantity has in the runs to come
// (see Model.EventValue for the names).
func (s *System) EventValue(ref string) (float64, error) {
	_, t, a, err := s.compiledEvent(ref)
	switch {
	case err != nil:
		return 0, err
	case t != nil:
		return s.get(*t), nil
	case a.fixed:
		return a.value, nil
	}
	s.loadAll(0, s.initial)
	return a.prog.Eval(s.vars), nil
}

// SetEventValue makes an event quantity the constant v in the runs to
// come. A time must be ≥ 0 and an interval positive.
func (s *System) SetEventValue(ref string, v float64) error {
	_, t, a, err := s.compiledEvent(ref)
	if err != nil {
		return err
	}
	if !finite(v) {
		return fmt.Errorf("%s = %v: expected a finite number", ref, v)
	}
	if t != nil {
		if strings.HasSuffix(ref, ".every") && !(v > 0) {
			return fmt.Errorf("%s = %g: an interval must be positive", ref, v)
		}
		if v < 0 {
			return fmt.Errorf("%s = %g: a time must be 0 or later", ref, v)
		}
		*t = val{p: -1, c: v}
		return nil
	}
	a.fixed, a.value = true, v
	return nil
}

// ResetEventValues undoes every SetEventValue: event quantities follow the
// model again (numbers, or the parameters they name).
func (s *System) ResetEventValues() {
	for i := range s.events {
		e := &s.events[i]
		e.at, e.every, e.from, e.to = e.orig[0], e.orig[1], e.orig[2], e.orig[3]
		for _, list := range [][]caction{e.add, e.infuse} {
			for k := range list {
				list[k].fixed = false
			}
		}
	}
}
