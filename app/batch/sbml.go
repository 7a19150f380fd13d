package main

// The import, export and conformance subcommands: SBML in and out, and
// the SBML Test Suite.

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"slices"
	"strings"

	"kinetarium/app/conformance"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/network/sbml"
)

func init() {
	register("import", runImport)
	register("export", runExport)
	register("conformance", runConformance)
}

// fileArgs parses "FILE [flags]" with flags before or after the file.
func fileArgs(name string, args []string, fs *flag.FlagSet, stdout io.Writer) (string, error) {
	fs.SetOutput(io.Discard)
	pos, err := parseAnywhere(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			fmt.Fprint(stdout, usageText) // -h: the help, as for simulate
			return "", err
		}
		return "", badInput(fmt.Errorf("%v (see batch help)", err))
	}
	if len(pos) != 1 {
		return "", badInput(fmt.Errorf("expected one %s, got %d arguments %q (see batch help)", name, len(pos), pos))
	}
	return pos[0], nil
}

func runImport(args []string, stdout, stderr io.Writer) int {
	return exitStatus("import", sbmlImport(args, stdout, stderr), stderr)
}

// sbmlImport reads an SBML file and writes the model file.
func sbmlImport(args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("import", flag.ContinueOnError)
	out := fs.String("out", "", "")
	in, err := fileArgs("SBML file", args, fs, stdout)
	if err != nil {
		return err
	}
	if *out != "" {
		if err := checkOutFile("--out", *out); err != nil {
			return err
		}
	}
	f, err := os.Open(in)
	if err != nil {
		return badInput(err)
	}
	defer f.Close()
	imp, err := sbml.Read(f, in)
	if err != nil {
		var l network.ErrorList
		if errors.As(err, &l) {
			return badInput(fmt.Errorf("%s cannot be imported (%d %s):\n  %s", in, len(l), plural(len(l), "problem", "problems"), strings.ReplaceAll(joinProblems(l), "\n", "\n  ")))
		}
		return badInput(err)
	}
	for _, p := range imp.Problems.Warnings() {
		fmt.Fprintf(stderr, "import: %s\n", p)
	}
	var buf bytes.Buffer
	if err := imp.Model.Write(&buf); err != nil {
		return err
	}
	if *out == "" {
		_, err = stdout.Write(buf.Bytes())
		return err
	}
	return imp.Model.Save(*out)
}

func joinProblems(l network.ErrorList) string {
	parts := make([]string, len(l))
	for i, p := range l {
		parts[i] = p.String()
	}
	return strings.Join(parts, "\n")
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func runExport(args []string, stdout, stderr io.Writer) int {
	return exitStatus("export", sbmlExport(args, stdout), stderr)
}

// sbmlExport reads a model file and writes SBML.
func sbmlExport(args []string, stdout io.Writer) error {
	fs := flag.NewFlagSet("export", flag.ContinueOnError)
	out := fs.String("out", "", "")
	in, err := fileArgs("model file", args, fs, stdout)
	if err != nil {
		return err
	}
	if *out != "" {
		if err := checkOutFile("--out", *out); err != nil {
			return err
		}
	}
	m, err := network.Load(in)
	if err != nil {
		return badInput(err)
	}
	data, err := sbml.Encode(m)
	if err != nil {
		return badInput(fmt.Errorf("%s: %w", in, err))
	}
	if *out == "" {
		_, err = stdout.Write(data)
		return err
	}
	return atomicfile.Write(*out, data)
}

func runConformance(args []string, stdout, stderr io.Writer) int {
	return exitStatus("conformance", conformanceRun(args, stdout, stderr), stderr)
}

// conformanceRun runs the SBML Test Suite's cases and writes the report.
func conformanceRun(args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("conformance", flag.ContinueOnError)
	out := fs.String("out", "", "")
	summary := fs.String("summary", "", "")
	workers := fs.Int("workers", 0, "")
	quiet := fs.Bool("quiet", false, "")
	level := fs.String("level", "l3v2", "")
	dir, err := fileArgs("folder of cases", args, fs, stdout)
	if err != nil {
		return err
	}
	if _, err := os.Stat(dir); err != nil {
		return badInput(err)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	var progress func(done, total int)
	if !*quiet {
		progress = func(done, total int) {
			if done%100 == 0 || done == total {
				fmt.Fprintf(stderr, "conformance: %d of %d cases\n", done, total)
			}
		}
	}
	if !slices.Contains(conformance.Levels, *level) {
		return badInput(fmt.Errorf("--level: expected one of %s, got %q", strings.Join(conformance.Levels, ", "), *level))
	}
	res, err := conformance.Run(ctx, dir, conformance.Options{Level: *level, Workers: *workers, Progress: progress})
	if err != nil {
		return err
	}
	if len(res) == 0 {
		return badInput(fmt.Errorf("%s holds no case folders (named by five digits, such as 00001); expected the SBML Test Suite's cases folder", dir))
	}
	if *out != "" {
		if err := conformance.WriteCSV(*out, res); err != nil {
			return err
		}
	}
	s := conformance.Summarize(res)
	if *summary != "" {
		var b bytes.Buffer
		if err := s.WriteMarkdown(&b, res); err != nil {
			return err
		}
		if err := atomicfile.Write(*summary, b.Bytes()); err != nil {
			return err
		}
	}
	fmt.Fprintf(stdout, "%d cases: %d pass, %d refused, %d fail; with supported component tags: %d of %d pass (%.1f %%)\n",
		s.All.Cases, s.All.Pass, s.All.Refused, s.All.Fail, s.Supported.Pass, s.Supported.Cases, s.Supported.PassRate())
	if s.All.Fail > 0 {
		return fmt.Errorf("%d %s failed; see the report", s.All.Fail, plural(s.All.Fail, "case", "cases"))
	}
	return nil
}
