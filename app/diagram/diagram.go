// Package diagram turns a model into its diagram (plotting/diagram):
// species, reactions with their reactants, products and modifiers, the
// empty set of syntheses and degradations, compartments, the problems of
// each item, and the positions saved in the model's layout section. It
// also replays a run on the diagram: species coloured by their
// concentration on a log scale and arrows as thick as the reaction's flux
// at a chosen time. It has no widgets; the window and the headless
// command share it.
package diagram

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot/vg"

	"kinetarium/network"
	"kinetarium/plotting"
	pd "kinetarium/plotting/diagram"
)

// Build returns the diagram of the checked network net, its nodes at the
// positions the model's layout section gives (pinned) and the others not
// yet placed: call Arrange (or plotting/diagram.Layout) next. Nodes are
// the species in model order, then the reactions in model order, then the
// empty-set marks in reaction order.
func Build(net *network.Net) *pd.Diagram {
	m := net.Model
	d := &pd.Diagram{}
	regionOf := map[string]int{}
	for i, c := range m.Compartments {
		d.Regions = append(d.Regions, pd.Region{Name: c.Name})
		regionOf[c.Name] = i
	}
	spRegion := func(s network.Species) int {
		if len(m.Compartments) == 0 {
			return -1
		}
		if r, ok := regionOf[s.Compartment]; ok {
			return r
		}
		return 0
	}
	marks := problemMarks(net.Problems)
	node := map[string]int{}
	for i, s := range m.Species {
		if _, dup := node[s.Name]; dup {
			continue
		}
		node[s.Name] = len(d.Nodes)
		info := "initial concentration " + strconv.FormatFloat(s.Initial, 'g', -1, 64)
		if s.Compartment != "" {
			info += ", in " + s.Compartment
		}
		if s.Fixed {
			info += ", held constant"
		}
		if s.Note != "" {
			info += "\n" + s.Note
		}
		d.Nodes = append(d.Nodes, pd.Node{Kind: pd.Species, Name: s.Name, Region: spRegion(s), Fixed: s.Fixed, Present: s.Initial > 0,
			Mark: marks[key{"species", i}], Info: info})
	}
	regionOfSpecies := func(name string) (int, bool) {
		if j, ok := node[name]; ok {
			return d.Nodes[j].Region, true
		}
		return -1, false
	}
	type pending struct {
		reaction int
		source   bool
	}
	var empties []pending
	rxNode := make([]int, len(net.Reactions))
	for k, cr := range net.Reactions {
		r := m.Reactions[cr.Index]
		region := -1
		if len(m.Compartments) > 0 {
			region = 0
		}
		if cr.EqOK {
			terms := append(append([]network.Term(nil), cr.Equation.Reactants...), cr.Equation.Products...)
			for _, t := range terms {
				if rg, ok := regionOfSpecies(t.Species); ok {
					region = rg
					break
				}
			}
		}
		rxNode[k] = len(d.Nodes)
		info := r.Equation
		if cr.Law != nil {
			var eq *network.Equation
			if cr.EqOK {
				eq = &cr.Equation
			}
			info += "\nrate = " + cr.Law.Formula(cr.Rate, eq)
		}
		d.Nodes = append(d.Nodes, pd.Node{Kind: pd.Reaction, Name: r.Name, Region: region,
			Reversible: cr.EqOK && cr.Equation.Reversible, Mark: marks[key{"reactions", cr.Index}], Info: info})
		if !cr.EqOK {
			continue
		}
		if len(cr.Equation.Reactants) == 0 {
			empties = append(empties, pending{k, true})
		}
		if len(cr.Equation.Products) == 0 {
			empties = append(empties, pending{k, false})
		}
	}
	for k, cr := range net.Reactions {
		if !cr.EqOK {
			continue
		}
		rn := rxNode[k]
		both := map[string]int{}
		for _, t := range cr.Equation.Reactants {
			both[t.Species] |= 1
		}
		for _, t := range cr.Equation.Products {
			both[t.Species] |= 2
		}
		mods := map[string]network.Modifier{}
		for _, mod := range net.Modifiers(cr.Index) {
			mods[mod.Species] = mod
		}
		for _, t := range cr.Equation.Reactants {
			if j, ok := node[t.Species]; ok {
				if _, isMod := mods[t.Species]; !isMod {
					d.Edges = append(d.Edges, pd.Edge{From: j, To: rn, Role: pd.Consumes, Coef: t.Coef})
				}
			}
		}
		for _, t := range cr.Equation.Products {
			if j, ok := node[t.Species]; ok {
				if _, isMod := mods[t.Species]; !isMod {
					d.Edges = append(d.Edges, pd.Edge{From: rn, To: j, Role: pd.Produces, Coef: t.Coef})
				}
			}
		}
		enzyme := map[string]bool{}
		if cr.Law != nil {
			for _, f := range cr.Law.Fields() {
				if v := cr.Rate.Arg(f.Key); f.Kind == network.SpeciesField && v.Name != "" {
					enzyme[v.Name] = true
				}
			}
		}
		for _, mod := range net.Modifiers(cr.Index) {
			j, ok := node[mod.Species]
			if !ok {
				continue
			}
			role := RoleOf(mod, enzyme[mod.Species] || both[mod.Species] == 3)
			d.Edges = append(d.Edges, pd.Edge{From: j, To: rn, Role: role})
		}
	}
	for _, e := range empties {
		rn := rxNode[e.reaction]
		name := d.Nodes[rn].Name
		kind := pd.Sink
		if e.source {
			kind = pd.Source
		}
		j := len(d.Nodes)
		d.Nodes = append(d.Nodes, pd.Node{Kind: kind, Name: name, Region: d.Nodes[rn].Region,
			Info: map[bool]string{true: "made from nothing (a source) by " + name, false: "turned into nothing (removed) by " + name}[e.source]})
		if e.source {
			d.Edges = append(d.Edges, pd.Edge{From: j, To: rn, Role: pd.Consumes})
		} else {
			d.Edges = append(d.Edges, pd.Edge{From: rn, To: j, Role: pd.Produces})
		}
	}
	// Positions from the layout section.
	for i := range d.Nodes {
		n := &d.Nodes[i]
		if x, y, ok := m.Layout.Find(placeKind(n.Kind), n.Name); ok {
			n.X, n.Y, n.Pinned = x, y, true
		}
	}
	return d
}

// RoleOf returns the drawing role of a modifier: Catalyses for an
// activating enzyme or catalyst (a species field of the law, or written
// on both sides of the equation), else by its effect.
func RoleOf(m network.Modifier, catalyst bool) pd.Role {
	switch {
	case m.Effect == network.Inhibits:
		return pd.Inhibits
	case catalyst && m.Effect != network.Inhibits:
		return pd.Catalyses
	case m.Effect == network.Activates:
		return pd.Activates
	}
	return pd.Modulates
}

// placeKind maps a node kind to the layout section's.
func placeKind(k pd.Kind) network.PlaceKind {
	switch k {
	case pd.Reaction:
		return network.PlaceReaction
	case pd.Source:
		return network.PlaceSource
	case pd.Sink:
		return network.PlaceSink
	}
	return network.PlaceSpecies
}

type key struct {
	section string
	index   int
}

// problemMarks returns the worst problem of each species and reaction.
func problemMarks(l network.ErrorList) map[key]pd.Mark {
	out := map[key]pd.Mark{}
	for _, p := range l {
		if p.Section != "species" && p.Section != "reactions" {
			continue
		}
		k := key{p.Section, p.Index}
		mk := pd.Warning
		if p.Severity == network.Error {
			mk = pd.Error
		}
		if mk > out[k] {
			out[k] = mk
		}
	}
	return out
}

// Problems returns the problems of the item node i stands for, one per
// line, for the pointer's information.
func Problems(net *network.Net, d *pd.Diagram, i int) string {
	n := d.Nodes[i]
	section := "species"
	if n.Kind != pd.Species {
		section = "reactions"
	}
	idx := RowOf(net.Model, d, i)
	var lines []string
	for _, p := range net.Problems {
		if p.Section == section && p.Index == idx {
			lines = append(lines, p.Severity.String()+": "+p.Message)
		}
	}
	return strings.Join(lines, "\n")
}

// RowOf returns the row in the model's table (species or reactions) of
// the item node i stands for (an empty set stands for its reaction), or
// -1.
func RowOf(m *network.Model, d *pd.Diagram, i int) int {
	if i < 0 || i >= len(d.Nodes) {
		return -1
	}
	n := d.Nodes[i]
	if n.Kind == pd.Species {
		for j, s := range m.Species {
			if s.Name == n.Name {
				return j
			}
		}
		return -1
	}
	for j, r := range m.Reactions {
		if r.Name == n.Name {
			return j
		}
	}
	return -1
}

// NodeOf returns the node of row i of section ("species" or "reactions"),
// or -1.
func NodeOf(m *network.Model, d *pd.Diagram, section string, i int) int {
	switch section {
	case "species":
		if i >= 0 && i < len(m.Species) {
			return d.Find(pd.Species, m.Species[i].Name)
		}
	case "reactions":
		if i >= 0 && i < len(m.Reactions) {
			return d.Find(pd.Reaction, m.Reactions[i].Name)
		}
	}
	return -1
}

// Arrange lays d out with the default settings and returns what was done.
func Arrange(d *pd.Diagram) pd.Stats { return pd.Layout(d, pd.Settings{}) }

// Store writes the position of every node of d into l, keeping its
// style.
func Store(l *network.Layout, d *pd.Diagram) {
	for _, n := range d.Nodes {
		l.Put(placeKind(n.Kind), n.Name, round2(n.X), round2(n.Y))
	}
}

// Move returns the edit that puts node i at (x, y) in a model's layout,
// with every other node where it is now, so that nothing else moves when
// the layout is read back.
func Move(d *pd.Diagram, i int, x, y float64) func(*network.Model) {
	return func(m *network.Model) {
		Store(&m.Layout, d)
		m.Layout.Put(placeKind(d.Nodes[i].Kind), d.Nodes[i].Name, round2(x), round2(y))
	}
}

// round2 rounds to a hundredth of a point, so that files stay short.
func round2(x float64) float64 {
	v, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'f', 2, 64), 64)
	return v
}

// Describe returns the text shown for node i under the pointer: what it
// is, its information and its problems.
func Describe(net *network.Net, d *pd.Diagram, i int) string {
	n := d.Nodes[i]
	head := ""
	switch n.Kind {
	case pd.Species:
		head = "species " + n.Name
	case pd.Reaction:
		head = "reaction " + n.Name
	default:
		head = "∅"
	}
	s := head
	if n.Info != "" {
		s += ": " + n.Info
	}
	if p := Problems(net, d, i); p != "" && n.Kind != pd.Source && n.Kind != pd.Sink {
		s += "\n" + p
	}
	return s
}

// Summary says in words what the layout did, for a status line.
func Summary(st pd.Stats, d *pd.Diagram) string {
	ns, nr := 0, 0
	for _, n := range d.Nodes {
		switch n.Kind {
		case pd.Species:
			ns++
		case pd.Reaction:
			nr++
		}
	}
	how := "laid out " + st.Method.String()
	if st.Method == pd.Auto {
		how = "placed as saved"
		if st.Placed > 0 {
			how = fmt.Sprintf("placed as saved, %d new", st.Placed)
		}
	}
	return fmt.Sprintf("%d species, %d reactions; %s in %.1f ms", ns, nr, how, float64(st.Elapsed.Microseconds())/1000)
}

// NaturalSize returns the size, in points, at which d is drawn at its
// natural scale with room for a title of the given number of lines: at
// least 8 cm × 6 cm, at most 2 m a side.
func NaturalSize(d *pd.Diagram, titleLines int) (w, h vg.Length) {
	b := d.Bounds()
	wp := math.Min(math.Max(b.Max.X-b.Min.X+24, 227), 5669)
	hp := math.Min(math.Max(b.Max.Y-b.Min.Y+24+float64(titleLines)*16, 170), 5669)
	return vg.Points(wp), vg.Points(hp)
}

// Save writes d drawn with o to path (.png, .svg or .pdf) at its natural
// size, with the metadata meta (see plotting.Save).
func Save(path string, d *pd.Diagram, o pd.Options, meta *plotting.Metadata) error {
	lines := 0
	if o.Title != "" {
		lines++
	}
	if o.Caption != "" {
		lines += 1 + strings.Count(o.Caption, "\n")
	}
	o.View = pd.View{}
	w, h := NaturalSize(d, lines)
	for _, line := range strings.Split(o.Title+"\n"+o.Caption, "\n") {
		w = max(w, vg.Points(6.5*float64(len([]rune(line)))+24)) // the title font is 12 pt
	}
	return plotting.Save(pd.Plot(d, o), path, w, h, 0, meta)
}
