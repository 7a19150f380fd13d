package network

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"kinetarium/network/expr"
	"kinetarium/network/units"
)

// unitCheck reads the units of the model, its parameters and assignments,
// and checks that every reaction's rate comes out in concentration per
// time. It reports warnings only: units are advice, and a model whose
// units do not add up still runs. Nothing is checked until the model
// declares its units of time and concentration (Model.Units); parameters
// without a unit are not checked and are named in one warning.
type unitCheck struct {
	v          *validator
	conc, time units.Unit
	concText   string
	timeText   string
	params     []*units.Unit // nil: no unit, or one that does not read
	asgs       map[string]*units.Unit
	unitless   map[int]bool // parameters without a unit that a rate reads
	inRate     bool         // checking a reaction's rate: count unitless parameters
}

// ModelUnits returns the model's units of concentration and time, parsed,
// and whether both are declared, read, and of the right kind.
func (m *Model) ModelUnits() (conc, time units.Unit, ok bool) {
	c, err1 := units.Parse(m.Units.Amount)
	t, err2 := units.Parse(m.Units.Time)
	return c, t, err1 == nil && err2 == nil && c.IsConcentration() && t.IsTime()
}

// unitProblem turns a parse error of a unit field into a warning.
func (v *validator) unitProblem(section string, i int, item, field, text string, err error) {
	col := 0
	msg := err.Error()
	if e, ok := err.(*units.Error); ok {
		col, msg = e.Col, e.Msg
	}
	v.add(Warning, section, i, item, field, col, "unit %q does not read: %s", text, msg)
}

func (v *validator) units() {
	m := v.m
	uc := &unitCheck{v: v, concText: m.Units.Amount, timeText: m.Units.Time, asgs: map[string]*units.Unit{}, unitless: map[int]bool{}}
	declared := true
	if m.Units.Time != "" {
		t, err := units.Parse(m.Units.Time)
		switch {
		case err != nil:
			v.unitProblem("simulation", 0, "", "units.time", m.Units.Time, err)
			declared = false
		case !t.IsTime():
			v.add(Warning, "simulation", 0, "", "units.time", 0, "%q is not a unit of time (it is %s); expected s, min, h or day", m.Units.Time, t.Kind())
			declared = false
		}
		uc.time = t
	} else {
		declared = false
	}
	if m.Units.Amount != "" {
		c, err := units.Parse(m.Units.Amount)
		switch {
		case err != nil:
			v.unitProblem("simulation", 0, "", "units.amount", m.Units.Amount, err)
			declared = false
		case !c.IsConcentration():
			v.add(Warning, "simulation", 0, "", "units.amount", 0, "%q is not a concentration (it is %s); species hold concentrations, so expected a unit such as uM, nM or mg/L", m.Units.Amount, c.Kind())
			declared = false
		}
		uc.conc = c
	} else {
		declared = false
	}
	uc.params = make([]*units.Unit, len(m.Parameters))
	for i, p := range m.Parameters {
		if strings.TrimSpace(p.Unit) == "" {
			continue
		}
		u, err := units.Parse(p.Unit)
		if err != nil {
			v.unitProblem("parameters", i, p.Name, "unit", p.Unit, err)
			continue
		}
		uc.params[i] = &u
	}
	for i, a := range m.Assignments {
		if strings.TrimSpace(a.Unit) == "" {
			continue
		}
		u, err := units.Parse(a.Unit)
		if err != nil {
			v.unitProblem("assignments", i, a.Name, "unit", a.Unit, err)
			continue
		}
		uc.asgs[a.Name] = &u
	}
	if !declared {
		return
	}
	uc.assignments()
	uc.inRate = true
	for i := range v.net.Reactions {
		uc.reaction(&v.net.Reactions[i])
	}
	uc.inRate = false
	uc.events()
	if len(uc.unitless) > 0 {
		var ix []int
		for j := range uc.unitless {
			ix = append(ix, j)
		}
		sort.Ints(ix)
		names := make([]string, len(ix))
		for k, j := range ix {
			names[k] = m.Parameters[j].Name
		}
		p := m.Parameters[ix[0]]
		v.add(Warning, "parameters", ix[0], p.Name, "unit", 0,
			"%s used by rate laws %s no unit (%s), so the reactions that use %s are not checked for units; give each its unit, such as %s, or 1 for a pure number",
			plural(len(ix), "parameter"), hasHave(len(ix)), strings.Join(names, ", "), itThem(len(ix)), units.Compose(uc.concText, 0, uc.timeText, -1))
	}
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return strconv.Itoa(n) + " " + word + "s"
}

func hasHave(n int) string {
	if n == 1 {
		return "has"
	}
	return "have"
}

func itThem(n int) string {
	if n == 1 {
		return "it"
	}
	return "them"
}

// want returns Conc^d.C·Time^d.T.
func (uc *unitCheck) want(d dims) units.Unit { return uc.conc.Pow(d.C).Mul(uc.time.Pow(d.T)) }

// wantText writes Conc^d.C·Time^d.T in the model's own unit texts.
func (uc *unitCheck) wantText(d dims) string {
	return units.Compose(uc.concText, d.C, uc.timeText, d.T)
}

// describe writes u in the model's units when it is Conc^a·Time^b times
// a factor ("uM/s", "1000 × uM/s"), else in SI base units.
func (uc *unitCheck) describe(u units.Unit) string {
	a := u.Dim[units.Length] / uc.conc.Dim[units.Length]
	rest := u.Div(uc.conc.Pow(a))
	b := rest.Dim[units.Time]
	rest = rest.Div(uc.time.Pow(b))
	if !rest.Dimensionless() {
		return u.String() + " (" + u.Kind() + ")"
	}
	text := units.Compose(uc.concText, a, uc.timeText, b)
	if math.Abs(rest.Factor-1) > 1e-9 {
		return strconv.FormatFloat(rest.Factor, 'g', 6, 64) + " × " + text
	}
	return text
}

// text writes u as a unit text that units.Parse reads back to an equal
// unit: in the model's units when it is Conc^a·Time^b ("uM", "uM/s",
// "1" for a pure number), else a unit symbol equal to it ("nM"), else in
// SI base units.
func (uc *unitCheck) text(u units.Unit) string {
	a := u.Dim[units.Length] / uc.conc.Dim[units.Length]
	rest := u.Div(uc.conc.Pow(a))
	b := rest.Dim[units.Time]
	rest = rest.Div(uc.time.Pow(b))
	if rest.Dimensionless() && math.Abs(rest.Factor-1) <= 1e-12 {
		return units.Compose(uc.concText, a, uc.timeText, b)
	}
	if s, ok := units.Symbol(u); ok {
		return s
	}
	return u.String()
}

// mismatch says how found differs from want: by a factor, or in kind.
func (uc *unitCheck) mismatch(found, want units.Unit) string {
	if found.SameDim(want) {
		return fmt.Sprintf("they differ by a factor of %s", strconv.FormatFloat(found.Factor/want.Factor, 'g', 6, 64))
	}
	return "they measure different kinds of quantity"
}

var orderWords = map[float64]string{0: "a zeroth-order", 1: "a first-order", 2: "a second-order", 3: "a third-order"}

// fieldPurpose writes what a field of dimension d is, for messages and
// hints: "a second-order step" for mass action, else the kind of quantity.
func fieldPurpose(law Law, key string, eq Equation, d dims) string {
	if _, ok := law.(massAction); ok {
		o := order(eq.Reactants)
		if key == "k_reverse" {
			o = order(eq.Products)
		}
		if w, ok := orderWords[o]; ok {
			return "for " + w + " step"
		}
		return "for a step of order " + strconv.FormatFloat(o, 'g', -1, 64)
	}
	switch d {
	case dimConc:
		return "a concentration"
	case dimRate:
		return "concentration per time"
	case dimPerTime:
		return "per time"
	case dimNumber:
		return "a pure number"
	}
	return ""
}

func (uc *unitCheck) reaction(cr *CheckedReaction) {
	if cr.Expr == nil || cr.Law == nil {
		return
	}
	v := uc.v
	if fu, ok := cr.Law.(fieldUnitser); ok {
		want := fu.fieldUnits(cr.Equation)
		inUse := map[string]bool{}
		for _, k := range cr.uses {
			inUse[k] = true
		}
		for _, f := range cr.Law.Fields() {
			d, ok := want[f.Key]
			val := cr.Rate.Arg(f.Key)
			if !ok || !inUse[f.Key] || f.Kind != ParamField || val.Name == "" {
				continue
			}
			j := v.paramIx[val.Name]
			u := uc.params[j]
			if u == nil {
				if v.m.Parameters[j].Unit == "" {
					uc.unitless[j] = true
				}
				continue
			}
			w := uc.want(d)
			if !u.Equal(w) {
				unit, wt := v.m.Parameters[j].Unit, uc.wantText(d)
				how := "they measure different kinds of quantity"
				if u.SameDim(w) {
					how = fmt.Sprintf("1 %s = %s %s, so convert the value or change the unit", unit, strconv.FormatFloat(u.Factor/w.Factor, 'g', 6, 64), wt)
				}
				label := fieldLabel(cr.Law, f.Key, cr.Equation)
				v.add(Warning, "reactions", cr.Index, cr.Name, "rate."+f.Key, 0,
					"%s uses %s in %s, but %s is in %s with this model's units (%s); %s",
					label, val.Name, unit, label, wt, fieldPurpose(cr.Law, f.Key, cr.Equation, d), how)
			}
		}
		return
	}
	if cr.Rate.Expression == "" {
		return
	}
	found, known := uc.expr(cr.Expr, func(col int, format string, args ...any) {
		v.add(Warning, "reactions", cr.Index, cr.Name, "rate.expression", col, format, args...)
	})
	want := uc.want(dimRate)
	if known && !found.Equal(want) {
		v.add(Warning, "reactions", cr.Index, cr.Name, "rate.expression", 0,
			"the rate comes out in %s, but a rate is concentration per time, %s here; %s",
			uc.describe(found), uc.wantText(dimRate), uc.mismatch(found, want))
	}
}

// expr returns the unit of n and whether it is known (every name in it
// has a unit). Numbers are pure numbers. Sums whose terms differ, and
// functions given a quantity that must be a pure number, are reported
// through warn at their column.
func (uc *unitCheck) expr(n expr.Node, warn func(col int, format string, args ...any)) (units.Unit, bool) {
	v := uc.v
	switch n := n.(type) {
	case *expr.Number:
		return units.One, true
	case *expr.Variable:
		if n.Name == TimeName {
			return uc.time, true
		}
		if _, ok := v.speciesIx[n.Name]; ok {
			return uc.conc, true
		}
		if j, ok := v.paramIx[n.Name]; ok {
			if u := uc.params[j]; u != nil {
				return *u, true
			}
			if v.m.Parameters[j].Unit == "" && uc.inRate {
				uc.unitless[j] = true
			}
			return units.Unit{}, false
		}
		if u := uc.asgs[n.Name]; u != nil {
			return *u, true
		}
		return units.Unit{}, false
	case *expr.Unary:
		return uc.expr(n.X, warn)
	case *expr.Binary:
		l, lok := uc.expr(n.L, warn)
		r, rok := uc.expr(n.R, warn)
		switch n.Op {
		case expr.OpAdd, expr.OpSub:
			if !lok || !rok {
				return units.Unit{}, false
			}
			if !l.Equal(r) {
				warn(n.Col, "the two sides of %q differ: %s on the left, %s on the right; %s", n.Op.String(), uc.describe(l), uc.describe(r), uc.mismatch(l, r))
				return units.Unit{}, false
			}
			return l, true
		case expr.OpMul:
			return l.Mul(r), lok && rok
		case expr.OpDiv:
			return l.Div(r), lok && rok
		case expr.OpPow:
			return uc.power(n.L, n.R, l, lok, r, rok, n.Col, warn)
		}
	case *expr.Call:
		args := make([]units.Unit, len(n.Args))
		oks := make([]bool, len(n.Args))
		all := true
		for i, a := range n.Args {
			args[i], oks[i] = uc.expr(a, warn)
			all = all && oks[i]
		}
		switch n.Func {
		case "exp", "log", "log10":
			if oks[0] && !args[0].Dimensionless() {
				warn(n.Col, "%s needs a pure number, but its argument is in %s; divide it by a constant of the same unit", n.Func, uc.describe(args[0]))
			}
			return units.One, true
		case "sqrt":
			return args[0].Pow(0.5), oks[0]
		case "abs":
			return args[0], oks[0]
		case "min", "max":
			if !all {
				return units.Unit{}, false
			}
			if !args[0].Equal(args[1]) {
				warn(n.Col, "the arguments of %s differ: %s and %s", n.Func, uc.describe(args[0]), uc.describe(args[1]))
				return units.Unit{}, false
			}
			return args[0], true
		case "pow":
			return uc.power(n.Args[0], n.Args[1], args[0], oks[0], args[1], oks[1], n.Col, warn)
		}
	}
	return units.Unit{}, false
}

// power returns the unit of base^exponent: a quantity to a constant
// power, or a pure number to any power.
func (uc *unitCheck) power(base, exponent expr.Node, b units.Unit, bok bool, e units.Unit, eok bool, col int, warn func(int, string, ...any)) (units.Unit, bool) {
	if eok && !e.Dimensionless() {
		warn(col, "a power needs a pure number as its exponent, but it is in %s", uc.describe(e))
		return units.Unit{}, false
	}
	if c, ok := expr.Const(exponent); ok {
		return b.Pow(c), bok
	}
	if !bok {
		return units.Unit{}, false
	}
	if !b.Dimensionless() {
		// A quantity to a varying power, as in X^n/(K^n + X^n): its unit
		// has no fixed form, so the rate is not checked.
		return units.Unit{}, false
	}
	if math.Abs(b.Factor-1) > 1e-9 {
		return units.Unit{}, false // a ratio of different units to a varying power
	}
	return units.One, true
}

// UnitHint returns, for the form of reaction i, the unit each parameter
// field of its law should carry with the model's units, such as "Rate
// constant in 1/(uM·s) for a second-order step", one field a line; in
// words ("1/(concentration·time)") when the model declares no units; ""
// when the law has no fixed field units.
func (n *Net) UnitHint(i int) string {
	m := n.Model
	concText, timeText := m.Units.Amount, m.Units.Time
	if _, _, ok := m.ModelUnits(); !ok {
		concText, timeText = "concentration", "time"
	}
	cr := &n.Reactions[i]
	if cr.Law == nil || !cr.EqOK {
		return ""
	}
	fu, ok := cr.Law.(fieldUnitser)
	if !ok {
		return ""
	}
	want := fu.fieldUnits(cr.Equation)
	var lines []string
	for _, k := range cr.uses {
		d, ok := want[k]
		if !ok {
			continue
		}
		label := fieldLabel(cr.Law, k, cr.Equation)
		text := units.Compose(concText, d.C, timeText, d.T)
		purpose := fieldPurpose(cr.Law, k, cr.Equation, d)
		if strings.HasPrefix(purpose, "for ") {
			lines = append(lines, label+" in "+text+" "+purpose)
		} else {
			lines = append(lines, label+" in "+text)
		}
	}
	return strings.Join(lines, "\n")
}

// fieldLabel is the form's label of field key of law for equation eq
// ("Forward constant" for k of a reversible mass-action step).
func fieldLabel(law Law, key string, eq Equation) string {
	if _, ma := law.(massAction); ma && key == "k" && eq.Reversible {
		return "Forward constant"
	}
	for _, f := range law.Fields() {
		if f.Key == key {
			return f.Label
		}
	}
	return keyLabel(key)
}

// constant reports whether n names nothing: a number, or numbers joined
// by operators and functions. A constant takes the unit of what it is
// compared with or assigned to ("P > 5", "add": {"D": 100}).
func constant(n expr.Node) bool { return len(expr.Vars(n)) == 0 }

// assignments works out the unit of every assignment from its expression,
// in evaluation order: one with a declared unit is checked against it
// (a warning naming the assignment), one without takes the unit found, so
// that the rates and events that read it are checked through it.
func (uc *unitCheck) assignments() {
	v := uc.v
	for i := range v.net.Assignments {
		ca := &v.net.Assignments[i]
		if ca.Expr == nil {
			continue
		}
		a := v.m.Assignments[ca.Index]
		found, known := uc.expr(ca.Expr, func(col int, format string, args ...any) {
			v.add(Warning, "assignments", ca.Index, ca.Name, "expression", col, format, args...)
		})
		if !known || constant(ca.Expr) {
			continue
		}
		declared := uc.asgs[ca.Name]
		if declared == nil {
			if strings.TrimSpace(a.Unit) == "" {
				u := found
				uc.asgs[ca.Name] = &u
				ca.Unit, ca.UnitInferred = uc.text(found), true
			}
			continue
		}
		if !found.Equal(*declared) {
			v.add(Warning, "assignments", ca.Index, ca.Name, "unit", 0,
				"assignment %s comes out in %s, but its unit is %s; %s", ca.Name, uc.describe(found), strings.TrimSpace(a.Unit), uc.mismatch(found, *declared))
		}
	}
}

// events checks the units of every sound event: the two sides of a
// trigger's comparison must measure the same, and each action's value
// must be in the unit of what it changes — an amount (concentration ×
// the model's unit of volume; the concentration itself when the model
// declares no compartments) for "add", an amount per time for "infuse",
// a concentration for "set" of a species, the parameter's unit for "set"
// of a parameter. Constants take the unit they are compared with or
// assigned to; values with a name whose unit is unknown are not checked.
func (uc *unitCheck) events() {
	v := uc.v
	volUnit, _ := v.m.VolumeUnit()
	amount, amountExact := uc.conc, true
	if len(v.m.Compartments) > 0 {
		if volUnit != "" {
			amount = uc.conc.Mul(units.MustParse(volUnit))
		} else {
			// Volumes without a unit: only the kind of quantity is known.
			amount, amountExact = uc.conc.Mul(units.MustParse("L")), false
		}
	}
	amountText := uc.concText
	if len(v.m.Compartments) > 0 {
		amountText = uc.concText + "·" + map[bool]string{true: volUnit, false: "volume"}[volUnit != ""]
	}
	for _, ce := range v.net.Events {
		e := &v.m.Events[ce.Index]
		// Times and intervals given by a parameter are in the time unit.
		for _, tf := range []struct {
			field string
			val   Value
		}{{"at", e.At}, {"every", e.Every}, {"from", e.From}, {"to", e.To}} {
			j, ok := v.paramIx[tf.val.Name]
			if !tf.val.Set || tf.val.Name == "" || !ok || uc.params[j] == nil || uc.params[j].Equal(uc.time) {
				continue
			}
			v.add(Warning, "events", ce.Index, ce.Name, tf.field, 0, "%s is the parameter %s in %s, but times are in %s here; %s",
				tf.field, tf.val.Name, v.m.Parameters[j].Unit, uc.timeText, uc.mismatch(*uc.params[j], uc.time))
		}
		if ce.Kind == Triggered {
			warn := func(col int, format string, args ...any) {
				v.add(Warning, "events", ce.Index, ce.Name, "when", col, format, args...)
			}
			l, lok := uc.expr(ce.Cond[0], warn)
			r, rok := uc.expr(ce.Cond[1], warn)
			if lok && rok && !constant(ce.Cond[0]) && !constant(ce.Cond[1]) && !l.Equal(r) {
				left, _, _, _ := comparison(e.When)
				warn(len(left)+1, "the two sides of %q compare %s with %s; %s", ce.Op, uc.describe(l), uc.describe(r), uc.mismatch(l, r))
			}
		}
		check := func(kind string, cc CheckedChange, want units.Unit, exact bool, wantText, what string) {
			field := kind + "." + cc.Target
			if cc.Expr == nil || constant(cc.Expr) {
				return
			}
			found, ok := uc.expr(cc.Expr, func(col int, format string, args ...any) {
				v.add(Warning, "events", ce.Index, ce.Name, field, col, format, args...)
			})
			if !ok || found.Equal(want) || !exact && found.SameDim(want) {
				return
			}
			how := uc.mismatch(found, want)
			if !exact {
				how = "they measure different kinds of quantity"
			}
			v.add(Warning, "events", ce.Index, ce.Name, field, 0,
				"the value of %s comes out in %s, but %s is in %s here; %s", field, uc.describe(found), what, wantText, how)
		}
		for _, cc := range ce.Add {
			check("add", cc, amount, amountExact, amountText, "an amount of "+cc.Target)
		}
		for _, cc := range ce.Infuse {
			check("infuse", cc, amount.Div(uc.time), amountExact, amountText+"/"+uc.timeText, "an infusion rate of "+cc.Target)
		}
		for _, cc := range ce.Set {
			if !cc.Parameter {
				check("set", cc, uc.conc, true, uc.concText, "the concentration of "+cc.Target)
				continue
			}
			if u := uc.params[cc.Index]; u != nil {
				check("set", cc, *u, true, v.m.Parameters[cc.Index].Unit, "parameter "+cc.Target)
			}
		}
	}
}
