package network

import (
	"fmt"
	"math"
	"strings"

	"kinetarium/network/expr"
)

// Severity grades a Problem.
type Severity int

// Severities. Errors stop Compile; warnings do not.
const (
	Error Severity = iota
	Warning
)

// String returns "error" or "warning".
func (s Severity) String() string {
	if s == Warning {
		return "warning"
	}
	return "error"
}

// Problem is one mistake or doubtful spot found by Validate.
type Problem struct {
	Severity Severity
	// Section is "compartments", "species", "parameters", "reactions" or
	// "simulation".
	Section string
	Index   int    // index of the item in its section (0-based); 0 for simulation
	Item    string // name of the item, if it has one
	Field   string // e.g. "equation", "rate.k", "initial", "t_end"; "" for the whole item
	Col     int    // 1-based column in the equation or expression; 0 if not applicable
	Message string // a plain sentence: what is wrong and what is expected
}

var sectionWord = map[string]string{
	"compartments": "compartment", "species": "species", "parameters": "parameter",
	"reactions": "reaction", "simulation": "simulation",
}

// String describes the problem with its place, e.g.
// `reaction "bind", equation, column 9: unknown species "Q"; declare it under species or fix the name`.
func (p Problem) String() string {
	var b strings.Builder
	if p.Severity == Warning {
		b.WriteString("warning: ")
	}
	word := sectionWord[p.Section]
	if word == "" {
		word = p.Section
	}
	b.WriteString(word)
	if p.Section != "simulation" {
		if p.Item != "" {
			fmt.Fprintf(&b, " %q", p.Item)
		} else {
			fmt.Fprintf(&b, " %d", p.Index+1)
		}
	}
	if p.Field != "" {
		b.WriteString(", ")
		b.WriteString(p.Field)
	}
	if p.Col > 0 {
		fmt.Fprintf(&b, ", column %d", p.Col)
	}
	b.WriteString(": ")
	b.WriteString(p.Message)
	return b.String()
}

// isName reports whether s is an identifier [A-Za-z_][A-Za-z0-9_]*.
func isName(s string) bool {
	if s == "" {
		return false
	}
	for i, r := range s {
		if !isNameStart(r) && (i == 0 || r < '0' || r > '9') {
			return false
		}
	}
	return true
}

// TimeName is the name of time in rate expressions; no species or
// parameter may use it.
const TimeName = "t"

type validator struct {
	m        *Model
	problems []Problem
	// kinds maps each declared name to where it is declared.
	kinds     map[string]nameRef
	speciesIx map[string]int
	paramIx   map[string]int
	compIx    map[string]int
	usedSp    []bool
	usedPar   []bool
}

type nameRef struct {
	section string
	index   int
}

func (v *validator) add(sev Severity, section string, index int, item, field string, col int, format string, args ...any) {
	v.problems = append(v.problems, Problem{Severity: sev, Section: section, Index: index, Item: item,
		Field: field, Col: col, Message: fmt.Sprintf(format, args...)})
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Validate checks m and returns every problem found (errors first in model
// order, then warnings), or nil for a clean model. It never panics.
func (m *Model) Validate() []Problem {
	v := &validator{m: m, kinds: map[string]nameRef{}, speciesIx: map[string]int{},
		paramIx: map[string]int{}, compIx: map[string]int{},
		usedSp: make([]bool, len(m.Species)), usedPar: make([]bool, len(m.Parameters))}
	v.names()
	v.compartments()
	v.species()
	v.parameters()
	for i := range m.Reactions {
		v.reaction(i)
	}
	v.simulation()
	for i, s := range m.Species {
		if !v.usedSp[i] && isName(s.Name) {
			v.add(Warning, "species", i, s.Name, "", 0, "this species takes part in no reaction and appears in no rate law")
		}
	}
	for i, p := range m.Parameters {
		if !v.usedPar[i] && isName(p.Name) {
			v.add(Warning, "parameters", i, p.Name, "", 0, "this parameter is used by no rate law")
		}
	}
	// Errors before warnings, each in model order.
	var out []Problem
	for _, sev := range []Severity{Error, Warning} {
		for _, p := range v.problems {
			if p.Severity == sev {
				out = append(out, p)
			}
		}
	}
	return out
}

// HasErrors reports whether any problem is an Error.
func HasErrors(ps []Problem) bool {
	for _, p := range ps {
		if p.Severity == Error {
			return true
		}
	}
	return false
}

func (v *validator) declare(section string, index int, name string, ix map[string]int) {
	word := sectionWord[section]
	switch {
	case name == "":
		v.add(Error, section, index, "", "name", 0, "the %s needs a name", word)
		return
	case !isName(name):
		v.add(Error, section, index, name, "name", 0, "%q is not a valid name; use letters, digits and _, starting with a letter or _", name)
		return
	case name == TimeName && section != "compartments":
		v.add(Error, section, index, name, "name", 0, "the name %q is reserved for time in rate expressions; choose another", name)
		return
	case section != "compartments" && !usableInExpressions(name):
		v.add(Error, section, index, name, "name", 0, "the name %q is a function of rate expressions (exp, log, log10, sqrt, abs, min, max, pow); choose another", name)
		return
	}
	if prev, ok := v.kinds[name]; ok {
		v.add(Error, section, index, name, "name", 0, "the name %q is already used by %s %d; every species, parameter and compartment needs its own name",
			name, sectionWord[prev.section], prev.index+1)
		return
	}
	v.kinds[name] = nameRef{section, index}
	ix[name] = index
}

func (v *validator) names() {
	for i, c := range v.m.Compartments {
		v.declare("compartments", i, c.Name, v.compIx)
	}
	for i, s := range v.m.Species {
		v.declare("species", i, s.Name, v.speciesIx)
	}
	for i, p := range v.m.Parameters {
		v.declare("parameters", i, p.Name, v.paramIx)
	}
	seen := map[string]int{}
	for i, r := range v.m.Reactions {
		if strings.TrimSpace(r.Name) == "" {
			v.add(Error, "reactions", i, "", "name", 0, "the reaction needs a name")
			continue
		}
		if j, ok := seen[r.Name]; ok {
			v.add(Error, "reactions", i, r.Name, "name", 0, "the name %q is already used by reaction %d; every reaction needs its own name", r.Name, j+1)
			continue
		}
		seen[r.Name] = i
	}
}

func (v *validator) compartments() {
	for i, c := range v.m.Compartments {
		if !(c.Volume > 0) || !finite(c.Volume) {
			v.add(Error, "compartments", i, c.Name, "volume", 0, "volume %v is not allowed; expected a positive number", c.Volume)
		}
	}
}

func (v *validator) species() {
	for i, s := range v.m.Species {
		if !finite(s.Initial) || s.Initial < 0 {
			v.add(Error, "species", i, s.Name, "initial", 0, "initial concentration %v is not allowed; expected zero or a positive number", s.Initial)
		}
		if s.Compartment == "" {
			continue
		}
		if _, ok := v.compIx[s.Compartment]; ok {
			continue
		}
		if len(v.m.Compartments) == 0 && s.Compartment == DefaultCompartment {
			continue
		}
		if len(v.m.Compartments) == 0 {
			v.add(Error, "species", i, s.Name, "compartment", 0, "unknown compartment %q; the model declares no compartments, so declare it or leave the field empty", s.Compartment)
		} else {
			v.add(Error, "species", i, s.Name, "compartment", 0, "unknown compartment %q; expected one of %s", s.Compartment, v.list(v.m.Compartments))
		}
	}
}

func (v *validator) list(cs []Compartment) string {
	names := make([]string, len(cs))
	for i, c := range cs {
		names[i] = c.Name
	}
	return strings.Join(names, ", ")
}

func (v *validator) parameters() {
	for i, p := range v.m.Parameters {
		if !finite(p.Value) {
			v.add(Error, "parameters", i, p.Name, "value", 0, "value %v is not allowed; expected a finite number", p.Value)
		}
	}
}

// fieldName maps Rate fields to their file keys.
var rateFields = []struct {
	key string
	get func(*Rate) Value
}{
	{"k", func(r *Rate) Value { return r.K }},
	{"k_reverse", func(r *Rate) Value { return r.KReverse }},
	{"vmax", func(r *Rate) Value { return r.Vmax }},
	{"km", func(r *Rate) Value { return r.Km }},
	{"kcat", func(r *Rate) Value { return r.Kcat }},
	{"enzyme", func(r *Rate) Value { return r.Enzyme }},
}

func (v *validator) reaction(i int) {
	r := &v.m.Reactions[i]
	errf := func(field string, col int, format string, args ...any) {
		v.add(Error, "reactions", i, r.Name, field, col, format, args...)
	}
	eq, err := ParseEquation(r.Equation)
	eqOK := err == nil
	if err != nil {
		if se, ok := err.(*SyntaxError); ok {
			errf("equation", se.Col, "%s", se.Msg)
		} else {
			errf("equation", 0, "%v", err)
		}
	} else {
		for _, side := range [][]Term{eq.Reactants, eq.Products} {
			for _, t := range side {
				if j, ok := v.speciesIx[t.Species]; ok {
					v.usedSp[j] = true
					continue
				}
				if ref, ok := v.kinds[t.Species]; ok {
					errf("equation", t.Col, "%q is a %s, not a species; only species can react", t.Species, sectionWord[ref.section])
				} else {
					errf("equation", t.Col, "unknown species %q; declare it under species or fix the name", t.Species)
				}
			}
		}
	}
	law := r.Rate.Law
	uses := map[string]bool{}
	switch law {
	case MassAction:
		uses["k"] = true
		if eqOK && eq.Reversible {
			uses["k_reverse"] = true
		}
	case MichaelisMenten:
		uses["km"] = true
		switch {
		case r.Rate.Vmax.Set && (r.Rate.Kcat.Set || r.Rate.Enzyme.Set):
			errf("rate", 0, "michaelis_menten takes either vmax, or kcat with enzyme, not both; remove one")
			uses["vmax"], uses["kcat"], uses["enzyme"] = true, true, true
		case r.Rate.Kcat.Set || r.Rate.Enzyme.Set:
			uses["kcat"], uses["enzyme"] = true, true
		default:
			uses["vmax"] = true
		}
		if eqOK {
			if eq.Reversible {
				errf("equation", 0, "michaelis_menten applies to irreversible reactions only; use \"->\" or write the net rate as an expression")
			}
			if len(eq.Reactants) != 1 || eq.Reactants[0].Coef != 1 {
				errf("equation", 0, "michaelis_menten needs exactly one substrate with coefficient 1; use an expression law for other cases")
			}
		}
	case Expression:
		v.expression(i, r)
	case "":
		errf("rate.law", 0, "the rate law is missing; expected one of %s", strings.Join(Laws, ", "))
	default:
		errf("rate.law", 0, "unknown rate law %q; expected one of %s", law, strings.Join(Laws, ", "))
	}
	known := law == MassAction || law == MichaelisMenten || law == Expression
	for _, f := range rateFields {
		val := f.get(&r.Rate)
		field := "rate." + f.key
		if !val.Set {
			if uses[f.key] {
				switch {
				case f.key == "k_reverse":
					errf(field, 0, "mass_action on a reversible reaction needs k_reverse, the rate constant of the reverse direction")
				case f.key == "enzyme":
					errf(field, 0, "michaelis_menten with kcat needs enzyme, the species that catalyses the reaction")
				case f.key == "kcat":
					errf(field, 0, "michaelis_menten with an enzyme needs kcat, the turnover number")
				default:
					errf(field, 0, "%s needs %s; give a parameter name or a number", law, f.key)
				}
			}
			continue
		}
		if known && !uses[f.key] {
			if f.key == "k_reverse" && law == MassAction {
				errf(field, 0, "k_reverse applies to reversible reactions only; remove it or write the equation with \"<=>\"")
			} else {
				errf(field, 0, "%s does not use %s; remove it", law, f.key)
			}
			continue
		}
		if f.key == "enzyme" {
			if val.Name == "" {
				errf(field, 0, "enzyme must name a species, not a number")
			} else if j, ok := v.speciesIx[val.Name]; ok {
				v.usedSp[j] = true
			} else {
				errf(field, 0, "enzyme %q is not a species; name the species that catalyses the reaction", val.Name)
			}
			continue
		}
		if val.Name == "" {
			if !finite(val.Num) || val.Num < 0 {
				errf(field, 0, "%s = %v is not allowed; expected zero or a positive number", f.key, val.Num)
			}
			continue
		}
		if j, ok := v.paramIx[val.Name]; ok {
			v.usedPar[j] = true
			continue
		}
		if ref, ok := v.kinds[val.Name]; ok {
			errf(field, 0, "%q is a %s; %s needs a parameter name or a number", val.Name, sectionWord[ref.section], f.key)
		} else {
			errf(field, 0, "unknown parameter %q; declare it under parameters or give a number", val.Name)
		}
	}
	if law != Expression && r.Rate.Expression != "" && known {
		errf("rate.expression", 0, "%s does not use an expression; remove it or choose the expression law", law)
	}
}

func (v *validator) expression(i int, r *Reaction) {
	errf := func(col int, format string, args ...any) {
		v.add(Error, "reactions", i, r.Name, "rate.expression", col, format, args...)
	}
	if strings.TrimSpace(r.Rate.Expression) == "" {
		errf(0, "the expression law needs an expression, e.g. \"k1*A*B\"")
		return
	}
	vars, probs := analyseExpr(r.Rate.Expression)
	for _, p := range probs {
		errf(p.Col, "%s", p.Msg)
	}
	for _, name := range vars {
		if name == TimeName {
			continue
		}
		if j, ok := v.speciesIx[name]; ok {
			v.usedSp[j] = true
			continue
		}
		if j, ok := v.paramIx[name]; ok {
			v.usedPar[j] = true
			continue
		}
		col := identCol(r.Rate.Expression, name)
		if ref, ok := v.kinds[name]; ok {
			errf(col, "%q is a %s; an expression may use species, parameters and t", name, sectionWord[ref.section])
		} else {
			errf(col, "unknown name %q; declare it as a species or parameter, or fix the name", name)
		}
	}
}

// identCol returns the 1-based column (in characters) of the first whole
// identifier name in src, or 0.
func identCol(src, name string) int {
	rs := []rune(src)
	nr := []rune(name)
	for i := 0; i+len(nr) <= len(rs); i++ {
		if string(rs[i:i+len(nr)]) != name {
			continue
		}
		if i > 0 && (isNameChar(rs[i-1]) || rs[i-1] == '.') {
			continue
		}
		if e := i + len(nr); e < len(rs) && isNameChar(rs[e]) {
			continue
		}
		return i + 1
	}
	return 0
}

func (v *validator) simulation() {
	s := v.m.Simulation
	errf := func(field, format string, args ...any) {
		v.add(Error, "simulation", 0, "", field, 0, format, args...)
	}
	if s.TEnd < 0 || !finite(s.TEnd) {
		errf("t_end", "t_end = %v is not allowed; expected a positive end time", s.TEnd)
	}
	if s.RTol < 0 || s.RTol >= 1 || !finite(s.RTol) {
		errf("rtol", "rtol = %v is not allowed; expected a small positive number such as 1e-6", s.RTol)
	}
	if s.ATol < 0 || !finite(s.ATol) {
		errf("atol", "atol = %v is not allowed; expected a small positive number such as 1e-12", s.ATol)
	}
	if s.Output.Points < 0 || s.Output.Points == 1 {
		errf("output.points", "points = %d is not allowed; expected at least 2", s.Output.Points)
	}
	if s.Output.Spacing != "" && s.Output.Spacing != "linear" && s.Output.Spacing != "log" {
		errf("output.spacing", "unknown spacing %q; expected \"linear\" or \"log\"", s.Output.Spacing)
	}
	tEnd := s.WithDefaults().TEnd
	if s.Output.First < 0 || !finite(s.Output.First) || (tEnd > 0 && s.Output.First >= tEnd) {
		errf("output.first", "first = %v is not allowed; expected a positive time below t_end (%v)", s.Output.First, tEnd)
	}
	if s.Method != "" {
		ok := false
		for _, m := range Methods {
			ok = ok || s.Method == m
		}
		if !ok {
			errf("method", "unknown method %q; expected one of %s", s.Method, strings.Join(Methods, ", "))
		}
	}
}

// usableInExpressions reports whether name reads as a variable in a rate
// expression (function names such as exp do not).
func usableInExpressions(name string) bool {
	_, err := expr.Parse(name)
	return err == nil
}
