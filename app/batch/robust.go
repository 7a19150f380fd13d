package main

// What keeps the command robust against bad input and bugs: bounded
// reading of input files, JSON errors with their line and column, output
// folders checked before any work, signals that stop a run cleanly, and
// the internal-error exit status with panics caught.

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"runtime/debug"
	"strings"
	"syscall"

	"kinetarium/internal/atomicfile"
	"kinetarium/solve/explore"
)

// Limits on input files (README, Limits). Models have network.MaxFileSize.
const (
	maxSpecSize = 16 << 20 // a sweep or population spec
	maxPartSize = 1 << 30  // a partial-result file
)

// exitInternal is the exit status of an internal error: a bug, as opposed
// to bad input (2) or a failed run (1).
const exitInternal = 3

// readInput reads an input file of at most limit bytes as UTF-8 text (a
// byte-order mark is dropped, UTF-16 is named); errors name the path.
func readInput(path string, limit int64) ([]byte, error) {
	data, err := atomicfile.ReadFile(path, limit)
	if err != nil {
		return nil, err
	}
	if data, err = atomicfile.Text(data); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return data, nil
}

// jsonErrorOffset returns the byte offset a JSON decoding error names
// (placed, for syntax and type errors), or reports that the input ended
// too early (eof).
func jsonErrorOffset(err error) (off int64, placed, eof bool) {
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	switch {
	case errors.As(err, &se):
		return se.Offset, true, false
	case errors.As(err, &te):
		return te.Offset, true, false
	case errors.Is(err, io.ErrUnexpectedEOF) || errors.Is(err, io.EOF):
		return 0, false, true
	}
	return 0, false, false
}

// jsonAt returns the line and column of a JSON decoding error in data, and
// whether the error has a place.
func jsonAt(data []byte, err error) (line, col int, ok bool) {
	off, placed, eof := jsonErrorOffset(err)
	var se *json.SyntaxError
	switch {
	case eof:
		off = int64(len(data))
	case !placed:
		return 0, 0, false
	case errors.As(err, &se):
		off = atomicfile.JSONSyntaxOffset(data, se) // the offending character (the error's offset is past it)
	}
	off = max(0, min(off, int64(len(data))))
	line = 1 + bytes.Count(data[:off], []byte("\n"))
	col = int(off) - bytes.LastIndexByte(data[:off], '\n')
	return line, col, true
}

// jsonError names the place of a JSON error in the file path: a truncated
// file says where it ends.
func jsonError(path string, data []byte, err error) error {
	msg := strings.TrimPrefix(err.Error(), "json: ")
	if msg == "unexpected end of JSON input" || errors.Is(err, io.ErrUnexpectedEOF) {
		msg = atomicfile.TruncatedJSON
	}
	if line, col, ok := jsonAt(data, err); ok {
		return fmt.Errorf("%s:%d:%d: %s", path, line, col, msg)
	}
	return fmt.Errorf("%s: %s", path, msg)
}

// checkOutDir refuses an --out that names an existing file other than a
// folder: results would otherwise fail only after the run.
func checkOutDir(dir string) error {
	fi, err := os.Stat(dir)
	if err == nil && !fi.IsDir() {
		return badInput(fmt.Errorf("--out: %s is an existing file; expected a folder for the results", dir))
	}
	return nil
}

// checkOutFile refuses, before any work, an output file named by flag
// that is an existing folder or whose folder does not exist (the write
// would otherwise fail only after the run, naming a temporary file).
func checkOutFile(flag, path string) error {
	if isDir(path) {
		return badInput(fmt.Errorf("%s: %s is an existing folder; expected a file name", flag, path))
	}
	if dir := filepath.Dir(path); !isDir(dir) {
		return badInput(fmt.Errorf("%s: the folder %s does not exist; make it first, or name a file in an existing folder", flag, dir))
	}
	return nil
}

// signalContext is cancelled by Ctrl-C (SIGINT) or SIGTERM, so that a run
// stops cleanly and writes what is complete.
func signalContext() (context.Context, context.CancelFunc) {
	return signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
}

// internalError is a bug in the program (exit status 3), with what to
// quote in a report.
type internalError struct {
	msg   string
	stack []byte
}

func (e *internalError) Error() string { return e.msg }

// internal converts a panic that explore.Run caught into an internal
// error; other errors pass unchanged.
func internal(err error) error {
	var pe *explore.PanicError
	if errors.As(err, &pe) {
		return &internalError{msg: fmt.Sprintf("internal error (a bug; please report it with the input): %v", pe), stack: pe.Stack}
	}
	return err
}

// guard runs a subcommand, turning a panic into an internal error that
// names the command line, and reporting internal errors with status 3.
func guard(name string, args []string, stderr io.Writer, run func() int) (status int) {
	defer func() {
		if r := recover(); r != nil {
			fmt.Fprintf(stderr, "%s: internal error (a bug; please report it with the input): %v\n  command line: batch %s %s\n%s",
				name, r, name, strings.Join(args, " "), debug.Stack())
			status = exitInternal
		}
	}()
	return run()
}
