package calibrate

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strings"

	"kinetarium/app/sliders"
	"kinetarium/internal/atomicfile"
)

// SpecFormat is the format name of fit specifications.
const SpecFormat = "kinetarium.fit/1"

// Spec is a fit specification ("kinetarium.fit/1"): the model, the
// experiments with their data, the quantities to estimate with their
// bounds, the noise model and the multi-start settings.
type Spec struct {
	Model       string // path, relative to the spec's folder
	Experiments []Experiment
	Estimate    []Estimate
	Noise       Noise
	Starts      int    // every start counted, the given one first; default 1
	Seed        uint64 // for the Latin hypercube of the further starts
	// RTol and ATol override the model's tolerances for the fit (default:
	// the model's, but at most 1e-8 and 1e-12).
	RTol, ATol float64
	// Method overrides the model's method ("rosenbrock", "radau", "bdf";
	// default the model's, with a stiff method picked for "auto").
	Method string

	Dir string // the spec's folder, against which paths are resolved
}

// Experiment is one data file and the conditions it was measured under.
type Experiment struct {
	Name string
	Data string // path, relative to the spec's folder
	// Initial gives starting concentrations by species; Parameters gives
	// values by knob name (a parameter, "volume:C", "event:E.FIELD").
	Initial    map[string]float64
	Parameters map[string]float64
}

// Estimate is one quantity to estimate.
type Estimate struct {
	Target       string  // a knob: NAME, init:S, volume:C, event:E.FIELD
	Lower, Upper float64 // bounds
	Start        float64 // NaN when not given
	Log          bool    // "scale": "log"
	PerExp       bool    // one estimate per experiment
}

// Noise is the error model of the measurements.
type Noise struct {
	// Model is "sd_column" (σ from each value's sd_ column), "constant"
	// (one σ, estimated), "proportional" (σ = c·|ŷ|, c estimated) or
	// "combined" (σ² = a² + (b·ŷ)², a and b estimated).
	Model string
}

// The noise models.
const (
	NoiseSD           = "sd_column"
	NoiseConstant     = "constant"
	NoiseProportional = "proportional"
	NoiseCombined     = "combined"
)

// SpecError is a problem in a fit specification, with its place.
type SpecError struct {
	File      string
	Line, Col int    // of the value at fault; 0 when unknown
	Path      string // e.g. estimate[1].lower
	Msg       string
}

func (e *SpecError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d:%d", e.Line, e.Col)
	}
	b.WriteString(": ")
	if e.Path != "" {
		b.WriteString(e.Path)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// SpecErrors are the problems of one specification.
type SpecErrors []*SpecError

func (l SpecErrors) Error() string { return listed(l) }

// jnode is a JSON value with the offset where it starts.
type jnode struct {
	off  int64
	kind byte // 'o' object, 'a' array, 's' string, 'n' number, 'b' bool, 'z' null
	keys []string
	obj  map[string]*jnode
	arr  []*jnode
	str  string
	num  float64
	b    bool
}

// parseJSON reads one JSON value with the offsets of every value.
func parseJSON(data []byte) (*jnode, error) {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	var value func() (*jnode, error)
	value = func() (*jnode, error) {
		tok, err := dec.Token()
		if err != nil {
			return nil, err
		}
		off := dec.InputOffset()
		switch t := tok.(type) {
		case json.Delim:
			off-- // the delimiter itself
			switch t {
			case '{':
				n := &jnode{off: off, kind: 'o', obj: map[string]*jnode{}}
				for dec.More() {
					kt, err := dec.Token()
					if err != nil {
						return nil, err
					}
					k, ok := kt.(string)
					if !ok {
						return nil, fmt.Errorf("expected a key")
					}
					v, err := value()
					if err != nil {
						return nil, err
					}
					if _, dup := n.obj[k]; dup {
						return nil, &json.SyntaxError{Offset: v.off}
					}
					n.keys = append(n.keys, k)
					n.obj[k] = v
				}
				_, err := dec.Token()
				return n, err
			case '[':
				n := &jnode{off: off, kind: 'a'}
				for dec.More() {
					v, err := value()
					if err != nil {
						return nil, err
					}
					n.arr = append(n.arr, v)
				}
				_, err := dec.Token()
				return n, err
			}
		case string:
			return &jnode{off: off - int64(len(t)) - 2, kind: 's', str: t}, nil
		case json.Number:
			f, err := t.Float64()
			if err != nil {
				return nil, fmt.Errorf("number %s is out of range", t)
			}
			return &jnode{off: off - int64(len(t)), kind: 'n', num: f}, nil
		case bool:
			return &jnode{off: off, kind: 'b', b: t}, nil
		case nil:
			return &jnode{off: off, kind: 'z'}, nil
		}
		return nil, fmt.Errorf("unexpected token")
	}
	n, err := value()
	if err != nil {
		return nil, err
	}
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("more than one JSON value in the file")
	}
	return n, nil
}

// lineCol turns a byte offset into a 1-based line and column.
func lineCol(data []byte, off int64) (int, int) {
	if off < 0 {
		off = 0
	}
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	before := data[:off]
	line := bytes.Count(before, []byte("\n")) + 1
	col := int(off) - bytes.LastIndexByte(before, '\n')
	return line, col
}

// specReader collects the problems of one specification.
type specReader struct {
	file string
	data []byte
	errs SpecErrors
}

func (r *specReader) fail(n *jnode, path, format string, args ...any) {
	e := &SpecError{File: r.file, Path: path, Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line, e.Col = lineCol(r.data, n.off)
	}
	r.errs = append(r.errs, e)
}

// keys checks an object's keys against those allowed.
func (r *specReader) keys(n *jnode, path string, allowed ...string) {
	for _, k := range n.keys {
		ok := false
		for _, a := range allowed {
			ok = ok || a == k
		}
		if !ok {
			p := k
			if path != "" {
				p = path + "." + k
			}
			r.fail(n.obj[k], p, "unknown key %q; expected one of %s", k, strings.Join(allowed, ", "))
		}
	}
}

func (r *specReader) str(n *jnode, path string) (string, bool) {
	if n == nil {
		return "", false
	}
	if n.kind != 's' {
		r.fail(n, path, "expected a string")
		return "", false
	}
	return n.str, true
}

func (r *specReader) number(n *jnode, path string) (float64, bool) {
	if n == nil {
		return 0, false
	}
	if n.kind != 'n' || math.IsInf(n.num, 0) {
		r.fail(n, path, "expected a number")
		return 0, false
	}
	return n.num, true
}

func (r *specReader) values(n *jnode, path string) map[string]float64 {
	if n == nil {
		return nil
	}
	if n.kind != 'o' {
		r.fail(n, path, "expected an object of names and numbers, such as {\"I\": 0.05}")
		return nil
	}
	out := map[string]float64{}
	for _, k := range n.keys {
		if v, ok := r.number(n.obj[k], path+"."+k); ok {
			out[k] = v
		}
	}
	return out
}

// maxSpecSize bounds a fit specification read (README, Limits).
const maxSpecSize = 16 << 20

// LoadSpec reads a fit specification from a file.
func LoadSpec(path string) (*Spec, error) {
	b, err := atomicfile.ReadFile(path, maxSpecSize)
	if err != nil {
		return nil, fmt.Errorf("reading the fit specification: %w", err)
	}
	s, err := ReadSpec(b, path)
	if err != nil {
		return nil, err
	}
	s.Dir = filepath.Dir(path)
	return s, nil
}

// jsonErrors is parseJSON's error err on data, placed at its line and
// column: the offending character, or the end of a file that ends too
// early.
func jsonErrors(source string, data []byte, err error) SpecErrors {
	var se *json.SyntaxError
	line, col := 0, 0
	if errors.As(err, &se) {
		line, col = lineCol(data, atomicfile.JSONSyntaxOffset(data, se))
	}
	msg := err.Error()
	if errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, io.EOF) {
		msg = atomicfile.TruncatedJSON
		line, col = lineCol(data, int64(len(data)))
	}
	return SpecErrors{{File: source, Line: line, Col: col, Msg: "not valid JSON: " + msg}}
}

// ReadSpec reads a fit specification; every problem is reported with its
// line and column. It checks the spec's own consistency; names are checked
// against the model by NewFit.
func ReadSpec(data []byte, source string) (*Spec, error) {
	data, err := atomicfile.Text(data)
	if err != nil {
		return nil, SpecErrors{{File: source, Msg: err.Error()}}
	}
	r := &specReader{file: source, data: data}
	top, err := parseJSON(data)
	if err != nil {
		return nil, jsonErrors(source, data, err)
	}
	if top.kind != 'o' {
		r.fail(top, "", "expected a JSON object with \"format\": %q", SpecFormat)
		return nil, r.errs
	}
	r.keys(top, "", "format", "model", "experiments", "estimate", "noise", "starts", "seed", "rtol", "atol", "method", "note")
	s := &Spec{Starts: 1}
	if f, ok := r.str(top.obj["format"], "format"); !ok || f != SpecFormat {
		if top.obj["format"] == nil {
			r.fail(top, "format", "missing; expected \"format\": %q", SpecFormat)
		} else if ok {
			r.fail(top.obj["format"], "format", "is %q; expected %q", f, SpecFormat)
		}
	}
	if m, ok := r.str(top.obj["model"], "model"); ok && m != "" {
		s.Model = m
	} else if top.obj["model"] == nil || ok {
		r.fail(top, "model", "missing; expected the model file's path, relative to this file")
	}
	exps := top.obj["experiments"]
	switch {
	case exps == nil:
		r.fail(top, "experiments", "missing; expected a list of {\"name\", \"data\"}")
	case exps.kind != 'a' || len(exps.arr) == 0:
		r.fail(exps, "experiments", "expected a non-empty list of {\"name\", \"data\"}")
	default:
		names := map[string]bool{}
		for i, e := range exps.arr {
			path := fmt.Sprintf("experiments[%d]", i)
			if e.kind != 'o' {
				r.fail(e, path, "expected an object with \"name\" and \"data\"")
				continue
			}
			r.keys(e, path, "name", "data", "initial", "parameters", "note")
			x := Experiment{}
			x.Name, _ = r.str(e.obj["name"], path+".name")
			x.Data, _ = r.str(e.obj["data"], path+".data")
			switch {
			case x.Name == "":
				r.fail(e, path+".name", "missing; every experiment needs a name")
			case names[x.Name]:
				r.fail(e.obj["name"], path+".name", "experiment %q is listed twice", x.Name)
			case strings.ContainsAny(x.Name, "[],\"\n"):
				r.fail(e.obj["name"], path+".name", "%q: a name may not contain brackets, commas, quotes or line breaks", x.Name)
			}
			names[x.Name] = true
			if x.Data == "" {
				r.fail(e, path+".data", "missing; expected the data file's path, relative to this file")
			}
			x.Initial = r.values(e.obj["initial"], path+".initial")
			x.Parameters = r.values(e.obj["parameters"], path+".parameters")
			s.Experiments = append(s.Experiments, x)
		}
	}
	est := top.obj["estimate"]
	switch {
	case est == nil:
		r.fail(top, "estimate", "missing; expected a list of {\"target\", \"lower\", \"upper\"}")
	case est.kind != 'a' || len(est.arr) == 0:
		r.fail(est, "estimate", "expected a non-empty list of {\"target\", \"lower\", \"upper\"}")
	default:
		targets := map[string]bool{}
		for i, e := range est.arr {
			path := fmt.Sprintf("estimate[%d]", i)
			if e.kind != 'o' {
				r.fail(e, path, "expected an object with \"target\", \"lower\" and \"upper\"")
				continue
			}
			r.keys(e, path, "target", "lower", "upper", "start", "scale", "per_experiment", "note")
			x := Estimate{Start: math.NaN()}
			x.Target, _ = r.str(e.obj["target"], path+".target")
			if x.Target == "" {
				r.fail(e, path+".target", "missing; expected a parameter name, init:SPECIES, volume:COMPARTMENT or event:EVENT.FIELD")
			} else if targets[x.Target] {
				r.fail(e.obj["target"], path+".target", "%q is estimated twice", x.Target)
			}
			targets[x.Target] = true
			lo, okLo := r.number(e.obj["lower"], path+".lower")
			hi, okHi := r.number(e.obj["upper"], path+".upper")
			if e.obj["lower"] == nil {
				r.fail(e, path+".lower", "missing; every estimate needs bounds")
			}
			if e.obj["upper"] == nil {
				r.fail(e, path+".upper", "missing; every estimate needs bounds")
			}
			x.Lower, x.Upper = lo, hi
			if okLo && okHi && !(lo < hi) {
				r.fail(e.obj["lower"], path+".lower", "lower bound %g must be below upper bound %g", lo, hi)
			}
			if sc, ok := r.str(e.obj["scale"], path+".scale"); ok {
				switch sc {
				case "log":
					x.Log = true
				case "linear":
				default:
					r.fail(e.obj["scale"], path+".scale", "is %q; expected \"log\" or \"linear\"", sc)
				}
			}
			if x.Log && okLo && !(lo > 0) {
				r.fail(e.obj["lower"], path+".lower", "a log scale needs a positive lower bound, not %g", lo)
			}
			if st, ok := r.number(e.obj["start"], path+".start"); ok {
				x.Start = st
				if okLo && okHi && (st < lo || st > hi) {
					r.fail(e.obj["start"], path+".start", "start %g lies outside the bounds [%g, %g]", st, lo, hi)
				}
			}
			if pe := e.obj["per_experiment"]; pe != nil {
				if pe.kind != 'b' {
					r.fail(pe, path+".per_experiment", "expected true or false")
				}
				x.PerExp = pe.b
			}
			if x.Target != "" && okLo {
				k := sliders.ParseRef(x.Target)
				if err := k.Check(lo); err != nil && !(k.Kind == sliders.Volume && lo == 0) {
					r.fail(e.obj["lower"], path+".lower", "%v", err)
				}
			}
			s.Estimate = append(s.Estimate, x)
		}
	}
	s.Noise.Model = NoiseSD
	if nz := top.obj["noise"]; nz != nil {
		if nz.kind != 'o' {
			r.fail(nz, "noise", "expected an object such as {\"model\": \"sd_column\"}")
		} else {
			r.keys(nz, "noise", "model")
			if m, ok := r.str(nz.obj["model"], "noise.model"); ok {
				switch m {
				case NoiseSD, NoiseConstant, NoiseProportional, NoiseCombined:
					s.Noise.Model = m
				default:
					r.fail(nz.obj["model"], "noise.model", "is %q; expected sd_column, constant, proportional or combined", m)
				}
			}
		}
	}
	if v, ok := r.number(top.obj["starts"], "starts"); ok {
		if v != math.Trunc(v) || v < 1 || v > 10000 {
			r.fail(top.obj["starts"], "starts", "is %g; expected a whole number from 1 to 10000", v)
		} else {
			s.Starts = int(v)
		}
	}
	if v, ok := r.number(top.obj["seed"], "seed"); ok {
		if v != math.Trunc(v) || v < 0 || v > 1<<53 {
			r.fail(top.obj["seed"], "seed", "is %g; expected a whole number ≥ 0", v)
		} else {
			s.Seed = uint64(v)
		}
	}
	if v, ok := r.number(top.obj["rtol"], "rtol"); ok {
		if !(v > 0 && v < 1) {
			r.fail(top.obj["rtol"], "rtol", "is %g; expected a relative tolerance between 0 and 1", v)
		}
		s.RTol = v
	}
	if v, ok := r.number(top.obj["atol"], "atol"); ok {
		if !(v > 0) {
			r.fail(top.obj["atol"], "atol", "is %g; expected a positive absolute tolerance", v)
		}
		s.ATol = v
	}
	if m, ok := r.str(top.obj["method"], "method"); ok {
		switch m {
		case "auto", "rosenbrock", "radau", "bdf":
			s.Method = m
		default:
			r.fail(top.obj["method"], "method", "is %q; expected auto, rosenbrock, radau or bdf (sensitivities need a stiff method)", m)
		}
	}
	if len(r.errs) > 0 {
		sort.SliceStable(r.errs, func(i, j int) bool { return r.errs[i].Line < r.errs[j].Line })
		return nil, r.errs
	}
	return s, nil
}
