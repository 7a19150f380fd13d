// Package assets holds the files the desktop program shows as they are,
// such as its icon, embedded in the binary.
package assets

import _ "embed"

// Icon is the program's icon (SVG): two crossing time courses, one falling
// and one rising, on a teal square.
//
//go:embed icon.svg
var Icon []byte
