package network

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"kinetarium/network/expr"
	"kinetarium/network/units"
)

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

// Net is a checked model: every equation and expression parsed once and
// every name resolved. It is the one structure that Compile,
// stoichiometry, conservation laws, the editor's previews and other
// analyses read; nothing else parses an equation or an expression. Parts
// with errors are left empty (a reaction whose equation does not read has
// EqOK false), so a Net of a model with errors is still useful for
// previews.
type Net struct {
	Model       *Model
	Reactions   []CheckedReaction   // in model order
	Assignments []CheckedAssignment // in evaluation order: each after those it reads
	Events      []CheckedEvent      // the sound events, in model order
	Rates       []CheckedRate       // the sound rates, in model order
	// Problems is every error and warning found, sorted.
	Problems ErrorList

	speciesIx, paramIx, compIx, assignIx map[string]int
	// checkedAsg maps the name of each sound assignment to its place in
	// Assignments.
	checkedAsg map[string]int
}

// CheckedReaction is a reaction as Check read it.
type CheckedReaction struct {
	Index    int // in Model.Reactions
	Name     string
	Equation Equation // the parsed equation (zero when EqOK is false)
	EqOK     bool
	Law      Law  // nil when the law is unknown
	Rate     Rate // the reaction's rate fields
	// Expr is the rate as an expression over species, parameters,
	// assignments and t, or nil when the reaction has errors.
	Expr expr.Node

	uses []string // the law's fields this reaction needs
}

// CheckedAssignment is an assignment as Check read it.
type CheckedAssignment struct {
	Index int // in Model.Assignments
	Name  string
	Expr  expr.Node // nil when it has errors
	// Unit is the assignment's unit: the one it declares, else the one
	// its expression comes out in, written in the model's units ("uM",
	// "uM/s"; UnitInferred is then true); "" when neither is known (the
	// model declares no units, or a name in the expression has none).
	Unit         string
	UnitInferred bool
}

// SpeciesIndex returns the index of the named species in the model.
func (n *Net) SpeciesIndex(name string) (int, bool) { i, ok := n.speciesIx[name]; return i, ok }

// ParameterIndex returns the index of the named parameter in the model.
func (n *Net) ParameterIndex(name string) (int, bool) { i, ok := n.paramIx[name]; return i, ok }

// AssignmentIndex returns the index of the named assignment in the model.
func (n *Net) AssignmentIndex(name string) (int, bool) { i, ok := n.assignIx[name]; return i, ok }

type validator struct {
	m        *Model
	net      *Net
	problems ErrorList
	nerr     int // errors among problems
	// kinds maps each declared name to where it is declared.
	kinds     map[string]nameRef
	speciesIx map[string]int
	paramIx   map[string]int
	compIx    map[string]int
	assignIx  map[string]int
	usedSp    []bool
	usedPar   []bool
	usedAsg   []bool
	suggested int // didYouMean searches made (see suggest)
	// lawPar marks parameters used as a rate law's constant, whose sign
	// fieldValue checks; others are used only in expressions.
	lawPar []bool
}

type nameRef struct {
	section string
	index   int
}

func (v *validator) add(sev Severity, section string, index int, item, field string, col int, format string, args ...any) {
	if sev == Error {
		v.nerr++
	}
	v.problems.Add(Pos{Section: section, Index: index, Item: item, Field: field, Col: col}, sev, format, args...)
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Check reads m once: it parses every equation and expression, resolves
// every name, and returns the checked network with every problem found
// (errors first, then warnings, each in model order; with file positions
// when m was read from a file). It never panics. The Net is never nil.
func Check(m *Model) (*Net, ErrorList) {
	// The maps and lists are made at their final sizes: grown by
	// doubling, they would cost a large model several times their size.
	v := &validator{m: m, kinds: make(map[string]nameRef, len(m.Compartments)+len(m.Species)+len(m.Parameters)+len(m.Assignments)),
		speciesIx: make(map[string]int, len(m.Species)), paramIx: make(map[string]int, len(m.Parameters)),
		compIx: make(map[string]int, len(m.Compartments)), assignIx: make(map[string]int, len(m.Assignments)),
		usedSp: make([]bool, len(m.Species)), usedPar: make([]bool, len(m.Parameters)),
		usedAsg: make([]bool, len(m.Assignments)), lawPar: make([]bool, len(m.Parameters))}
	v.net = &Net{Model: m, Reactions: make([]CheckedReaction, 0, len(m.Reactions))}
	v.names()
	v.compartments()
	v.species()
	v.parameters()
	v.assignments()
	for i := range m.Reactions {
		v.reaction(i)
	}
	v.events()
	v.rates()
	v.simulation()
	v.displayCheck()
	v.units()
	for i, s := range m.Species {
		if !v.usedSp[i] && isName(s.Name) {
			v.add(Warning, "species", i, s.Name, "", 0, "this species takes part in no reaction and appears in no rate law")
		}
	}
	for i, p := range m.Parameters {
		if !v.usedPar[i] && isName(p.Name) {
			v.add(Warning, "parameters", i, p.Name, "", 0, "this parameter is used by no rate law or assignment")
		}
		if v.usedPar[i] && !v.lawPar[i] && p.Value < 0 {
			v.add(Warning, "parameters", i, p.Name, "value", 0, "the value %v is negative; expressions use it, where a negative value may be meant, but check the sign", p.Value)
		}
	}
	m.source.locate(v.problems)
	v.problems.RemoveMultiples()
	n := v.net
	n.Problems = v.problems
	n.speciesIx, n.paramIx, n.compIx, n.assignIx = v.speciesIx, v.paramIx, v.compIx, v.assignIx
	n.checkedAsg = make(map[string]int, len(n.Assignments))
	for k, a := range n.Assignments {
		n.checkedAsg[a.Name] = k
	}
	return n, v.problems
}

// Validate checks m and returns every problem found (errors first in model
// order, then warnings), or nil for a clean model. It is Check without the
// network.
func (m *Model) Validate() ErrorList {
	_, l := Check(m)
	return l
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
		v.add(Error, section, index, name, "name", 0, "the name %q is a function of rate expressions (exp, log, sin, ifle, …); choose another", name)
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
	for i, a := range v.m.Assignments {
		v.declare("assignments", i, a.Name, v.assignIx)
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
	withUnit := -1
	for i, c := range v.m.Compartments {
		if !(c.Volume > 0) || !finite(c.Volume) {
			v.add(Error, "compartments", i, c.Name, "volume", 0, "volume %v is not allowed; expected a positive number", c.Volume)
		}
		if strings.TrimSpace(c.Unit) == "" {
			continue
		}
		// A volume's unit changes the numbers the equations use, so a
		// unit that does not serve is an error, not advice.
		u, err := units.Parse(c.Unit)
		switch {
		case err != nil:
			col, msg := 0, err.Error()
			if e, ok := err.(*units.Error); ok {
				col, msg = e.Col, e.Msg
			}
			if !strings.Contains(msg, "expected") {
				msg += "; expected " + VolumeUnits
			}
			v.add(Error, "compartments", i, c.Name, "unit", col, "the volume's unit %q does not read: %s", c.Unit, msg)
		case !u.IsVolume():
			v.add(Error, "compartments", i, c.Name, "unit", 0, "%q is not a unit of volume (it is %s); expected %s", c.Unit, u.Kind(), VolumeUnits)
		case withUnit < 0:
			withUnit = i
		}
	}
	if withUnit < 0 {
		return
	}
	ref := v.m.Compartments[withUnit]
	for i, c := range v.m.Compartments {
		if strings.TrimSpace(c.Unit) == "" {
			v.add(Warning, "compartments", i, c.Name, "unit", 0, "the volume gives no unit, so it is read in %s, the unit of compartment %s; give its unit (%s) to be sure", strings.TrimSpace(ref.Unit), ref.Name, VolumeUnits)
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

func (v *validator) reaction(i int) {
	r := &v.m.Reactions[i]
	// The reaction is filled in in its place in the list, which Check
	// made long enough for every reaction.
	v.net.Reactions = append(v.net.Reactions, CheckedReaction{Index: i, Name: r.Name, Rate: r.Rate})
	cr := &v.net.Reactions[len(v.net.Reactions)-1]
	nerr := v.nerr
	errf := func(field string, col int, format string, args ...any) {
		v.add(Error, "reactions", i, r.Name, field, col, format, args...)
	}
	eq, err := ParseEquation(r.Equation)
	if err != nil {
		if se, ok := err.(Problem); ok {
			errf("equation", se.Col, "%s", se.Message)
		} else {
			errf("equation", 0, "%v", err)
		}
	} else {
		cr.Equation, cr.EqOK = eq, true
		for _, side := range [][]Term{eq.Reactants, eq.Products} {
			for _, t := range side {
				if j, ok := v.speciesIx[t.Species]; ok {
					v.usedSp[j] = true
					continue
				}
				if ref, ok := v.kinds[t.Species]; ok {
					errf("equation", t.Col, "%q is a %s, not a species; only species can react", t.Species, sectionWord[ref.section])
				} else {
					errf("equation", t.Col, "unknown species %q;%s declare it under species or fix the name", t.Species, v.suggest(t.Species, v.speciesIx))
				}
			}
		}
	}
	law, ok := LawNamed(r.Rate.Law)
	if !ok {
		errf("rate.law", 0, "%s", lawError(r.Rate.Law))
		return
	}
	cr.Law = law
	c := &LawCheck{Rate: r.Rate, report: func(field, format string, args ...any) { errf(field, 0, format, args...) },
		Compartment: func(name string) (string, bool) {
			j, ok := v.speciesIx[name]
			if !ok {
				return "", false
			}
			switch comp := v.m.Species[j].Compartment; {
			case len(v.m.Compartments) == 0:
				return "", true // all in the implicit compartment
			case comp != "":
				return comp, true
			}
			return v.m.Compartments[0].Name, true
		}}
	if cr.EqOK {
		c.Equation = &cr.Equation
	}
	// A law has a few fields: lists, not maps, for every reaction.
	cr.uses = law.Check(c)
	uses := func(k string) bool { return slices.Contains(cr.uses, k) }
	lawFields := law.Fields()
	isField := func(k string) bool {
		return slices.ContainsFunc(lawFields, func(f Field) bool { return f.Key == k })
	}
	var tree expr.Node
	for _, f := range lawFields {
		field := "rate." + f.Key
		if f.Kind == ExprField {
			if !uses(f.Key) {
				continue
			}
			tree = v.expression("reactions", i, r.Name, field, r.Rate.Expression, f)
			continue
		}
		val := r.Rate.Arg(f.Key)
		if !val.Set {
			if uses(f.Key) {
				if f.Missing != "" {
					errf(field, 0, "%s", f.Missing)
				} else {
					errf(field, 0, "%s is missing; give a parameter name or a number", f.Label)
				}
			}
			continue
		}
		if !uses(f.Key) {
			if f.Unused != "" {
				errf(field, 0, "%s", f.Unused)
			} else {
				errf(field, 0, "%s is not used by the %s law; remove it", f.Label, law.Title())
			}
			continue
		}
		v.fieldValue(i, r.Name, field, f, val)
	}
	var keys []string
	for _, a := range r.Rate.Args { // in the order of the keys
		if !isField(a.Key) {
			keys = append(keys, a.Key)
		}
	}
	for _, k := range keys {
		errf("rate."+k, 0, "%s is not used by the %s law; remove it", keyLabel(k), law.Title())
	}
	if !isField("expression") && r.Rate.Expression != "" {
		errf("rate.expression", 0, "%s does not use an expression; remove it or choose the expression law", law.Name())
	}
	if v.nerr > nerr {
		return
	}
	if tree == nil {
		tree = law.Rate(r.Rate, cr.Equation)
	}
	cr.Expr = tree
}

// keyLabel returns the form's label of a rate-law key, from the first law
// that reads it, or the key itself when no law does.
func keyLabel(key string) string {
	for _, l := range lawTable {
		for _, f := range l.Fields() {
			if f.Key == key {
				return f.Label
			}
		}
	}
	return key
}

// fieldValue checks the value of a parameter or species field: a
// species field names a species; a parameter field is a known parameter
// or a number, whose value (the parameter's, for a name) is zero or
// positive, and above zero when the field says so (Field.Positive).
func (v *validator) fieldValue(i int, item, field string, f Field, val Value) {
	errf := func(format string, args ...any) {
		v.add(Error, "reactions", i, item, field, 0, format, args...)
	}
	if f.Kind == SpeciesField {
		if val.Name == "" {
			errf("%s must name a species, not a number", f.Label)
		} else if j, ok := v.speciesIx[val.Name]; ok {
			v.usedSp[j] = true
		} else {
			errf("%s %q is not a species; expected the name of a species", f.Label, val.Name)
		}
		return
	}
	expected := "zero or a positive number"
	if f.Positive {
		expected = "a positive number"
	}
	bad := func(x float64) bool { return x < 0 || f.Positive && x == 0 }
	if val.Name == "" {
		if !finite(val.Num) || bad(val.Num) {
			errf("%s = %v is not allowed; expected %s", f.Label, val.Num, expected)
		}
		return
	}
	if j, ok := v.paramIx[val.Name]; ok {
		v.usedPar[j] = true
		v.lawPar[j] = true
		// A value that is not finite is the parameter's own error.
		if x := v.m.Parameters[j].Value; bad(x) {
			errf("%s uses parameter %q = %v, which is not allowed; expected %s (change the parameter's value or give a number here)", f.Label, val.Name, x, expected)
		}
		return
	}
	if ref, ok := v.kinds[val.Name]; ok {
		errf("%q is a %s; %s needs a parameter name or a number", val.Name, sectionWord[ref.section], f.Label)
	} else {
		errf("unknown parameter %q;%s declare it under parameters or give a number", val.Name, v.suggest(val.Name, v.paramIx))
	}
}

// expression parses and checks the expression src of an item's field and
// resolves its names (species, parameters, assignments and t). It returns
// the tree, or nil when src has errors.
func (v *validator) expression(section string, i int, item, field, src string, f Field) expr.Node {
	nerr := len(v.problems)
	errf := func(col int, format string, args ...any) {
		v.add(Error, section, i, item, field, col, format, args...)
	}
	if strings.TrimSpace(src) == "" {
		errf(0, "%s", f.Missing)
		return nil
	}
	n, err := expr.Parse(src)
	if err != nil {
		if e, ok := err.(*expr.Error); ok {
			errf(e.Col, "%s", e.Msg)
		} else {
			errf(0, "%v", err)
		}
		return nil
	}
	for _, e := range expr.Check(n) {
		errf(e.Col, "%s", e.Msg)
	}
	for _, name := range expr.Vars(n) {
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
		if j, ok := v.assignIx[name]; ok {
			v.usedAsg[j] = true
			continue
		}
		col := identCol(src, name)
		if ref, ok := v.kinds[name]; ok {
			errf(col, "%q is a %s; an expression may use species, parameters, assignments and t", name, sectionWord[ref.section])
		} else {
			errf(col, "unknown name %q;%s declare it as a species, parameter or assignment, or fix the name", name, v.suggest(name, v.speciesIx, v.paramIx, v.assignIx))
		}
	}
	if len(v.problems) > nerr {
		return nil
	}
	return n
}

// didYouMean returns ` did you mean "NAME"? Otherwise` for the declared
// name closest to name by edit distance, when it is at most 2 (and less
// than the length of name), or "".
// maxSuggestions bounds the "did you mean" searches of one Check: each
// compares the name with every declared one, so a large model whose names
// are all wrong would otherwise cost names × names comparisons.
const maxSuggestions = 100

// suggest is didYouMean for the first maxSuggestions unknown names.
func (v *validator) suggest(name string, declared ...map[string]int) string {
	if v.suggested >= maxSuggestions {
		return ""
	}
	v.suggested++
	return didYouMean(name, declared...)
}

func didYouMean(name string, declared ...map[string]int) string {
	best, bestD := "", 3
	for _, ix := range declared {
		for cand := range ix {
			d := editDistance(name, cand)
			if d < bestD || d == bestD && cand < best {
				best, bestD = cand, d
			}
		}
	}
	if best == "" || bestD >= len([]rune(name)) {
		return ""
	}
	return fmt.Sprintf(" did you mean %q? Otherwise", best)
}

// editDistance returns the Levenshtein distance between a and b: the
// fewest insertions, deletions and substitutions of characters that turn
// a into b.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
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
	if s.Output.Points < 0 || s.Output.Points == 1 || s.Output.Points > MaxPoints {
		errf("output.points", "points = %d is not allowed; expected at least 2 and at most %d", s.Output.Points, MaxPoints)
	} else if n := len(v.m.Species) + len(v.m.Assignments); n > 0 && s.WithDefaults().Output.Points > MaxOutputValues/n {
		errf("output.points", "points = %d for %d species and assignments is more output than this program holds (%d values); expected at most %d points",
			s.WithDefaults().Output.Points, n, MaxOutputValues, MaxOutputValues/n)
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
	if isName(name) {
		// A name reads as a variable unless it is a function (the
		// parser's only objection to one): a lookup, not a parse, for
		// each of a large model's names.
		return !expr.IsFunction(name)
	}
	_, err := expr.Parse(name)
	return err == nil
}

// assignments parses every assignment, and orders them so that each comes
// after the assignments it reads; a cycle is an error naming it.
func (v *validator) assignments() {
	as := v.m.Assignments
	trees := make([]expr.Node, len(as))
	f := Field{Key: "expression", Missing: "the assignment needs an expression, e.g. \"E + ES\""}
	for i, a := range as {
		trees[i] = v.expression("assignments", i, a.Name, "expression", a.Expression, f)
	}
	// Depth-first topological order; state 1 = on the path, 2 = done.
	state := make([]int, len(as))
	var path []int
	var visit func(i int) bool
	visit = func(i int) bool {
		switch state[i] {
		case 1:
			// A cycle: from i's place on the path back to i.
			k := len(path) - 1
			for path[k] != i {
				k--
			}
			names := []string{}
			for _, j := range path[k:] {
				names = append(names, as[j].Name)
			}
			names = append(names, as[i].Name)
			v.add(Error, "assignments", i, as[i].Name, "expression", 0,
				"the assignments form a cycle (%s); each must be computable from species, parameters and t without reading itself", strings.Join(names, " → "))
			return false
		case 2:
			return true
		}
		state[i] = 1
		path = append(path, i)
		ok := true
		if trees[i] != nil {
			for _, name := range expr.Vars(trees[i]) {
				if j, isAsg := v.assignIx[name]; isAsg && j < len(as) && as[j].Name == name {
					if !visit(j) {
						ok = false
						break
					}
				}
			}
		}
		path = path[:len(path)-1]
		state[i] = 2
		if ok {
			v.net.Assignments = append(v.net.Assignments, CheckedAssignment{Index: i, Name: as[i].Name, Expr: trees[i], Unit: strings.TrimSpace(as[i].Unit)})
		}
		return ok
	}
	for i := range as {
		if state[i] == 0 {
			visit(i)
		}
	}
}
