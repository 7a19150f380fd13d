package calibrate

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"kinetarium/internal/atomicfile"
)

// Data is one file of measurements: time courses of species or
// assignments, with replicates and, optionally, standard deviations.
type Data struct {
	Source string   // the file, for messages
	Names  []string // the measured columns, in file order
	Points []Point  // sorted by time, then by file order
}

// Point is one measured value.
type Point struct {
	Time  float64
	Name  string  // the species or assignment measured
	Value float64 // the measurement
	SD    float64 // its standard deviation from an sd_ column; NaN when none
	Line  int     // its line in the file
}

// DataError is a problem in a data file, with its place.
type DataError struct {
	File   string
	Line   int    // 1-based; 0 when it concerns the whole file
	Column int    // 1-based; 0 when it concerns the whole line
	Name   string // the column's header, when known
	Msg    string
}

func (e *DataError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ", line %d", e.Line)
	}
	switch {
	case e.Column > 0 && e.Name != "":
		fmt.Fprintf(&b, ", column %d (%s)", e.Column, e.Name)
	case e.Column > 0:
		fmt.Fprintf(&b, ", column %d", e.Column)
	}
	b.WriteString(": ")
	b.WriteString(e.Msg)
	return b.String()
}

// DataErrors are all the problems found in a data file, in file order.
type DataErrors []*DataError

func (l DataErrors) Error() string { return listed(l) }

// listed describes the one problem of l, or lists them one a line after
// "3 problems:".
func listed[E error](l []E) string {
	switch len(l) {
	case 0:
		return "no problems"
	case 1:
		return l[0].Error()
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%d problems:", len(l))
	for _, e := range l {
		b.WriteString("\n  ")
		b.WriteString(e.Error())
	}
	return b.String()
}

// maxDataErrors bounds the problems listed for one file.
const maxDataErrors = 25

// maxDataSize bounds a measurement file read (README, Limits).
const maxDataSize = 64 << 20

// LoadData reads a data file (see ReadData).
func LoadData(path string, known []string) (*Data, error) {
	b, err := atomicfile.ReadFile(path, maxDataSize)
	if err != nil {
		return nil, fmt.Errorf("reading measurements: %w", err)
	}
	return ReadData(b, path, known)
}

// ReadData reads measurements in CSV, or TSV when the name ends in .tsv
// or the header holds a tab: a header with a "time" column, one column per
// measured species or assignment, and optional "sd_NAME" columns with the
// standard deviation of NAME's values in the same row. An empty cell is a
// missing value; rows with the same time are replicates; rows need not be
// sorted. known, when not nil, are the names the model offers, and a
// column naming anything else is an error. Every problem is reported with
// its line and column.
func ReadData(b []byte, source string, known []string) (*Data, error) {
	var errs DataErrors
	add := func(line, col int, name, format string, args ...any) {
		if len(errs) < maxDataErrors {
			errs = append(errs, &DataError{File: source, Line: line, Column: col, Name: name, Msg: fmt.Sprintf(format, args...)})
		}
	}
	b, err := atomicfile.Text(b) // a byte-order mark dropped, UTF-16 named
	if err != nil {
		return nil, DataErrors{{File: source, Msg: err.Error()}}
	}
	sep := ','
	first, _, _ := bytes.Cut(b, []byte("\n"))
	if strings.EqualFold(filepath.Ext(source), ".tsv") || bytes.ContainsRune(first, '\t') {
		sep = '\t'
	}
	r := csv.NewReader(bytes.NewReader(b))
	r.Comma = sep
	r.FieldsPerRecord = -1
	r.TrimLeadingSpace = true
	r.ReuseRecord = false
	header, err := r.Read()
	if err != nil {
		if errors.Is(err, io.EOF) {
			add(0, 0, "", "the file is empty; expected a header such as time,P,sd_P")
		} else {
			add(csvLine(err), 0, "", "%s", csvMessage(err))
		}
		return nil, errs
	}
	d := &Data{Source: source}
	timeCol := -1
	valueOf := map[int]string{} // column → measured name
	sdOf := map[string]int{}    // name → its sd column
	sdCols := map[int]string{}
	knownSet := map[string]bool{}
	for _, k := range known {
		knownSet[k] = true
	}
	seen := map[string]int{}
	for c, h := range header {
		h = strings.TrimSpace(h)
		header[c] = h
		switch {
		case h == "":
			add(1, c+1, "", "the header is empty here; expected time, a species or assignment name, or sd_NAME")
			continue
		case seen[h] > 0:
			add(1, c+1, h, "repeats column %d", seen[h])
			continue
		}
		seen[h] = c + 1
		switch {
		case strings.EqualFold(h, "time") || h == "t":
			timeCol = c
		case strings.HasPrefix(h, "sd_"):
			sdCols[c] = strings.TrimPrefix(h, "sd_")
			sdOf[strings.TrimPrefix(h, "sd_")] = c
		default:
			if known != nil && !knownSet[h] {
				add(1, c+1, h, "is neither a species nor an assignment of the model (expected one of: %s)", strings.Join(known, ", "))
				continue
			}
			valueOf[c] = h
			d.Names = append(d.Names, h)
		}
	}
	if timeCol < 0 {
		add(1, 0, "", "no time column; the header must name one column \"time\"")
	}
	for c, name := range sdCols {
		if _, ok := seen[name]; !ok {
			add(1, c+1, "sd_"+name, "gives standard deviations of %q, but there is no column %q", name, name)
		}
	}
	if len(d.Names) == 0 && len(errs) == 0 {
		add(1, 0, "", "no measured column; add a column named after a species or assignment")
	}
	if len(errs) > 0 {
		return nil, errs
	}
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			add(csvLine(err), 0, "", "%s", csvMessage(err))
			break
		}
		line, _ := r.FieldPos(0)
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue // a blank line
		}
		if len(rec) > len(header) {
			add(line, len(header)+1, "", "the row has %d cells but the header has %d columns", len(rec), len(header))
			continue
		}
		cell := func(c int) string {
			if c < len(rec) {
				return strings.TrimSpace(rec[c])
			}
			return ""
		}
		num := func(c int, what string) (float64, bool) {
			s := cell(c)
			v, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				add(line, c+1, header[c], "%q is not a number; expected %s", s, what)
				return 0, false
			}
			return v, true
		}
		if cell(timeCol) == "" {
			add(line, timeCol+1, header[timeCol], "no time given; every row needs one")
			continue
		}
		t, ok := num(timeCol, "a time such as 2.5")
		if !ok {
			continue
		}
		if t < 0 {
			add(line, timeCol+1, header[timeCol], "time %g is before 0; simulations start at time 0", t)
			continue
		}
		for c := range header {
			name, isValue := valueOf[c]
			if !isValue {
				if sn, isSD := sdCols[c]; isSD && cell(c) != "" {
					if vc := seen[sn] - 1; vc >= 0 && cell(vc) == "" {
						add(line, c+1, header[c], "a standard deviation is given but the value of %q is missing", sn)
					}
				}
				continue
			}
			if cell(c) == "" {
				continue // missing
			}
			v, ok := num(c, "a measured value")
			if !ok {
				continue
			}
			p := Point{Time: t, Name: name, Value: v, SD: math.NaN(), Line: line}
			if sc, has := sdOf[name]; has && cell(sc) != "" {
				sd, ok := num(sc, "a standard deviation (a positive number)")
				if !ok {
					continue
				}
				if !(sd > 0) {
					add(line, sc+1, header[sc], "standard deviation %g must be positive", sd)
					continue
				}
				p.SD = sd
			}
			d.Points = append(d.Points, p)
		}
	}
	if len(errs) > 0 {
		return nil, errs
	}
	if len(d.Points) == 0 {
		return nil, DataErrors{{File: source, Msg: "no measured values: every cell below the header is empty"}}
	}
	sort.SliceStable(d.Points, func(i, j int) bool { return d.Points[i].Time < d.Points[j].Time })
	return d, nil
}

// csvLine returns the line of an encoding/csv error.
func csvLine(err error) int {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return pe.Line
	}
	return 0
}

// csvMessage describes an encoding/csv error without its position.
func csvMessage(err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return pe.Err.Error() + " (a quoted cell must close its quotes)"
	}
	return err.Error()
}

// Times returns the distinct measurement times, ascending.
func (d *Data) Times() []float64 {
	var out []float64
	for _, p := range d.Points {
		if len(out) == 0 || p.Time > out[len(out)-1] {
			out = append(out, p.Time)
		}
	}
	return out
}
