package stochastic

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"math/big"
	"slices"
	"time"

	"kinetarium/solve/explore"
)

// PartFormat is the format tag of a serialised Ensemble.
const PartFormat = "kinetarium.ensemble-part/1"

// Merge combines the shards of one ensemble. The parts must come from the
// same network, grid, method, seed and number of runs, and cover every
// shard exactly once. The result equals the ensemble run at once, field
// by field, except Wall, which is summed.
func Merge(parts ...*Ensemble) (*Ensemble, error) {
	if len(parts) == 0 {
		return nil, fmt.Errorf("merge: no parts")
	}
	first := parts[0]
	n := max(1, first.Shard.N)
	seen := make([]bool, n)
	out := &Ensemble{
		Species: first.Species, Times: first.Times, Method: first.Method, Runs: first.Runs, Seed: first.Seed,
		Sum: make([]Wide, len(first.Sum)), SumSq: make([]Wide, len(first.SumSq)),
		Bands:     explore.NewBands(first.Bands.Components, first.Bands.Times),
		HistTimes: first.HistTimes, Hist: make([]Histogram, len(first.Hist)), Passages: first.Passages,
	}
	for k, p := range parts {
		switch {
		case p.Runs != first.Runs || p.Seed != first.Seed || p.Method != first.Method:
			return nil, fmt.Errorf("merge: part %d has %d runs, seed %d, method %s; part 0 has %d, %d, %s",
				k, p.Runs, p.Seed, p.Method, first.Runs, first.Seed, first.Method)
		case max(1, p.Shard.N) != n:
			return nil, fmt.Errorf("merge: part %d is shard %v, part 0 is shard %v: the numbers of shards differ", k, p.Shard, first.Shard)
		case !slices.Equal(p.Species, first.Species) || !slices.Equal(p.Times, first.Times):
			return nil, fmt.Errorf("merge: part %d has other species or output times than part 0", k)
		case !slices.Equal(p.HistTimes, first.HistTimes) || !slices.Equal(p.Passages, first.Passages):
			return nil, fmt.Errorf("merge: part %d has other histogram times or passages than part 0", k)
		}
		i := 0
		if n > 1 {
			i = p.Shard.I
		}
		if seen[i] {
			return nil, fmt.Errorf("merge: shard %d/%d appears twice (part %d)", i, n, k)
		}
		seen[i] = true
		if err := out.add(p); err != nil {
			return nil, fmt.Errorf("merge: part %d: %w", k, err)
		}
	}
	for i, ok := range seen {
		if !ok {
			return nil, fmt.Errorf("merge: shard %d/%d is missing", i, n)
		}
	}
	out.sortRuns()
	if err := out.compact(); err != nil {
		return nil, err
	}
	return out, nil
}

// The wire form of an Ensemble. Wide numbers are decimal strings; float
// values are finite except passage times, written as null when not
// reached.
type wireEnsemble struct {
	Format    string          `json:"format"`
	Species   []string        `json:"species"`
	Times     []float64       `json:"times"`
	Method    string          `json:"method"`
	Runs      int             `json:"runs"`
	Seed      uint64          `json:"seed"`
	Shard     string          `json:"shard"`
	Done      int             `json:"done"`
	Sum       []string        `json:"sum"`
	SumSq     []string        `json:"sum_sq"`
	Bands     json.RawMessage `json:"bands"`
	HistTimes []int           `json:"hist_times"`
	Hist      []Histogram     `json:"hist"`
	Passages  []Passage       `json:"passages"`
	PassTimes []wirePass      `json:"pass_times"`
	Kept      []Kept          `json:"kept"`
	Failures  []Failure       `json:"failures"`
	Stats     Stats           `json:"stats"`
	WallNS    int64           `json:"wall_ns"`
}

type wirePass struct {
	Run int        `json:"run"`
	T   []*float64 `json:"t"`
}

func wideString(w Wide) string { return w.Int().String() }

func parseWide(s string) (Wide, error) {
	z, ok := new(big.Int).SetString(s, 10)
	if !ok || z.Sign() < 0 || z.BitLen() > 128 {
		return Wide{}, fmt.Errorf("%q is not a whole number in [0, 2^128)", s)
	}
	lo := new(big.Int).And(z, new(big.Int).SetUint64(^uint64(0))).Uint64()
	hi := new(big.Int).Rsh(z, 64).Uint64()
	return Wide{Hi: hi, Lo: lo}, nil
}

// WriteJSON writes e in the part format.
func (e *Ensemble) WriteJSON(w io.Writer) error {
	var bands bytes.Buffer
	if err := (&explore.Result{Size: e.Runs, Shard: e.Shard, Bands: e.Bands}).WriteJSON(&bands); err != nil {
		return err
	}
	we := wireEnsemble{Format: PartFormat, Species: e.Species, Times: e.Times, Method: string(e.Method),
		Runs: e.Runs, Seed: e.Seed, Shard: e.Shard.String(), Done: e.Done, Bands: bands.Bytes(),
		HistTimes: e.HistTimes, Hist: e.Hist, Passages: e.Passages, Kept: e.Kept, Failures: e.Failures,
		Stats: e.Stats, WallNS: int64(e.Wall)}
	for k := range e.Sum {
		we.Sum = append(we.Sum, wideString(e.Sum[k]))
		we.SumSq = append(we.SumSq, wideString(e.SumSq[k]))
	}
	for _, p := range e.PassTimes {
		wp := wirePass{Run: p.Run}
		for _, t := range p.T {
			if math.IsInf(t, 1) {
				wp.T = append(wp.T, nil)
			} else {
				v := t
				wp.T = append(wp.T, &v)
			}
		}
		we.PassTimes = append(we.PassTimes, wp)
	}
	enc := json.NewEncoder(w)
	return enc.Encode(&we)
}

// ReadJSON reads an Ensemble written by WriteJSON and checks that its
// parts agree with one another.
func ReadJSON(r io.Reader) (*Ensemble, error) {
	bad := func(format string, a ...any) (*Ensemble, error) {
		return nil, fmt.Errorf("reading an ensemble part: "+format, a...)
	}
	var we wireEnsemble
	dec := json.NewDecoder(r)
	dec.DisallowUnknownFields()
	if err := dec.Decode(&we); err != nil {
		return bad("%v", err)
	}
	if we.Format != PartFormat {
		return bad("format is %q, expected %q", we.Format, PartFormat)
	}
	m, err := ParseMethod(we.Method)
	if err != nil {
		return bad("%v", err)
	}
	sh, err := explore.ParseShard(we.Shard)
	if err != nil {
		return bad("%v", err)
	}
	if sh.N == 1 {
		sh = explore.Shard{}
	}
	ns, nt := len(we.Species), len(we.Times)
	switch {
	case we.Runs < 0 || we.Done < 0 || we.Done > we.Runs:
		return bad("runs %d and done %d: expected 0 ≤ done ≤ runs", we.Runs, we.Done)
	case len(we.Sum) != ns*nt || len(we.SumSq) != ns*nt:
		return bad("%d sums for %d species × %d times", len(we.Sum), ns, nt)
	case len(we.Hist) != len(we.HistTimes)*ns:
		return bad("%d histograms for %d times × %d species", len(we.Hist), len(we.HistTimes), ns)
	}
	for i, t := range we.Times {
		if math.IsNaN(t) || math.IsInf(t, 0) || (i > 0 && t < we.Times[i-1]) {
			return bad("output time %d is %v; expected finite, ascending times", i, t)
		}
	}
	for _, h := range we.HistTimes {
		if h < 0 || h >= nt {
			return bad("histogram time index %d out of range [0, %d)", h, nt)
		}
	}
	for k, h := range we.Hist {
		if len(h.Values) != len(h.Counts) || !slices.IsSorted(h.Values) {
			return bad("histogram %d: values and counts differ in length or values do not ascend", k)
		}
	}
	for k, p := range we.Passages {
		if p.Species < 0 || p.Species >= ns {
			return bad("passage %d: species %d out of range [0, %d)", k, p.Species, ns)
		}
	}
	br, err := explore.ReadJSON(bytes.NewReader(we.Bands))
	if err != nil {
		return bad("bands: %v", err)
	}
	if br.Bands == nil || len(br.Bands.Components) != ns || !slices.Equal(br.Bands.Times, we.Times) {
		return bad("bands: expected one band per species on the output grid")
	}
	e := &Ensemble{Species: we.Species, Times: we.Times, Method: m, Runs: we.Runs, Seed: we.Seed, Shard: sh,
		Done: we.Done, Bands: br.Bands, HistTimes: we.HistTimes, Hist: we.Hist, Passages: we.Passages,
		Kept: we.Kept, Failures: we.Failures, Stats: we.Stats, Wall: time.Duration(we.WallNS)}
	for k := range we.Sum {
		a, err := parseWide(we.Sum[k])
		if err != nil {
			return bad("sum %d: %v", k, err)
		}
		b, err := parseWide(we.SumSq[k])
		if err != nil {
			return bad("sum_sq %d: %v", k, err)
		}
		e.Sum, e.SumSq = append(e.Sum, a), append(e.SumSq, b)
	}
	for k, p := range we.PassTimes {
		if len(p.T) != len(we.Passages) {
			return bad("pass_times %d: %d times for %d passages", k, len(p.T), len(we.Passages))
		}
		pt := PassTime{Run: p.Run}
		for _, t := range p.T {
			if t == nil {
				pt.T = append(pt.T, math.Inf(1))
			} else {
				pt.T = append(pt.T, *t)
			}
		}
		e.PassTimes = append(e.PassTimes, pt)
	}
	for k, kr := range e.Kept {
		if len(kr.Counts) != nt {
			return bad("kept run %d: %d rows for %d times", k, len(kr.Counts), nt)
		}
		for _, row := range kr.Counts {
			if len(row) != ns {
				return bad("kept run %d: a row of %d counts for %d species", k, len(row), ns)
			}
		}
	}
	for _, list := range [][]int{runsOf(e.PassTimes, func(p PassTime) int { return p.Run }),
		runsOf(e.Kept, func(p Kept) int { return p.Run }), runsOf(e.Failures, func(p Failure) int { return p.Run })} {
		for _, r := range list {
			if r < 0 || r >= e.Runs || !sh.Has(r) {
				return bad("run %d does not belong to shard %v of %d runs", r, sh, e.Runs)
			}
		}
	}
	return e, nil
}

func runsOf[T any](list []T, run func(T) int) []int {
	out := make([]int, len(list))
	for i, x := range list {
		out[i] = run(x)
	}
	return out
}
