package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"kinetarium/internal/stages"
	"kinetarium/network"
)

func init() { register("check", runCheck) }

// runCheck prints every problem of a model file, one a line with its
// place: the reader's problems, the checked network's errors and
// warnings, units included. Exit status 0 when there is no error
// (warnings allowed), 2 otherwise.
//
// With --timings it also finds the conservation laws and compiles the
// model, and prints each stage's time and memory to stderr.
func runCheck(args []string, stdout, stderr io.Writer) int {
	var path string
	timings := false
	for _, a := range args {
		switch {
		case a == "-h" || a == "-help" || a == "--help":
			fmt.Fprint(stdout, "usage: batch check MODEL.json [--timings]\n")
			return exitOK
		case a == "--timings" || a == "-timings":
			timings = true
		case path == "" && !strings.HasPrefix(a, "-"):
			path = a
		default:
			path = ""
			args = nil
		}
	}
	if path == "" || args == nil {
		fmt.Fprint(stderr, "usage: batch check MODEL.json [--timings]\n")
		return exitBadInput
	}
	var rec stages.Recorder
	if timings {
		defer writeTimings(stderr, "check", &rec)
	}
	var m *network.Model
	err := rec.Do("read", func() (err error) { m, err = network.Load(path); return err })
	if err != nil {
		var l network.ErrorList
		if errors.As(err, &l) {
			for _, p := range l {
				fmt.Fprintln(stdout, p.String())
			}
			fmt.Fprintf(stderr, "%s: %s; the model was not checked further\n", path, count(len(l), 0))
		} else {
			fmt.Fprintf(stderr, "batch check: %v\n", err)
		}
		return exitBadInput
	}
	var (
		net   *network.Net
		probs network.ErrorList
	)
	rec.Do("check", func() error { net, probs = network.Check(m); return nil })
	if timings && probs.Err() == nil {
		var laws []network.ConservationLaw
		rec.Do("conservation laws", func() error { laws = net.ConservationLaws(); return nil })
		fmt.Fprintf(stderr, "%s: %d conservation laws\n", path, len(laws))
		rec.Do("compile", func() error { _, err := net.Compile(); return err })
	}
	for _, p := range probs {
		fmt.Fprintln(stdout, p.String())
	}
	nerr := len(probs.Errors())
	fmt.Fprintf(stderr, "%s: %s\n", path, count(nerr, len(probs)-nerr))
	if nerr > 0 {
		return exitBadInput
	}
	return exitOK
}

// count writes "no problems", "1 error", "2 errors, 1 warning", ….
func count(nerr, nwarn int) string {
	if nerr == 0 && nwarn == 0 {
		return "no problems"
	}
	word := func(n int, w string) string {
		if n == 1 {
			return "1 " + w
		}
		return fmt.Sprintf("%d %ss", n, w)
	}
	switch {
	case nwarn == 0:
		return word(nerr, "error")
	case nerr == 0:
		return word(nwarn, "warning")
	}
	return word(nerr, "error") + ", " + word(nwarn, "warning")
}
