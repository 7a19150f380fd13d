package sbml

import (
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"

	"kinetarium/network"
)

// MaxSize is the largest document Read accepts, in bytes.
const MaxSize = 64 << 20

// maxDepth bounds the nesting of elements (and so every recursion over
// the tree).
const maxDepth = 400

// node is an XML element with where it starts in the document.
type node struct {
	Space, Name string // namespace URL and local name
	Attr        []xml.Attr
	Kids        []*node
	Text        string // character data directly inside, trimmed
	Line, Col   int
}

// attr returns the value of the attribute name without a namespace.
func (n *node) attr(name string) (string, bool) {
	for _, a := range n.Attr {
		if a.Name.Local == name && (a.Name.Space == "" || a.Name.Space == n.Space) {
			return a.Value, true
		}
	}
	return "", false
}

// kid returns the first child element called name, or nil.
func (n *node) kid(name string) *node {
	for _, k := range n.Kids {
		if k.Name == name {
			return k
		}
	}
	return nil
}

// kids returns the child elements called name of the child list called
// list ("listOfSpecies", "species").
func (n *node) kids(list, name string) []*node {
	l := n.kid(list)
	if l == nil {
		return nil
	}
	var out []*node
	for _, k := range l.Kids {
		if k.Name == name {
			out = append(out, k)
		}
	}
	return out
}

// parseXML reads a whole document into a tree of elements, each with its
// line and column. Processing instructions, comments and directives are
// skipped.
func parseXML(data []byte, file string) (*node, error) {
	lines := lineStarts(data)
	pos := func(off int64) (int, int) {
		i := sort.Search(len(lines), func(i int) bool { return lines[i] > int(off) }) - 1
		return i + 1, int(off) - lines[i] + 1
	}
	d := xml.NewDecoder(bytes.NewReader(data))
	d.Strict = true
	var root *node
	var stack []*node
	var text []*strings.Builder
	for {
		off := d.InputOffset()
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			var se *xml.SyntaxError
			if errors.As(err, &se) {
				line, col := pos(d.InputOffset())
				if se.Line > 0 && se.Line != line {
					line, col = se.Line, 0
				}
				return nil, problem(file, line, col, "", "the file is not well-formed XML: %s", se.Msg)
			}
			line, col := pos(d.InputOffset())
			return nil, problem(file, line, col, "", "the file is not well-formed XML: %v", err)
		}
		switch t := tok.(type) {
		case xml.StartElement:
			line, col := pos(off)
			if len(text) > 0 {
				text[len(text)-1].WriteByte(' ') // keeps "1 <sep/> 3" apart
			}
			if len(stack) >= maxDepth {
				return nil, problem(file, line, col, "", "elements are nested more than %d deep; expected an SBML document", maxDepth)
			}
			n := &node{Space: t.Name.Space, Name: t.Name.Local, Attr: t.Attr, Line: line, Col: col}
			if len(stack) == 0 {
				if root != nil {
					return nil, problem(file, line, col, "", "a second top-level element; an XML document has one")
				}
				root = n
			} else {
				p := stack[len(stack)-1]
				p.Kids = append(p.Kids, n)
			}
			stack = append(stack, n)
			text = append(text, &strings.Builder{})
		case xml.EndElement:
			n := stack[len(stack)-1]
			n.Text = strings.TrimSpace(text[len(text)-1].String())
			stack = stack[:len(stack)-1]
			text = text[:len(text)-1]
		case xml.CharData:
			if len(text) > 0 && text[len(text)-1].Len() < 1<<20 {
				text[len(text)-1].Write(t)
			}
		}
	}
	if root == nil {
		return nil, problem(file, 1, 1, "", "the file holds no XML element; expected an SBML document <sbml …>")
	}
	return root, nil
}

// problem returns an error at a place in the file; what names the
// element ("species \"S1\"").
func problem(file string, line, col int, what, format string, args ...any) network.Problem {
	return network.Problem{Pos: network.Pos{File: file, Line: line, Column: col, Field: what}, Severity: network.Error,
		Message: fmt.Sprintf(format, args...)}
}

// lineStarts returns the byte offset at which each line starts.
func lineStarts(data []byte) []int {
	starts := []int{0}
	for i, c := range data {
		if c == '\n' {
			starts = append(starts, i+1)
		}
	}
	return starts
}
