package network

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"kinetarium/internal/atomicfile"
)

// Read decodes a model file (JSON, format "kinetarium.model/1") from r.
// Source names the input in error messages (a file name, say). Decoding is
// strict, and reports every problem it finds at once as an ErrorList, each
// with its line and column and its place in the model, e.g.
// `m.json:3:20: reactions[2].rate: unknown key "kk"` (indices count from
// 0). A JSON syntax error stops reading at the first one. Missing
// simulation settings get their defaults. Read does not check the model's
// content (see Check), but remembers where each item was in the file so
// that Check's problems name their lines too.
//
// A file larger than MaxFileSize is refused; a UTF-8 byte-order mark is
// accepted; a UTF-16 file is named as such.
func Read(r io.Reader, source string) (*Model, error) {
	data, err := atomicfile.ReadLimited(r, MaxFileSize)
	if err != nil {
		return nil, fmt.Errorf("reading %s: %w", source, err)
	}
	if data, err = atomicfile.Text(data); err != nil {
		return nil, fmt.Errorf("%s: %w", source, err)
	}
	m, errs := decodeModel(data, source)
	if err := errs.Err(); err != nil {
		return nil, err
	}
	return m, nil
}

// Load reads the model file at path.
func Load(path string) (*Model, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("loading model: %w", err)
	}
	defer f.Close()
	return Read(f, path)
}

// lineCol converts a byte offset into a 1-based line and column.
func lineCol(text string, off int64) (line, col int) {
	off = max(0, min(off, int64(len(text))))
	line = 1 + strings.Count(text[:off], "\n")
	last := strings.LastIndexByte(text[:off], '\n')
	col = int(off) - last // last = -1 gives off+1
	return line, col
}

// sourceMap knows where the items of a model were in its file. It keeps
// the file's text alone (the model's strings are slices of it, so it
// costs nothing more) and no table of places: most reads of large models
// have no problem to locate, and a table of every field would be larger
// than the model. To locate problems it reads the text again, keeping
// the places of just the fields the problems name.
type sourceMap struct {
	file string
	text string
}

// sourceKey names a model item's field ("" for the whole item).
type sourceKey struct {
	section string
	index   int
	field   string
}

// locate fills in the file, line and column of each problem whose item or
// field the file holds. A nil map locates nothing.
func (sm *sourceMap) locate(l ErrorList) {
	if sm == nil || len(l) == 0 {
		return
	}
	// Read the text again (it was read once without a problem, and reads
	// the same), marking the fields the problems name; -1 is a field not
	// found.
	root, err := parseModelJSON([]byte(sm.text), sm.text)
	if err != nil {
		return
	}
	want := make(map[sourceKey]int64, 2*len(l))
	for _, e := range l {
		p := e.Pos
		want[sourceKey{p.Section, p.Index, p.Field}] = -1
		want[sourceKey{p.Section, p.Index, ""}] = -1
	}
	d := &decoder{text: sm.text, file: sm.file, want: want}
	d.decode(root)
	for i := range l {
		p := &l[i].Pos
		off := want[sourceKey{p.Section, p.Index, p.Field}]
		exact := off >= 0
		if !exact {
			off = want[sourceKey{p.Section, p.Index, ""}]
		}
		if off < 0 {
			continue
		}
		p.File = sm.file
		p.Line, p.Column = lineCol(sm.text, off)
		if exact && p.Col > 0 && p.Field != "" && p.Field != "name" {
			p.Column += p.Col // the text starts after its opening quote
		}
	}
}

// decoder turns the JSON tree of a model file into a Model, collecting
// every problem.
type decoder struct {
	text string
	file string
	errs ErrorList
	// want, when not nil, holds the fields whose places are asked for;
	// mark records each one's place there (a later mark of the same
	// field wins).
	want map[sourceKey]int64
}

// fail reports a problem at the place of n (or of the whole file when n is
// nil), path being the JSON path ("reactions[2].rate").
func (d *decoder) fail(n *jnode, path, format string, args ...any) {
	d.failAt(n.off, path, format, args...)
}

func (d *decoder) failAt(off int64, path, format string, args ...any) {
	line, col := lineCol(d.text, off)
	if path == "" {
		path = "the top level"
	}
	d.errs.Add(Pos{File: d.file, Line: line, Column: col, Field: path}, Error, format, args...)
}

// mark remembers where a model item's field, prefix+key, starts, when
// its place is asked for.
func (d *decoder) mark(section string, index int, prefix, key string, n *jnode) {
	if d.want == nil || n == nil {
		return
	}
	k := sourceKey{section, index, prefix + key}
	if _, ok := d.want[k]; ok {
		d.want[k] = n.off
	}
}

func decodeModel(data []byte, file string) (*Model, ErrorList) {
	text := string(data) // the model's strings are slices of it
	d := &decoder{text: text, file: file}
	root, err := parseModelJSON(data, text)
	if err != nil {
		var se *syntaxError
		if errors.As(err, &se) {
			d.failAt(se.off, "", "%s", se.msg)
		} else {
			d.failAt(0, "", "%v", err)
		}
		d.errs[0].Field = ""
		return nil, d.errs
	}
	m := d.decode(root)
	if m == nil {
		return nil, d.errs
	}
	m.source = &sourceMap{file: file, text: text}
	return m, nil
}

// decode turns the tree of a model file into a Model; it returns nil with
// d.errs holding the problems when there are any.
func (d *decoder) decode(root *jnode) *Model {
	top := d.object(root, "", "format", "title", "note", "units", "compartments", "species", "parameters", "assignments", "reactions", "events", "rates", "simulation", "layout")
	if top == nil {
		return nil
	}
	m := &Model{}
	raw, ok := top.get("format")
	if !ok {
		d.fail(root, "", "missing key \"format\"; a model file starts with \"format\": %q", Format)
		return nil
	}
	format := d.str(raw, "format")
	if format != Format && raw.kind == '"' {
		if strings.HasPrefix(format, "kinetarium.model/") {
			d.fail(raw, "format", "format %q is a version this program does not read; expected %q", format, Format)
		} else {
			d.fail(raw, "format", "format %q is not a model file format; expected %q", format, Format)
		}
		return nil
	}
	m.Title = d.optStr(top, "title", "")
	m.Note = d.optStr(top, "note", "")
	if v, ok := top.get("units"); ok {
		if o := d.object(v, "units", "time", "amount", "molecules_per_amount"); o != nil {
			m.Units.Time = d.optStr(o, "time", "units")
			m.Units.Amount = d.optStr(o, "amount", "units")
			m.Units.MoleculesPerAmount = d.optNum(o, "molecules_per_amount", "units")
		}
	}
	m.Compartments = sized[Compartment](top, "compartments")
	d.items(top, "compartments", []string{"name", "volume", "unit", "note"}, func(i int, o *jnode, path string) {
		m.Compartments = append(m.Compartments, Compartment{
			Name: d.optStr(o, "name", path), Volume: d.optNum(o, "volume", path), Unit: d.optStr(o, "unit", path), Note: d.optStr(o, "note", path)})
	})
	m.Species = sized[Species](top, "species")
	d.items(top, "species", []string{"name", "initial", "compartment", "fixed", "note"}, func(i int, o *jnode, path string) {
		s := Species{Name: d.optStr(o, "name", path), Initial: d.optNum(o, "initial", path),
			Compartment: d.optStr(o, "compartment", path), Note: d.optStr(o, "note", path)}
		if x, ok := o.get("fixed"); ok {
			s.Fixed = d.boolean(x, path+".fixed")
		}
		m.Species = append(m.Species, s)
	})
	m.Parameters = sized[Parameter](top, "parameters")
	d.items(top, "parameters", []string{"name", "value", "unit", "note"}, func(i int, o *jnode, path string) {
		m.Parameters = append(m.Parameters, Parameter{Name: d.optStr(o, "name", path), Value: d.reqNum(o, "value", path),
			Unit: d.optStr(o, "unit", path), Note: d.optStr(o, "note", path)})
	})
	m.Assignments = sized[Assignment](top, "assignments")
	d.items(top, "assignments", []string{"name", "expression", "unit", "note"}, func(i int, o *jnode, path string) {
		m.Assignments = append(m.Assignments, Assignment{Name: d.optStr(o, "name", path), Expression: d.optStr(o, "expression", path),
			Unit: d.optStr(o, "unit", path), Note: d.optStr(o, "note", path)})
	})
	keys := rateKeys()
	m.Reactions = sized[Reaction](top, "reactions")
	d.items(top, "reactions", []string{"name", "equation", "rate", "note"}, func(i int, o *jnode, path string) {
		r := Reaction{Name: d.optStr(o, "name", path), Equation: d.optStr(o, "equation", path), Note: d.optStr(o, "note", path)}
		if x, ok := o.get("rate"); ok {
			rp := path + ".rate"
			if ro := d.object(x, rp, keys...); ro != nil {
				r.Rate.Law = d.optStr(ro, "law", rp)
				// The reader owns this rate: its fields go straight into
				// one list (Rate.With would copy it for each).
				var args []Arg
				for j, k := range ro.keys {
					if k == "law" || k == "expression" {
						d.mark("reactions", i, "rate.", k, ro.vals[j])
						continue
					}
					if v, ok := d.value(ro.vals[j], rp+"."+k); ok && v.Set {
						if args == nil {
							args = make([]Arg, 0, len(ro.keys)-1)
						}
						args = insertArg(args, k, v)
					}
					d.mark("reactions", i, "rate.", k, ro.vals[j])
				}
				r.Rate.Args = args
				r.Rate.Expression = d.optStr(ro, "expression", rp)
				d.mark("reactions", i, "rate", "", x)
			}
		}
		m.Reactions = append(m.Reactions, r)
	})
	m.Events = sized[Event](top, "events")
	d.items(top, "events", []string{"name", "note", "at", "every", "count", "when", "once", "from", "to", "add", "set", "infuse"},
		func(i int, o *jnode, path string) {
			e := Event{Name: d.optStr(o, "name", path), Note: d.optStr(o, "note", path), When: d.optStr(o, "when", path)}
			for _, f := range []struct {
				key string
				v   *Value
			}{{"at", &e.At}, {"every", &e.Every}, {"from", &e.From}, {"to", &e.To}} {
				if x, ok := o.get(f.key); ok {
					*f.v, _ = d.value(x, path+"."+f.key)
				}
			}
			if x, ok := o.get("count"); ok {
				if f, ok := d.num(x, path+".count"); ok {
					if f != math.Trunc(f) || f < 1 || f > MaxCount {
						d.fail(x, path+".count", "%v is not a whole number from 1 to %d; expected the number of occurrences", f, MaxCount)
					} else {
						e.Count = int(f)
					}
				}
			}
			if x, ok := o.get("once"); ok {
				e.Once = d.boolean(x, path+".once")
			}
			for _, a := range []struct {
				key  string
				list *[]Change
			}{{"add", &e.Add}, {"set", &e.Set}, {"infuse", &e.Infuse}} {
				key, list := a.key, a.list
				x, ok := o.get(key)
				if !ok {
					continue
				}
				if x.kind != '{' {
					d.fail(x, path+"."+key, "expected an object {\"SPECIES\": value, ...}, found %s", x.what())
					continue
				}
				for j, target := range x.keys {
					d.mark("events", i, key+".", target, x.vals[j])
					v := x.vals[j]
					switch v.kind {
					case '"':
						*list = append(*list, Change{Target: target, Value: v.str})
					case '0':
						if _, ok := d.num(v, path+"."+key+"."+target); ok {
							*list = append(*list, Change{Target: target, Value: v.num().String()})
						}
					default:
						d.fail(v, path+"."+key+"."+target, "expected a number, a parameter name or an expression in quotes, found %s", v.what())
					}
				}
			}
			m.Events = append(m.Events, e)
		})
	m.Rates = sized[RateRule](top, "rates")
	d.items(top, "rates", []string{"name", "expression", "note"}, func(i int, o *jnode, path string) {
		m.Rates = append(m.Rates, RateRule{Name: d.optStr(o, "name", path), Expression: d.optStr(o, "expression", path),
			Note: d.optStr(o, "note", path)})
	})
	if v, ok := top.get("simulation"); ok {
		d.mark("simulation", 0, "", "", v)
		if o := d.object(v, "simulation", "t_end", "output", "rtol", "atol", "method", "non_negative", "display"); o != nil {
			s := &m.Simulation
			s.TEnd = d.optNum(o, "t_end", "simulation")
			s.RTol = d.optNum(o, "rtol", "simulation")
			s.ATol = d.optNum(o, "atol", "simulation")
			d.notZero(o, "simulation", "t_end", "a positive end time", DefaultTEnd)
			d.notZero(o, "simulation", "rtol", "a relative tolerance between 0 and 1 such as 1e-6", DefaultRTol)
			d.notZero(o, "simulation", "atol", "a positive absolute tolerance such as 1e-12", DefaultATol)
			s.Method = d.optStr(o, "method", "simulation")
			for j, k := range o.keys {
				d.mark("simulation", 0, "", k, o.vals[j])
			}
			if x, ok := o.get("non_negative"); ok {
				b := d.boolean(x, "simulation.non_negative")
				s.NonNegative = &b
			}
			if x, ok := o.get("output"); ok {
				if oo := d.object(x, "simulation.output", "points", "spacing", "first"); oo != nil {
					for j, k := range oo.keys {
						d.mark("simulation", 0, "output.", k, oo.vals[j])
					}
					if p, ok := oo.get("points"); ok {
						f, ok := d.num(p, "simulation.output.points")
						if ok && (f != math.Trunc(f) || math.Abs(f) > MaxPoints) {
							d.fail(p, "simulation.output.points", "%v is not a whole number up to %d; expected a count such as 200", f, MaxPoints)
						} else {
							s.Output.Points = int(f)
						}
					}
					s.Output.Spacing = d.optStr(oo, "spacing", "simulation.output")
					s.Output.First = d.optNum(oo, "first", "simulation.output")
					d.notZero(oo, "simulation.output", "points", "at least 2 output times", DefaultPoints)
					d.notZero(oo, "simulation.output", "first", "the first positive time of the log grid", "t_end·1e-6")
				}
			}
			if x, ok := o.get("display"); ok {
				d.display(x, &s.Display)
			}
		}
	}
	d.layout(top, m)
	if d.errs.HasErrors() {
		d.errs.Sort()
		return nil
	}
	m.Simulation = m.Simulation.WithDefaults()
	return m
}

// display decodes the display units of the simulation settings, each of
// which must read as a unit of its kind (the model's units are compared
// with them by Check).
func (d *decoder) display(x *jnode, out *Display) {
	const path = "simulation.display"
	oo := d.object(x, path, "time", "concentration")
	if oo == nil {
		return
	}
	for j, k := range oo.keys {
		d.mark("simulation", 0, "display.", k, oo.vals[j])
	}
	out.Time = d.optStr(oo, "time", path)
	out.Concentration = d.optStr(oo, "concentration", path)
	for _, p := range displayIssues(*out, Units{}, false) {
		n, _ := oo.get(strings.TrimPrefix(p.field, "display."))
		off := n.off
		if p.col > 0 {
			off += int64(p.col) // past the opening quote
		}
		d.failAt(off, "simulation."+p.field, "%s", p.msg)
	}
}

// sized returns an empty slice with room for the items of the list under
// key of top, or nil when there are none.
func sized[T any](top *jnode, key string) []T {
	if v, ok := top.get(key); ok && v.kind == '[' && v.length() > 0 {
		return make([]T, 0, v.length())
	}
	return nil
}

// items decodes the list under key of top, calling item for each object in
// it, and remembers where each item and each of its fields is.
func (d *decoder) items(top *jnode, key string, allowed []string, item func(i int, o *jnode, path string)) {
	v, ok := top.get(key)
	if !ok {
		return
	}
	if v.kind != '[' {
		d.fail(v, key, "expected a list [...], found %s", v.what())
		return
	}
	eachItem(v, d.text, func(i int, x *jnode) {
		path := key + "[" + strconv.Itoa(i) + "]"
		d.mark(key, i, "", "", x)
		o := d.object(x, path, allowed...)
		if o == nil {
			o = &jnode{kind: '{'}
		}
		for j, k := range o.keys {
			d.mark(key, i, "", k, o.vals[j])
		}
		item(i, o, path)
	})
}

// object checks that n is an object with no repeated and no unknown keys,
// reporting each; it returns nil when n is not an object.
func (d *decoder) object(n *jnode, path string, allowed ...string) *jnode {
	where := path
	if where == "" {
		where = "the top level"
	}
	if n.kind != '{' {
		d.fail(n, path, "expected an object {...}, found %s", n.what())
		return nil
	}
	var seen map[string]bool // for long objects; short ones are searched
	if len(n.keys) > 16 {
		seen = make(map[string]bool, len(n.keys))
	}
	for i, k := range n.keys {
		twice := false
		if seen != nil {
			twice = seen[k]
			seen[k] = true
		} else {
			twice = slices.Contains(n.keys[:i], k)
		}
		if twice {
			d.failAt(n.kOffs[i], path, "the key %q appears twice; keep one", k)
			continue
		}
		known := false
		for _, a := range allowed {
			known = known || k == a
		}
		if !known {
			d.failAt(n.kOffs[i], path, "unknown key %q; expected one of %s", k, strings.Join(allowed, ", "))
		}
	}
	return n
}

func (d *decoder) str(n *jnode, path string) string {
	if n.kind != '"' {
		d.fail(n, path, "expected text in quotes, found %s", n.what())
		return "" // a number keeps its digits in str
	}
	return n.str
}

func (d *decoder) num(n *jnode, path string) (float64, bool) {
	if n.kind != '0' {
		d.fail(n, path, "expected a number, found %s", n.what())
		return 0, false
	}
	f, err := n.num().Float64()
	if err != nil || math.IsInf(f, 0) {
		d.fail(n, path, "%s is out of the range of numbers this program handles", n.num())
		return 0, false
	}
	return f, true
}

func (d *decoder) boolean(n *jnode, path string) bool {
	if n.kind != 'b' {
		d.fail(n, path, "expected true or false, found %s", n.what())
	}
	return n.b
}

func (d *decoder) optStr(o *jnode, key, path string) string {
	if v, ok := o.get(key); ok {
		return d.str(v, join(path, key))
	}
	return ""
}

func (d *decoder) optNum(o *jnode, key, path string) float64 {
	if v, ok := o.get(key); ok {
		f, _ := d.num(v, join(path, key))
		return f
	}
	return 0
}

// reqNum reads the number at key, reporting a missing key: a parameter
// without a value would otherwise run as 0 without a word.
func (d *decoder) reqNum(o *jnode, key, path string) float64 {
	if _, ok := o.get(key); !ok {
		d.fail(o, path, "has no %q: expected a number", key)
		return 0
	}
	return d.optNum(o, key, path)
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

// notZero reports a key of o that is present with the value 0: in the
// model a zero setting means "the default", so a 0 written in the file
// would silently become the default instead of what it says.
func (d *decoder) notZero(o *jnode, path, key, expected string, def any) {
	n, ok := o.get(key)
	if !ok || n.kind != '0' {
		return
	}
	if f, err := n.num().Float64(); err == nil && f == 0 {
		d.fail(n, join(path, key), "0 cannot be honoured; expected %s (leave the key out for the default, %v)", expected, def)
	}
}

// value decodes a rate field: a name (text) or a number.
func (d *decoder) value(n *jnode, path string) (Value, bool) {
	switch n.kind {
	case '"':
		if strings.TrimSpace(n.str) == "" {
			// An empty name would read as the number 0 (issue 17: a
			// rate constant of "" ran as 0 without a word).
			d.fail(n, path, "empty; expected a parameter name in quotes or a number (leave the key out where the law does not need it)")
			return Value{}, false
		}
		return Value{Name: n.str, Set: true}, true
	case '0':
		f, ok := d.num(n, path)
		return Value{Num: f, Set: true}, ok
	}
	d.fail(n, path, "expected a parameter name in quotes or a number, found %s", n.what())
	return Value{}, false
}

// The file form of each part of a model, in the key order Write uses.
type (
	fileUnits struct {
		Time               string  `json:"time,omitempty"`
		Amount             string  `json:"amount,omitempty"`
		MoleculesPerAmount float64 `json:"molecules_per_amount,omitempty"`
	}
	fileCompartment struct {
		Name   string  `json:"name"`
		Volume float64 `json:"volume"`
		Unit   string  `json:"unit,omitempty"`
		Note   string  `json:"note,omitempty"`
	}
	fileSpecies struct {
		Name        string  `json:"name"`
		Initial     float64 `json:"initial"`
		Compartment string  `json:"compartment,omitempty"`
		Fixed       bool    `json:"fixed,omitempty"`
		Note        string  `json:"note,omitempty"`
	}
	fileParameter struct {
		Name  string  `json:"name"`
		Value float64 `json:"value"`
		Unit  string  `json:"unit,omitempty"`
		Note  string  `json:"note,omitempty"`
	}
	fileReaction struct {
		Name     string   `json:"name"`
		Equation string   `json:"equation"`
		Rate     fileRate `json:"rate"`
		Note     string   `json:"note,omitempty"`
	}
	fileAssignment struct {
		Name       string `json:"name"`
		Expression string `json:"expression"`
		Unit       string `json:"unit,omitempty"`
		Note       string `json:"note,omitempty"`
	}
	fileRate     Rate
	fileRateRule struct {
		Name       string `json:"name"`
		Expression string `json:"expression"`
		Note       string `json:"note,omitempty"`
	}
	fileEvent struct {
		Name   string      `json:"name"`
		Note   string      `json:"note,omitempty"`
		At     *fileValue  `json:"at,omitempty"`
		Every  *fileValue  `json:"every,omitempty"`
		Count  int         `json:"count,omitempty"`
		When   string      `json:"when,omitempty"`
		Once   bool        `json:"once,omitempty"`
		From   *fileValue  `json:"from,omitempty"`
		To     *fileValue  `json:"to,omitempty"`
		Add    fileChanges `json:"add,omitempty"`
		Set    fileChanges `json:"set,omitempty"`
		Infuse fileChanges `json:"infuse,omitempty"`
	}
	fileChanges    []Change
	fileValue      Value
	fileSimulation struct {
		TEnd        float64      `json:"t_end,omitempty"`
		Output      *fileOutput  `json:"output,omitempty"`
		RTol        float64      `json:"rtol,omitempty"`
		ATol        float64      `json:"atol,omitempty"`
		Method      string       `json:"method,omitempty"`
		NonNegative *bool        `json:"non_negative,omitempty"`
		Display     *fileDisplay `json:"display,omitempty"`
	}
	fileDisplay struct {
		Time          string `json:"time,omitempty"`
		Concentration string `json:"concentration,omitempty"`
	}
	fileOutput struct {
		Points  int     `json:"points,omitempty"`
		Spacing string  `json:"spacing,omitempty"`
		First   float64 `json:"first,omitempty"`
	}
)

// MarshalJSON writes a name as a string and a number as a number.
func (v *fileValue) MarshalJSON() ([]byte, error) {
	if v.Name != "" {
		return json.Marshal(v.Name)
	}
	return json.Marshal(v.Num)
}

// MarshalJSON writes "law" first, then the law's fields in the order the
// law lists them, then any other fields in key order, then "expression".
func (r fileRate) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteString("{")
	put := func(k string, v any) error {
		x, err := json.Marshal(v)
		if err != nil {
			return fmt.Errorf("rate field %s: %w", k, err)
		}
		if b.Len() > 1 {
			b.WriteString(",")
		}
		kb, _ := json.Marshal(k)
		b.Write(kb)
		b.WriteString(":")
		b.Write(x)
		return nil
	}
	if err := put("law", r.Law); err != nil {
		return nil, err
	}
	var order []string
	if law, ok := LawNamed(r.Law); ok {
		for _, f := range law.Fields() {
			if Rate(r).Arg(f.Key).Set {
				order = append(order, f.Key)
			}
		}
	}
	var rest []string
	for _, a := range r.Args { // in the order of the keys
		if !contains(order, a.Key) {
			rest = append(rest, a.Key)
		}
	}
	for _, k := range append(order, rest...) {
		v := fileValue(Rate(r).Arg(k))
		if err := put(k, &v); err != nil {
			return nil, err
		}
	}
	if r.Expression != "" {
		if err := put("expression", r.Expression); err != nil {
			return nil, err
		}
	}
	b.WriteString("}")
	return b.Bytes(), nil
}

// MarshalJSON writes the changes as an object in their order, each value
// as a number when it reads as one, else as text.
func (cs fileChanges) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteString("{")
	for i, c := range cs {
		if i > 0 {
			b.WriteString(",")
		}
		k, _ := json.Marshal(c.Target)
		b.Write(k)
		b.WriteString(":")
		if f, err := strconv.ParseFloat(c.Value, 64); err == nil && !math.IsInf(f, 0) && !math.IsNaN(f) && strconv.FormatFloat(f, 'g', -1, 64) == c.Value {
			b.WriteString(c.Value)
		} else {
			v, _ := json.Marshal(c.Value)
			b.Write(v)
		}
	}
	b.WriteString("}")
	return b.Bytes(), nil
}

func optValue(v Value) *fileValue {
	if !v.Set {
		return nil
	}
	f := fileValue(v)
	return &f
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// Write encodes m as a model file: keys in a fixed order, two-space indent,
// empty optional fields left out. Writing the same model twice gives the
// same bytes. Numbers that JSON cannot hold (NaN, ±Inf) are an error; w
// may then have received the part before the number (Save writes
// nothing). The items of the lists are encoded one at a time, so that
// writing a large model does not hold its whole text.
func (m *Model) Write(w io.Writer) error {
	if err := m.write(w); err != nil {
		return fmt.Errorf("writing model: %w", err)
	}
	return nil
}

func (m *Model) write(w io.Writer) error {
	sw := &sectionWriter{w: w}
	sw.enc = json.NewEncoder(&sw.buf)
	sw.enc.SetEscapeHTML(false)
	sw.raw("{")
	sw.field("format", Format, false)
	sw.field("title", m.Title, m.Title == "")
	sw.field("note", m.Note, m.Note == "")
	sw.field("units", &fileUnits{Time: m.Units.Time, Amount: m.Units.Amount, MoleculesPerAmount: m.Units.MoleculesPerAmount},
		m.Units == (Units{}))
	list(sw, "compartments", m.Compartments, true, func(c Compartment) any { return fileCompartment(c) })
	list(sw, "species", m.Species, false, func(s Species) any { return fileSpecies(s) })
	list(sw, "parameters", m.Parameters, true, func(p Parameter) any { return fileParameter(p) })
	list(sw, "assignments", m.Assignments, true, func(a Assignment) any { return fileAssignment(a) })
	list(sw, "reactions", m.Reactions, false, func(r Reaction) any {
		return &fileReaction{Name: r.Name, Equation: r.Equation, Note: r.Note, Rate: fileRate(r.Rate)}
	})
	list(sw, "events", m.Events, true, func(e Event) any {
		return &fileEvent{Name: e.Name, Note: e.Note, At: optValue(e.At), Every: optValue(e.Every),
			Count: e.Count, When: e.When, Once: e.Once, From: optValue(e.From), To: optValue(e.To),
			Add: e.Add, Set: e.Set, Infuse: e.Infuse}
	})
	list(sw, "rates", m.Rates, true, func(r RateRule) any { return fileRateRule(r) })
	fs := fileSimulationOf(m.Simulation)
	sw.field("simulation", &fs, fs == (fileSimulation{}))
	l := layoutForFile(m.Layout)
	sw.field("layout", l, l == nil)
	sw.raw("\n}\n")
	return sw.err
}

// sectionWriter writes the top-level object of a model file a field, and
// a list item, at a time, each encoded by encoding/json with the indent
// of its depth, so that the text is the one encoding/json gives for the
// whole model with a two-space indent.
type sectionWriter struct {
	w      io.Writer
	buf    bytes.Buffer
	enc    *json.Encoder
	fields int
	err    error
}

// raw writes s as it is.
func (sw *sectionWriter) raw(s string) {
	if sw.err == nil {
		_, sw.err = io.WriteString(sw.w, s)
	}
}

// value writes v encoded at the depth whose lines start with prefix.
func (sw *sectionWriter) value(v any, prefix string) {
	if sw.err != nil {
		return
	}
	sw.buf.Reset()
	sw.enc.SetIndent(prefix, "  ")
	if sw.err = sw.enc.Encode(v); sw.err != nil {
		return
	}
	b := sw.buf.Bytes()
	_, sw.err = sw.w.Write(b[:len(b)-1]) // without the encoder's newline
}

// key starts the next field of the top-level object.
func (sw *sectionWriter) key(k string) {
	if sw.fields > 0 {
		sw.raw(",")
	}
	sw.fields++
	sw.raw("\n  \"" + k + "\": ")
}

// field writes the field k: v unless omit.
func (sw *sectionWriter) field(k string, v any, omit bool) {
	if !omit {
		sw.key(k)
		sw.value(v, "  ")
	}
}

// list writes the field k as a list of the items, each given to the
// encoder as item returns it; an empty list is left out when omitEmpty,
// else written as [].
func list[T any](sw *sectionWriter, k string, items []T, omitEmpty bool, item func(T) any) {
	if len(items) == 0 {
		if !omitEmpty {
			sw.key(k)
			sw.raw("[]")
		}
		return
	}
	sw.key(k)
	sw.raw("[")
	for i, x := range items {
		if i > 0 {
			sw.raw(",")
		}
		sw.raw("\n    ")
		sw.value(item(x), "    ")
	}
	sw.raw("\n  ]")
}

// Save writes m to path atomically: it writes a temporary file in the same
// directory, syncs it to disk and renames it over path, so a crash never
// leaves a half-written model.
func (m *Model) Save(path string) error {
	var buf bytes.Buffer
	if err := m.Write(&buf); err != nil {
		return fmt.Errorf("saving %s: %w", path, err)
	}
	return atomicfile.Write(path, buf.Bytes())
}

// fileSimulationOf is the file form of a model's simulation settings.
func fileSimulationOf(s Simulation) fileSimulation {
	fs := fileSimulation{TEnd: s.TEnd, RTol: s.RTol, ATol: s.ATol, Method: s.Method, NonNegative: s.NonNegative}
	if s.Output != (Output{}) {
		fs.Output = &fileOutput{Points: s.Output.Points, Spacing: s.Output.Spacing, First: s.Output.First}
	}
	if s.Display != (Display{}) {
		fs.Display = &fileDisplay{Time: s.Display.Time, Concentration: s.Display.Concentration}
	}
	return fs
}
