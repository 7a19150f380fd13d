// Package sbml reads and writes models in SBML, the Systems Biology Markup
// Language (sbml.org), with encoding/xml and a MathML reader and writer of
// its own.
//
// Read imports SBML Level 3 Versions 1 and 2 and Level 2 Version 4
// documents: compartments, species (amounts and concentrations,
// hasOnlySubstanceUnits, boundaryCondition, constant, conversion
// factors), parameters (reaction-local ones renamed REACTION_NAME), reactions
// with stoichiometry and modifiers, function definitions (inlined),
// assignment rules (as the model's assignments), initial assignments
// (evaluated into initial values), rate rules (as the model's rates),
// events without delay and the time and avogadro symbols. SBML's kinetic
// laws are amounts per time; the model's rates are concentrations per
// time in the compartment of the first reactant, so each law is divided
// by that compartment's size, and species that SBML reads as amounts are
// written as concentration × size. What the model cannot represent
// (algebraic rules, delays, event priorities, compartments whose size
// changes, stoichiometries that change, other SBML packages) stops the
// import with a problem that names each such element and its id.
//
// Write exports a model to SBML Level 3 Version 2 core.
package sbml

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/network/expr"
)

// Import is the result of reading an SBML document.
type Import struct {
	Model *network.Model
	// Problems lists the warnings of an import that succeeded (units not
	// converted, notes dropped, names changed), or every reason it did
	// not.
	Problems network.ErrorList
	// Symbols says, for each SBML identifier of a compartment, species or
	// parameter, where the imported model holds it.
	Symbols map[string]Symbol
}

// Symbol tells where an imported model holds an SBML compartment, species
// or parameter.
type Symbol struct {
	Kind string // "compartment", "species" or "parameter"
	// Name is the model's species, parameter or assignment that holds it
	// ("" for a compartment, whose size is Value).
	Name string
	// Assigned reports that an assignment holds it: for a species, its
	// SBML value (an amount when HasOnlySubstanceUnits, else a
	// concentration). Otherwise a species of the model holds its
	// concentration, or, with HeldAsAmount, its amount.
	Assigned              bool
	HeldAsAmount          bool
	HasOnlySubstanceUnits bool
	// Volume is the size of a species' compartment; VolumeName, when not
	// empty, names the parameter or assignment that holds it instead,
	// for a compartment whose size changes.
	Volume     float64
	VolumeName string
	Constant   bool    // it never changes; Value is its value
	Value      float64 // its initial value in SBML's terms
}

// Concentration converts v, the value the model reports under Name (a
// species' concentration or amount, or an assignment's value), to the
// SBML species' concentration; vol is the size of its compartment at that
// time (Volume, or the value reported under VolumeName). For other kinds
// it returns v.
func (s Symbol) Concentration(v, vol float64) float64 {
	if s.Kind != "species" {
		return v
	}
	if s.HeldAsAmount || s.Assigned && s.HasOnlySubstanceUnits {
		return v / vol
	}
	return v
}

// Amount converts v, the value the model reports under Name, to the SBML
// species' amount (see Concentration); for other kinds it returns v.
func (s Symbol) Amount(v, vol float64) float64 {
	if s.Kind != "species" {
		return v
	}
	if s.HeldAsAmount || s.Assigned && s.HasOnlySubstanceUnits {
		return v
	}
	return v * vol
}

// Read imports the SBML document from r; file names it in messages. On
// failure the error is a network.ErrorList with every problem found, each
// with its line and column in the document, and the Import (when not nil)
// lists them too.
func Read(r io.Reader, file string) (*Import, error) {
	data, err := atomicfile.ReadLimited(r, MaxSize)
	if err == nil {
		data, err = atomicfile.Text(data) // UTF-16 named, not "invalid UTF-8"
	}
	if err != nil {
		return nil, network.ErrorList{problem(file, 0, 0, "", "%v", err)}
	}
	return Parse(data, file)
}

// Parse imports the SBML document data (see Read).
func Parse(data []byte, file string) (imp *Import, err error) {
	root, err := parseXML(data, file)
	if err != nil {
		p := err.(network.Problem)
		return &Import{Problems: network.ErrorList{p}}, network.ErrorList{p}
	}
	im := &importer{file: file, ids: map[string]*sym{}, taken: map[string]bool{}, syms: map[string]Symbol{}}
	im.mr = &mathReader{file: file, funcs: map[string]*node{}}
	im.mr.warn = func(n *node, format string, args ...any) { im.warnAt(n, "", format, args...) }
	m := im.run(root)
	im.probs.RemoveMultiples()
	imp = &Import{Problems: im.probs, Symbols: im.syms}
	if err := im.probs.Err(); err != nil {
		return imp, err
	}
	imp.Model = m
	return imp, nil
}

type symKind int

const (
	kCompartment symKind = iota
	kSpecies
	kParameter
	kReaction
	kSpeciesRef
	kFunction
	kEvent
	kLocal
)

var kindWord = map[symKind]string{kCompartment: "compartment", kSpecies: "species", kParameter: "parameter",
	kReaction: "reaction", kSpeciesRef: "species reference", kFunction: "function definition", kEvent: "event", kLocal: "local parameter"}

// sym is one SBML identifier.
type sym struct {
	id   string
	kind symKind
	n    *node
	// values from attributes
	value    float64 // size, initial amount or concentration, value, stoichiometry
	valueSet bool
	amount   bool // species: value is an initial amount
	hosu     bool
	boundary bool
	constant bool
	comp     string
	units    string    // compartment: its volume unit in the model's words ("mL"), when SBML's maps to one
	cf       string    // species conversion factor
	rx       *reaction // species reference: its reaction
	// what sets it
	ia, ar, rr  *node // math of its initial assignment, assignment rule, rate rule
	eventTarget *node // the first event assignment to it
	// results
	variable   bool   // a compartment whose size, or a stoichiometry that, changes during a run
	unitComp   string // a variable compartment: the model's compartment of volume 1 holding its species' amounts
	name       string // the model's name
	init       float64
	initState  int  // 0 not yet, 1 computing, 2 done
	assignment bool // held by an assignment
	vol        float64
}

type reaction struct {
	s         *sym
	law       *node // <math> of the kinetic law, or nil
	locals    map[string]string
	localVals map[string]float64
	tree      expr.Node // the kinetic law over SBML identifiers (locals renamed)
	state     int
}

type importer struct {
	file       string
	level, ver int
	probs      network.ErrorList
	mr         *mathReader
	ids        map[string]*sym
	order      []*sym
	taken      map[string]bool
	syms       map[string]Symbol
	localVals  map[string]float64 // renamed local parameters
	reactions  []*reaction
	modelCF    string
	referenced map[string]bool // identifiers that some formula reads
}

func (im *importer) errAt(n *node, what, format string, args ...any) {
	im.probs = append(im.probs, problem(im.file, n.Line, n.Col, what, format, args...))
}

func (im *importer) warnAt(n *node, what, format string, args ...any) {
	p := problem(im.file, n.Line, n.Col, what, format, args...)
	p.Severity = network.Warning
	im.probs = append(im.probs, p)
}

// addErr records an error returned by the MathML reader.
func (im *importer) addErr(err error, n *node, what string) {
	if p, ok := err.(network.Problem); ok {
		if p.Field == "" {
			p.Field = what
		}
		im.probs = append(im.probs, p)
		return
	}
	im.errAt(n, what, "%v", err)
}

func what(s *sym) string { return fmt.Sprintf("%s %q", kindWord[s.kind], s.id) }

// boolAttr reads a required (Level 3) boolean attribute, with its Level 2
// default.
func (im *importer) boolAttr(n *node, s string, name string, l2default bool) bool {
	v, ok := n.attr(name)
	if !ok {
		if im.level < 3 {
			return l2default
		}
		im.errAt(n, s, "the required attribute %s is missing; expected true or false", name)
		return l2default
	}
	switch v {
	case "true", "1":
		return true
	case "false", "0":
		return false
	}
	im.errAt(n, s, "%s=%q is not a boolean; expected true or false", name, v)
	return l2default
}

func (im *importer) numAttr(n *node, s, name string) (float64, bool) {
	v, ok := n.attr(name)
	if !ok {
		return 0, false
	}
	f, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
	if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
		im.errAt(n, s, "%s=%q is not a finite number", name, v)
		return 0, false
	}
	return f, true
}

// declare records an SBML identifier.
func (im *importer) declare(n *node, kind symKind) *sym {
	id, ok := n.attr("id")
	if !ok {
		if kind == kSpeciesRef || kind == kEvent {
			return nil
		}
		im.errAt(n, n.Name, "the required attribute id is missing")
		return nil
	}
	s := &sym{id: id, kind: kind, n: n}
	if !isSId(id) {
		im.errAt(n, what(s), "%q is not an SBML identifier; expected letters, digits and _, starting with a letter or _", id)
		return nil
	}
	if prev, dup := im.ids[id]; dup {
		im.errAt(n, what(s), "the id %q is already used by the %s on line %d; every id must be unique", id, kindWord[prev.kind], prev.n.Line)
		return nil
	}
	im.ids[id] = s
	im.order = append(im.order, s)
	return s
}

// run reads the document and builds the model.
func (im *importer) run(root *node) *network.Model {
	if root.Name != "sbml" {
		im.errAt(root, "", "the document's top element is <%s>; expected <sbml>", root.Name)
		return nil
	}
	lv, _ := root.attr("level")
	vv, _ := root.attr("version")
	im.level, _ = strconv.Atoi(lv)
	im.ver, _ = strconv.Atoi(vv)
	switch {
	case im.level == 3 && (im.ver == 1 || im.ver == 2), im.level == 2 && im.ver == 4:
	default:
		im.errAt(root, "sbml", "SBML Level %s Version %s is not supported; expected Level 3 Version 1 or 2, or Level 2 Version 4", lv, vv)
		return nil
	}
	for _, a := range root.Attr {
		if a.Name.Local == "required" && a.Name.Space != "" {
			im.errAt(root, "sbml", "the document uses the SBML package %s (%s), which is not supported", packageName(a.Name.Space), a.Name.Space)
		}
	}
	model := root.kid("model")
	if model == nil {
		im.errAt(root, "sbml", "the document has no <model>")
		return nil
	}
	im.checkPackages(model, root.Space)
	if cf, ok := model.attr("conversionFactor"); ok {
		im.modelCF = cf
	}
	im.read(model)
	if im.probs.HasErrors() {
		return nil
	}
	return im.build(model)
}

// packageName guesses a package's short name from its namespace.
func packageName(ns string) string {
	parts := strings.Split(strings.TrimSuffix(ns, "/"), "/")
	for i := len(parts) - 1; i >= 0; i-- {
		if p := parts[i]; p != "" && !strings.HasPrefix(p, "version") && !strings.HasPrefix(p, "level") {
			return strconv.Quote(p)
		}
	}
	return strconv.Quote(ns)
}

// checkPackages refuses elements of other SBML packages (hierarchical
// models, flux balance, …) outside annotations and notes.
func (im *importer) checkPackages(n *node, core string) {
	for _, k := range n.Kids {
		switch k.Name {
		case "annotation", "notes", "math":
			continue
		}
		if k.Space != core && k.Space != "" {
			im.errAt(k, k.Name, "the element <%s> belongs to the SBML package %s, which is not supported", k.Name, packageName(k.Space))
			continue
		}
		im.checkPackages(k, core)
	}
}

// read collects every identifier, rule, initial assignment and event, and
// refuses what cannot be represented.
func (im *importer) read(model *node) {
	first := map[string]*node{} // each list's first element: only it is read
	for _, k := range model.Kids {
		if f := first[k.Name]; f != nil && strings.HasPrefix(k.Name, "listOf") {
			im.errAt(k, "", "<%s> appears a second time (first on line %d); SBML allows one per model", k.Name, f.Line)
			continue
		} else if f == nil {
			first[k.Name] = k
		}
		switch k.Name {
		case "listOfFunctionDefinitions", "listOfUnitDefinitions", "listOfCompartments", "listOfSpecies", "listOfParameters",
			"listOfInitialAssignments", "listOfRules", "listOfReactions", "listOfEvents", "annotation", "notes":
		case "listOfConstraints":
			im.warnAt(k, "", "constraints are not checked during a run; they were left out")
		case "listOfCompartmentTypes", "listOfSpeciesTypes":
			im.warnAt(k, "", "<%s> carries no dynamics; left out", k.Name)
		default:
			if k.Space == model.Space {
				im.errAt(k, "", "the element <%s> is not supported", k.Name)
			}
		}
	}
	if model.kid("listOfUnitDefinitions") != nil {
		im.warnAt(model.kid("listOfUnitDefinitions"), "", "unit definitions are not converted: numbers are used as they stand")
	}
	for _, f := range model.kids("listOfFunctionDefinitions", "functionDefinition") {
		s := im.declare(f, kFunction)
		if s == nil {
			continue
		}
		m := f.kid("math")
		var lambda *node
		if m != nil && len(m.Kids) == 1 {
			lambda = unwrap(m.Kids[0])
		}
		if lambda == nil || lambda.Name != "lambda" {
			if im.level == 3 && im.ver == 2 && m == nil {
				continue // L3V2: a function without math is never called
			}
			im.errAt(f, what(s), "expected <math> with one <lambda>")
			continue
		}
		im.mr.funcs[s.id] = lambda
	}
	for _, c := range model.kids("listOfCompartments", "compartment") {
		s := im.declare(c, kCompartment)
		if s == nil {
			continue
		}
		s.value, s.valueSet = im.numAttr(c, what(s), "size")
		if !s.valueSet && im.level < 3 {
			s.value, s.valueSet = im.numAttr(c, what(s), "volume")
		}
		s.constant = im.boolAttr(c, what(s), "constant", true)
		if u, ok := c.attr("units"); ok {
			s.units = volumeUnit(model, u)
		}
		if _, ok := c.attr("outside"); ok && im.level < 3 {
			// nesting carries no dynamics
		}
	}
	for _, sp := range model.kids("listOfSpecies", "species") {
		s := im.declare(sp, kSpecies)
		if s == nil {
			continue
		}
		w := what(s)
		s.comp, _ = sp.attr("compartment")
		if c, ok := im.ids[s.comp]; !ok || c.kind != kCompartment {
			im.errAt(sp, w, "compartment %q is not a compartment of the model", s.comp)
		}
		if v, ok := im.numAttr(sp, w, "initialAmount"); ok {
			s.value, s.valueSet, s.amount = v, true, true
		}
		if v, ok := im.numAttr(sp, w, "initialConcentration"); ok {
			if s.valueSet {
				im.errAt(sp, w, "both initialAmount and initialConcentration are given; expected one")
			}
			s.value, s.valueSet = v, true
		}
		s.hosu = im.boolAttr(sp, w, "hasOnlySubstanceUnits", false)
		s.boundary = im.boolAttr(sp, w, "boundaryCondition", false)
		s.constant = im.boolAttr(sp, w, "constant", false)
		s.cf, _ = sp.attr("conversionFactor")
	}
	for _, p := range model.kids("listOfParameters", "parameter") {
		s := im.declare(p, kParameter)
		if s == nil {
			continue
		}
		s.value, s.valueSet = im.numAttr(p, what(s), "value")
		s.constant = im.boolAttr(p, what(s), "constant", true)
	}
	for _, r := range model.kids("listOfReactions", "reaction") {
		s := im.declare(r, kReaction)
		if s == nil {
			continue
		}
		rx := &reaction{s: s, locals: map[string]string{}, localVals: map[string]float64{}}
		im.reactions = append(im.reactions, rx)
		w := what(s)
		im.boolAttr(r, w, "reversible", true)
		if im.level < 3 || im.ver == 1 {
			if v, ok := r.attr("fast"); ok && (v == "true" || v == "1") {
				im.errAt(r, w, "fast reactions (fast=\"true\") are not supported")
			}
		}
		for _, list := range []string{"listOfReactants", "listOfProducts"} {
			for _, sr := range r.kids(list, "speciesReference") {
				if ref := im.declare(sr, kSpeciesRef); ref != nil {
					ref.rx = rx
					ref.value, ref.valueSet = im.numAttr(sr, what(ref), "stoichiometry")
				}
			}
		}
		for _, mr := range r.kids("listOfModifiers", "modifierSpeciesReference") {
			im.declare(mr, kSpeciesRef)
		}
		if kl := r.kid("kineticLaw"); kl != nil {
			rx.law = kl.kid("math")
			locals := kl.kids("listOfLocalParameters", "localParameter")
			if im.level < 3 {
				locals = kl.kids("listOfParameters", "parameter")
			}
			for _, lp := range locals {
				id, _ := lp.attr("id")
				if !isSId(id) {
					im.errAt(lp, w, "local parameter id %q is not an SBML identifier", id)
					continue
				}
				if _, dup := rx.locals[id]; dup {
					im.errAt(lp, w, "the local parameter %q is declared twice", id)
					continue
				}
				v, ok := im.numAttr(lp, w, "value")
				if !ok {
					im.errAt(lp, w, "the local parameter %q has no value", id)
				}
				rx.locals[id] = ""
				rx.localVals[id] = v
			}
		}
	}
	target := func(n *node, attr string) *sym {
		id, _ := n.attr(attr)
		s, ok := im.ids[id]
		if !ok {
			im.errAt(n, n.Name, "%s=%q names nothing in the model", attr, id)
			return nil
		}
		switch s.kind {
		case kCompartment, kSpecies, kParameter, kSpeciesRef:
			return s
		}
		im.errAt(n, n.Name, "%s=%q is a %s; expected a compartment, species, parameter or species reference", attr, id, kindWord[s.kind])
		return nil
	}
	for _, ia := range model.kids("listOfInitialAssignments", "initialAssignment") {
		s := target(ia, "symbol")
		if s == nil {
			continue
		}
		m := ia.kid("math")
		if m == nil {
			im.warnAt(ia, "initial assignment to "+s.id, "it has no math and was left out")
			continue
		}
		if s.ia != nil {
			im.errAt(ia, what(s), "a second initial assignment to %q", s.id)
		}
		s.ia = m
	}
	if l := model.kid("listOfRules"); l != nil {
		for _, r := range l.Kids {
			switch r.Name {
			case "assignmentRule", "rateRule":
			case "algebraicRule":
				im.errAt(r, "algebraic rule", "algebraic rules are not supported")
				continue
			default:
				continue
			}
			s := target(r, "variable")
			if s == nil {
				continue
			}
			m := r.kid("math")
			if m == nil {
				im.warnAt(r, r.Name+" for "+s.id, "it has no math and was left out")
				continue
			}
			if s.ar != nil || s.rr != nil {
				im.errAt(r, what(s), "a second rule for %q", s.id)
				continue
			}
			if r.Name == "assignmentRule" {
				s.ar = m
			} else {
				s.rr = m
			}
		}
	}
	for _, e := range model.kids("listOfEvents", "event") {
		s := im.declare(e, kEvent)
		w := "event"
		if s != nil {
			w = what(s)
		} else if id, ok := e.attr("id"); ok {
			w = fmt.Sprintf("event %q", id)
		}
		if e.kid("delay") != nil {
			im.errAt(e.kid("delay"), w, "events with a delay are not supported")
		}
		if e.kid("priority") != nil {
			im.errAt(e.kid("priority"), w, "event priorities are not supported")
		}
		fires := e.kid("trigger") != nil && e.kid("trigger").kid("math") != nil
		for _, ea := range e.kids("listOfEventAssignments", "eventAssignment") {
			if t := target(ea, "variable"); t != nil && t.eventTarget == nil && ea.kid("math") != nil && fires {
				t.eventTarget = ea
			}
		}
		if trig := e.kid("trigger"); trig != nil && len(model.kids("listOfEvents", "event")) > 1 {
			if p, ok := trig.attr("persistent"); ok && (p == "false" || p == "0") {
				im.errAt(trig, w, "a trigger that is not persistent (persistent=\"false\") is not supported in a model with other events: an event that another cancels at the same instant would still fire")
			}
		}
	}
	im.referenced = map[string]bool{}
	var refs func(n *node)
	refs = func(n *node) {
		if n.Name == "ci" {
			im.referenced[strings.TrimSpace(n.Text)] = true
		}
		for _, k := range n.Kids {
			refs(k)
		}
	}
	refs(model)
	// What the model cannot represent.
	for _, s := range im.order {
		switch s.kind {
		case kCompartment, kSpeciesRef:
			// A compartment whose size changes is held by a parameter (or
			// an assignment), its species by their amounts; a changing
			// stoichiometry by a parameter or assignment too.
			s.variable = s.rr != nil || s.ar != nil || s.eventTarget != nil
		case kSpecies:
			cf := s.cf
			if cf == "" {
				cf = im.modelCF
			}
			if cf != "" {
				c, ok := im.ids[cf]
				switch {
				case !ok || c.kind != kParameter:
					im.errAt(s.n, what(s), "the conversion factor %q is not a parameter of the model", cf)
				case !c.constant || c.ar != nil || c.rr != nil || c.eventTarget != nil:
					im.errAt(s.n, what(s), "the conversion factor %q changes during the run, which is not supported", cf)
				}
			}
		}
	}
}

// volumeScales are the SBML scales of litre with the model's words for
// them.
var volumeScales = map[int]string{0: "L", -3: "mL", -6: "uL", -9: "nL", -15: "fL"}

// volumeUnit returns the model's word for the SBML unit id of a
// compartment's size: "litre", or a unit definition of one litre with
// exponent 1, multiplier 1 and a scale of 0, −3, −6, −9 or −15; "" for
// any other unit, whose sizes are then used as they stand.
func volumeUnit(model *node, id string) string {
	if id == "litre" || id == "liter" {
		return "L"
	}
	for _, d := range model.kids("listOfUnitDefinitions", "unitDefinition") {
		if did, _ := d.attr("id"); did != id {
			continue
		}
		us := d.kids("listOfUnits", "unit")
		if len(us) != 1 {
			return ""
		}
		num := func(name, def string) string {
			if v, ok := us[0].attr(name); ok {
				return strings.TrimSpace(v)
			}
			return def
		}
		kind := num("kind", "")
		exp, err1 := strconv.ParseFloat(num("exponent", "1"), 64)
		mul, err2 := strconv.ParseFloat(num("multiplier", "1"), 64)
		scale, err3 := strconv.Atoi(num("scale", "0"))
		if (kind != "litre" && kind != "liter") || err1 != nil || err2 != nil || err3 != nil || exp != 1 || mul != 1 {
			return ""
		}
		return volumeScales[scale]
	}
	return ""
}
