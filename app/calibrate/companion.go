package calibrate

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"kinetarium/internal/atomicfile"
)

// CompanionFormat is the format name of the small file kept beside a
// model that remembers which measurements belong with it.
const CompanionFormat = "kinetarium.beside/1"

// maxCompanionSize bounds the companion file read: it holds one path.
const maxCompanionSize = 64 << 10

// Companion is what the window remembers beside a model file, outside the
// mechanism: the measurements shown over its time courses. The file is
// MODEL.beside.json next to MODEL.json:
//
//	{"format": "kinetarium.beside/1", "measurements": "plate-run-2.csv"}
//
// Measurements is a path relative to the model's folder (or absolute when
// the data live on another volume).
type Companion struct {
	Measurements string
}

// CompanionPath returns the companion file of the model file at
// modelPath: "dir/name.json" → "dir/name.beside.json".
func CompanionPath(modelPath string) string {
	return strings.TrimSuffix(modelPath, filepath.Ext(modelPath)) + ".beside.json"
}

// MeasurementsPath returns the measurements file named by c for the model
// at modelPath, resolved against the model's folder; "" when none.
func (c *Companion) MeasurementsPath(modelPath string) string {
	if c == nil || c.Measurements == "" {
		return ""
	}
	p := filepath.FromSlash(c.Measurements)
	if filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(filepath.Dir(modelPath), p)
}

// ReadCompanion reads a companion file's text; every problem is reported
// with its line and column (as SpecErrors, whose File is source).
func ReadCompanion(data []byte, source string) (*Companion, error) {
	r := &specReader{file: source, data: data}
	text, err := atomicfile.Text(data)
	if err != nil {
		return nil, SpecErrors{{File: source, Msg: err.Error()}}
	}
	r.data = text
	top, err := parseJSON(text)
	if err != nil {
		return nil, jsonErrors(source, text, err)
	}
	if top.kind != 'o' {
		r.fail(top, "", "expected a JSON object with \"format\": %q", CompanionFormat)
		return nil, r.errs
	}
	r.keys(top, "", "format", "measurements")
	switch f, ok := r.str(top.obj["format"], "format"); {
	case top.obj["format"] == nil:
		r.fail(top, "format", "missing; expected \"format\": %q", CompanionFormat)
	case ok && f != CompanionFormat:
		r.fail(top.obj["format"], "format", "is %q; expected %q (a file from a newer version of the program?)", f, CompanionFormat)
	}
	c := &Companion{}
	if n := top.obj["measurements"]; n != nil {
		if s, ok := r.str(n, "measurements"); ok {
			switch {
			case strings.TrimSpace(s) == "":
				r.fail(n, "measurements", "is empty; expected the path of a measurements file, such as \"run1.csv\"")
			case strings.ContainsRune(s, 0):
				r.fail(n, "measurements", "holds a NUL character; expected a file path")
			default:
				c.Measurements = s
			}
		}
	}
	if len(r.errs) > 0 {
		return nil, r.errs
	}
	return c, nil
}

// LoadCompanion reads the companion file of the model at modelPath. A
// model without one gives nil and no error.
func LoadCompanion(modelPath string) (*Companion, error) {
	path := CompanionPath(modelPath)
	b, err := atomicfile.ReadFile(path, maxCompanionSize)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("reading %s: %w", path, err)
	}
	return ReadCompanion(b, path)
}

// SaveCompanion writes the companion file of the model at modelPath,
// atomically, naming the measurements file dataPath (relative to the
// model's folder where possible). An empty dataPath removes the
// companion file.
func SaveCompanion(modelPath, dataPath string) error {
	path := CompanionPath(modelPath)
	if dataPath == "" {
		if err := os.Remove(path); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return err
		}
		return nil
	}
	rel := dataPath
	if absData, err := filepath.Abs(dataPath); err == nil {
		rel = absData
		if absModel, err := filepath.Abs(modelPath); err == nil {
			if r, err := filepath.Rel(filepath.Dir(absModel), absData); err == nil {
				rel = r
			}
		}
	}
	b, err := json.MarshalIndent(map[string]string{"format": CompanionFormat, "measurements": filepath.ToSlash(rel)}, "", "  ")
	if err != nil {
		return err
	}
	return atomicfile.Write(path, append(b, '\n'))
}
