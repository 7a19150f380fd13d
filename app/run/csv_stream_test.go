package run

import (
	"bytes"
	"math"
	"testing"

	"kinetarium/internal/atomicfile"
)

// WriteCSV, which writes row by row, gives byte for byte what
// encoding/csv gives for the table of Rows (the standard library's CSV
// writer as the reference), names that need quotes, signs, exponents and
// non-finite values included.
func TestWriteCSVMatchesEncodingCSV(t *testing.T) {
	o := &Outcome{TimeUnit: "h", AmountUnit: "uM", Species: 2,
		Names: []string{"A", "B, bound", `C "free"`}, Units: []string{"uM", "uM", ""},
		T: []float64{0, 1e-3, 12.5},
		Y: [][]float64{{1, -0.5, 0}, {1e-300, math.NaN(), math.Inf(1)}, {3.14159, 2e21, math.Inf(-1)}}}
	var got, want bytes.Buffer
	if err := WriteCSV(&got, o); err != nil {
		t.Fatal(err)
	}
	if err := atomicfile.EncodeCSV(&want, Rows(o)); err != nil {
		t.Fatal(err)
	}
	if got.String() != want.String() {
		t.Errorf("WriteCSV wrote\n%s\nencoding/csv writes\n%s", got.String(), want.String())
	}
}
