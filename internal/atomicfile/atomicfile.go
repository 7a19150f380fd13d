// Package atomicfile writes files so that a reader never sees a half-written
// one: the data goes to a temporary file in the same folder, is synced to
// disk, and the temporary file is renamed over the destination, and the
// folder is synced so that the rename itself survives a power cut. It is
// the one place the program writes a file, and holds the one CSV writer
// and the one bounded reader of input files (ReadFile, Text).
package atomicfile

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"time"
)

// StaleAfter is the age after which a temporary file of our own naming
// (".NAME.tmp" and digits, beside NAME) counts as left behind by a save
// that was killed; the next save of NAME removes it. A save in progress
// takes far less, so its temporary file is never touched.
const StaleAfter = 5 * time.Minute

// maxLinks bounds the chain of symbolic links Write follows.
const maxLinks = 40

// Write writes data to path atomically. An existing file keeps its
// permissions; a new one gets 0644. The folder must exist. On failure the
// destination is untouched and no temporary file is left behind.
//
// When path is a symbolic link, the file it points to is written and the
// link is kept. Temporary files of earlier saves of the same file that
// were killed half-way (older than StaleAfter) are removed.
func Write(path string, data []byte) error {
	target, err := resolveLinks(path)
	if err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err := write(target, data); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return nil
}

// resolveLinks follows symbolic links from path to the file they name
// (which need not exist yet).
func resolveLinks(path string) (string, error) {
	for range maxLinks {
		fi, err := os.Lstat(path)
		if err != nil || fi.Mode()&os.ModeSymlink == 0 {
			return path, nil
		}
		dest, err := os.Readlink(path)
		if err != nil {
			return "", err
		}
		if !filepath.IsAbs(dest) {
			dest = filepath.Join(filepath.Dir(path), dest)
		}
		path = dest
	}
	return "", fmt.Errorf("more than %d symbolic links in a row", maxLinks)
}

// tempPattern is the name pattern of the temporary files of path.
func tempPattern(path string) string { return "." + filepath.Base(path) + ".tmp*" }

// removeStale removes the temporary files of path, of our own naming,
// that are older than StaleAfter. Errors are ignored: the files are only
// clutter.
func removeStale(path string) {
	dir := filepath.Dir(path)
	prefix := "." + filepath.Base(path) + ".tmp"
	entries, err := os.ReadDir(dir)
	if err != nil {
		return
	}
	for _, e := range entries {
		name := e.Name()
		rest, ok := strings.CutPrefix(name, prefix)
		if !ok || rest == "" || strings.Trim(rest, "0123456789") != "" || !e.Type().IsRegular() {
			continue
		}
		if fi, err := e.Info(); err == nil && time.Since(fi.ModTime()) > StaleAfter {
			os.Remove(filepath.Join(dir, name))
		}
	}
}

// syncDir flushes a folder's entries (the rename) to disk. Some systems
// cannot sync a folder; that is not an error.
func syncDir(dir string) error {
	if runtime.GOOS == "windows" {
		return nil
	}
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	err = d.Sync()
	if cerr := d.Close(); err == nil {
		err = cerr
	}
	if errors.Is(err, os.ErrInvalid) || errors.Is(err, errors.ErrUnsupported) {
		return nil
	}
	return err
}

// write writes data to path (not a symbolic link) atomically.
func write(path string, data []byte) error {
	removeStale(path)
	tmp, err := os.CreateTemp(filepath.Dir(path), tempPattern(path))
	if err != nil {
		return err
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
		return err
	}
	return syncDir(filepath.Dir(path))
}

// Pending is a file being written atomically a piece at a time, for
// outputs too large to hold in memory: Create makes it, Write adds to it,
// Commit puts it in place as Write does, and Abort drops it. Until Commit
// the destination is untouched.
type Pending struct {
	path, target string
	tmp          *os.File
	w            *bufio.Writer
	err          error
}

// Create starts writing path atomically (see Write: symbolic links are
// followed and kept, stale temporaries removed).
func Create(path string) (*Pending, error) {
	target, err := resolveLinks(path)
	if err != nil {
		return nil, fmt.Errorf("writing %s: %w", path, err)
	}
	removeStale(target)
	tmp, err := os.CreateTemp(filepath.Dir(target), tempPattern(target))
	if err != nil {
		return nil, fmt.Errorf("writing %s: %w", path, err)
	}
	return &Pending{path: path, target: target, tmp: tmp, w: bufio.NewWriterSize(tmp, 64<<10)}, nil
}

// Write adds p to the file. After an error every later call fails.
func (f *Pending) Write(p []byte) (int, error) {
	if f.err != nil {
		return 0, f.err
	}
	n, err := f.w.Write(p)
	if err != nil {
		f.err = fmt.Errorf("writing %s: %w", f.path, err)
	}
	return n, f.err
}

// Commit syncs the file and renames it over the destination, then syncs
// the folder. On failure the destination is untouched and the temporary
// file is removed.
func (f *Pending) Commit() error {
	if f.tmp == nil {
		return fmt.Errorf("writing %s: already finished", f.path)
	}
	name := f.tmp.Name()
	err := f.err
	if err == nil {
		err = f.w.Flush()
	}
	if err == nil {
		err = f.tmp.Sync()
	}
	if cerr := f.tmp.Close(); err == nil {
		err = cerr
	}
	f.tmp = nil
	if err == nil {
		mode := os.FileMode(0o644)
		if fi, serr := os.Stat(f.target); serr == nil {
			mode = fi.Mode().Perm()
		}
		err = os.Chmod(name, mode)
	}
	if err == nil {
		err = os.Rename(name, f.target)
	}
	if err != nil {
		os.Remove(name)
		return fmt.Errorf("writing %s: %w", f.path, err)
	}
	if err := syncDir(filepath.Dir(f.target)); err != nil {
		return fmt.Errorf("writing %s: %w", f.path, err)
	}
	return nil
}

// Abort drops the file, leaving the destination untouched. It does
// nothing after Commit, so that it can be deferred.
func (f *Pending) Abort() {
	if f.tmp == nil {
		return
	}
	name := f.tmp.Name()
	f.tmp.Close()
	os.Remove(name)
	f.tmp = nil
}

// CSVWriter writes a table row by row in WriteCSV's layout, atomically.
type CSVWriter struct {
	f  *Pending
	cw *csv.Writer
}

// CreateCSV starts writing a table to path; Commit puts it in place.
func CreateCSV(path string) (*CSVWriter, error) {
	f, err := Create(path)
	if err != nil {
		return nil, err
	}
	return &CSVWriter{f: f, cw: csv.NewWriter(f)}, nil
}

// Row writes one row.
func (c *CSVWriter) Row(row []string) error {
	if err := c.cw.Write(row); err != nil {
		return fmt.Errorf("writing %s: %w", c.f.path, err)
	}
	return nil
}

// Commit finishes the table and puts it in place (see Pending.Commit).
func (c *CSVWriter) Commit() error {
	c.cw.Flush()
	if err := c.cw.Error(); err != nil {
		c.f.Abort()
		return fmt.Errorf("writing %s: %w", c.f.path, err)
	}
	return c.f.Commit()
}

// Abort drops the table (see Pending.Abort).
func (c *CSVWriter) Abort() { c.f.Abort() }

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

// ReadFile reads the file at path, refusing one larger than limit bytes
// (a device such as /dev/zero included) with an error that names the
// path and the limit, so that input never exhausts memory.
func ReadFile(path string, limit int64) ([]byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if fi, err := f.Stat(); err == nil && fi.IsDir() {
		return nil, fmt.Errorf("%s is a folder; expected a file", path)
	}
	data, err := ReadLimited(f, limit)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return data, nil
}

// ReadLimited reads r to its end, refusing more than limit bytes. A
// regular file is read into a buffer of its size, read once (io.ReadAll
// would grow its buffer by doubling, up to twice the file's size).
func ReadLimited(r io.Reader, limit int64) ([]byte, error) {
	var buf bytes.Buffer
	if f, ok := r.(*os.File); ok {
		if fi, err := f.Stat(); err == nil && fi.Mode().IsRegular() && fi.Size() <= limit {
			buf.Grow(int(fi.Size()) + bytes.MinRead)
		}
	}
	if _, err := buf.ReadFrom(io.LimitReader(r, limit+1)); err != nil {
		return nil, err
	}
	data := buf.Bytes()
	if int64(len(data)) > limit {
		return nil, fmt.Errorf("larger than %s, the most this program reads from one input file", Size(limit))
	}
	return data, nil
}

// Size formats a number of bytes in binary units: "64 MiB".
func Size(n int64) string {
	switch {
	case n >= 1<<30 && n%(1<<30) == 0:
		return fmt.Sprintf("%d GiB", n>>30)
	case n >= 1<<20 && n%(1<<20) == 0:
		return fmt.Sprintf("%d MiB", n>>20)
	case n >= 1<<10 && n%(1<<10) == 0:
		return fmt.Sprintf("%d KiB", n>>10)
	}
	return fmt.Sprintf("%d bytes", n)
}

// Text returns the UTF-8 text of a file's content: a UTF-8 byte-order
// mark is dropped; a file in UTF-16 or UTF-32 (recognised by its
// byte-order mark or by the zero bytes of ASCII text in it) is refused
// with an error that names the encoding and says what to do.
func Text(data []byte) ([]byte, error) {
	if rest, ok := bytes.CutPrefix(data, []byte{0xEF, 0xBB, 0xBF}); ok {
		return rest, nil
	}
	enc := ""
	switch {
	case bytes.HasPrefix(data, []byte{0xFF, 0xFE, 0, 0}), bytes.HasPrefix(data, []byte{0, 0, 0xFE, 0xFF}):
		enc = "UTF-32"
	case bytes.HasPrefix(data, []byte{0xFF, 0xFE}), bytes.HasPrefix(data, []byte{0xFE, 0xFF}):
		enc = "UTF-16"
	case len(data) >= 4 && data[0] != 0 && data[1] == 0 && data[2] != 0 && data[3] == 0,
		len(data) >= 4 && data[0] == 0 && data[1] != 0 && data[2] == 0 && data[3] != 0:
		enc = "UTF-16"
	}
	if enc != "" {
		return nil, fmt.Errorf("the file is %s text; save it as UTF-8 (the usual encoding of JSON, CSV and SBML) and try again", enc)
	}
	return data, nil
}

// TruncatedJSON is the message for a JSON file that ends before its
// objects and lists are closed, for every reader of JSON input.
const TruncatedJSON = "the file ends too early (truncated?): an object or list is not closed"

// JSONSyntaxAt returns the offset of the byte at which data stops being
// valid JSON: the offending character, or len(data) when the text ends
// too early; ok is false when data is valid JSON. The syntax errors of
// json.Decoder.Token carry no reliable offset (they may point at an
// earlier key), so the readers built on it place their syntax errors here.
func JSONSyntaxAt(data []byte) (off int64, ok bool) {
	var raw json.RawMessage
	var se *json.SyntaxError
	if err := json.Unmarshal(data, &raw); !errors.As(err, &se) {
		return 0, false
	}
	if se.Offset >= int64(len(data)) && se.Error() == "unexpected end of JSON input" {
		return int64(len(data)), true
	}
	return max(0, se.Offset-1), true // the offset counts the offending byte
}

// JSONSyntaxOffset is where a syntax error se found in data is: at the
// offending character (JSONSyntaxAt), or se's own offset where data is
// valid JSON as a whole (a reader's own rule, such as a repeated key).
func JSONSyntaxOffset(data []byte, se *json.SyntaxError) int64 {
	if off, ok := JSONSyntaxAt(data); ok {
		return off
	}
	return se.Offset
}
