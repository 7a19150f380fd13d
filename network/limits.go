package network

// Limits on the sizes read from input, so that a mistyped number or a
// hostile file gets a message instead of exhausting memory. README's
// "Limits" section states them.
const (
	// MaxFileSize is the largest model file Read accepts.
	MaxFileSize = 64 << 20
	// MaxPoints is the largest number of output times of a simulation.
	MaxPoints = 1_000_000
	// MaxCount is the largest number of occurrences of a repeated event.
	MaxCount = 1_000_000
	// MaxOutputValues bounds the output grid's values: output times times
	// species and assignments (8 bytes each, so 400 MB).
	MaxOutputValues = 50_000_000
)
