package editor

import (
	"strings"
	"unicode/utf8"

	"kinetarium/network"
)

// Kind names a kind of named item in a model.
type Kind int

// The kinds of named items.
const (
	KindSpecies Kind = iota
	KindParameter
	KindCompartment
	KindReaction
	KindAssignment
)

// String returns the plain word for k ("species", "parameter", …).
func (k Kind) String() string {
	switch k {
	case KindSpecies:
		return "species"
	case KindParameter:
		return "parameter"
	case KindCompartment:
		return "compartment"
	case KindReaction:
		return "reaction"
	case KindAssignment:
		return "assignment"
	}
	return "item"
}

func isNameStart(c byte) bool {
	return c == '_' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z'
}

func isNameChar(c byte) bool { return isNameStart(c) || c >= '0' && c <= '9' }

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

// ReplaceName returns s with every whole-name occurrence of old replaced by
// new, and the number of replacements. A name is a run
// [A-Za-z_][A-Za-z0-9_]* that does not continue a longer name; numbers are
// skipped as a whole, exponent included, so "2e5" never matches "e5", while
// the coefficient in an equation term such as "2A" is split from its species.
// The rules match both equations and rate expressions.
func ReplaceName(s, old, new string) (string, int) {
	if old == "" || !strings.Contains(s, old) {
		return s, 0
	}
	var b strings.Builder
	n := 0
	scanTokens(s, func(tok string, name bool) {
		if name && tok == old {
			b.WriteString(new)
			n++
			return
		}
		b.WriteString(tok)
	})
	return b.String(), n
}

// Names returns the distinct names used in s, in order of first use, by the
// rules of ReplaceName.
func Names(s string) []string {
	var out []string
	seen := map[string]bool{}
	scanTokens(s, func(tok string, name bool) {
		if name && !seen[tok] {
			seen[tok] = true
			out = append(out, tok)
		}
	})
	return out
}

// scanTokens splits s into names, numbers (exponent included) and single
// other characters, in order, and calls f with each; name tells the names
// apart. The pieces put together give s back.
func scanTokens(s string, f func(tok string, name bool)) {
	i := 0
	for i < len(s) {
		c := s[i]
		j := i
		switch {
		case isDigit(c) || c == '.' && i+1 < len(s) && isDigit(s[i+1]):
			for j < len(s) && (isDigit(s[j]) || s[j] == '.') {
				j++
			}
			if j < len(s) && (s[j] == 'e' || s[j] == 'E') {
				k := j + 1
				if k < len(s) && (s[k] == '+' || s[k] == '-') {
					k++
				}
				if k < len(s) && isDigit(s[k]) {
					for k < len(s) && isDigit(s[k]) {
						k++
					}
					j = k
				}
			}
			f(s[i:j], false)
		case isNameStart(c):
			for j < len(s) && isNameChar(s[j]) {
				j++
			}
			f(s[i:j], true)
		default:
			_, size := utf8.DecodeRuneInString(s[i:])
			j += size
			f(s[i:j], false)
		}
		i = j
	}
}

// renameInModel renames the item old of kind k to new in m, and, when
// everywhere is true, every use of it: equations, rate expressions, rate
// fields naming it, the model's rates, and species' compartments. It returns the number of
// uses updated.
func renameInModel(m *network.Model, k Kind, old, new string, everywhere bool) int {
	switch k {
	case KindSpecies:
		for i := range m.Species {
			if m.Species[i].Name == old {
				m.Species[i].Name = new
			}
		}
		m.Layout.Rename(network.PlaceSpecies, old, new)
	case KindParameter:
		for i := range m.Parameters {
			if m.Parameters[i].Name == old {
				m.Parameters[i].Name = new
			}
		}
	case KindCompartment:
		for i := range m.Compartments {
			if m.Compartments[i].Name == old {
				m.Compartments[i].Name = new
			}
		}
	case KindAssignment:
		for i := range m.Assignments {
			if m.Assignments[i].Name == old {
				m.Assignments[i].Name = new
			}
		}
	case KindReaction:
		for i := range m.Reactions {
			if m.Reactions[i].Name == old {
				m.Reactions[i].Name = new
			}
		}
		for _, k := range []network.PlaceKind{network.PlaceReaction, network.PlaceSource, network.PlaceSink} {
			m.Layout.Rename(k, old, new)
		}
		return 0
	}
	if !everywhere {
		return 0
	}
	uses := 0
	if k == KindCompartment {
		for i := range m.Species {
			if m.Species[i].Compartment == old {
				m.Species[i].Compartment = new
				uses++
			}
		}
		return uses
	}
	for i := range m.Assignments {
		var n int
		m.Assignments[i].Expression, n = ReplaceName(m.Assignments[i].Expression, old, new)
		uses += n
	}
	for i := range m.Rates {
		r := &m.Rates[i]
		if r.Name == old && (k == KindSpecies || k == KindParameter) {
			r.Name = new
			uses++
		}
		var n int
		r.Expression, n = ReplaceName(r.Expression, old, new)
		uses += n
	}
	for i := range m.Reactions {
		r := &m.Reactions[i]
		if k == KindSpecies {
			var n int
			r.Equation, n = ReplaceName(r.Equation, old, new)
			uses += n
		}
		var n int
		r.Rate.Expression, n = ReplaceName(r.Rate.Expression, old, new)
		uses += n
		for _, a := range r.Rate.Args {
			if v := a.Value; v.Set && v.Name == old {
				r.Rate = r.Rate.With(a.Key, network.Named(new))
				uses++
			}
		}
	}
	return uses
}
