// Package atomicfile writes files so that a reader never sees a half-written
// one: the data goes to a temporary file in the same folder, is synced to
// disk, and the temporary file is renamed over the destination. It is the
// one place the program writes a file, and holds the one CSV writer.
package atomicfile

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// Write writes data to path atomically. An existing file keeps its
// permissions; a new one gets 0644. The folder must exist. On failure the
// destination is untouched and no temporary file is left behind.
func Write(path string, data []byte) error {
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp*")
	if err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	name := tmp.Name()
	_, err = tmp.Write(data)
	if err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		mode := os.FileMode(0o644)
		if fi, serr := os.Stat(path); serr == nil {
			mode = fi.Mode().Perm()
		}
		err = os.Chmod(name, mode)
	}
	if err == nil {
		err = os.Rename(name, path)
	}
	if err != nil {
		os.Remove(name)
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return nil
}

// WriteCSV writes rows to path atomically as CSV (RFC 4180, "\n" line
// ends), the one layout of every table the program writes.
func WriteCSV(path string, rows [][]string) error {
	var buf bytes.Buffer
	if err := EncodeCSV(&buf, rows); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return Write(path, buf.Bytes())
}

// EncodeCSV writes rows to w as WriteCSV lays them out.
func EncodeCSV(w io.Writer, rows [][]string) error {
	cw := csv.NewWriter(w)
	if err := cw.WriteAll(rows); err != nil {
		return fmt.Errorf("writing CSV: %w", err)
	}
	return nil
}

// ReadCSV reads back a table written by WriteCSV; errors name the path.
func ReadCSV(path string) ([][]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return rows, nil
}
