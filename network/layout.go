package network

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strconv"
)

// Layout is where the diagram of a model draws its items, as the user
// arranged them. It is optional (a model without one is laid out
// automatically) and the solver never reads it. Coordinates are in points
// (1/72 inch), x to the right and y downwards, with no fixed origin.
type Layout struct {
	// Style is the diagram's drawing style: "" (Kinetarium's plain style)
	// or "sbgn" (the process-description glyphs of the Systems Biology
	// Graphical Notation).
	Style string
	// Places are the positions of the items placed, in the order the file
	// lists them (species first, then reactions, sources and sinks).
	Places []Place
}

// Place is the position of one item of the diagram.
type Place struct {
	Kind PlaceKind
	Name string // the species' or reaction's name
	X, Y float64
}

// PlaceKind says what a Place positions.
type PlaceKind int

// Kinds of places: a species, a reaction, and the empty-set marks of a
// reaction that makes something from nothing (its source) or turns
// something into nothing (its sink).
const (
	PlaceSpecies PlaceKind = iota
	PlaceReaction
	PlaceSource
	PlaceSink
)

// placeKeys are the keys of the layout section for each PlaceKind.
var placeKeys = [...]string{"species", "reactions", "sources", "sinks"}

// LayoutStyles lists the accepted values of Layout.Style.
var LayoutStyles = []string{"", "sbgn"}

// Find returns the position of the item of kind k named name.
func (l *Layout) Find(k PlaceKind, name string) (x, y float64, ok bool) {
	for _, p := range l.Places {
		if p.Kind == k && p.Name == name {
			return p.X, p.Y, true
		}
	}
	return 0, 0, false
}

// Put sets the position of the item of kind k named name, adding it when
// it has none.
func (l *Layout) Put(k PlaceKind, name string, x, y float64) {
	for i := range l.Places {
		if p := &l.Places[i]; p.Kind == k && p.Name == name {
			p.X, p.Y = x, y
			return
		}
	}
	l.Places = append(l.Places, Place{Kind: k, Name: name, X: x, Y: y})
}

// Rename gives the places of kind k named old the name new.
func (l *Layout) Rename(k PlaceKind, old, new string) {
	for i := range l.Places {
		if p := &l.Places[i]; p.Kind == k && p.Name == old {
			p.Name = new
		}
	}
}

// Empty reports whether the layout holds nothing.
func (l *Layout) Empty() bool { return l.Style == "" && len(l.Places) == 0 }

// clone returns a copy of l that shares nothing with it.
func (l Layout) clone() Layout {
	l.Places = append([]Place(nil), l.Places...)
	return l
}

// layout decodes the optional "layout" section:
//
//	"layout": {"style": "sbgn", "species": {"E": [120, 40]}, "reactions": {"bind": [80, 90]},
//	           "sources": {"make": [80, 10]}, "sinks": {"decay": [80, 170]}}
func (d *decoder) layout(top *jnode, m *Model) {
	v, ok := top.get("layout")
	if !ok {
		return
	}
	o := d.object(v, "layout", "style", placeKeys[0], placeKeys[1], placeKeys[2], placeKeys[3])
	if o == nil {
		return
	}
	if s, ok := o.get("style"); ok {
		m.Layout.Style = d.str(s, "layout.style")
		if s.kind == '"' && !contains(LayoutStyles, m.Layout.Style) {
			d.fail(s, "layout.style", "unknown style %q; expected \"sbgn\", or leave it out for the plain style", m.Layout.Style)
		}
	}
	for k, key := range placeKeys {
		x, ok := o.get(key)
		if !ok {
			continue
		}
		path := "layout." + key
		if x.kind != '{' {
			d.fail(x, path, "expected an object {\"NAME\": [x, y], ...}, found %s", x.what())
			continue
		}
		seen := map[string]bool{}
		for j, name := range x.keys {
			p := x.vals[j]
			where := path + "." + name
			if seen[name] {
				d.failAt(x.kOffs[j], path, "the name %q appears twice; keep one", name)
				continue
			}
			seen[name] = true
			if p.kind != '[' || len(p.items) != 2 {
				d.fail(p, where, "expected a position [x, y] (two numbers), found %s", describeList(p))
				continue
			}
			px, okx := d.num(p.items[0], where+"[0]")
			py, oky := d.num(p.items[1], where+"[1]")
			if okx && oky {
				m.Layout.Places = append(m.Layout.Places, Place{Kind: PlaceKind(k), Name: name, X: px, Y: py})
			}
		}
	}
}

// describeList names what n is, counting a list's items.
func describeList(n *jnode) string {
	if n.kind == '[' {
		return fmt.Sprintf("a list of %d", len(n.items))
	}
	return n.what()
}

// fileLayout is the layout section as Write writes it: the style, then
// the places of each kind in their order.
type fileLayout Layout

// layoutForFile returns the section to write, or nil for an empty layout.
func layoutForFile(l Layout) *fileLayout {
	if l.Empty() {
		return nil
	}
	f := fileLayout(l)
	return &f
}

// MarshalJSON writes the style and one object per kind of place.
func (l *fileLayout) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteString("{")
	sep := func() {
		if b.Len() > 1 {
			b.WriteString(",")
		}
	}
	if l.Style != "" {
		s, _ := json.Marshal(l.Style)
		b.WriteString(`"style":`)
		b.Write(s)
	}
	for k, key := range placeKeys {
		first := true
		for _, p := range l.Places {
			if int(p.Kind) != k {
				continue
			}
			if math.IsNaN(p.X) || math.IsInf(p.X, 0) || math.IsNaN(p.Y) || math.IsInf(p.Y, 0) {
				return nil, fmt.Errorf("layout: the position of %q is not a finite number", p.Name)
			}
			if first {
				sep()
				b.WriteString(`"` + key + `":{`)
				first = false
			} else {
				b.WriteString(",")
			}
			name, _ := json.Marshal(p.Name)
			b.Write(name)
			b.WriteString(":[")
			b.WriteString(strconv.FormatFloat(p.X, 'g', -1, 64))
			b.WriteString(",")
			b.WriteString(strconv.FormatFloat(p.Y, 'g', -1, 64))
			b.WriteString("]")
		}
		if !first {
			b.WriteString("}")
		}
	}
	b.WriteString("}")
	return b.Bytes(), nil
}
