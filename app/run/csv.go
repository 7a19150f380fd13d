package run

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"strconv"

	"kinetarium/internal/atomicfile"
)

// WriteCSV writes the outcome as CSV in the layout of the batch command: a
// header "time,<species…>" and one row per output time, numbers in their
// shortest exact form (strconv 'g', -1).
func WriteCSV(w io.Writer, o *Outcome) error {
	bw := bufio.NewWriter(w)
	cw := csv.NewWriter(bw)
	rec := make([]string, len(o.Names)+1)
	rec[0] = "time"
	copy(rec[1:], o.Names)
	if err := cw.Write(rec); err != nil {
		return fmt.Errorf("writing CSV: %w", err)
	}
	for i, t := range o.T {
		rec[0] = strconv.FormatFloat(t, 'g', -1, 64)
		for j, v := range o.Y[i] {
			rec[j+1] = strconv.FormatFloat(v, 'g', -1, 64)
		}
		if err := cw.Write(rec); err != nil {
			return fmt.Errorf("writing CSV: %w", err)
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("writing CSV: %w", err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("writing CSV: %w", err)
	}
	return nil
}

// SaveCSV writes the outcome to path atomically (see WriteCSV).
func SaveCSV(path string, o *Outcome) error {
	var b bytes.Buffer
	if err := WriteCSV(&b, o); err != nil {
		return err
	}
	return atomicfile.Write(path, b.Bytes())
}
