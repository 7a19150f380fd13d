package main

import (
	"context"
	"runtime"
	"strings"
	"testing"
	"time"

	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/solve"
)

// TestRunInfoFirstLineSaysWhy checks issue 16, item 8: after an automatic
// choice, the information dialog's first line names the method and the
// reason (the solver's Stats.Choice), while the status line keeps its
// plain words. The 50-species cascade is stiff (README's example table), so
// Auto picks a stiff method there.
func TestRunInfoFirstLineSaysWhy(t *testing.T) {
	m, err := network.Load("../examples/signalling-cascade-50.json")
	if err != nil {
		t.Fatal(err)
	}
	o, err := run.Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	if o.Stats.Choice == "" {
		t.Fatal("the automatic choice left no reason in Stats.Choice")
	}
	first, _, _ := strings.Cut(runInfoText(o), "\n")
	_, why, _ := strings.Cut(o.Stats.Choice, ": ")
	want := "Method: " + o.MethodSummary() + ", chosen automatically: " + why
	if first != want {
		t.Errorf("first line of the run information:\n got %q\nwant %q", first, want)
	}
	if !strings.Contains(first, "stiff") {
		t.Errorf("first line %q does not say the system is stiff", first)
	}
	if got := plainMethod(o); !strings.HasSuffix(got, ", a method for stiff systems (fast and slow reactions together)") {
		t.Errorf("status line changed: %q", got)
	}

	// A method the user chose has no reason to give.
	m.Simulation.Method = string(solve.Radau)
	o, err = run.Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	first, _, _ = strings.Cut(runInfoText(o), "\n")
	if first != "Method: "+o.MethodSummary() {
		t.Errorf("first line for a chosen method: %q", first)
	}
}

// About the last run says how long checking and compiling took and, on
// Linux, the program's peak memory.
func TestRunInfoTimesAndMemory(t *testing.T) {
	m, err := network.Load("../examples/protease-inhibitor.json")
	if err != nil {
		t.Fatal(err)
	}
	o, err := run.Run(context.Background(), m, nil)
	if err != nil {
		t.Fatal(err)
	}
	text := runInfoText(o)
	if !strings.Contains(text, "checking and compiling the model: ") {
		t.Errorf("no compile time in\n%s", text)
	}
	if runtime.GOOS == "linux" && !strings.Contains(text, "Peak memory of the program so far: ") {
		t.Errorf("no peak memory in\n%s", text)
	}
}

// Times read as the trade writes them, a space before the unit and no
// Go notation such as 1m5s.
func TestRoundDuration(t *testing.T) {
	for _, c := range []struct {
		d    time.Duration
		want string
	}{
		{454 * time.Microsecond, "454 µs"},
		{2567 * time.Microsecond, "2.6 ms"},
		{1234 * time.Millisecond, "1.23 s"},
		{125400 * time.Millisecond, "2 min 5 s"},
	} {
		if got := roundDuration(c.d); got != c.want {
			t.Errorf("roundDuration(%v) = %q, want %q", c.d, got, c.want)
		}
	}
}
