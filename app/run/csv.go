package run

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"

	"kinetarium/internal/atomicfile"
	"kinetarium/plotting"
)

// Rows lays out the outcome as a table: a header of the columns with
// their units, "time (h)", "P (nM)" (a name alone where no unit is
// known), and one row per output time, numbers in their shortest exact
// form (strconv 'g', -1).
func Rows(o *Outcome) [][]string {
	rows := make([][]string, 0, len(o.T)+1)
	rows = append(rows, Header(o))
	for i, t := range o.T {
		rec := make([]string, 0, len(o.Names)+1)
		rec = append(rec, strconv.FormatFloat(t, 'g', -1, 64))
		for _, v := range o.Y[i] {
			rec = append(rec, strconv.FormatFloat(v, 'g', -1, 64))
		}
		rows = append(rows, rec)
	}
	return rows
}

// Header returns the table's column names with their units: "time (h)",
// then each species and assignment as "NAME (UNIT)", or the name alone
// when its unit is not known.
func Header(o *Outcome) []string {
	h := make([]string, 0, len(o.Names)+1)
	h = append(h, withUnit("time", o.TimeUnit))
	for j, n := range o.Names {
		h = append(h, withUnit(n, o.ColumnUnit(j)))
	}
	return h
}

// withUnit writes a column name as the figures write axis labels.
func withUnit(name, unit string) string {
	return plotting.AxisLabel(name, strings.TrimSpace(unit))
}

// WriteCSV writes the outcome's Rows to w as CSV, one row at a time:
// the table of text is never held whole (for a large network it is many
// times the size of the numbers). Numbers need no quoting, so a row is
// written as its digits and commas straight into one reused buffer.
func WriteCSV(w io.Writer, o *Outcome) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(Header(o)); err != nil {
		return fmt.Errorf("writing CSV: %w", err)
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("writing CSV: %w", err)
	}
	var line []byte
	for i, t := range o.T {
		line = strconv.AppendFloat(line[:0], t, 'g', -1, 64)
		for _, v := range o.Y[i] {
			line = append(line, ',')
			line = strconv.AppendFloat(line, v, 'g', -1, 64)
		}
		line = append(line, '\n')
		if _, err := w.Write(line); err != nil {
			return fmt.Errorf("writing CSV: %w", err)
		}
	}
	return nil
}

// SaveCSV writes the rows of o to path atomically and, when prov is not
// nil, its provenance beside it (see SaveProvenance), with the methods the
// solve used and, for the automatic choice, why. The rows go to the
// file as they are written, so the table of text is never held whole.
func SaveCSV(path string, o *Outcome, prov *Provenance) error {
	f, err := atomicfile.Create(path)
	if err != nil {
		return err
	}
	defer f.Abort()
	if err := WriteCSV(f, o); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err := f.Commit(); err != nil {
		return err
	}
	if prov == nil {
		return nil
	}
	return SaveProvenance(path, prov.withMethods(o.Stats))
}
