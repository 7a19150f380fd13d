package network

import (
	"fmt"
	"sort"
	"strings"
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

// Pos says where a problem is: an item of a model section, its field and a
// column in the field's text, and, when the model was read from a file, the
// line and column in that file. It is the one position type of the model's
// readers, checks and parsers.
type Pos struct {
	// Section is "compartments", "species", "parameters", "assignments",
	// "reactions" or "simulation"; "" for the file as a whole.
	Section string
	Index   int    // index of the item in its section (0-based)
	Item    string // name of the item, if it has one
	Field   string // e.g. "equation", "rate.k", "initial", "t_end"; "" for the whole item
	Col     int    // 1-based column in the field's text (an equation or expression); 0 if none

	File         string // the file the model came from, if any
	Line, Column int    // 1-based place in File; 0 when unknown
}

var sectionWord = map[string]string{
	"compartments": "compartment", "species": "species", "parameters": "parameter",
	"assignments": "assignment", "reactions": "reaction", "events": "event", "rates": "rate of", "simulation": "simulation",
}

var sectionRank = map[string]int{
	"": 0, "compartments": 1, "species": 2, "parameters": 3, "assignments": 4, "reactions": 5, "events": 6, "rates": 7, "simulation": 8,
}

// String describes the place, e.g. `model.json:12:7: reaction "bind",
// equation, column 9`. Parts that are unknown are left out.
func (p Pos) String() string {
	var b strings.Builder
	if p.File != "" || p.Line > 0 {
		b.WriteString(p.File)
		if p.Line > 0 {
			if p.File != "" {
				b.WriteString(":")
			}
			fmt.Fprintf(&b, "%d", p.Line)
			if p.Column > 0 {
				fmt.Fprintf(&b, ":%d", p.Column)
			}
		}
	}
	if p.Section == "" && p.Field != "" {
		sep(&b, ": ")
		b.WriteString(p.Field)
		return b.String()
	}
	if p.Section != "" {
		sep(&b, ": ")
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
	}
	if p.Col > 0 {
		sep(&b, ", ")
		fmt.Fprintf(&b, "column %d", p.Col)
	}
	return b.String()
}

func sep(b *strings.Builder, s string) {
	if b.Len() > 0 {
		b.WriteString(s)
	}
}

// Problem is one mistake or doubtful spot in a model: where it is, how bad
// it is, and a plain sentence saying what is wrong and what is expected.
type Problem struct {
	Pos
	Severity Severity
	Message  string
}

// String describes the problem with its place, e.g.
// `reaction "bind", equation, column 9: unknown species "Q"; declare it under species or fix the name`.
func (p Problem) String() string {
	var b strings.Builder
	if p.Severity == Warning {
		b.WriteString("warning: ")
	}
	if pos := p.Pos.String(); pos != "" {
		b.WriteString(pos)
		b.WriteString(": ")
	}
	b.WriteString(p.Message)
	return b.String()
}

// Error returns String, so that a Problem can travel as an error.
func (p Problem) Error() string { return p.String() }

// ErrorList is a list of problems, in the manner of go/scanner's: the
// readers, checks and parsers of this package collect every problem they
// find in one, and Err turns it into an error when it holds an error.
type ErrorList []Problem

// Add appends a problem at pos.
func (l *ErrorList) Add(pos Pos, sev Severity, format string, args ...any) {
	*l = append(*l, Problem{Pos: pos, Severity: sev, Message: fmt.Sprintf(format, args...)})
}

// Len, Less and Swap sort the list: errors before warnings, then by place
// in the file when known, then in model order (section, item, field,
// column).
func (l ErrorList) Len() int      { return len(l) }
func (l ErrorList) Swap(i, j int) { l[i], l[j] = l[j], l[i] }
func (l ErrorList) Less(i, j int) bool {
	a, b := &l[i], &l[j]
	if a.Severity != b.Severity {
		return a.Severity < b.Severity
	}
	if a.File != b.File {
		return a.File < b.File
	}
	if sa, sb := sectionRank[a.Section], sectionRank[b.Section]; sa != sb {
		return sa < sb
	}
	if a.Index != b.Index {
		return a.Index < b.Index
	}
	if a.Line != b.Line && a.Line > 0 && b.Line > 0 {
		return a.Line < b.Line
	}
	return false
}

// Sort sorts the list stably (problems at the same place keep the order
// they were found in).
func (l ErrorList) Sort() { sort.Stable(l) }

// RemoveMultiples sorts the list and removes problems that repeat another
// at the same place with the same message.
func (l *ErrorList) RemoveMultiples() {
	l.Sort()
	out := (*l)[:0]
	seen := map[Problem]bool{}
	for _, p := range *l {
		if seen[p] {
			continue
		}
		seen[p] = true
		out = append(out, p)
	}
	*l = out
}

// Errors returns the problems of severity Error.
func (l ErrorList) Errors() ErrorList { return l.filter(Error) }

// Warnings returns the problems of severity Warning.
func (l ErrorList) Warnings() ErrorList { return l.filter(Warning) }

func (l ErrorList) filter(s Severity) ErrorList {
	var out ErrorList
	for _, p := range l {
		if p.Severity == s {
			out = append(out, p)
		}
	}
	return out
}

// HasErrors reports whether any problem is an Error.
func (l ErrorList) HasErrors() bool {
	for _, p := range l {
		if p.Severity == Error {
			return true
		}
	}
	return false
}

// Err returns an error listing the errors of l (warnings left out), or nil
// when there are none. errors.As finds the ErrorList in it.
func (l ErrorList) Err() error {
	errs := l.Errors()
	if len(errs) == 0 {
		return nil
	}
	return errs
}

// Error describes the one problem, or lists the problems one a line
// after "3 errors:".
func (l ErrorList) Error() string {
	switch len(l) {
	case 0:
		return "no problems"
	case 1:
		return l[0].String()
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%d errors:", len(l))
	for _, p := range l {
		b.WriteString("\n  ")
		b.WriteString(p.String())
	}
	return b.String()
}

// HasErrors reports whether any problem is an Error.
func HasErrors(ps []Problem) bool { return ErrorList(ps).HasErrors() }
