package sbml

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"kinetarium/network"
	"kinetarium/network/expr"
)

// usable reports whether name can be a name of the model: an identifier
// that is not time (t) and not a function of expressions.
func usable(name string) bool {
	if name == network.TimeName {
		return false
	}
	n, err := expr.Parse(name)
	if err != nil {
		return false
	}
	_, ok := n.(*expr.Variable)
	return ok
}

// claim returns want, or want_2, want_3, … when want is taken or not
// usable, and records it.
func (im *importer) claim(want string) string {
	name := want
	for k := 2; im.taken[name] || !usable(name); k++ {
		name = fmt.Sprintf("%s_%d", want, k)
	}
	im.taken[name] = true
	return name
}

// name gives s its name in the model, listing a change.
func (im *importer) name(s *sym) {
	s.name = im.claim(s.id)
	if s.name != s.id {
		im.warnAt(s.n, what(s), "renamed %q, since %q is reserved in the model's formulas", s.name, s.id)
	}
}

// tree reads a <math> element into a tree over SBML identifiers, with the
// local parameters of rx (when not nil) renamed.
func (im *importer) tree(m *node, rx *reaction, w string) (expr.Node, bool) {
	t, err := im.mr.number(m)
	if err != nil {
		im.addErr(err, m, w)
		return nil, false
	}
	if t == nil {
		return nil, false
	}
	if rx != nil && len(rx.locals) > 0 {
		t = expr.Substitute(t, func(id string) (expr.Node, bool) {
			if n, ok := rx.locals[id]; ok {
				return expr.Var(n), true
			}
			return nil, false
		})
	}
	return t, true
}

// initial returns the value of s at the start, in SBML's terms (a species'
// concentration, or its amount when it has only substance units).
func (im *importer) initial(s *sym) (float64, error) {
	switch s.initState {
	case 2:
		return s.init, nil
	case 1:
		return 0, fmt.Errorf("the initial values of %q and what it is computed from form a cycle", s.id)
	}
	s.initState = 1
	v, err := im.computeInitial(s)
	if err != nil {
		s.initState = 0
		return 0, err
	}
	s.init, s.initState = v, 2
	return v, nil
}

func (im *importer) computeInitial(s *sym) (float64, error) {
	w := what(s)
	switch {
	case s.ia != nil:
		return im.evalMath(s.ia, nil, w)
	case s.ar != nil:
		return im.evalMath(s.ar, nil, w)
	}
	switch s.kind {
	case kCompartment:
		if !s.valueSet {
			return 1, nil
		}
		return s.value, nil
	case kSpecies:
		if !s.valueSet {
			return 0, fmt.Errorf("no initial amount or concentration is given, and no initial assignment or rule sets one")
		}
		c := im.ids[s.comp]
		v, err := im.initial(c)
		if err != nil {
			return 0, err
		}
		switch {
		case s.amount && !s.hosu:
			return s.value / v, nil
		case !s.amount && s.hosu:
			return s.value * v, nil
		}
		return s.value, nil
	case kParameter:
		if !s.valueSet {
			return 0, fmt.Errorf("no value is given, and no initial assignment or rule sets one")
		}
		return s.value, nil
	case kSpeciesRef:
		if !s.valueSet {
			return 1, nil
		}
		return s.value, nil
	case kReaction:
		for _, rx := range im.reactions {
			if rx.s == s && rx.law != nil {
				return im.evalMath(rx.law, rx, w)
			}
		}
		return 0, nil
	}
	return 0, fmt.Errorf("%s has no value", w)
}

// evalMath evaluates a <math> element at the start.
func (im *importer) evalMath(m *node, rx *reaction, w string) (float64, error) {
	t, err := im.mr.number(m)
	if err != nil {
		return 0, err
	}
	if rx != nil {
		t = expr.Substitute(t, func(id string) (expr.Node, bool) {
			if _, ok := rx.locals[id]; ok {
				return expr.Num(rx.localVals[id]), true
			}
			return nil, false
		})
	}
	return im.evalTree(t, w)
}

// evalTree evaluates a tree over SBML identifiers at the start.
func (im *importer) evalTree(t expr.Node, w string) (float64, error) {
	names := expr.Vars(t)
	vals := make([]float64, len(names))
	for i, id := range names {
		if id == timeVar {
			continue
		}
		if v, ok := im.localVals[id]; ok {
			vals[i] = v
			continue
		}
		s, ok := im.ids[id]
		if !ok {
			return 0, fmt.Errorf("%s: %q names nothing in the model", w, id)
		}
		v, err := im.initial(s)
		if err != nil {
			return 0, err
		}
		vals[i] = v
	}
	p, err := expr.Compile(t, func(name string) (int, bool) {
		for i, n := range names {
			if n == name {
				return i, true
			}
		}
		return 0, false
	})
	if err != nil {
		return 0, fmt.Errorf("%s: %v", w, err)
	}
	return p.Eval(vals), nil
}

// build turns the identifiers read into a model.
func (im *importer) build(model *node) *network.Model {
	m := &network.Model{Simulation: network.Simulation{}.WithDefaults()}
	if name, ok := model.attr("name"); ok {
		m.Title = name
	} else if id, ok := model.attr("id"); ok {
		m.Title = id
	}
	m.Note = notesText(model)
	im.localVals = map[string]float64{}
	// Names: compartments, species, parameters, then local parameters.
	for _, s := range im.order {
		switch s.kind {
		case kCompartment, kSpecies, kParameter:
			im.name(s)
		case kSpeciesRef:
			if s.variable {
				im.name(s)
			}
		}
	}
	for _, rx := range im.reactions {
		ids := make([]string, 0, len(rx.locals))
		for id := range rx.locals {
			ids = append(ids, id)
		}
		sort.Strings(ids)
		for _, id := range ids {
			n := im.claim(rx.s.id + "_" + id)
			rx.locals[id] = n
			im.localVals[n] = rx.localVals[id]
		}
	}
	// The compartments' unit of volume, kept when every compartment has
	// the same one: the sizes are then used as they stand, as everywhere
	// in the import.
	volUnit, first := "", true
	for _, s := range im.order {
		if s.kind != kCompartment {
			continue
		}
		switch {
		case first:
			volUnit, first = s.units, false
		case s.units != volUnit && volUnit != "" && s.units != "":
			im.warnAt(s.n, what(s), "the compartments' sizes are in different units (%s and %s); they are used as they stand, without units", volUnit, s.units)
			volUnit = ""
		case s.units != volUnit:
			volUnit = ""
		}
	}
	// Sizes of compartments, constant by now.
	for _, s := range im.order {
		if s.kind != kCompartment {
			continue
		}
		v, err := im.initial(s)
		if err != nil {
			im.errAt(s.n, what(s), "%v", err)
			continue
		}
		if !(v > 0) {
			im.errAt(s.n, what(s), "the size %v is not allowed; compartments need a positive size", v)
			continue
		}
		if !s.valueSet && s.ia == nil {
			im.warnAt(s.n, what(s), "the compartment has no size; 1 is used")
		}
		s.vol = v
		if s.variable {
			// Its size is a parameter (or assignment) named after it; its
			// species are held as amounts in a compartment of volume 1.
			s.unitComp = im.claim(s.id + "_amounts")
			m.Compartments = append(m.Compartments, network.Compartment{Name: s.unitComp, Volume: 1, Unit: volUnit,
				Note: fmt.Sprintf("holds the amounts of the species of compartment %s, whose size changes during a run", s.id)})
			sy := Symbol{Kind: "compartment", Name: s.name, Value: v, Assigned: s.ar != nil}
			if s.ar == nil {
				m.Parameters = append(m.Parameters, network.Parameter{Name: s.name, Value: v, Note: "size of compartment " + s.id + noteSuffix(s.n, s.id)})
			}
			im.syms[s.id] = sy
			continue
		}
		m.Compartments = append(m.Compartments, network.Compartment{Name: s.name, Volume: v, Unit: volUnit, Note: noteOf(s.n, s.id)})
		im.syms[s.id] = Symbol{Kind: "compartment", Volume: v, Constant: true, Value: v}
	}
	if im.probs.HasErrors() {
		return nil
	}
	// Species and parameters.
	inReaction := map[string]bool{}
	for _, s := range im.order {
		if s.kind == kSpeciesRef && s.rx != nil {
			if id, ok := s.n.attr("species"); ok {
				inReaction[id] = true
			}
		}
	}
	for _, rx := range im.reactions {
		for _, list := range []string{"listOfReactants", "listOfProducts"} {
			for _, sr := range rx.s.n.kids(list, "speciesReference") {
				id, _ := sr.attr("species")
				inReaction[id] = true
			}
		}
	}
	for _, s := range im.order {
		switch s.kind {
		case kSpecies:
			im.species(m, s, inReaction[s.id])
		case kParameter:
			im.parameter(m, s)
		case kSpeciesRef:
			if s.variable {
				im.parameter(m, s)
			}
		}
	}
	if im.probs.HasErrors() {
		return nil
	}
	// Assignments and rates, in the order of the rules.
	if l := model.kid("listOfRules"); l != nil {
		for _, r := range l.Kids {
			v, _ := r.attr("variable")
			s := im.ids[v]
			if s == nil || r.kid("math") == nil {
				continue
			}
			switch r.Name {
			case "assignmentRule":
				t, ok := im.model(s.ar, nil, what(s))
				if ok {
					m.Assignments = append(m.Assignments, network.Assignment{Name: s.name, Expression: t.String(), Note: noteOf(s.n, s.id)})
				}
			case "rateRule":
				t, ok := im.model(s.rr, nil, what(s))
				if !ok {
					continue
				}
				if s.kind == kSpecies {
					if t, ok = im.speciesRate(s, t); !ok {
						continue
					}
				}
				m.Rates = append(m.Rates, network.RateRule{Name: s.name, Expression: t.String()})
			}
		}
	}
	rxNames := map[string]bool{}
	for _, rx := range im.reactions {
		rxNames[rx.s.id] = true
	}
	for _, rx := range im.reactions {
		im.reaction(m, rx, rxNames)
	}
	im.events(m, model)
	if im.probs.HasErrors() {
		return nil
	}
	// The model must check: anything else is a mistake of this reader,
	// reported rather than hidden.
	if _, l := network.Check(m); l.HasErrors() {
		for _, p := range l.Errors() {
			im.errAt(model, "", "the imported model is not sound: %s", p.String())
		}
		return nil
	}
	return m
}

// species adds a species: a species of the model holding its
// concentration, or an assignment (when an assignment rule sets it).
func (im *importer) species(m *network.Model, s *sym, inReaction bool) {
	w := what(s)
	c := im.ids[s.comp]
	sy := Symbol{Kind: "species", Name: s.name, HasOnlySubstanceUnits: s.hosu, Volume: c.vol}
	if c.variable {
		sy.VolumeName = c.name
	}
	defer func() { im.syms[s.id] = sy }()
	if s.ar != nil {
		if inReaction && !s.boundary {
			im.errAt(s.n, w, "an assignment rule sets the species %q, which reactions change too; expected boundaryCondition=\"true\"", s.id)
			return
		}
		s.assignment, sy.Assigned = true, true
		return // added with the rules
	}
	v, err := im.initial(s)
	if err != nil {
		if !im.undefinedOK(s, err) || inReaction {
			im.addErr(err, s.n, w)
			return
		}
		im.warnAt(s.n, w, "%v; 0 is used", err)
	}
	sy.Value = v
	conc := v // the model holds concentrations, or amounts in a compartment that changes
	switch {
	case c.variable && !s.hosu:
		conc = v * c.vol
		sy.HeldAsAmount = true
	case c.variable:
		sy.HeldAsAmount = true
	case s.hosu:
		conc = v / c.vol
	}
	comp := c.name
	if c.variable {
		comp = c.unitComp
	}
	if conc < 0 {
		im.errAt(s.n, w, "the initial value %v is negative, which the model does not allow for a species", v)
		return
	}
	fixed := s.boundary || s.constant
	if s.rr != nil && !inReaction {
		fixed = false
	}
	sy.Constant = s.constant || (s.boundary && s.rr == nil && s.eventTarget == nil)
	m.Species = append(m.Species, network.Species{Name: s.name, Initial: conc, Compartment: comp, Fixed: fixed, Note: noteOf(s.n, s.id)})
}

// parameter adds a parameter, or an assignment when a rule sets it.
func (im *importer) parameter(m *network.Model, s *sym) {
	sy := Symbol{Kind: "parameter", Name: s.name}
	defer func() { im.syms[s.id] = sy }()
	if s.ar != nil {
		s.assignment, sy.Assigned = true, true
		return
	}
	v, err := im.initial(s)
	if err != nil {
		if !im.undefinedOK(s, err) {
			im.addErr(err, s.n, what(s))
			return
		}
		im.warnAt(s.n, what(s), "%v; 0 is used", err)
	}
	sy.Value = v
	sy.Constant = s.rr == nil && s.eventTarget == nil
	m.Parameters = append(m.Parameters, network.Parameter{Name: s.name, Value: v, Note: noteOf(s.n, s.id)})
}

// undefinedOK reports whether s, whose initial value could not be
// found for the reason err, may start at 0: only when it simply has no
// value and nothing reads or changes it.
func (im *importer) undefinedOK(s *sym, err error) bool {
	if _, mathProblem := err.(network.Problem); mathProblem {
		return false
	}
	return s.ia == nil && s.rr == nil && s.eventTarget == nil && !im.referenced[s.id]
}

// model reads a <math> element into a tree over the model's names: each
// SBML identifier replaced by what holds it.
func (im *importer) model(m *node, rx *reaction, w string) (expr.Node, bool) {
	t, ok := im.tree(m, rx, w)
	if !ok {
		return nil, false
	}
	out, ok := im.subst(t, m, w, 0)
	return tidy(out), ok
}

func (im *importer) subst(t expr.Node, at *node, w string, depth int) (expr.Node, bool) {
	ok := true
	out := expr.Substitute(t, func(id string) (expr.Node, bool) {
		if id == timeVar {
			return expr.Var(network.TimeName), true
		}
		if _, local := im.localVals[id]; local {
			return nil, false
		}
		s, known := im.ids[id]
		if !known {
			im.errAt(at, w, "%q names nothing in the model", id)
			ok = false
			return expr.Num(0), true
		}
		switch s.kind {
		case kCompartment:
			if s.variable {
				return expr.Var(s.name), true
			}
			return expr.Num(s.vol), true
		case kSpecies:
			c := im.ids[s.comp]
			switch {
			case s.assignment:
				return expr.Var(s.name), true
			case c.variable && s.hosu:
				return expr.Var(s.name), true // held as its amount
			case c.variable:
				return expr.Div(expr.Var(s.name), expr.Var(c.name)), true
			case s.hosu:
				return expr.Mul(expr.Var(s.name), expr.Num(c.vol)), true
			}
			return expr.Var(s.name), true
		case kParameter:
			return expr.Var(s.name), true
		case kSpeciesRef:
			if s.variable {
				return expr.Var(s.name), true
			}
			v, err := im.initial(s)
			if err != nil {
				im.errAt(at, w, "%v", err)
				ok = false
			}
			return expr.Num(v), true
		case kReaction:
			if depth > 20 {
				im.errAt(at, w, "reaction rates refer to each other in a cycle")
				ok = false
				return expr.Num(0), true
			}
			for _, rx := range im.reactions {
				if rx.s == s {
					if rx.law == nil {
						return expr.Num(0), true
					}
					lt, lok := im.tree(rx.law, rx, what(s))
					if !lok {
						ok = false
						return expr.Num(0), true
					}
					st, sok := im.subst(lt, rx.law, what(s), depth+1)
					ok = ok && sok
					return st, true
				}
			}
		}
		im.errAt(at, w, "%q is a %s, which cannot appear in a formula", id, kindWord[s.kind])
		ok = false
		return expr.Num(0), true
	})
	return out, ok
}

// reaction adds a reaction: its equation from the species references, and
// its rate, the kinetic law divided by the size of the compartment of the
// first reactant (or product). A species whose stoichiometry changes
// during a run gets a reaction of its own, "-> S" at the rate
// ±stoichiometry × kinetic law.
func (im *importer) reaction(m *network.Model, rx *reaction, rxNames map[string]bool) {
	s := rx.s
	w := what(s)
	type side struct {
		coef  map[string]float64
		order []string
	}
	type varTerm struct {
		sp   *sym
		sign float64
		nu   expr.Node
	}
	var extra []varTerm
	sides := [2]*side{{coef: map[string]float64{}}, {coef: map[string]float64{}}}
	add := func(k int, sp *sym, c float64) {
		if c < 0 {
			k, c = 1-k, -c
		}
		sd := sides[k]
		if _, seen := sd.coef[sp.name]; !seen {
			sd.order = append(sd.order, sp.name)
		}
		sd.coef[sp.name] += c
	}
	byName := map[string]*sym{}
	for k, list := range []string{"listOfReactants", "listOfProducts"} {
		for _, sr := range s.n.kids(list, "speciesReference") {
			id, _ := sr.attr("species")
			sp, ok := im.ids[id]
			if !ok || sp.kind != kSpecies {
				im.errAt(sr, w, "species=%q is not a species of the model", id)
				continue
			}
			if sp.assignment {
				continue // a boundary species set by a rule: reactions do not change it
			}
			cf := 1.0
			if id := sp.cf; id != "" || im.modelCF != "" {
				if id == "" {
					id = im.modelCF
				}
				f, err := im.initial(im.ids[id])
				if err != nil {
					im.errAt(sr, w, "%v", err)
					continue
				}
				cf = f
			}
			c := 1.0
			if sm := sr.kid("stoichiometryMath"); sm != nil && sm.kid("math") != nil { // Level 2
				nu, ok := im.model(sm.kid("math"), nil, w)
				if !ok {
					continue
				}
				if v, isConst := expr.Const(expr.Simplify(nu)); isConst {
					c = v
				} else {
					if !sp.boundary && !sp.constant {
						extra = append(extra, varTerm{sp: sp, sign: float64(2*k-1) * cf, nu: nu})
					}
					continue
				}
			} else if rid, ok := sr.attr("id"); ok && im.ids[rid] != nil {
				ref := im.ids[rid]
				if ref.variable {
					if !sp.boundary && !sp.constant {
						extra = append(extra, varTerm{sp: sp, sign: float64(2*k-1) * cf, nu: expr.Var(ref.name)})
					}
					continue
				}
				v, err := im.initial(ref)
				if err != nil {
					im.errAt(sr, w, "%v", err)
					continue
				}
				c = v
			} else if v, ok := im.numAttr(sr, w, "stoichiometry"); ok {
				c = v
			} else if im.level == 3 {
				im.warnAt(sr, w, "the stoichiometry of %q is not given; 1 is used", id)
			}
			byName[sp.name] = sp
			add(k, sp, c*cf)
		}
	}
	var terms [2][]string
	var first *sym // the first reactant, or the first product when there is none
	for k, sd := range sides {
		for _, name := range sd.order {
			c := sd.coef[name]
			if c == 0 {
				continue
			}
			if first == nil { // reactants come first
				first = byName[name]
			}
			if c == 1 {
				terms[k] = append(terms[k], name)
			} else {
				terms[k] = append(terms[k], strconv.FormatFloat(c, 'g', -1, 64)+" "+name)
			}
		}
	}
	if first == nil && len(extra) == 0 {
		if rx.law != nil || len(s.n.kids("listOfReactants", "speciesReference"))+len(s.n.kids("listOfProducts", "speciesReference")) > 0 {
			im.warnAt(s.n, w, "the reaction changes no species of the model; left out")
		}
		return
	}
	var law expr.Node = expr.Num(0)
	if rx.law == nil {
		im.warnAt(s.n, w, "the reaction has no kinetic law; its rate is 0")
	} else {
		t, ok := im.model(rx.law, rx, w)
		if !ok {
			return
		}
		law = t
	}
	note := noteOf(s.n, s.id)
	if first != nil {
		rev, _ := s.n.attr("reversible")
		arrow := " -> "
		if (rev == "true" || rev == "1" || rev == "" && im.level < 3) && len(terms[0]) > 0 && len(terms[1]) > 0 {
			arrow = " <=> "
		}
		eq := strings.TrimSpace(strings.Join(terms[0], " + ") + arrow + strings.Join(terms[1], " + "))
		rxNames[s.id] = true
		m.Reactions = append(m.Reactions, network.Reaction{Name: s.id, Equation: eq, Note: note,
			Rate: network.Rate{Law: network.Expression, Expression: perVolume(law, im.volumeOf(first)).String()}})
	}
	for _, x := range extra {
		name := s.id + "_" + x.sp.id
		for k := 2; rxNames[name]; k++ {
			name = fmt.Sprintf("%s_%s_%d", s.id, x.sp.id, k)
		}
		rxNames[name] = true
		rate := expr.Mul(x.nu, law)
		if x.sign != 1 {
			rate = expr.Mul(expr.Num(x.sign), rate)
		}
		m.Reactions = append(m.Reactions, network.Reaction{Name: name, Equation: "-> " + x.sp.name,
			Note: fmt.Sprintf("the change of %s by reaction %s, whose stoichiometry changes during a run", x.sp.id, s.id),
			Rate: network.Rate{Law: network.Expression, Expression: perVolume(rate, im.volumeOf(x.sp)).String()}})
	}
	k := len(m.Parameters)
	for id, name := range rx.locals {
		m.Parameters = append(m.Parameters, network.Parameter{Name: name, Value: rx.localVals[id], Note: fmt.Sprintf("local parameter %s of reaction %s", id, s.id)})
	}
	sort.Slice(m.Parameters[k:], func(i, j int) bool { return m.Parameters[k+i].Name < m.Parameters[k+j].Name })
}

// perVolume returns t/v: a factor equal to v is taken out of a product
// when there is one (the usual "compartment * k * S"), else t is divided.
func perVolume(t expr.Node, v float64) expr.Node {
	if out, ok := dropFactor(t, v); ok {
		return out
	}
	if v == 1 {
		return t
	}
	return expr.Div(t, expr.Num(v))
}

// tidy removes multiplications and divisions by the literal 1, which
// compartments of size 1 leave in formulas; the value is unchanged.
func tidy(t expr.Node) expr.Node {
	switch n := t.(type) {
	case *expr.Unary:
		return &expr.Unary{Op: n.Op, X: tidy(n.X)}
	case *expr.Binary:
		l, r := tidy(n.L), tidy(n.R)
		switch {
		case n.Op == expr.OpMul && isNum(l, 1):
			return r
		case (n.Op == expr.OpMul || n.Op == expr.OpDiv) && isNum(r, 1):
			return l
		}
		return &expr.Binary{Op: n.Op, L: l, R: r}
	case *expr.Call:
		args := make([]expr.Node, len(n.Args))
		for i, a := range n.Args {
			args[i] = tidy(a)
		}
		return &expr.Call{Func: n.Func, Args: args}
	}
	return t
}

func dropFactor(t expr.Node, v float64) (expr.Node, bool) {
	if x, ok := expr.Const(t); ok && x == v {
		return expr.Num(1), true
	}
	b, ok := t.(*expr.Binary)
	if !ok || b.Op != expr.OpMul {
		return nil, false
	}
	if x, ok := expr.Const(b.L); ok && x == v {
		return b.R, true
	}
	if x, ok := expr.Const(b.R); ok && x == v {
		return b.L, true
	}
	if l, ok := dropFactor(b.L, v); ok {
		return expr.Mul(l, b.R), true
	}
	if r, ok := dropFactor(b.R, v); ok {
		return expr.Mul(b.L, r), true
	}
	return nil, false
}

// speciesRate turns the math of a species' rate rule (SBML's value per
// time: a concentration, or an amount with only substance units) into the
// rate of what the model holds: its concentration, or its amount in a
// compartment whose size changes, d(c·V)/dt = V·dc/dt + c·dV/dt.
func (im *importer) speciesRate(s *sym, t expr.Node) (expr.Node, bool) {
	c := im.ids[s.comp]
	switch {
	case !c.variable && s.hosu:
		return expr.Div(t, expr.Num(c.vol)), true
	case !c.variable, s.hosu:
		return t, true
	case c.ar != nil:
		im.errAt(s.rr, what(s), "a rate rule for a concentration in compartment %q, whose size an assignment rule sets, is not supported", c.id)
		return nil, false
	}
	out := expr.Mul(expr.Var(c.name), t)
	if c.rr != nil {
		dv, ok := im.model(c.rr, nil, what(c))
		if !ok {
			return nil, false
		}
		out = expr.Add(out, expr.Mul(expr.Div(expr.Var(s.name), expr.Var(c.name)), dv))
	}
	return out, true
}

// volumeOf returns the size by which the model's rates of species in
// the compartment of sp are counted: its size, or 1 for a compartment
// whose size changes (its species are held as amounts).
func (im *importer) volumeOf(sp *sym) float64 {
	c := im.ids[sp.comp]
	if c.variable {
		return 1
	}
	return c.vol
}

// noteSuffix returns "; " and an item's note, or "".
func noteSuffix(n *node, id string) string {
	if t := noteOf(n, id); t != "" {
		return "; " + t
	}
	return ""
}

// notesText returns the text of an element's <notes>, on one line.
func notesText(n *node) string {
	notes := n.kid("notes")
	if notes == nil {
		return ""
	}
	var parts []string
	var walk func(*node)
	walk = func(k *node) {
		if k.Text != "" {
			parts = append(parts, k.Text)
		}
		for _, c := range k.Kids {
			walk(c)
		}
	}
	walk(notes)
	return strings.Join(strings.Fields(strings.Join(parts, " ")), " ")
}

// noteOf returns an item's note: its notes' text, or its name when that
// differs from its id.
func noteOf(n *node, id string) string {
	if t := notesText(n); t != "" {
		return t
	}
	if name, ok := n.attr("name"); ok && name != id {
		return name
	}
	return ""
}

// finite reports whether x is a finite number.
func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
