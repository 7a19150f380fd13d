package run_test

import (
	"os"

	"kinetarium/app/run"
)

func ExampleWriteCSV() {
	o := &run.Outcome{Names: []string{"A", "B"}, T: []float64{0, 1}, Y: [][]float64{{1, 0}, {0.25, 0.75}}}
	run.WriteCSV(os.Stdout, o)
	// Output:
	// time,A,B
	// 0,1,0
	// 1,0.25,0.75
}
