package run_test

import (
	"os"

	"kinetarium/app/run"
	"kinetarium/network"
)

func ExampleWriteCSV() {
	o := &run.Outcome{Names: []string{"A", "B"}, Species: 2, TimeUnit: "s", AmountUnit: "uM",
		T: []float64{0, 1}, Y: [][]float64{{1, 0}, {0.25, 0.75}}}
	run.WriteCSV(os.Stdout, o)
	// Shown in minutes and nM instead of the model's s and uM.
	shown, err := o.Convert(network.Display{Time: "min", Concentration: "nM"})
	if err != nil {
		panic(err)
	}
	run.WriteCSV(os.Stdout, shown)
	// Output:
	// time (s),A (uM),B (uM)
	// 0,1,0
	// 1,0.25,0.75
	// time (min),A (nM),B (nM)
	// 0,1000,0
	// 0.016666666666666666,250,750
}
