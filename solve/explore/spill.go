package explore

import (
	"bufio"
	"container/heap"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
)

// Spill keeps the points of results in a temporary file instead of in
// memory, so that a population of any size runs in memory that does not
// grow with the number of samples. Give it to Run in Settings.Spill, or
// read parts into it with ReadPart; the Result's points are then read back
// from the file, in order of index, by EachSample and EachFailure.
//
// The file is a sequence of sections, each a run of records in increasing
// order of index: a record is a kind byte, the index, the number of knob
// values and the values, then either the number of readouts and the
// readouts (a sample) or the error text (a failure).
// Numbers are stored as their bits, so reading gives back exactly what was
// written. Where the system allows, the file has no name once created
// (nothing is left behind when the program is killed); Close removes it
// otherwise. A Spill is used by one goroutine at a time.
type Spill struct {
	f    *os.File
	name string // to remove at Close when the file could not be unlinked
	w    *bufio.Writer
	off  int64 // bytes written
	buf  []byte
	open *section // the section being written
}

// section is a part of the spill file holding records in increasing
// order of index.
type section struct {
	spill      *Spill
	start, end int64
}

// Record kinds.
const (
	recSample  = 1
	recFailure = 2
)

// maxErrText bounds the error text of one failure read back, and
// maxValues the knob values or readouts of one record.
const (
	maxErrText = 1 << 20
	maxValues  = 1 << 20
)

// NewSpill makes a spill file in dir (the system's temporary folder when
// dir is empty). Close it when the results that use it are no longer
// needed.
func NewSpill(dir string) (*Spill, error) {
	f, err := os.CreateTemp(dir, ".kinetarium-spill-*")
	if err != nil {
		return nil, fmt.Errorf("explore: making a spill file: %w", err)
	}
	s := &Spill{f: f, name: f.Name(), w: bufio.NewWriterSize(f, 256<<10)}
	if runtime.GOOS != "windows" && os.Remove(f.Name()) == nil {
		s.name = ""
	}
	return s, nil
}

// Close closes and removes the file. Results whose points it holds can no
// longer be read.
func (s *Spill) Close() error {
	if s == nil || s.f == nil {
		return nil
	}
	err := s.f.Close()
	if s.name != "" {
		if rerr := os.Remove(s.name); err == nil {
			err = rerr
		}
	}
	s.f = nil
	return err
}

// Size returns the number of bytes written to the file.
func (s *Spill) Size() int64 { return s.off }

// begin starts a section.
func (s *Spill) begin() (*section, error) {
	if s.f == nil {
		return nil, errors.New("explore: the spill file is closed")
	}
	if s.open != nil {
		return nil, errors.New("explore: a spill section is still being written")
	}
	s.open = &section{spill: s, start: s.off, end: s.off}
	return s.open, nil
}

// end finishes the open section.
func (s *Spill) end() {
	if s.open != nil {
		s.open.end = s.off
		s.open = nil
	}
}

// add appends one record to the open section.
func (s *Spill) add(kind byte, index int, x, r []float64, text string) error {
	if s.open == nil {
		return errors.New("explore: no spill section is being written")
	}
	b := append(s.buf[:0], kind)
	b = binary.AppendUvarint(b, uint64(index))
	b = binary.AppendUvarint(b, uint64(len(x)))
	for _, v := range x {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
	}
	if kind == recSample {
		b = binary.AppendUvarint(b, uint64(len(r)))
		for _, v := range r {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
		}
	} else {
		b = binary.AppendUvarint(b, uint64(len(text)))
		b = append(b, text...)
	}
	s.buf = b
	if _, err := s.w.Write(b); err != nil {
		return fmt.Errorf("explore: writing the spill file: %w", err)
	}
	s.off += int64(len(b))
	s.open.end = s.off
	return nil
}

// addSample appends a sample to the open section.
func (s *Spill) addSample(p *Sample) error {
	return s.add(recSample, p.Index, p.X, p.Readouts, "")
}

// addFailure appends a failure to the open section.
func (s *Spill) addFailure(f *Failure) error {
	return s.add(recFailure, f.Index, f.X, nil, f.Err)
}

// flush makes what was written readable.
func (s *Spill) flush() error {
	if s.f == nil {
		return errors.New("explore: the spill file is closed")
	}
	if err := s.w.Flush(); err != nil {
		return fmt.Errorf("explore: writing the spill file: %w", err)
	}
	return nil
}

// cursor reads the records of one section in order.
type cursor struct {
	sec  *section
	r    *bufio.Reader
	kind byte
	s    Sample
	f    Failure
	eof  bool
}

// open returns a cursor on the section's first record, reading through a
// buffer of bufSize bytes.
func (sec *section) cursor(bufSize int) (*cursor, error) {
	c := &cursor{sec: sec, r: bufio.NewReaderSize(io.NewSectionReader(sec.spill.f, sec.start, sec.end-sec.start), bufSize)}
	return c, c.next()
}

// next reads the next record; at the end, eof is set.
func (c *cursor) next() error {
	kind, err := c.r.ReadByte()
	if err == io.EOF {
		c.eof = true
		return nil
	}
	bad := func(err error) error {
		return fmt.Errorf("explore: reading the spill file: %w", err)
	}
	if err != nil {
		return bad(err)
	}
	idx, err := binary.ReadUvarint(c.r)
	if err != nil {
		return bad(err)
	}
	if idx > math.MaxInt32*uint64(MaxShards) {
		return bad(fmt.Errorf("index %d out of range", idx))
	}
	floats := func(v []float64) ([]float64, error) {
		n, err := binary.ReadUvarint(c.r)
		if err != nil {
			return v, err
		}
		if n > maxValues {
			return v, fmt.Errorf("%d values in one record", n)
		}
		v = v[:0]
		var b [8]byte
		for range n {
			if _, err := io.ReadFull(c.r, b[:]); err != nil {
				return v, err
			}
			v = append(v, math.Float64frombits(binary.LittleEndian.Uint64(b[:])))
		}
		return v, nil
	}
	c.kind = kind
	switch kind {
	case recSample:
		c.s.Index = int(idx)
		if c.s.X, err = floats(c.s.X); err != nil {
			return bad(err)
		}
		if c.s.Readouts, err = floats(c.s.Readouts); err != nil {
			return bad(err)
		}
	case recFailure:
		c.f.Index = int(idx)
		if c.f.X, err = floats(c.f.X); err != nil {
			return bad(err)
		}
		n, err := binary.ReadUvarint(c.r)
		if err != nil || n > maxErrText {
			return bad(fmt.Errorf("error text of %d bytes: %v", n, err))
		}
		b := make([]byte, n)
		if _, err := io.ReadFull(c.r, b); err != nil {
			return bad(err)
		}
		c.f.Err = string(b)
	default:
		return bad(fmt.Errorf("unknown record kind %d", kind))
	}
	return nil
}

// index is the index of the cursor's record.
func (c *cursor) index() int {
	if c.kind == recSample {
		return c.s.Index
	}
	return c.f.Index
}

// cursors is a min-heap of cursors by the index of their record.
type cursors []*cursor

func (h cursors) Len() int           { return len(h) }
func (h cursors) Less(i, j int) bool { return h[i].index() < h[j].index() }
func (h cursors) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *cursors) Push(x any)        { *h = append(*h, x.(*cursor)) }
func (h *cursors) Pop() any {
	old := *h
	c := old[len(old)-1]
	*h = old[:len(old)-1]
	return c
}

// eachRecord calls onSample and onFailure (either may be nil) for the
// records of the sections in increasing order of index, merging the
// sections. The Sample or Failure passed is reused for the next record:
// copy what is kept.
func eachRecord(secs []*section, onSample func(*Sample) error, onFailure func(*Failure) error) error {
	if len(secs) == 0 {
		return nil
	}
	if err := secs[0].spill.flush(); err != nil {
		return err
	}
	// Buffers of 64 KiB, less when there are many sections, so that the
	// memory of a merge of many parts stays within about 16 MiB.
	bufSize := max(512, min(64<<10, (16<<20)/len(secs)))
	h := make(cursors, 0, len(secs))
	for _, sec := range secs {
		if sec.spill != secs[0].spill {
			return errors.New("explore: the points of a result are in different spill files")
		}
		c, err := sec.cursor(bufSize)
		if err != nil {
			return err
		}
		if !c.eof {
			h = append(h, c)
		}
	}
	heap.Init(&h)
	for len(h) > 0 {
		c := h[0]
		var err error
		switch {
		case c.kind == recSample && onSample != nil:
			err = onSample(&c.s)
		case c.kind == recFailure && onFailure != nil:
			err = onFailure(&c.f)
		}
		if err != nil {
			return err
		}
		if err := c.next(); err != nil {
			return err
		}
		if c.eof {
			heap.Pop(&h)
		} else {
			heap.Fix(&h, 0)
		}
	}
	return nil
}
