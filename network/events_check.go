package network

import (
	"strings"

	"kinetarium/network/expr"
)

// EventKind says how an event is timed.
type EventKind int

// Event kinds.
const (
	Timed     EventKind = iota // "at", possibly "every" and "count"
	Triggered                  // "when"
	Infusion                   // "from" and "to"
)

// CheckedEvent is an event as Check read it.
type CheckedEvent struct {
	Index int // in Model.Events
	Name  string
	Kind  EventKind
	// Cond is the condition of a Triggered event: it holds when
	// Cond[0] Op Cond[1], Op one of "<", "<=", ">", ">=".
	Cond [2]expr.Node
	Op   string
	// The actions, in file order, with their values parsed.
	Add, Set, Infuse []CheckedChange
}

// CheckedChange is an action of an event as Check read it.
type CheckedChange struct {
	Target    string
	Parameter bool // the target is a parameter (only for Set), else a species
	Index     int  // of the species or parameter
	Expr      expr.Node
}

// comparison splits a condition "L op R" at its one comparison operator
// outside parentheses. ok is false when there is none or more than one.
func comparison(s string) (l, op, r string, ok bool) {
	depth, found := 0, -1
	oplen := 0
	for i := 0; i < len(s); i++ {
		switch c := s[i]; c {
		case '(':
			depth++
		case ')':
			depth--
		case '<', '>':
			if depth != 0 {
				continue
			}
			if found >= 0 {
				return "", "", "", false
			}
			found, oplen = i, 1
			if i+1 < len(s) && s[i+1] == '=' {
				oplen = 2
				i++
			}
		}
	}
	if found < 0 {
		return "", "", "", false
	}
	return s[:found], s[found : found+oplen], s[found+oplen:], true
}

// events checks every event: one timing, sensible times, known targets of
// the right kind, values that read.
func (v *validator) events() {
	seen := map[string]int{}
	for i := range v.m.Events {
		e := &v.m.Events[i]
		errf := func(field string, col int, format string, args ...any) {
			v.add(Error, "events", i, e.Name, field, col, format, args...)
		}
		switch j, dup := seen[e.Name]; {
		case strings.TrimSpace(e.Name) == "":
			errf("name", 0, "the event needs a name")
		case dup:
			errf("name", 0, "the name %q is already used by event %d; every event needs its own name", e.Name, j+1)
		default:
			seen[e.Name] = i
		}
		ce := CheckedEvent{Index: i, Name: e.Name}
		ok := true
		timings := 0
		if e.At.Set {
			timings++
		}
		if e.When != "" {
			timings++
			ce.Kind = Triggered
		}
		if e.From.Set || e.To.Set {
			timings++
			ce.Kind = Infusion
		}
		if timings != 1 {
			errf("", 0, "an event needs exactly one timing: \"at\" (a time), \"when\" (a condition) or \"from\" and \"to\" (an infusion)")
			ok = false
		}
		time := func(field string, val Value, positive bool) {
			if !val.Set {
				return
			}
			x, named, known := v.timeValue(i, e.Name, field, val)
			switch {
			case !known:
				ok = false // reported, with no value to judge
			case !named && x < 0:
				errf(field, 0, "%s = %v is not allowed; expected a time of 0 or later", field, x)
				ok = false
			case !named && positive && !(x > 0):
				errf(field, 0, "%s = %v is not allowed; expected a positive interval", field, x)
				ok = false
			case x < 0 || positive && !(x > 0):
				errf(field, 0, "%s is the parameter %q, whose value %v is not allowed; expected %s", field, val.Name, x,
					map[bool]string{true: "a positive interval", false: "a time of 0 or later"}[positive])
				ok = false
			}
		}
		time("at", e.At, false)
		time("every", e.Every, true)
		time("from", e.From, false)
		time("to", e.To, false)
		if ce.Kind == Infusion {
			if !e.From.Set || !e.To.Set {
				errf("", 0, "an infusion needs both \"from\" and \"to\"")
				ok = false
			} else if f, t := v.valueOf(e.From), v.valueOf(e.To); ok && !(t > f) {
				errf("to", 0, "the infusion ends (to = %v) before it starts (from = %v); expected to > from", t, f)
				ok = false
			}
		}
		if e.Count < 0 || e.Count > MaxCount {
			errf("count", 0, "count = %d is not allowed; expected a whole number from 1 to %d, the number of occurrences", e.Count, MaxCount)
			ok = false
		} else if e.Every.Set && e.Count == 0 {
			errf("count", 0, "\"every\" needs \"count\", the number of occurrences")
			ok = false
		}
		if e.Count > 0 && !e.Every.Set && e.Count != 1 {
			errf("every", 0, "\"count\" needs \"every\", the interval between occurrences")
			ok = false
		}
		if ce.Kind == Triggered {
			if e.Every.Set || e.Count > 0 {
				errf("when", 0, "a triggered event fires each time its condition turns true; \"every\" and \"count\" do not apply (use \"once\" to fire only the first time)")
				ok = false
			}
			l, op, r, isCmp := comparison(e.When)
			if !isCmp {
				errf("when", 0, "%q is not a comparison; expected two expressions joined by <, <=, > or >=, such as \"P > 5\"", e.When)
				ok = false
			} else {
				f := Field{Missing: "a side of the comparison is empty; expected an expression, such as \"P > 5\""}
				ce.Op = op
				ce.Cond[0] = v.expression("events", i, e.Name, "when", l, f)
				ce.Cond[1] = v.expression("events", i, e.Name, "when", r, f)
				ok = ok && ce.Cond[0] != nil && ce.Cond[1] != nil
			}
		} else if e.Once {
			errf("once", 0, "\"once\" applies to triggered events (\"when\") only")
			ok = false
		}
		if len(e.Add)+len(e.Set)+len(e.Infuse) == 0 {
			errf("", 0, "the event has no action; give \"add\", \"set\" or (for an infusion) \"infuse\"")
			ok = false
		}
		if ce.Kind == Infusion && len(e.Add)+len(e.Set) > 0 {
			errf("", 0, "an infusion feeds species at a rate with \"infuse\"; give \"add\" or \"set\" in an event of their own")
			ok = false
		}
		if ce.Kind != Infusion && len(e.Infuse) > 0 {
			errf("infuse", 0, "\"infuse\" needs \"from\" and \"to\", the interval of the infusion")
			ok = false
		}
		ce.Add = v.changes(i, e, "add", e.Add, false)
		ce.Set = v.changes(i, e, "set", e.Set, true)
		ce.Infuse = v.changes(i, e, "infuse", e.Infuse, false)
		if ok && len(ce.Add) == len(e.Add) && len(ce.Set) == len(e.Set) && len(ce.Infuse) == len(e.Infuse) {
			v.net.Events = append(v.net.Events, ce)
		}
	}
}

// changes checks the actions of one kind of an event and returns those
// that are sound.
func (v *validator) changes(i int, e *Event, kind string, cs []Change, params bool) []CheckedChange {
	var out []CheckedChange
	for _, c := range cs {
		field := kind + "." + c.Target
		errf := func(format string, args ...any) { v.add(Error, "events", i, e.Name, field, 0, format, args...) }
		cc := CheckedChange{Target: c.Target}
		if j, ok := v.speciesIx[c.Target]; ok {
			cc.Index = j
			v.usedSp[j] = true
			if kind == "infuse" && v.m.Species[j].Fixed {
				errf("%q is held constant, so an infusion cannot change it; use \"set\" to switch it", c.Target)
				continue
			}
		} else if j, ok := v.paramIx[c.Target]; ok && params {
			cc.Index, cc.Parameter = j, true
			v.usedPar[j] = true
		} else if _, ok := v.assignIx[c.Target]; ok {
			errf("%q is an assignment, computed from other quantities; change what it is computed from instead", c.Target)
			continue
		} else if ref, ok := v.kinds[c.Target]; ok {
			errf("%q is a %s; %s takes %s", c.Target, sectionWord[ref.section], kind, map[bool]string{true: "species and parameters", false: "species"}[params])
			continue
		} else {
			errf("unknown %s %q; expected %s of the model", map[bool]string{true: "species or parameter", false: "species"}[params], c.Target,
				map[bool]string{true: "a species or parameter", false: "a species"}[params])
			continue
		}
		f := Field{Missing: "the value is missing; expected a number, a parameter name or an expression"}
		cc.Expr = v.expression("events", i, e.Name, field, c.Value, f)
		if cc.Expr == nil {
			continue
		}
		if kind == "infuse" {
			for _, name := range expr.Vars(cc.Expr) {
				if _, isPar := v.paramIx[name]; !isPar {
					v.add(Error, "events", i, e.Name, field, 0, "an infusion rate may use numbers and parameters only, not %q; it stays constant while the infusion runs", name)
					cc.Expr = nil
					break
				}
			}
			if cc.Expr == nil {
				continue
			}
		}
		out = append(out, cc)
	}
	return out
}

// timeValue returns the value of a time field (a number or a parameter)
// and whether it is named and known; an unknown name is reported, with
// the declared name it is closest to.
func (v *validator) timeValue(i int, item, field string, val Value) (x float64, named, known bool) {
	if val.Name == "" {
		if !finite(val.Num) {
			v.add(Error, "events", i, item, field, 0, "%s = %v is not allowed; expected a finite time", field, val.Num)
		}
		return val.Num, false, true
	}
	j, ok := v.paramIx[val.Name]
	if !ok {
		v.add(Error, "events", i, item, field, 0, "unknown parameter %q;%s declare it under parameters or give a number", val.Name, v.suggest(val.Name, v.paramIx))
		return 0, true, false
	}
	v.usedPar[j] = true
	return v.m.Parameters[j].Value, true, true
}

// valueOf returns the value of a number or a known parameter (0 for an
// unknown one, which timeValue reports).
func (v *validator) valueOf(val Value) float64 {
	if val.Name == "" {
		return val.Num
	}
	if j, ok := v.paramIx[val.Name]; ok {
		return v.m.Parameters[j].Value
	}
	return 0
}
