package network

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strings"

	"kinetarium/internal/atomicfile"
)

// Read decodes a model file (JSON, format "kinetarium.model/1") from r.
// Source names the input in error messages (a file name, say). Decoding is
// strict: a syntax error is reported with its line and column, and an
// unknown key or a value of the wrong type with its place in the file, e.g.
// `reactions[2].rate: unknown key "kk"` (indices count from 0). Missing
// simulation settings get their defaults. Read does not validate the
// model's content; see Validate.
func Read(r io.Reader, source string) (*Model, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, fmt.Errorf("reading %s: %w", source, err)
	}
	m, err := decodeModel(data)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", source, err)
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
func lineCol(data []byte, off int64) (line, col int) {
	off = max(0, min(off, int64(len(data))))
	line = 1 + bytes.Count(data[:off], []byte("\n"))
	last := bytes.LastIndexByte(data[:off], '\n')
	col = int(off) - last // last = -1 gives off+1
	return line, col
}

func decodeModel(data []byte) (*Model, error) {
	var probe any
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	err := dec.Decode(&probe)
	if err == nil {
		// dec.More is false before a stray '}' or ']', so look at the rest.
		off := dec.InputOffset()
		if rest := data[off:]; len(bytes.TrimSpace(rest)) > 0 {
			off += int64(len(rest) - len(bytes.TrimLeft(rest, " \t\r\n")))
			line, col := lineCol(data, off)
			return nil, fmt.Errorf("line %d, column %d: unexpected text after the end of the model", line, col)
		}
	}
	if err == io.EOF || err == io.ErrUnexpectedEOF || err != nil && strings.Contains(err.Error(), "unexpected end") {
		line, col := lineCol(data, int64(len(data)))
		return nil, fmt.Errorf("line %d, column %d: the file ends too early; is a closing brace or bracket missing?", line, col)
	}
	if err != nil {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			line, col := lineCol(data, se.Offset-1)
			return nil, fmt.Errorf("line %d, column %d: invalid JSON: %s", line, col, se.Error())
		}
		return nil, fmt.Errorf("invalid JSON: %w", err)
	}
	top, err := object(data, "", "format", "title", "note", "units", "compartments", "species", "parameters", "reactions", "simulation")
	if err != nil {
		return nil, err
	}
	m := &Model{}
	d := &decoder{}
	raw, ok := top["format"]
	if !ok {
		return nil, fmt.Errorf("missing key \"format\"; a model file starts with \"format\": %q", Format)
	}
	format := d.str(raw, "format")
	if d.err == nil && format != Format {
		if strings.HasPrefix(format, "kinetarium.model/") {
			return nil, fmt.Errorf("format %q is a version this program does not read; expected %q", format, Format)
		}
		return nil, fmt.Errorf("format %q is not a model file format; expected %q", format, Format)
	}
	if v, ok := top["title"]; ok {
		m.Title = d.str(v, "title")
	}
	if v, ok := top["note"]; ok {
		m.Note = d.str(v, "note")
	}
	if v, ok := top["units"]; ok {
		o := d.object(v, "units", "time", "amount")
		if x, ok := o["time"]; ok {
			m.Units.Time = d.str(x, "units.time")
		}
		if x, ok := o["amount"]; ok {
			m.Units.Amount = d.str(x, "units.amount")
		}
	}
	if v, ok := top["compartments"]; ok {
		for i, item := range d.array(v, "compartments") {
			path := fmt.Sprintf("compartments[%d]", i)
			o := d.object(item, path, "name", "volume", "note")
			var c Compartment
			c.Name = d.optStr(o, "name", path)
			c.Volume = d.optNum(o, "volume", path)
			c.Note = d.optStr(o, "note", path)
			m.Compartments = append(m.Compartments, c)
		}
	}
	if v, ok := top["species"]; ok {
		for i, item := range d.array(v, "species") {
			path := fmt.Sprintf("species[%d]", i)
			o := d.object(item, path, "name", "initial", "compartment", "fixed", "note")
			var s Species
			s.Name = d.optStr(o, "name", path)
			s.Initial = d.optNum(o, "initial", path)
			s.Compartment = d.optStr(o, "compartment", path)
			if x, ok := o["fixed"]; ok {
				s.Fixed = d.boolean(x, path+".fixed")
			}
			s.Note = d.optStr(o, "note", path)
			m.Species = append(m.Species, s)
		}
	}
	if v, ok := top["parameters"]; ok {
		for i, item := range d.array(v, "parameters") {
			path := fmt.Sprintf("parameters[%d]", i)
			o := d.object(item, path, "name", "value", "unit", "note")
			var p Parameter
			p.Name = d.optStr(o, "name", path)
			p.Value = d.optNum(o, "value", path)
			p.Unit = d.optStr(o, "unit", path)
			p.Note = d.optStr(o, "note", path)
			m.Parameters = append(m.Parameters, p)
		}
	}
	if v, ok := top["reactions"]; ok {
		for i, item := range d.array(v, "reactions") {
			path := fmt.Sprintf("reactions[%d]", i)
			o := d.object(item, path, "name", "equation", "rate", "note")
			var r Reaction
			r.Name = d.optStr(o, "name", path)
			r.Equation = d.optStr(o, "equation", path)
			r.Note = d.optStr(o, "note", path)
			if x, ok := o["rate"]; ok {
				rp := path + ".rate"
				ro := d.object(x, rp, "law", "k", "k_reverse", "vmax", "km", "kcat", "enzyme", "expression")
				r.Rate.Law = d.optStr(ro, "law", rp)
				r.Rate.K = d.value(ro, "k", rp)
				r.Rate.KReverse = d.value(ro, "k_reverse", rp)
				r.Rate.Vmax = d.value(ro, "vmax", rp)
				r.Rate.Km = d.value(ro, "km", rp)
				r.Rate.Kcat = d.value(ro, "kcat", rp)
				r.Rate.Enzyme = d.value(ro, "enzyme", rp)
				r.Rate.Expression = d.optStr(ro, "expression", rp)
			}
			m.Reactions = append(m.Reactions, r)
		}
	}
	if v, ok := top["simulation"]; ok {
		o := d.object(v, "simulation", "t_end", "output", "rtol", "atol", "method", "non_negative")
		s := &m.Simulation
		s.TEnd = d.optNum(o, "t_end", "simulation")
		s.RTol = d.optNum(o, "rtol", "simulation")
		s.ATol = d.optNum(o, "atol", "simulation")
		s.Method = d.optStr(o, "method", "simulation")
		if x, ok := o["non_negative"]; ok {
			b := d.boolean(x, "simulation.non_negative")
			s.NonNegative = &b
		}
		if x, ok := o["output"]; ok {
			oo := d.object(x, "simulation.output", "points", "spacing", "first")
			if p, ok := oo["points"]; ok {
				f := d.num(p, "simulation.output.points")
				if d.err == nil && (f != math.Trunc(f) || math.Abs(f) > 1e9) {
					d.fail("simulation.output.points: %v is not a whole number up to 1e9; expected a count such as 200", f)
				}
				s.Output.Points = int(f)
			}
			s.Output.Spacing = d.optStr(oo, "spacing", "simulation.output")
			s.Output.First = d.optNum(oo, "first", "simulation.output")
		}
	}
	if d.err != nil {
		return nil, d.err
	}
	m.Simulation = m.Simulation.WithDefaults()
	return m, nil
}

// decoder remembers the first error so the decoding code reads straight.
type decoder struct{ err error }

func (d *decoder) fail(format string, args ...any) {
	if d.err == nil {
		d.err = fmt.Errorf(format, args...)
	}
}

func jsonKind(raw json.RawMessage) string {
	t := bytes.TrimSpace(raw)
	if len(t) == 0 {
		return "nothing"
	}
	switch t[0] {
	case '{':
		return "an object"
	case '[':
		return "a list"
	case '"':
		return "text"
	case 't', 'f':
		return "true/false"
	case 'n':
		return "null"
	}
	return "a number"
}

func object(raw json.RawMessage, path string, allowed ...string) (map[string]json.RawMessage, error) {
	where := path
	if where == "" {
		where = "the top level"
	}
	if jsonKind(raw) != "an object" {
		return nil, fmt.Errorf("%s: expected an object {...}, found %s", where, jsonKind(raw))
	}
	// Decode key by key: json.Unmarshal into a map would keep the last of
	// two equal keys silently.
	o := map[string]json.RawMessage{}
	dec := json.NewDecoder(bytes.NewReader(raw))
	if _, err := dec.Token(); err != nil { // '{'
		return nil, fmt.Errorf("%s: expected an object {...}: %w", where, err)
	}
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return nil, fmt.Errorf("%s: expected an object {...}: %w", where, err)
		}
		k, _ := tok.(string)
		var v json.RawMessage
		if err := dec.Decode(&v); err != nil {
			return nil, fmt.Errorf("%s.%s: %w", where, k, err)
		}
		if _, dup := o[k]; dup {
			return nil, fmt.Errorf("%s: the key %q appears twice; keep one", where, k)
		}
		o[k] = v
	}
	keys := make([]string, 0, len(o))
	for k := range o {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		known := false
		for _, a := range allowed {
			if k == a {
				known = true
				break
			}
		}
		if !known {
			return nil, fmt.Errorf("%s: unknown key %q; expected one of %s", where, k, strings.Join(allowed, ", "))
		}
	}
	return o, nil
}

func (d *decoder) object(raw json.RawMessage, path string, allowed ...string) map[string]json.RawMessage {
	if d.err != nil {
		return nil
	}
	o, err := object(raw, path, allowed...)
	if err != nil {
		d.err = err
	}
	return o
}

func (d *decoder) array(raw json.RawMessage, path string) []json.RawMessage {
	if d.err != nil {
		return nil
	}
	var a []json.RawMessage
	if jsonKind(raw) != "a list" || json.Unmarshal(raw, &a) != nil {
		d.fail("%s: expected a list [...], found %s", path, jsonKind(raw))
	}
	return a
}

func (d *decoder) str(raw json.RawMessage, path string) string {
	if d.err != nil {
		return ""
	}
	var s string
	if jsonKind(raw) != "text" || json.Unmarshal(raw, &s) != nil {
		d.fail("%s: expected text in quotes, found %s", path, jsonKind(raw))
	}
	return s
}

func (d *decoder) num(raw json.RawMessage, path string) float64 {
	if d.err != nil {
		return 0
	}
	var f float64
	if jsonKind(raw) != "a number" {
		d.fail("%s: expected a number, found %s", path, jsonKind(raw))
	} else if err := json.Unmarshal(raw, &f); err != nil {
		d.fail("%s: %s is out of the range of numbers this program handles", path, bytes.TrimSpace(raw))
	}
	return f
}

func (d *decoder) boolean(raw json.RawMessage, path string) bool {
	if d.err != nil {
		return false
	}
	var b bool
	if jsonKind(raw) != "true/false" || json.Unmarshal(raw, &b) != nil {
		d.fail("%s: expected true or false, found %s", path, jsonKind(raw))
	}
	return b
}

func (d *decoder) optStr(o map[string]json.RawMessage, key, path string) string {
	if v, ok := o[key]; ok {
		return d.str(v, path+"."+key)
	}
	return ""
}

func (d *decoder) optNum(o map[string]json.RawMessage, key, path string) float64 {
	if v, ok := o[key]; ok {
		return d.num(v, path+"."+key)
	}
	return 0
}

// value decodes a rate field: a parameter name (text) or a number.
func (d *decoder) value(o map[string]json.RawMessage, key, path string) Value {
	v, ok := o[key]
	if !ok || d.err != nil {
		return Value{}
	}
	switch jsonKind(v) {
	case "text":
		return Value{Name: d.str(v, path+"."+key), Set: true}
	case "a number":
		return Value{Num: d.num(v, path+"."+key), Set: true}
	}
	d.fail("%s.%s: expected a parameter name in quotes or a number, found %s", path, key, jsonKind(v))
	return Value{}
}

// The file form, in the key order Write uses.
type (
	fileModel struct {
		Format       string            `json:"format"`
		Title        string            `json:"title,omitempty"`
		Note         string            `json:"note,omitempty"`
		Units        *fileUnits        `json:"units,omitempty"`
		Compartments []fileCompartment `json:"compartments,omitempty"`
		Species      []fileSpecies     `json:"species"`
		Parameters   []fileParameter   `json:"parameters,omitempty"`
		Reactions    []fileReaction    `json:"reactions"`
		Simulation   *fileSimulation   `json:"simulation,omitempty"`
	}
	fileUnits struct {
		Time   string `json:"time,omitempty"`
		Amount string `json:"amount,omitempty"`
	}
	fileCompartment struct {
		Name   string  `json:"name"`
		Volume float64 `json:"volume"`
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
	fileRate struct {
		Law        string     `json:"law"`
		K          *fileValue `json:"k,omitempty"`
		KReverse   *fileValue `json:"k_reverse,omitempty"`
		Vmax       *fileValue `json:"vmax,omitempty"`
		Km         *fileValue `json:"km,omitempty"`
		Kcat       *fileValue `json:"kcat,omitempty"`
		Enzyme     *fileValue `json:"enzyme,omitempty"`
		Expression string     `json:"expression,omitempty"`
	}
	fileValue      Value
	fileSimulation struct {
		TEnd        float64     `json:"t_end,omitempty"`
		Output      *fileOutput `json:"output,omitempty"`
		RTol        float64     `json:"rtol,omitempty"`
		ATol        float64     `json:"atol,omitempty"`
		Method      string      `json:"method,omitempty"`
		NonNegative *bool       `json:"non_negative,omitempty"`
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

func toFileValue(v Value) *fileValue {
	if !v.Set {
		return nil
	}
	f := fileValue(v)
	return &f
}

// Write encodes m as a model file: keys in a fixed order, two-space indent,
// empty optional fields left out. Writing the same model twice gives the
// same bytes. Numbers that JSON cannot hold (NaN, ±Inf) are an error.
func (m *Model) Write(w io.Writer) error {
	f := fileModel{Format: Format, Title: m.Title, Note: m.Note,
		Species: []fileSpecies{}, Reactions: []fileReaction{}}
	if m.Units != (Units{}) {
		f.Units = &fileUnits{Time: m.Units.Time, Amount: m.Units.Amount}
	}
	for _, c := range m.Compartments {
		f.Compartments = append(f.Compartments, fileCompartment(c))
	}
	for _, s := range m.Species {
		f.Species = append(f.Species, fileSpecies(s))
	}
	for _, p := range m.Parameters {
		f.Parameters = append(f.Parameters, fileParameter(p))
	}
	for _, r := range m.Reactions {
		f.Reactions = append(f.Reactions, fileReaction{Name: r.Name, Equation: r.Equation, Note: r.Note,
			Rate: fileRate{Law: r.Rate.Law, K: toFileValue(r.Rate.K), KReverse: toFileValue(r.Rate.KReverse),
				Vmax: toFileValue(r.Rate.Vmax), Km: toFileValue(r.Rate.Km), Kcat: toFileValue(r.Rate.Kcat),
				Enzyme: toFileValue(r.Rate.Enzyme), Expression: r.Rate.Expression}})
	}
	s := m.Simulation
	fs := fileSimulation{TEnd: s.TEnd, RTol: s.RTol, ATol: s.ATol, Method: s.Method, NonNegative: s.NonNegative}
	if s.Output != (Output{}) {
		fs.Output = &fileOutput{Points: s.Output.Points, Spacing: s.Output.Spacing, First: s.Output.First}
	}
	if fs != (fileSimulation{}) {
		f.Simulation = &fs
	}
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(&f); err != nil {
		return fmt.Errorf("writing model: %w", err)
	}
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("writing model: %w", err)
	}
	return nil
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
