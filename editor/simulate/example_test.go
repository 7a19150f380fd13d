package simulate_test

import (
	"os"

	"kinetarium/editor/simulate"
)

func ExampleWriteCSV() {
	o := &simulate.Outcome{Names: []string{"A", "B"}, T: []float64{0, 1}, Y: [][]float64{{1, 0}, {0.25, 0.75}}}
	simulate.WriteCSV(os.Stdout, o)
	// Output:
	// time,A,B
	// 0,1,0
	// 1,0.25,0.75
}
