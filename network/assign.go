package network

import (
	"fmt"

	"kinetarium/network/expr"
)

// inline returns n with every assignment replaced by its expression, so
// that a rate reads only species, parameters and t and its derivatives
// follow the chain rule through the assignments.
func (b *builder) inline(n expr.Node) expr.Node {
	if b.inlined == nil {
		b.inlined = map[string]expr.Node{}
		// Net.Assignments is in evaluation order: each after those it
		// reads, so each is inlined from already inlined trees.
		for _, a := range b.net.Assignments {
			b.inlined[a.Name] = expr.Substitute(a.Expr, b.lookup)
		}
	}
	return expr.Substitute(n, b.lookup)
}

func (b *builder) lookup(name string) (expr.Node, bool) {
	t, ok := b.inlined[name]
	return t, ok
}

// compileAssignments compiles every assignment, in model order, for
// output.
func (b *builder) compileAssignments() error {
	s := b.s
	m := b.net.Model
	byName := map[string]*CheckedAssignment{}
	for i := range b.net.Assignments {
		byName[b.net.Assignments[i].Name] = &b.net.Assignments[i]
	}
	for _, a := range m.Assignments {
		ca := byName[a.Name]
		if ca == nil || ca.Expr == nil {
			return fmt.Errorf("assignment %q: not checked", a.Name)
		}
		p, err := b.compile(b.inline(ca.Expr))
		if err != nil {
			return fmt.Errorf("assignment %q: %w", a.Name, err)
		}
		s.asgNames = append(s.asgNames, a.Name)
		s.asgUnits = append(s.asgUnits, ca.Unit)
		s.asgProgs = append(s.asgProgs, p)
	}
	if len(s.asgProgs) > 0 {
		s.hasExpr = true
	}
	return nil
}

// Assignments returns the names of the model's assigned quantities, in
// model order. The caller must not modify the slice.
func (s *System) Assignments() []string { return s.asgNames }

// AssignmentUnits returns the unit of each assignment, in the order of
// Assignments: the unit it declares, else the one its expression comes
// out in (CheckedAssignment.Unit); "" where none is known. The caller
// must not modify the slice.
func (s *System) AssignmentUnits() []string { return s.asgUnits }

// Assigned writes the value of every assignment at (t, y) into out, in the
// order of Assignments. It allocates nothing.
func (s *System) Assigned(t float64, y, out []float64) {
	s.load(t, y)
	for i, p := range s.asgProgs {
		out[i] = p.Eval(s.vars)
	}
}
