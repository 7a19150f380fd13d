package explore

import (
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
	wireResult struct {
		Format   string        `json:"format"`
		Size     int           `json:"size"`
		Shard    string        `json:"shard"`
		Knobs    []string      `json:"knobs"`
		Readouts []string      `json:"readouts"`
		Samples  []wireSample  `json:"samples"`
		Failures []wireFailure `json:"failures"`
		Bands    *wireBands    `json:"bands,omitempty"`
		Points   int           `json:"points"`
		Failed   int           `json:"failed"`
		WallNS   int64         `json:"wall_ns"`
	}
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

// WriteJSON writes r as JSON that ReadJSON reads back bit for bit.
func (r *Result) WriteJSON(w io.Writer) error {
	wr := wireResult{
		Format: PartFormat, Size: r.Size, Shard: r.Shard.String(),
		Knobs: r.Knobs, Readouts: r.Readouts,
		Samples: make([]wireSample, len(r.Samples)), Failures: make([]wireFailure, len(r.Failures)),
		Points: r.Points, Failed: r.Failed, WallNS: int64(r.Wall),
	}
	for i, s := range r.Samples {
		ws := wireSample{Index: s.Index, X: toNums(s.X), Readouts: toNums(s.Readouts)}
		if s.Traj != nil {
			ws.T = toNums(s.Traj.T)
			ws.Y = make([][]num, len(s.Traj.Y))
			for k, y := range s.Traj.Y {
				ws.Y[k] = toNums(y)
			}
		}
		wr.Samples[i] = ws
	}
	for i, f := range r.Failures {
		wr.Failures[i] = wireFailure{Index: f.Index, X: toNums(f.X), Err: f.Err}
	}
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
		wr.Bands = wb
	}
	enc := json.NewEncoder(w)
	return enc.Encode(&wr)
}

// ReadJSON reads a Result written by WriteJSON, checking its consistency.
func ReadJSON(rd io.Reader) (*Result, error) {
	var wr wireResult
	dec := json.NewDecoder(rd)
	dec.DisallowUnknownFields()
	if err := dec.Decode(&wr); err != nil {
		return nil, fmt.Errorf("reading a partial result: %w", err)
	}
	if wr.Format != PartFormat {
		return nil, fmt.Errorf("reading a partial result: format is %q, expected %q", wr.Format, PartFormat)
	}
	sh, err := ParseShard(wr.Shard)
	if err != nil {
		return nil, fmt.Errorf("reading a partial result: %w", err)
	}
	if sh.N == 1 {
		sh = Shard{}
	}
	if wr.Size < 0 {
		return nil, fmt.Errorf("reading a partial result: size is %d, expected a number of points ≥ 0", wr.Size)
	}
	r := &Result{
		Size: wr.Size, Shard: sh, Knobs: wr.Knobs, Readouts: wr.Readouts,
		Stats: Stats{Points: wr.Points, Failed: wr.Failed},
	}
	r.Wall = time.Duration(wr.WallNS)
	bad := func(format string, a ...any) (*Result, error) {
		return nil, fmt.Errorf("reading a partial result: "+format, a...)
	}
	for k, s := range wr.Samples {
		if s.Index < 0 || s.Index >= wr.Size || !sh.Has(s.Index) {
			return bad("sample %d: index %d does not belong to shard %v of %d points", k, s.Index, sh, wr.Size)
		}
		if len(s.X) != len(wr.Knobs) || len(s.Readouts) != len(wr.Readouts) {
			return bad("sample %d: %d knob values and %d readouts, expected %d and %d", k, len(s.X), len(s.Readouts), len(wr.Knobs), len(wr.Readouts))
		}
		smp := Sample{Index: s.Index, X: fromNums(s.X), Readouts: fromNums(s.Readouts)}
		if s.T != nil {
			if len(s.Y) != len(s.T) {
				return bad("sample %d: %d times and %d states", k, len(s.T), len(s.Y))
			}
			tr := &Trajectory{T: fromNums(s.T), Y: make([][]float64, len(s.Y))}
			for i, y := range s.Y {
				tr.Y[i] = fromNums(y)
			}
			smp.Traj = tr
		}
		r.Samples = append(r.Samples, smp)
	}
	for k, f := range wr.Failures {
		if f.Index < 0 || f.Index >= wr.Size || !sh.Has(f.Index) || len(f.X) != len(wr.Knobs) {
			return bad("failure %d: index %d or %d knob values do not fit", k, f.Index, len(f.X))
		}
		r.Failures = append(r.Failures, Failure{Index: f.Index, X: fromNums(f.X), Err: f.Err})
	}
	if err := checkCoverage(r, wr.Bands != nil); err != nil {
		return bad("%v", err)
	}
	if wb := wr.Bands; wb != nil {
		if len(wb.Cells) != len(wb.Components)*len(wb.Times) {
			return bad("bands: %d cells for %d components × %d times", len(wb.Cells), len(wb.Components), len(wb.Times))
		}
		b := NewBands(wb.Components, fromNums(wb.Times))
		for k, c := range wb.Cells {
			var sum uint64
			for _, x := range c.Counts {
				sum += uint64(x)
			}
			if sum != c.N || c.Offset < 0 || c.Offset+len(c.Counts) > histTop+1 {
				return bad("bands: cell %d is inconsistent (n %d, counts sum %d, bins %d..%d)", k, c.N, sum, c.Offset, c.Offset+len(c.Counts))
			}
			b.Cells[k] = Summary{N: c.N, Min: float64(c.Min), Max: float64(c.Max), Offset: c.Offset, Counts: c.Counts}
			if c.N == 0 {
				b.Cells[k].Counts = nil
			}
		}
		r.Bands = b
	}
	return r, nil
}

// checkCoverage checks that the points of r (samples and failures) are
// those of its shard of the design, each exactly once, and that its counts
// agree with them: a part with a point deleted or repeated is refused.
//
// A result that carries band summaries only (Points 0, no samples, as the
// stochastic ensembles write theirs) has no points to check.
func checkCoverage(r *Result, bands bool) error {
	n := len(r.Samples) + len(r.Failures)
	if n == 0 && r.Points == 0 && r.Failed == 0 && bands {
		return nil
	}
	if r.Points != n || r.Failed != len(r.Failures) {
		return fmt.Errorf("the part says %d points with %d failed but holds %d samples and %d failures",
			r.Points, r.Failed, len(r.Samples), len(r.Failures))
	}
	want := r.Size // points of the shard: i < Size with i mod N = I
	if r.Shard.N > 1 {
		want = 0
		if r.Shard.I < r.Size {
			want = (r.Size-r.Shard.I-1)/r.Shard.N + 1
		}
	}
	idx := make([]int, 0, n)
	for _, s := range r.Samples {
		idx = append(idx, s.Index)
	}
	for _, f := range r.Failures {
		idx = append(idx, f.Index)
	}
	slices.Sort(idx)
	for k := 1; k < len(idx); k++ {
		if idx[k] == idx[k-1] {
			return fmt.Errorf("point %d appears twice", idx[k])
		}
	}
	if n != want {
		return fmt.Errorf("shard %v of %d points should hold %d points, but holds %d (points missing or extra)", r.Shard, r.Size, want, n)
	}
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
