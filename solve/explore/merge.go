package explore

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"time"
)

// PartFormat is the format tag of a serialised Result.
const PartFormat = "kinetarium.explore-part/1"

// Merge combines the results of the shards of one run into the result of
// the whole run. The parts must come from the same design and settings and
// together cover every shard exactly once (a single unsharded part is
// returned as a copy). The merged result equals that of the run done at
// once, bit for bit, except for Stats.Wall, which is summed.
//
// Parts whose points are in a spill file (all of them, or none) give a
// result whose points are read from there, merged in order of index as
// they are read: memory does not grow with the number of points.
func Merge(parts ...*Result) (*Result, error) {
	if len(parts) == 0 {
		return nil, fmt.Errorf("merge: no parts")
	}
	first := parts[0]
	n := max(1, first.Shard.N)
	seen := make([]bool, n)
	out := &Result{
		Size:     first.Size,
		Knobs:    append([]string(nil), first.Knobs...),
		Readouts: append([]string(nil), first.Readouts...),
	}
	if first.Bands != nil {
		out.Bands = NewBands(first.Bands.Components, first.Bands.Times)
	}
	for k, p := range parts {
		switch {
		case p.Size != first.Size:
			return nil, fmt.Errorf("merge: part %d has %d points, part 0 has %d", k, p.Size, first.Size)
		case max(1, p.Shard.N) != n:
			return nil, fmt.Errorf("merge: part %d is shard %v, part 0 is shard %v: the numbers of shards differ", k, p.Shard, first.Shard)
		case !slices.Equal(p.Knobs, first.Knobs):
			return nil, fmt.Errorf("merge: part %d varies %v, part 0 varies %v", k, p.Knobs, first.Knobs)
		case !slices.Equal(p.Readouts, first.Readouts):
			return nil, fmt.Errorf("merge: part %d has readouts %v, part 0 has %v", k, p.Readouts, first.Readouts)
		case (p.Bands == nil) != (first.Bands == nil):
			return nil, fmt.Errorf("merge: part %d and part 0 differ in having bands", k)
		}
		i := 0
		if n > 1 {
			i = p.Shard.I
		}
		if i < 0 || i >= n {
			return nil, fmt.Errorf("merge: part %d has invalid shard %v", k, p.Shard)
		}
		if seen[i] {
			return nil, fmt.Errorf("merge: shard %d/%d appears twice (part %d)", i, n, k)
		}
		seen[i] = true
		if p.Spilled() != first.Spilled() {
			return nil, fmt.Errorf("merge: part %d and part 0 differ in holding their points in a spill file", k)
		}
		out.sections = append(out.sections, p.sections...)
		out.Samples = append(out.Samples, p.Samples...)
		out.Failures = append(out.Failures, p.Failures...)
		if p.Bands != nil {
			if err := out.Bands.Merge(p.Bands); err != nil {
				return nil, fmt.Errorf("merge: part %d: %w", k, err)
			}
		}
		out.Points += p.Points
		out.Failed += p.Failed
		out.Wall += p.Wall
	}
	for i, ok := range seen {
		if !ok {
			return nil, fmt.Errorf("merge: shard %d/%d is missing", i, n)
		}
	}
	slices.SortFunc(out.Samples, func(a, b Sample) int { return a.Index - b.Index })
	slices.SortFunc(out.Failures, func(a, b Failure) int { return a.Index - b.Index })
	if out.Bands != nil {
		for k := range out.Bands.Cells {
			out.Bands.Cells[k].trim()
		}
	}
	return out, nil
}

// num is a float64 that survives JSON bit for bit, NaN and infinities
// included (as the strings "NaN", "+Inf", "-Inf").
type num float64

// MarshalJSON writes the shortest decimal that reads back to the same bits.
func (f num) MarshalJSON() ([]byte, error) {
	v := float64(f)
	switch {
	case math.IsNaN(v):
		return []byte(`"NaN"`), nil
	case math.IsInf(v, 1):
		return []byte(`"+Inf"`), nil
	case math.IsInf(v, -1):
		return []byte(`"-Inf"`), nil
	}
	return strconv.AppendFloat(nil, v, 'g', -1, 64), nil
}

// UnmarshalJSON reads a number or one of "NaN", "+Inf", "-Inf".
func (f *num) UnmarshalJSON(b []byte) error {
	if len(b) > 0 && b[0] == '"' {
		var s string
		if err := json.Unmarshal(b, &s); err != nil {
			return err
		}
		switch s {
		case "NaN":
			*f = num(math.NaN())
		case "+Inf", "Inf":
			*f = num(math.Inf(1))
		case "-Inf":
			*f = num(math.Inf(-1))
		default:
			return fmt.Errorf("expected a number, NaN, +Inf or -Inf, got %q", s)
		}
		return nil
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return fmt.Errorf("expected a number, got %s", b)
	}
	*f = num(v)
	return nil
}

// toNums converts to the JSON-safe number type.
func toNums(v []float64) []num {
	out := make([]num, len(v))
	for i, x := range v {
		out[i] = num(x)
	}
	return out
}

// fromNums converts back from the JSON-safe number type.
func fromNums(v []num) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = float64(x)
	}
	return out
}

// The wire form of a Result.
type (
	wireSample struct {
		Index    int     `json:"i"`
		X        []num   `json:"x"`
		Readouts []num   `json:"r"`
		T        []num   `json:"t,omitempty"`
		Y        [][]num `json:"y,omitempty"`
	}
	wireFailure struct {
		Index int    `json:"i"`
		X     []num  `json:"x"`
		Err   string `json:"error"`
	}
	wireBands struct {
		Components []int      `json:"components"`
		Times      []num      `json:"times"`
		Cells      []wireCell `json:"cells"`
	}
	wireCell struct {
		N      uint64   `json:"n"`
		Min    num      `json:"min"`
		Max    num      `json:"max"`
		Offset int      `json:"offset"`
		Counts []uint32 `json:"counts"`
	}
)

// WriteJSON writes r as JSON that ReadJSON reads back bit for bit. The
// points are written one at a time (from the spill file when r is
// spilled), so memory does not grow with their number.
func (r *Result) WriteJSON(w io.Writer) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	var err error
	put := func(s string) {
		if err == nil {
			_, err = bw.WriteString(s)
		}
	}
	putJSON := func(v any) {
		if err != nil {
			return
		}
		var b []byte
		if b, err = json.Marshal(v); err == nil {
			_, err = bw.Write(b)
		}
	}
	put(`{"format":`)
	putJSON(PartFormat)
	put(`,"size":`)
	putJSON(r.Size)
	put(`,"shard":`)
	putJSON(r.Shard.String())
	put(`,"knobs":`)
	putJSON(r.Knobs)
	put(`,"readouts":`)
	putJSON(r.Readouts)
	put(`,"samples":[`)
	sep := ""
	if err == nil {
		err = r.EachSample(func(s *Sample) error {
			ws := wireSample{Index: s.Index, X: toNums(s.X), Readouts: toNums(s.Readouts)}
			if s.Traj != nil {
				ws.T = toNums(s.Traj.T)
				ws.Y = make([][]num, len(s.Traj.Y))
				for k, y := range s.Traj.Y {
					ws.Y[k] = toNums(y)
				}
			}
			put(sep)
			putJSON(ws)
			sep = ","
			return err
		})
	}
	put(`],"failures":[`)
	sep = ""
	if err == nil {
		err = r.EachFailure(func(f *Failure) error {
			put(sep)
			putJSON(wireFailure{Index: f.Index, X: toNums(f.X), Err: f.Err})
			sep = ","
			return err
		})
	}
	put("]")
	if b := r.Bands; b != nil {
		wb := &wireBands{Components: b.Components, Times: toNums(b.Times), Cells: make([]wireCell, len(b.Cells))}
		for k := range b.Cells {
			c := b.Cells[k] // a copy: trimming only reslices
			c.trim()
			wb.Cells[k] = wireCell{N: c.N, Min: num(c.Min), Max: num(c.Max), Offset: c.Offset, Counts: c.Counts}
			if c.N == 0 {
				wb.Cells[k].Min, wb.Cells[k].Max = 0, 0
			}
		}
		put(`,"bands":`)
		putJSON(wb)
	}
	put(`,"points":`)
	putJSON(r.Points)
	put(`,"failed":`)
	putJSON(r.Failed)
	put(`,"wall_ns":`)
	putJSON(int64(r.Wall))
	put("}\n")
	if err == nil {
		err = bw.Flush()
	}
	return err
}

// ReadJSON reads a Result written by WriteJSON, checking its consistency;
// its points are held in memory.
func ReadJSON(rd io.Reader) (*Result, error) {
	return DecodeJSON(json.NewDecoder(rd), nil)
}

// DecodeJSON reads the next JSON value of dec as a Result written by
// WriteJSON and checks it: its points must be those of its shard, each
// once, in increasing order of index, and agree with its counts. When sp
// is not nil, the points go into the spill file as they are read (one at
// a time, so memory does not grow with their number) and the Result
// reads them from there. Errors give the byte offset in dec's input.
func DecodeJSON(dec *json.Decoder, sp *Spill) (*Result, error) {
	dec.DisallowUnknownFields()
	d := &partDecoder{dec: dec, sp: sp}
	r, err := d.decode()
	if err != nil {
		return nil, fmt.Errorf("reading a partial result: %w", err)
	}
	return r, nil
}

// partDecoder reads the wire form of a Result token by token. The keys
// may come in any order: the points are kept (in memory or in the spill
// file) as they come, and checked against the size, shard, knobs and
// readouts once the whole value has been read.
type partDecoder struct {
	dec *json.Decoder
	sp  *Spill
	r   *Result

	have     map[string]bool
	format   string
	nSamples int
	nFails   int
}

// at prefixes an error with the decoder's place in the input.
func (d *partDecoder) at(format string, a ...any) error {
	return fmt.Errorf("at byte %d: %s", d.dec.InputOffset(), fmt.Sprintf(format, a...))
}

// delim reads the delimiter want.
func (d *partDecoder) delim(want json.Delim) error {
	t, err := d.dec.Token()
	if err != nil {
		return err
	}
	if t != want {
		return d.at("expected %q, got %v", want, t)
	}
	return nil
}

func (d *partDecoder) decode() (*Result, error) {
	d.r = &Result{}
	d.have = map[string]bool{}
	if err := d.delim('{'); err != nil {
		return nil, err
	}
	if d.sp != nil {
		defer d.sp.end()
	}
	var (
		wantPoints, wantFailed int
		wall                   int64
		shard                  Shard
	)
	for d.dec.More() {
		t, err := d.dec.Token()
		if err != nil {
			return nil, err
		}
		key, _ := t.(string)
		if d.have[key] {
			return nil, d.at("%q appears twice", key)
		}
		d.have[key] = true
		var derr error
		switch key {
		case "format":
			derr = d.dec.Decode(&d.format)
			if derr == nil && d.format != PartFormat {
				return nil, fmt.Errorf("format is %q, expected %q", d.format, PartFormat)
			}
		case "size":
			derr = d.dec.Decode(&d.r.Size)
			if derr == nil && d.r.Size < 0 {
				return nil, fmt.Errorf("size is %d, expected a number of points ≥ 0", d.r.Size)
			}
		case "shard":
			var sh string
			if derr = d.dec.Decode(&sh); derr == nil {
				if shard, derr = ParseShard(sh); derr != nil {
					return nil, derr
				}
			}
		case "knobs":
			derr = d.dec.Decode(&d.r.Knobs)
		case "readouts":
			derr = d.dec.Decode(&d.r.Readouts)
		case "samples", "failures":
			derr = d.list(key)
		case "bands":
			var wb *wireBands
			if derr = d.dec.Decode(&wb); derr == nil && wb != nil {
				derr = d.bands(wb)
			}
		case "points":
			derr = d.dec.Decode(&wantPoints)
		case "failed":
			derr = d.dec.Decode(&wantFailed)
		case "wall_ns":
			derr = d.dec.Decode(&wall)
		default:
			return nil, d.at("unknown key %q", t)
		}
		if derr != nil {
			return nil, derr
		}
	}
	if err := d.delim('}'); err != nil {
		return nil, err
	}
	for _, k := range []string{"format", "size", "shard", "knobs", "readouts", "samples", "failures", "points", "failed", "wall_ns"} {
		if !d.have[k] {
			return nil, fmt.Errorf("%q is missing", k)
		}
	}
	r := d.r
	if shard.N == 1 {
		shard = Shard{}
	}
	r.Shard = shard
	r.Points, r.Failed = wantPoints, wantFailed
	r.Wall = time.Duration(wall)
	if d.sp != nil {
		d.sp.end()
	}
	if err := checkPoints(r, d.nSamples, d.nFails); err != nil {
		return nil, err
	}
	return r, nil
}

// list reads the list of samples or failures, each in increasing order of
// index.
func (d *partDecoder) list(key string) error {
	if d.sp != nil {
		// Each list gets a section of its own, so that every section is
		// in increasing order of index.
		d.sp.end()
		sec, err := d.sp.begin()
		if err != nil {
			return err
		}
		d.r.sections = append(d.r.sections, sec)
	}
	if err := d.delim('['); err != nil {
		return err
	}
	last := -1
	what := "sample"
	if key == "failures" {
		what = "failure"
	}
	for k := 0; d.dec.More(); k++ {
		var (
			ws  wireSample
			wf  wireFailure
			idx int
		)
		if key == "samples" {
			if err := d.dec.Decode(&ws); err != nil {
				return err
			}
			idx = ws.Index
		} else {
			if err := d.dec.Decode(&wf); err != nil {
				return err
			}
			idx = wf.Index
		}
		if idx < 0 {
			return d.at("%s %d: index %d; expected a point number ≥ 0", what, k, idx)
		}
		if idx == last {
			return d.at("%s %d: point %d appears twice", what, k, idx)
		}
		if idx < last {
			return d.at("%s %d: point %d after point %d: it appears twice or out of order (a part lists its points by increasing index)", what, k, idx, last)
		}
		last = idx
		if key == "samples" {
			smp := Sample{Index: idx, X: fromNums(ws.X), Readouts: fromNums(ws.Readouts)}
			if ws.T != nil || ws.Y != nil {
				if len(ws.Y) != len(ws.T) {
					return d.at("sample %d: %d times and %d states", k, len(ws.T), len(ws.Y))
				}
				if d.sp != nil {
					return d.at("sample %d: trajectories cannot go into a spill file", k)
				}
				tr := &Trajectory{T: fromNums(ws.T), Y: make([][]float64, len(ws.Y))}
				for i, y := range ws.Y {
					tr.Y[i] = fromNums(y)
				}
				smp.Traj = tr
			}
			d.nSamples++
			if d.sp != nil {
				if err := d.sp.addSample(&smp); err != nil {
					return err
				}
			} else {
				d.r.Samples = append(d.r.Samples, smp)
			}
			continue
		}
		f := Failure{Index: idx, X: fromNums(wf.X), Err: wf.Err}
		d.nFails++
		if d.sp != nil {
			if err := d.sp.addFailure(&f); err != nil {
				return err
			}
		} else {
			d.r.Failures = append(d.r.Failures, f)
		}
	}
	return d.delim(']')
}

// checkPoints checks that the points of r (samples and failures) are
// those of its shard of the design, each exactly once, with as many knob
// values and readouts as r names, and that its counts agree with them: a
// part with a point deleted or repeated is refused. It reads the points
// once, samples and failures merged in order of index.
//
// A result that carries band summaries only (Points 0, no samples, as the
// stochastic ensembles write theirs) has no points to check.
func checkPoints(r *Result, nSamples, nFails int) error {
	n := nSamples + nFails
	if n == 0 && r.Points == 0 && r.Failed == 0 && r.Bands != nil {
		return nil
	}
	if r.Points != n || r.Failed != nFails {
		return fmt.Errorf("the part says %d points with %d failed but holds %d samples and %d failures",
			r.Points, r.Failed, nSamples, nFails)
	}
	last, ks, kf := -1, 0, 0
	check := func(what string, k, idx, nx, nr int) error {
		switch {
		case idx >= r.Size || !r.Shard.Has(idx):
			return fmt.Errorf("%s %d: index %d does not belong to shard %v of %d points", what, k, idx, r.Shard, r.Size)
		case idx == last:
			return fmt.Errorf("point %d appears twice", idx)
		case nx != len(r.Knobs) || (what == "sample" && nr != len(r.Readouts)):
			if what == "failure" {
				return fmt.Errorf("failure %d: index %d or %d knob values do not fit", k, idx, nx)
			}
			return fmt.Errorf("sample %d: %d knob values and %d readouts, expected %d and %d", k, nx, nr, len(r.Knobs), len(r.Readouts))
		}
		last = idx
		return nil
	}
	onSample := func(s *Sample) error {
		ks++
		return check("sample", ks-1, s.Index, len(s.X), len(s.Readouts))
	}
	onFailure := func(f *Failure) error {
		kf++
		return check("failure", kf-1, f.Index, len(f.X), 0)
	}
	if r.Spilled() {
		if err := eachRecord(r.sections, onSample, onFailure); err != nil {
			return err
		}
	} else {
		i, j := 0, 0
		for i < len(r.Samples) || j < len(r.Failures) {
			var err error
			if j >= len(r.Failures) || (i < len(r.Samples) && r.Samples[i].Index <= r.Failures[j].Index) {
				err = onSample(&r.Samples[i])
				i++
			} else {
				err = onFailure(&r.Failures[j])
				j++
			}
			if err != nil {
				return err
			}
		}
	}
	want := r.Size // points of the shard: i < Size with i mod N = I
	if r.Shard.N > 1 {
		want = 0
		if r.Shard.I < r.Size {
			want = (r.Size-r.Shard.I-1)/r.Shard.N + 1
		}
	}
	if n != want {
		return fmt.Errorf("shard %v of %d points should hold %d points, but holds %d (points missing or extra)", r.Shard, r.Size, want, n)
	}
	return nil
}

// bands checks and keeps the band summaries.
func (d *partDecoder) bands(wb *wireBands) error {
	if len(wb.Cells) != len(wb.Components)*len(wb.Times) {
		return fmt.Errorf("bands: %d cells for %d components × %d times", len(wb.Cells), len(wb.Components), len(wb.Times))
	}
	b := NewBands(wb.Components, fromNums(wb.Times))
	for k, c := range wb.Cells {
		var sum uint64
		for _, x := range c.Counts {
			sum += uint64(x)
		}
		if sum != c.N || c.Offset < 0 || c.Offset+len(c.Counts) > histTop+1 {
			return fmt.Errorf("bands: cell %d is inconsistent (n %d, counts sum %d, bins %d..%d)", k, c.N, sum, c.Offset, c.Offset+len(c.Counts))
		}
		b.Cells[k] = Summary{N: c.N, Min: float64(c.Min), Max: float64(c.Max), Offset: c.Offset, Counts: c.Counts}
		if c.N == 0 {
			b.Cells[k].Counts = nil
		}
	}
	d.r.Bands = b
	return nil
}

// Equal reports whether r and o hold the same outcome bit for bit: the same
// points, knob values, readouts, trajectories, failures and bands (NaN equal
// to NaN). Stats are not compared.
func (r *Result) Equal(o *Result) bool {
	var a, b bytes.Buffer
	ra, ob := *r, *o
	ra.Stats, ob.Stats = Stats{}, Stats{}
	ra.Shard, ob.Shard = Shard{}, Shard{}
	if ra.WriteJSON(&a) != nil || ob.WriteJSON(&b) != nil {
		return false
	}
	return bytes.Equal(a.Bytes(), b.Bytes())
}
