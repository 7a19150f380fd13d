package main

import (
	"errors"
	"fmt"
	"io"

	"kinetarium/network"
)

func init() { register("check", runCheck) }

// runCheck prints every problem of a model file, one a line with its
// place: the reader's problems, the checked network's errors and
// warnings, units included. Exit status 0 when there is no error
// (warnings allowed), 2 otherwise.
func runCheck(args []string, stdout, stderr io.Writer) int {
	if len(args) != 1 || len(args[0]) > 0 && args[0][0] == '-' {
		fmt.Fprint(stderr, "usage: batch check MODEL.json\n")
		return exitBadInput
	}
	path := args[0]
	m, err := network.Load(path)
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
	_, probs := network.Check(m)
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
