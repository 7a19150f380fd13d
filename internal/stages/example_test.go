package stages_test

import (
	"os"

	"kinetarium/internal/stages"
	"kinetarium/network"
)

// Each stage runs through Do; Write prints the table (times and memory
// differ from run to run, so this example has no fixed output).
func ExampleRecorder() {
	var rec stages.Recorder
	var m *network.Model
	rec.Do("read", func() (err error) { m, err = network.Load("../../examples/protease-inhibitor.json"); return err })
	rec.Do("compile", func() error { _, err := network.Compile(m); return err })
	rec.Write(os.Stdout)
}
