package sbml

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"strconv"
	"strings"

	"kinetarium/network"
	"kinetarium/network/expr"
)

// Core is the namespace of SBML Level 3 Version 2 core, which Write
// writes.
const Core = "http://www.sbml.org/sbml/level3/version2/core"

// MaxOccurrences is the largest number of occurrences of a repeated event
// or infusion that Write spells out as SBML events.
const MaxOccurrences = 10000

// Write writes m as an SBML Level 3 Version 2 core document. A model with
// errors is refused with its network.ErrorList. The dynamics are the
// model's: each kinetic law is the model's rate times the size of the
// compartment it is read in, so that it is an amount per time; species
// are concentrations (hasOnlySubstanceUnits false); fixed species are
// boundary species; assignments are assignment rules, rates rate rules;
// timed events and infusions become events triggered by time (an infusion
// a reaction feeding its species at a rate that two events switch on and
// off). Notes become notes. The compartments' unit of volume is written
// as the compartments' units (litre, or a unit definition of a scaled
// litre), sizes given in other units converted to it; simulation settings
// and the other unit labels have no place in SBML core and are left out.
func Write(w io.Writer, m *network.Model) error {
	data, err := Encode(m)
	if err != nil {
		return err
	}
	_, err = w.Write(data)
	return err
}

// Encode returns m as an SBML document (see Write).
func Encode(m *network.Model) ([]byte, error) {
	net, probs := network.Check(m)
	if err := probs.Err(); err != nil {
		return nil, err
	}
	wr := &writer{m: m, net: net, ids: map[string]bool{}, b: &bytes.Buffer{}}
	return wr.encode()
}

type writer struct {
	m    *network.Model
	net  *network.Net
	b    *bytes.Buffer // where line writes
	ids  map[string]bool
	comp map[string]string // species → compartment
	vol  map[string]float64
	// extra parameters and reactions that events and infusions need
	extraParams []string
	extraRx     []string
}

// id returns want, made an SBML identifier and unique among the ids
// written.
func (w *writer) id(want string) string {
	var b strings.Builder
	for i, c := range want {
		switch {
		case c == '_', c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', i > 0 && c >= '0' && c <= '9':
			b.WriteRune(c)
		default:
			if i == 0 && c >= '0' && c <= '9' {
				b.WriteString("_")
				b.WriteRune(c)
			} else {
				b.WriteString("_")
			}
		}
	}
	base := b.String()
	if base == "" {
		base = "_"
	}
	name := base
	for k := 2; w.ids[name]; k++ {
		name = fmt.Sprintf("%s_%d", base, k)
	}
	w.ids[name] = true
	return name
}

// volumeUnitID returns the SBML unit id of the model's unit of volume
// ("litre", or a unit definition to write of litre at the given scale)
// and whether there is one.
func (w *writer) volumeUnitID(unit string) (id string, scale int, ok bool) {
	names := map[string]struct {
		id    string
		scale int
	}{"L": {"litre", 0}, "mL": {"millilitre", -3}, "uL": {"microlitre", -6}, "µL": {"microlitre", -6}, "μL": {"microlitre", -6},
		"nL": {"nanolitre", -9}, "fL": {"femtolitre", -15}}
	n, ok := names[strings.TrimSpace(unit)]
	if !ok {
		return "", 0, false
	}
	if n.scale == 0 {
		return n.id, 0, true
	}
	return w.id(n.id), n.scale, true
}

func esc(s string) string {
	var b bytes.Buffer
	xml.EscapeText(&b, []byte(s))
	return strings.ReplaceAll(b.String(), `"`, "&quot;")
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func (w *writer) line(depth int, format string, args ...any) {
	w.b.WriteString(strings.Repeat("  ", depth))
	fmt.Fprintf(w.b, format, args...)
	w.b.WriteByte('\n')
}

func (w *writer) notes(depth int, text string) {
	if strings.TrimSpace(text) == "" {
		return
	}
	w.line(depth, `<notes><body xmlns="http://www.w3.org/1999/xhtml"><p>%s</p></body></notes>`, esc(text))
}

// elem writes an element that may hold notes: empty when there are none.
func (w *writer) elem(depth int, tag, attrs, note string) {
	if strings.TrimSpace(note) == "" {
		w.line(depth, "<%s %s/>", tag, attrs)
		return
	}
	w.line(depth, "<%s %s>", tag, attrs)
	w.notes(depth+1, note)
	w.line(depth, "</%s>", tag)
}

func (w *writer) encode() ([]byte, error) {
	m := w.m
	// Every name of the model is an id already; reserve them first.
	for _, c := range m.Compartments {
		w.ids[c.Name] = true
	}
	for _, s := range m.Species {
		w.ids[s.Name] = true
	}
	for _, p := range m.Parameters {
		w.ids[p.Name] = true
	}
	for _, a := range m.Assignments {
		w.ids[a.Name] = true
	}
	comps := append([]network.Compartment(nil), m.Compartments...)
	if len(comps) == 0 {
		comps = []network.Compartment{{Name: w.id(network.DefaultCompartment), Volume: 1}}
	}
	// Sizes are written in the model's unit of volume, the one its
	// equations use, so that the numbers stand as they are in SBML too.
	volUnit, volScale := m.VolumeUnit()
	w.comp, w.vol = map[string]string{}, map[string]float64{}
	for i, c := range comps {
		if i < len(volScale) && len(m.Compartments) > 0 {
			c.Volume *= volScale[i]
			comps[i] = c
		}
		w.vol[c.Name] = c.Volume
	}
	for _, s := range m.Species {
		c := s.Compartment
		if c == "" || len(m.Compartments) == 0 {
			c = comps[0].Name
		}
		w.comp[s.Name] = c
	}
	rxIDs := make([]string, len(m.Reactions))
	for i, r := range m.Reactions {
		rxIDs[i] = w.id(r.Name)
	}
	var body bytes.Buffer
	events, err := w.eventsXML()
	if err != nil {
		return nil, err
	}
	changing := map[string]bool{}
	for _, r := range w.net.Rates {
		changing[r.Name] = true
	}
	for _, e := range w.net.Events {
		for _, c := range e.Set {
			changing[c.Target] = true
		}
	}
	w.b.WriteString(`<?xml version="1.0" encoding="UTF-8"?>` + "\n")
	w.line(0, `<sbml xmlns="%s" level="3" version="2">`, Core)
	title := ""
	if m.Title != "" {
		title = fmt.Sprintf(` name="%s"`, esc(m.Title))
	}
	w.line(1, `<model id="%s"%s>`, w.id("model"), title)
	w.notes(2, m.Note)
	unitsAttr := ""
	if sid, scale, ok := w.volumeUnitID(volUnit); ok {
		if scale != 0 {
			w.line(2, "<listOfUnitDefinitions>")
			w.line(3, `<unitDefinition id="%s">`, sid)
			w.line(4, "<listOfUnits>")
			w.line(5, `<unit kind="litre" exponent="1" scale="%d" multiplier="1"/>`, scale)
			w.line(4, "</listOfUnits>")
			w.line(3, "</unitDefinition>")
			w.line(2, "</listOfUnitDefinitions>")
		}
		unitsAttr = fmt.Sprintf(` units="%s"`, sid)
	}
	w.line(2, "<listOfCompartments>")
	for _, c := range comps {
		w.elem(3, "compartment", fmt.Sprintf(`id="%s" spatialDimensions="3" size="%s"%s constant="true"`, c.Name, num(c.Volume), unitsAttr), c.Note)
	}
	w.line(2, "</listOfCompartments>")
	if len(m.Species) > 0 {
		w.line(2, "<listOfSpecies>")
		for _, s := range m.Species {
			w.elem(3, "species", fmt.Sprintf(`id="%s" compartment="%s" initialConcentration="%s" hasOnlySubstanceUnits="false" boundaryCondition="%t" constant="false"`,
				s.Name, w.comp[s.Name], num(s.Initial), s.Fixed), s.Note)
		}
		w.line(2, "</listOfSpecies>")
	}
	if len(m.Parameters)+len(m.Assignments)+len(w.extraParams) > 0 {
		w.line(2, "<listOfParameters>")
		for _, p := range m.Parameters {
			note := p.Note
			if p.Unit != "" {
				note = strings.TrimSpace(note + " (unit: " + p.Unit + ")")
			}
			w.elem(3, "parameter", fmt.Sprintf(`id="%s" value="%s" constant="%t"`, p.Name, num(p.Value), !changing[p.Name]), note)
		}
		for _, a := range m.Assignments {
			w.elem(3, "parameter", fmt.Sprintf(`id="%s" constant="false"`, a.Name), a.Note)
		}
		for _, p := range w.extraParams {
			w.line(3, "%s", p)
		}
		w.line(2, "</listOfParameters>")
	}
	if len(w.net.Assignments)+len(w.net.Rates) > 0 {
		w.line(2, "<listOfRules>")
		byName := map[string]expr.Node{}
		for _, a := range w.net.Assignments {
			byName[a.Name] = a.Expr
		}
		for _, a := range m.Assignments {
			w.line(3, `<assignmentRule variable="%s">`, a.Name)
			w.math(4, byName[a.Name])
			w.line(3, "</assignmentRule>")
		}
		for _, r := range w.net.Rates {
			w.line(3, `<rateRule variable="%s">`, r.Name)
			w.math(4, r.Expr)
			w.line(3, "</rateRule>")
		}
		w.line(2, "</listOfRules>")
	}
	if len(m.Reactions)+len(w.extraRx) > 0 {
		w.line(2, "<listOfReactions>")
		for i, cr := range w.net.Reactions {
			w.reaction(rxIDs[i], &m.Reactions[i], &cr)
		}
		for _, r := range w.extraRx {
			w.b.WriteString(r)
		}
		w.line(2, "</listOfReactions>")
	}
	body.Write(events)
	if body.Len() > 0 {
		w.line(2, "<listOfEvents>")
		w.b.Write(body.Bytes())
		w.line(2, "</listOfEvents>")
	}
	w.line(1, "</model>")
	w.line(0, "</sbml>")
	return w.b.Bytes(), nil
}

// reaction writes one reaction: its kinetic law is the rate times the
// size of the compartment of its first reactant (or product).
func (w *writer) reaction(id string, r *network.Reaction, cr *network.CheckedReaction) {
	eq := cr.Equation
	attrs := fmt.Sprintf(`id="%s" reversible="%t"`, id, eq.Reversible)
	if id != r.Name {
		attrs += fmt.Sprintf(` name="%s"`, esc(r.Name))
	}
	w.line(3, "<reaction %s>", attrs)
	w.notes(4, r.Note)
	inEq := map[string]bool{}
	for _, side := range []struct {
		tag   string
		terms []network.Term
	}{{"listOfReactants", eq.Reactants}, {"listOfProducts", eq.Products}} {
		if len(side.terms) == 0 {
			continue
		}
		w.line(4, "<%s>", side.tag)
		for _, t := range side.terms {
			inEq[t.Species] = true
			w.line(5, `<speciesReference species="%s" stoichiometry="%s" constant="true"/>`, t.Species, num(t.Coef))
		}
		w.line(4, "</%s>", side.tag)
	}
	var mods []string
	seen := map[string]bool{}
	for _, v := range expr.Vars(cr.Expr) {
		if _, isSp := w.comp[v]; isSp && !inEq[v] && !seen[v] {
			seen[v] = true
			mods = append(mods, v)
		}
	}
	if len(mods) > 0 {
		w.line(4, "<listOfModifiers>")
		for _, s := range mods {
			w.line(5, `<modifierSpeciesReference species="%s"/>`, s)
		}
		w.line(4, "</listOfModifiers>")
	}
	first := ""
	if len(eq.Reactants) > 0 {
		first = eq.Reactants[0].Species
	} else if len(eq.Products) > 0 {
		first = eq.Products[0].Species
	}
	w.line(4, "<kineticLaw>")
	w.math(5, expr.Mul(expr.Var(compRef+w.comp[first]), cr.Expr))
	w.line(4, "</kineticLaw>")
	w.line(3, "</reaction>")
}

// compRef marks a variable that names a compartment in trees the writer
// builds (names of the model cannot start with it).
const compRef = "%comp:"

// math writes a <math> element.
func (w *writer) math(depth int, n expr.Node) {
	w.line(depth, `<math xmlns="http://www.w3.org/1998/Math/MathML">`)
	w.mathml(depth+1, n)
	w.line(depth, "</math>")
}

var mathFuncs = map[string]string{
	"exp": "exp", "log": "ln", "log10": "log", "sqrt": "root", "abs": "abs", "min": "min", "max": "max",
	"pow": "power", "sin": "sin", "cos": "cos", "tan": "tan", "asin": "arcsin", "acos": "arccos",
	"atan": "arctan", "sinh": "sinh", "cosh": "cosh", "tanh": "tanh", "asinh": "arcsinh",
	"acosh": "arccosh", "atanh": "arctanh", "floor": "floor", "ceil": "ceiling", "factorial": "factorial",
}

// mathml writes an expression tree as MathML content.
func (w *writer) mathml(depth int, n expr.Node) {
	switch n := n.(type) {
	case *expr.Number:
		w.line(depth, "<cn>%s</cn>", num(n.Value))
	case *expr.Variable:
		switch {
		case n.Name == network.TimeName:
			w.line(depth, `<csymbol encoding="text" definitionURL="http://www.sbml.org/sbml/symbols/time">time</csymbol>`)
		case strings.HasPrefix(n.Name, compRef):
			w.line(depth, "<ci>%s</ci>", strings.TrimPrefix(n.Name, compRef))
		default:
			w.line(depth, "<ci>%s</ci>", n.Name)
		}
	case *expr.Unary:
		w.apply(depth, "minus", n.X)
	case *expr.Binary:
		op := map[expr.Op]string{expr.OpAdd: "plus", expr.OpSub: "minus", expr.OpMul: "times", expr.OpDiv: "divide", expr.OpPow: "power"}[n.Op]
		w.apply(depth, op, n.L, n.R)
	case *expr.Call:
		if n.Func == "ifle" && len(n.Args) == 4 {
			w.line(depth, "<piecewise>")
			w.line(depth+1, "<piece>")
			w.mathml(depth+2, n.Args[2])
			w.apply(depth+2, "leq", n.Args[0], n.Args[1])
			w.line(depth+1, "</piece>")
			w.line(depth+1, "<otherwise>")
			w.mathml(depth+2, n.Args[3])
			w.line(depth+1, "</otherwise>")
			w.line(depth, "</piecewise>")
			return
		}
		op, ok := mathFuncs[n.Func]
		if !ok {
			op = n.Func // sign: not in the model's formulas
		}
		w.apply(depth, op, n.Args...)
	}
}

func (w *writer) apply(depth int, op string, args ...expr.Node) {
	w.line(depth, "<apply>")
	w.line(depth+1, "<%s/>", op)
	for _, a := range args {
		w.mathml(depth+1, a)
	}
	w.line(depth, "</apply>")
}

// eventsXML writes the model's events as SBML events, adding the
// parameters and reactions that infusions and one-time conditions need.
func (w *writer) eventsXML() ([]byte, error) {
	saved := w.b
	w.b = &bytes.Buffer{}
	defer func() { w.b = saved }()
	m := w.m
	for _, ce := range w.net.Events {
		e := &m.Events[ce.Index]
		count := max(e.Count, 1)
		if count > MaxOccurrences {
			return nil, fmt.Errorf("event %q: %d occurrences are more than the %d that SBML export spells out as events", e.Name, count, MaxOccurrences)
		}
		at := func(v network.Value, k int) expr.Node {
			t := valueNode(v)
			if k > 0 {
				t = expr.Add(t, expr.Mul(expr.Num(float64(k)), valueNode(e.Every)))
			}
			return expr.Simplify(t)
		}
		timeGeq := func(t expr.Node) expr.Node {
			return &expr.Call{Func: "%geq", Args: []expr.Node{expr.Var(network.TimeName), t}}
		}
		suffix := func(k int) string {
			if count == 1 {
				return ""
			}
			return fmt.Sprintf("_%d", k+1)
		}
		switch ce.Kind {
		case network.Timed:
			for k := range count {
				w.event(w.id(e.Name+suffix(k)), timeGeq(at(e.At, k)), false, e.Note, w.actions(ce))
			}
		case network.Triggered:
			cond := &expr.Call{Func: "%" + ce.Op, Args: []expr.Node{ce.Cond[0], ce.Cond[1]}}
			acts := w.actions(ce)
			if e.Once {
				flag := w.id(e.Name + "_done")
				w.extraParams = append(w.extraParams, fmt.Sprintf(`<parameter id="%s" value="0" constant="false"/>`, flag))
				cond = &expr.Call{Func: "%and", Args: []expr.Node{cond, &expr.Call{Func: "%<", Args: []expr.Node{expr.Var(flag), expr.Num(0.5)}}}}
				acts = append(acts, action{flag, expr.Num(1)})
			}
			w.event(w.id(e.Name), cond, true, e.Note, acts)
		case network.Infusion:
			for _, ch := range ce.Infuse {
				rate := w.id(e.Name + "_" + ch.Target + "_rate")
				w.extraParams = append(w.extraParams, fmt.Sprintf(`<parameter id="%s" value="0" constant="false"/>`, rate))
				rx := w.id(e.Name + "_" + ch.Target)
				saved := w.b
				w.b = &bytes.Buffer{}
				w.line(3, `<reaction id="%s" reversible="false">`, rx)
				w.notes(4, fmt.Sprintf("infusion %s of %s: the amount per time %s runs in", e.Name, ch.Target, rate))
				w.line(4, "<listOfProducts>")
				w.line(5, `<speciesReference species="%s" stoichiometry="1" constant="true"/>`, ch.Target)
				w.line(4, "</listOfProducts>")
				w.line(4, "<kineticLaw>")
				w.math(5, expr.Var(rate))
				w.line(4, "</kineticLaw>")
				w.line(3, "</reaction>")
				w.extraRx = append(w.extraRx, w.b.String())
				w.b = saved
				for k := range count {
					w.event(w.id(e.Name+"_"+ch.Target+"_starts"+suffix(k)), timeGeq(at(e.From, k)), false, e.Note, []action{{rate, ch.Expr}})
					w.event(w.id(e.Name+"_"+ch.Target+"_ends"+suffix(k)), timeGeq(at(e.To, k)), false, "", []action{{rate, expr.Num(0)}})
				}
			}
		}
	}
	return w.b.Bytes(), nil
}

type action struct {
	target string
	value  expr.Node
}

// actions returns the event's add and set actions as SBML assignments:
// add raises a concentration by amount / volume.
func (w *writer) actions(ce network.CheckedEvent) []action {
	var out []action
	for _, ch := range ce.Add {
		out = append(out, action{ch.Target, expr.Add(expr.Var(ch.Target), expr.Div(ch.Expr, expr.Var(compRef+w.comp[ch.Target])))})
	}
	for _, ch := range ce.Set {
		out = append(out, action{ch.Target, ch.Expr})
	}
	return out
}

func valueNode(v network.Value) expr.Node {
	if v.Name != "" {
		return expr.Var(v.Name)
	}
	return expr.Num(v.Num)
}

// event writes one event; its trigger is a condition tree (see cond).
func (w *writer) event(id string, trigger expr.Node, initial bool, note string, acts []action) {
	w.line(3, `<event id="%s" useValuesFromTriggerTime="true">`, id)
	w.notes(4, note)
	w.line(4, `<trigger initialValue="%t" persistent="true">`, initial)
	w.line(5, `<math xmlns="http://www.w3.org/1998/Math/MathML">`)
	w.cond(6, trigger)
	w.line(5, "</math>")
	w.line(4, "</trigger>")
	w.line(4, "<listOfEventAssignments>")
	for _, a := range acts {
		w.line(5, `<eventAssignment variable="%s">`, a.target)
		w.math(6, a.value)
		w.line(5, "</eventAssignment>")
	}
	w.line(4, "</listOfEventAssignments>")
	w.line(3, "</event>")
}

// cond writes a condition: a call of "%and" or of a comparison ("%<",
// "%<=", "%>", "%>=", "%geq") whose arguments are expressions.
func (w *writer) cond(depth int, n expr.Node) {
	c := n.(*expr.Call)
	op := map[string]string{"%and": "and", "%<": "lt", "%<=": "leq", "%>": "gt", "%>=": "geq", "%geq": "geq"}[c.Func]
	w.line(depth, "<apply>")
	w.line(depth+1, "<%s/>", op)
	for _, a := range c.Args {
		if sub, ok := a.(*expr.Call); ok && strings.HasPrefix(sub.Func, "%") {
			w.cond(depth+1, sub)
			continue
		}
		w.mathml(depth+1, a)
	}
	w.line(depth, "</apply>")
}
