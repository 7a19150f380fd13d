package main

// Reading partial-result files one point at a time.

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strings"

	"kinetarium/internal/atomicfile"
	"kinetarium/solve/explore"
)

// readPart reads the partial-result file at path. A population's points
// go into sp as they are read, so that memory does not grow with their
// number; a sweep's (which carry trajectories) are held in memory.
// Problems are reported with the file's line and column.
func readPart(path string, sp *explore.Spill) (*partFile, *explore.Result, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, fmt.Errorf("reading a part: %w", err)
	}
	defer f.Close()
	if fi, err := f.Stat(); err == nil && fi.IsDir() {
		return nil, nil, fmt.Errorf("reading a part: %s is a folder; expected a file", path)
	}
	lr := &io.LimitedReader{R: f, N: maxPartSize + 1}
	br := bufio.NewReaderSize(lr, 64<<10)
	head, _ := br.Peek(4)
	skip := 0
	if rest, err := atomicfile.Text(head); err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	} else {
		skip = len(head) - len(rest) // a UTF-8 byte-order mark
	}
	if _, err := br.Discard(skip); err != nil {
		return nil, nil, fmt.Errorf("reading a part: %s: %w", path, err)
	}
	dec := json.NewDecoder(br)
	dec.DisallowUnknownFields()
	p, r, err := decodePart(dec, sp)
	if lr.N <= 0 {
		return nil, nil, fmt.Errorf("reading a part: %s: larger than %s, the most this program reads from one input file", path, atomicfile.Size(maxPartSize))
	}
	if errors.Is(err, errPartialShard) {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	if err != nil {
		return nil, nil, partError(path, int64(skip)+dec.InputOffset(), err)
	}
	return p, r, nil
}

// errPartialShard refuses a part whose run was stopped before it finished.
var errPartialShard = errors.New("this shard was stopped before it finished (partial: true); run it again, then merge")

// decodePart reads {"format": …, "meta": …, "result": …} from dec.
func decodePart(dec *json.Decoder, sp *explore.Spill) (*partFile, *explore.Result, error) {
	var (
		p   partFile
		res *explore.Result
	)
	if t, err := dec.Token(); err != nil {
		return nil, nil, err
	} else if t != json.Delim('{') {
		return nil, nil, fmt.Errorf("expected a JSON object, got %v", t)
	}
	seen := map[string]bool{}
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return nil, nil, err
		}
		key, _ := t.(string)
		if seen[key] {
			return nil, nil, fmt.Errorf("%q appears twice", key)
		}
		seen[key] = true
		switch key {
		case "format":
			if err := dec.Decode(&p.Format); err != nil {
				return nil, nil, err
			}
			if p.Format != PartFormat {
				return nil, nil, fmt.Errorf("format: expected %q with meta and result, got %q", PartFormat, p.Format)
			}
		case "meta":
			if err := dec.Decode(&p.Meta); err != nil {
				return nil, nil, fmt.Errorf("meta: %w", err)
			}
			if p.Meta != nil && p.Meta.Partial {
				return nil, nil, errPartialShard // its points are incomplete: say so first
			}
		case "result":
			if p.Format == "" || p.Meta == nil {
				return nil, nil, errors.New("result: comes before format and meta")
			}
			if p.Meta.Kind != "population" {
				sp = nil // a sweep's points carry trajectories: in memory
			}
			if res, err = explore.DecodeJSON(dec, sp); err != nil {
				return nil, nil, err
			}
		default:
			return nil, nil, fmt.Errorf("unknown key %q", t)
		}
	}
	if _, err := dec.Token(); err != nil {
		return nil, nil, err
	}
	if p.Format == "" || p.Meta == nil || res == nil {
		return nil, nil, fmt.Errorf("format: expected %q with meta and result", PartFormat)
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, nil, errors.New("unexpected data after the JSON value")
	}
	return &p, res, nil
}

// partError places err at the line and column of byte off of the file at
// path (the decoder's position, or the syntax error's own; for a file that
// ends too early, its end).
func partError(path string, off int64, err error) error {
	msg := strings.TrimPrefix(err.Error(), "json: ")
	switch at, placed, eof := jsonErrorOffset(err); {
	case placed:
		off = at
	case eof:
		msg, off = atomicfile.TruncatedJSON, math.MaxInt64 // where the file ends
	}
	line, col := 1, 1
	if f, ferr := os.Open(path); ferr == nil {
		defer f.Close()
		br := bufio.NewReader(io.LimitReader(f, off))
		for {
			b, rerr := br.ReadByte()
			if rerr != nil {
				break
			}
			if b == '\n' {
				line, col = line+1, 1
			} else {
				col++
			}
		}
	}
	return fmt.Errorf("%s:%d:%d: %s", path, line, col, msg)
}
