// Command largenet measures each stage of a simulation (reading the model
// file, checking, conservation laws, compiling, solving, writing the CSV)
// on the generated networks of internal/gennet from 50 to 20,000 species,
// with wall time, bytes allocated and the process's peak memory, and
// writes the table bench/large-networks.md:
//
//	go run ./internal/largenet -out bench/large-networks.md
//
// Each model runs in a child process of its own, so that the peak memory
// is that model's alone; a stage that runs past -limit is stopped and
// shown as such.
package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"kinetarium/app/run"
	"kinetarium/internal/atomicfile"
	"kinetarium/internal/gennet"
	"kinetarium/internal/stages"
	"kinetarium/network"
	"kinetarium/solve"
)

var maxRSS int64

var families = map[string]func(int) *network.Model{
	"cascade":  gennet.Cascade,
	"feedback": gennet.Feedback,
}

func main() {
	out := flag.String("out", "", "write the Markdown report to this file (default: standard output)")
	sizes := flag.String("sizes", "50,200,1000,5000,20000", "numbers of species, comma-separated")
	fams := flag.String("families", "cascade,feedback", "generated families: cascade, feedback")
	limit := flag.Duration("limit", 5*time.Minute, "stop a model's run after this long")
	flag.Int64Var(&maxRSS, "max-memory", 8<<30, "stop a model's run when its resident memory passes this many bytes")
	solveMax := flag.Int("solve-max", 20000, "solve only models with at most this many species")
	child := flag.String("child", "", "(internal) run the stages on this model file and print them as JSON lines")
	flag.Parse()
	if *child != "" {
		if err := runStages(*child); err != nil {
			fmt.Fprintln(os.Stderr, "largenet:", err)
			os.Exit(1)
		}
		return
	}
	if err := report(*out, *sizes, *fams, *limit, *solveMax); err != nil {
		fmt.Fprintln(os.Stderr, "largenet:", err)
		os.Exit(1)
	}
}

// runStages runs the stages on the model file path, printing each stage as
// a JSON line as soon as it ends. SKIP_SOLVE in the environment leaves the
// solve and the CSV out.
func runStages(path string) error {
	var rec stages.Recorder
	enc := json.NewEncoder(os.Stdout)
	do := func(name string, f func() error) error {
		err := rec.Do(name, f)
		if err == nil {
			err = enc.Encode(rec.Stages[len(rec.Stages)-1])
		}
		return err
	}
	var (
		m   *network.Model
		net *network.Net
		sys *network.System
		res *solve.Result
	)
	if err := do("read", func() (err error) { m, err = network.Load(path); return err }); err != nil {
		return err
	}
	if err := do("check", func() error {
		var probs network.ErrorList
		net, probs = network.Check(m)
		return probs.Err()
	}); err != nil {
		return err
	}
	if err := do("compile", func() (err error) { sys, err = net.Compile(); return err }); err != nil {
		return err
	}
	laws := func() error {
		if net == nil { // checked again, outside the stage
			net, _ = network.Check(m)
		}
		return do("conservation laws", func() error {
			if laws := net.ConservationLaws(); len(laws) == 0 {
				return errors.New("no conservation laws found; the generated networks have one per module")
			}
			return nil
		})
	}
	if os.Getenv("SKIP_SOLVE") != "" {
		return laws()
	}
	// The simulate path needs the checked network no more once it is
	// compiled (the batch command's simulate lets it go), so neither
	// does this one: the laws below check the model again.
	net = nil
	sim := m.Simulation.WithDefaults()
	if err := do("solve", func() error {
		settings, err := run.Settings(sim)
		if err != nil {
			return err
		}
		res, err = solve.NewSolver(sys, settings).Solve(context.Background(), 0, sim.TEnd, sys.Initial())
		return err
	}); err != nil {
		return err
	}
	dir, err := os.MkdirTemp("", "largenet")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	if err := do("write CSV", func() error {
		o, err := run.NewOutcome(m, sys, res, nil, time.Now())
		if err != nil {
			return err
		}
		prov, err := run.NewProvenance("simulation", m, sim, nil)
		if err != nil {
			return err
		}
		return run.SaveCSV(filepath.Join(dir, "out.csv"), o, prov)
	}); err != nil {
		return err
	}
	// Last, so that the peaks of the stages before are those of the
	// simulate path, which does not need the laws.
	return laws()
}

// result is one model's run as the parent saw it.
type result struct {
	family  string
	species int
	stages  []stages.Stage
	failed  string // why the run stopped early, if it did
}

func report(out, sizes, fams string, limit time.Duration, solveMax int) error {
	self, err := os.Executable()
	if err != nil {
		return err
	}
	dir, err := os.MkdirTemp("", "largenet")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	var results []result
	for _, fam := range strings.Split(fams, ",") {
		gen, ok := families[strings.TrimSpace(fam)]
		if !ok {
			return fmt.Errorf("-families: unknown family %q; expected cascade or feedback", fam)
		}
		for _, s := range strings.Split(sizes, ",") {
			n, err := strconv.Atoi(strings.TrimSpace(s))
			if err != nil || n < 4 {
				return fmt.Errorf("-sizes: expected numbers of species of at least 4, got %q", s)
			}
			m := gen(n)
			path := filepath.Join(dir, fmt.Sprintf("%s-%d.json", fam, n))
			if err := m.Save(path); err != nil {
				return err
			}
			r := result{family: fam, species: len(m.Species)}
			r.stages, r.failed = runChild(self, path, limit, len(m.Species) > solveMax)
			fmt.Fprintf(os.Stderr, "%s %d: %d stages %s\n", fam, r.species, len(r.stages), r.failed)
			results = append(results, r)
			os.Remove(path)
		}
	}
	text := markdown(results, limit, solveMax)
	if out == "" {
		_, err := os.Stdout.WriteString(text)
		return err
	}
	return atomicfile.Write(out, []byte(text))
}

// runChild runs the stages of the model file in a child process.
func runChild(self, path string, limit time.Duration, skipSolve bool) ([]stages.Stage, string) {
	ctx, cancel := context.WithTimeout(context.Background(), limit)
	defer cancel()
	cmd := exec.CommandContext(ctx, self, "-child", path)
	cmd.Env = os.Environ()
	if skipSolve {
		cmd.Env = append(cmd.Env, "SKIP_SOLVE=1")
	}
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	var out bytes.Buffer
	cmd.Stdout = &out
	var over atomic.Bool
	err := cmd.Start()
	if err == nil {
		done := make(chan struct{})
		go func() {
			t := time.NewTicker(50 * time.Millisecond)
			defer t.Stop()
			for {
				select {
				case <-done:
					return
				case <-t.C:
					if rss(cmd.Process.Pid) > maxRSS {
						over.Store(true)
						cmd.Process.Kill()
						return
					}
				}
			}
		}()
		err = cmd.Wait()
		close(done)
	}
	stdout := out.Bytes()
	var st []stages.Stage
	sc := bufio.NewScanner(bytes.NewReader(stdout))
	for sc.Scan() {
		var s stages.Stage
		if json.Unmarshal(sc.Bytes(), &s) == nil {
			st = append(st, s)
		}
	}
	switch {
	case over.Load():
		return st, fmt.Sprintf("stopped at %.0f MB of memory", stages.MB(maxRSS))
	case ctx.Err() != nil:
		return st, fmt.Sprintf("stopped after %v", limit)
	case err != nil:
		return st, strings.TrimSpace(stderr.String() + " " + err.Error())
	case skipSolve:
		return st, "not solved"
	}
	return st, ""
}

var stageNames = []string{"read", "check", "compile", "solve", "write CSV", "conservation laws"}

// rss returns the resident memory of process pid in bytes from
// /proc/PID/status (0 where there is none).
func rss(pid int) int64 {
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/status", pid))
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if rest, ok := strings.CutPrefix(line, "VmRSS:"); ok {
			f := strings.Fields(rest)
			if len(f) > 0 {
				kb, _ := strconv.ParseInt(f[0], 10, 64)
				return kb * 1024
			}
		}
	}
	return 0
}

func markdown(results []result, limit time.Duration, solveMax int) string {
	var b strings.Builder
	b.WriteString("# Stages of a run on large generated networks\n\n")
	b.WriteString("Generated by `go run ./internal/largenet -out bench/large-networks.md` (")
	fmt.Fprintf(&b, "%s, %s/%s, %d CPUs). ", runtime.Version(), runtime.GOOS, runtime.GOARCH, runtime.NumCPU())
	b.WriteString("Networks from `internal/gennet`: `cascade` is the stiff signalling cascade (`gennet.Cascade`), `feedback` the same with loops from each module back to one of the 8 before it (`gennet.Feedback`). ")
	b.WriteString("Each model runs in a fresh child process: read the JSON file (`network.Load`), `network.Check`, `Net.Compile`, solve with the model's settings (automatic method, rtol 1e-6, atol 1e-12, t_end 1000, 200 log-spaced output times), write the CSV with provenance (`run.NewOutcome`, `run.SaveCSV`), and last `Net.ConservationLaws` (which the simulate path does not need, so that the peaks above it are the simulate path's; as in the batch command's `simulate`, the checked network is let go once it is compiled, and the laws stage checks the model again before it starts). ")
	fmt.Fprintf(&b, "Time is wall time, with the processor time of the process (user and system, garbage collection included) in brackets, which varies less on a busy machine; allocated is the bytes the stage allocated on the heap; peak is the process's peak resident memory (VmHWM) at the end of the stage, so it includes the stages before. A run is stopped after %v or at %.0f MB of resident memory; models above %d species are not solved.\n\n", limit, stages.MB(maxRSS), solveMax)
	for _, fam := range []string{"cascade", "feedback"} {
		var rs []result
		for _, r := range results {
			if r.family == fam {
				rs = append(rs, r)
			}
		}
		if len(rs) == 0 {
			continue
		}
		fmt.Fprintf(&b, "## %s\n\n", fam)
		b.WriteString("| stage |")
		for _, r := range rs {
			fmt.Fprintf(&b, " %d species |", r.species)
		}
		b.WriteString("\n|---|")
		for range rs {
			b.WriteString("---:|")
		}
		b.WriteString("\n")
		for _, name := range stageNames {
			fmt.Fprintf(&b, "| %s |", name)
			for _, r := range rs {
				b.WriteString(" " + cell(r, name) + " |")
			}
			b.WriteString("\n")
		}
		b.WriteString("\nEach cell: wall time (processor time) · allocated · peak.")
		for _, r := range rs {
			if r.failed != "" && r.failed != "not solved" {
				fmt.Fprintf(&b, " %d species: %s.", r.species, r.failed)
			}
		}
		b.WriteString("\n\n")
	}
	return b.String()
}

func cell(r result, name string) string {
	for _, s := range r.stages {
		if s.Name == name {
			return fmt.Sprintf("%s (%s) · %.1f MB · %.0f MB", dur(s.Seconds), dur(s.CPU), stages.MB(int64(s.Alloc)), stages.MB(s.Peak))
		}
	}
	for i, s := range stageNames {
		if s == name && i == len(r.stages) && r.failed != "" {
			if r.failed == "not solved" {
				return "—"
			}
			return "stopped"
		}
	}
	return "—"
}

func dur(s float64) string {
	switch {
	case s < 1e-3:
		return fmt.Sprintf("%.0f µs", s*1e6)
	case s < 1:
		return fmt.Sprintf("%.1f ms", s*1e3)
	}
	return fmt.Sprintf("%.2f s", s)
}
