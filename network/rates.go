package network

import (
	"fmt"

	"kinetarium/network/expr"
)

// RateRule gives the time derivative of a species or a parameter as an
// expression: a slow drift, an input, a quantity that is not made by
// reactions. A species with a rate is changed by it alone (and by events):
// when reactions list it, it must be fixed, so that they read it only. Its
// rate is in concentration per time; a parameter's is in its own unit per
// time.
type RateRule struct {
	Name       string // the species or parameter
	Expression string // its time derivative
	Note       string
}

// CheckedRate is a rate as Check read it.
type CheckedRate struct {
	Index     int // in Model.Rates
	Name      string
	Parameter bool      // the target is a parameter, else a species
	Target    int       // index of the species or parameter
	Expr      expr.Node // nil when it has errors
}

// rates checks the model's rates: each names a species or parameter once,
// a species that reactions list is fixed, and the expression reads.
func (v *validator) rates() {
	seen := map[string]int{}
	inEquation := map[string]string{}
	for _, r := range v.net.Reactions {
		if !r.EqOK {
			continue
		}
		for _, side := range [][]Term{r.Equation.Reactants, r.Equation.Products} {
			for _, t := range side {
				if _, ok := inEquation[t.Species]; !ok {
					inEquation[t.Species] = r.Name
				}
			}
		}
	}
	f := Field{Missing: "the rate needs an expression, the time derivative of its species or parameter, e.g. \"k_in - k_out*X\""}
	for i, r := range v.m.Rates {
		errf := func(field string, format string, args ...any) {
			v.add(Error, "rates", i, r.Name, field, 0, format, args...)
		}
		cr := CheckedRate{Index: i, Name: r.Name}
		ok := true
		if j, dup := seen[r.Name]; dup {
			errf("name", "%q already has a rate (rate %d); give each species or parameter one rate", r.Name, j+1)
			ok = false
		} else {
			seen[r.Name] = i
		}
		if j, isSp := v.speciesIx[r.Name]; isSp {
			cr.Target = j
			v.usedSp[j] = true
			if rx, listed := inEquation[r.Name]; listed && !v.m.Species[j].Fixed {
				errf("name", "the species %q has a rate and takes part in reaction %q; mark it fixed, so that reactions read it and only its rate changes it", r.Name, rx)
				ok = false
			}
		} else if j, isPar := v.paramIx[r.Name]; isPar {
			cr.Target, cr.Parameter = j, true
			v.usedPar[j] = true
		} else if _, isAsg := v.assignIx[r.Name]; isAsg {
			errf("name", "%q is an assignment, computed from other quantities; a rate needs a species or a parameter", r.Name)
			ok = false
		} else if ref, known := v.kinds[r.Name]; known {
			errf("name", "%q is a %s; a rate needs a species or a parameter", r.Name, sectionWord[ref.section])
			ok = false
		} else if r.Name == "" {
			errf("name", "the rate needs the name of the species or parameter it changes")
			ok = false
		} else {
			errf("name", "unknown species or parameter %q;%s declare it or fix the name", r.Name, v.suggest(r.Name, v.speciesIx, v.paramIx))
			ok = false
		}
		cr.Expr = v.expression("rates", i, r.Name, "expression", r.Expression, f)
		if ok && cr.Expr != nil {
			v.net.Rates = append(v.net.Rates, cr)
		}
	}
}

// stateParameters returns the parameters that change during a run, and so
// are carried in the state after the species: those with a rate and those
// that an event sets, in model order.
func (net *Net) stateParameters() []int {
	mark := make([]bool, len(net.Model.Parameters))
	for _, r := range net.Rates {
		if r.Parameter {
			mark[r.Target] = true
		}
	}
	for _, e := range net.Events {
		for _, ch := range e.Set {
			if ch.Parameter {
				mark[ch.Index] = true
			}
		}
	}
	var out []int
	for i, m := range mark {
		if m {
			out = append(out, i)
		}
	}
	return out
}

// readsStateParameter reports whether a rate law's fields name a
// parameter carried in the state; such a reaction is compiled through its
// expression, so that its Jacobian follows the parameter.
func (b *builder) readsStateParameter(cr *CheckedReaction) bool {
	for _, a := range cr.Rate.Args {
		v := a.Value
		if v.Name == "" {
			continue
		}
		if p, ok := b.s.parIx[v.Name]; ok && b.s.parState[p] >= 0 {
			return true
		}
	}
	return false
}

// compileRates adds each rate as a reaction of its own that changes its
// target alone, at the rate given, in the target's units (its
// contribution's scale is 1).
func (b *builder) compileRates() error {
	s := b.s
	for _, cr := range b.net.Rates {
		target := cr.Target
		if cr.Parameter {
			target = s.parState[cr.Target]
		}
		r := rxn{k: val{p: -1}, kr: val{p: -1}, vmax: val{p: -1}, kcat: val{p: -1}, km: val{p: -1}, comp: s.spComp[target]}
		r.d0, r.p0 = len(s.depSp), len(s.depPar)
		if err := b.compileExpression(&r, &CheckedReaction{Name: cr.Name, Expr: cr.Expr}); err != nil {
			return fmt.Errorf("rate of %q: %w", cr.Name, err)
		}
		r.d1, r.p1 = len(s.depSp), len(s.depPar)
		r.c0 = len(s.cSp)
		s.cSp = append(s.cSp, target)
		s.cNet = append(s.cNet, 1)
		r.c1 = len(s.cSp)
		s.rx = append(s.rx, r)
	}
	return nil
}

// StateParameters returns the names of the parameters carried in the
// state after the species (see Species), in state order. The caller must
// not modify the slice.
func (s *System) StateParameters() []string { return s.names[s.nSpecies:] }

// NonNegativeComponents reports, for each state variable, whether it is a
// species, which the solver may keep non-negative; parameters carried in
// the state may take any sign. It returns nil when every state variable
// is a species. The caller must not modify the slice.
func (s *System) NonNegativeComponents() []bool { return s.nonNeg }
