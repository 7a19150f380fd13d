// Package examples holds the example models shipped with the program, as
// embedded model files.
package examples

import (
	"embed"
	"fmt"
	"io/fs"
	"sort"
)

//go:embed *.json
var files embed.FS

// Default is the example opened when the program starts without a model.
const Default = "protease-inhibitor.json"

// Names returns the file names of the examples, sorted.
func Names() []string {
	entries, err := fs.Glob(files, "*.json")
	if err != nil {
		return nil
	}
	sort.Strings(entries)
	return entries
}

// Open returns the contents of the named example.
func Open(name string) ([]byte, error) {
	b, err := files.ReadFile(name)
	if err != nil {
		return nil, fmt.Errorf("example %q: no such example; known: %v", name, Names())
	}
	return b, nil
}
