// Package conformance runs the semantic time-course cases of the SBML
// Test Suite (sbml.org) against the SBML import and the solvers: each case
// is imported, simulated at its output times, reported in amounts or
// concentrations as it asks, and compared with its expected results by
// its own rule (every value within absolute + relative × |expected|).
//
// A case passes, fails (a wrong answer or a failed solve), or is refused
// (the import names what the model cannot represent, or the case asks for
// a quantity that is not held). The aim is no failures: every case passes
// or is refused with a named reason.
package conformance

import (
	"bufio"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"kinetarium/app/run"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/network/sbml"
	"kinetarium/solve"
)

// Statuses of a case.
const (
	Pass    = "pass"
	Fail    = "fail"
	Refused = "refused"
)

// Supported lists the component tags of the cases this program aims to
// pass: core SBML, assignment rules, initial assignments, function
// definitions, rate rules, events without delay and the time symbol.
var Supported = []string{"Compartment", "Species", "Reaction", "Parameter", "AssignmentRule",
	"InitialAssignment", "FunctionDefinition", "CSymbolTime", "RateRule", "EventNoDelay"}

// Settings are a case's settings file.
type Settings struct {
	Start, Duration    float64
	Steps              int
	Variables          []string
	Absolute, Relative float64
	Amount             map[string]bool
	Concentration      map[string]bool
}

// Result is the outcome of one case.
type Result struct {
	Case   string
	Status string
	// MaxErrorRatio is the largest |computed − expected| / (absolute +
	// relative·|expected|) over every compared value (≤ 1 passes); NaN
	// when nothing was compared.
	MaxErrorRatio float64
	Message       string
	// ComponentTags and TestTags are the case's tags.
	ComponentTags, TestTags []string
	Elapsed                 time.Duration
}

// InSupported reports whether every component tag of the case is one of
// Supported.
func (r Result) InSupported() bool {
	for _, t := range r.ComponentTags {
		ok := false
		for _, s := range Supported {
			ok = ok || s == t
		}
		if !ok {
			return false
		}
	}
	return true
}

// Cases lists the case folders under dir (names of five digits), in
// order.
func Cases(dir string) ([]string, error) {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	var out []string
	for _, e := range ents {
		if e.IsDir() && len(e.Name()) == 5 {
			if _, err := strconv.Atoi(e.Name()); err == nil {
				out = append(out, e.Name())
			}
		}
	}
	sort.Strings(out)
	return out, nil
}

// ReadSettings reads a case's settings file.
func ReadSettings(path string) (Settings, error) {
	f, err := os.Open(path)
	if err != nil {
		return Settings{}, err
	}
	defer f.Close()
	s := Settings{Amount: map[string]bool{}, Concentration: map[string]bool{}}
	list := func(v string) []string {
		var out []string
		for _, x := range strings.Split(v, ",") {
			if x = strings.TrimSpace(x); x != "" {
				out = append(out, x)
			}
		}
		return out
	}
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		k, v, ok := strings.Cut(sc.Text(), ":")
		if !ok {
			continue
		}
		v = strings.TrimSpace(v)
		num := func() float64 {
			x, e := strconv.ParseFloat(v, 64)
			if e != nil && err == nil {
				err = fmt.Errorf("%s:%d: %s %q is not a number", path, line, k, v)
			}
			return x
		}
		switch strings.TrimSpace(k) {
		case "start":
			s.Start = num()
		case "duration":
			s.Duration = num()
		case "steps":
			s.Steps = int(num())
		case "absolute":
			s.Absolute = num()
		case "relative":
			s.Relative = num()
		case "variables":
			s.Variables = list(v)
		case "amount":
			for _, x := range list(v) {
				s.Amount[x] = true
			}
		case "concentration":
			for _, x := range list(v) {
				s.Concentration[x] = true
			}
		}
	}
	if err == nil && s.Steps <= 0 {
		err = fmt.Errorf("%s: steps %d; expected a positive number", path, s.Steps)
	}
	return s, err
}

// readTags reads componentTags and testTags from a case's model file.
func readTags(path string) (comp, test []string) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, nil
	}
	for _, line := range strings.Split(string(data), "\n") {
		k, v, ok := strings.Cut(line, ":")
		if !ok {
			continue
		}
		var tags []string
		for _, t := range strings.Split(v, ",") {
			if t = strings.TrimSpace(t); t != "" {
				tags = append(tags, t)
			}
		}
		switch strings.TrimSpace(k) {
		case "componentTags":
			comp = tags
		case "testTags":
			test = tags
		}
	}
	return comp, test
}

// Levels are the SBML files a case folder may hold, by the suite's names:
// NNNNN-sbml-LEVEL.xml.
var Levels = []string{"l3v2", "l3v1", "l2v4"}

// RunCase runs the case in folder dir/name with its SBML Level 3 Version 2
// file.
func RunCase(ctx context.Context, dir, name string) Result {
	return RunCaseLevel(ctx, dir, name, "l3v2")
}

// RunCaseLevel runs the case in folder dir/name with its file of the given
// level and version (one of Levels).
func RunCaseLevel(ctx context.Context, dir, name, level string) (r Result) {
	start := time.Now()
	r = Result{Case: name, MaxErrorRatio: math.NaN()}
	folder := filepath.Join(dir, name)
	r.ComponentTags, r.TestTags = readTags(filepath.Join(folder, name+"-model.m"))
	defer func() { r.Elapsed = time.Since(start) }()
	fail := func(status, format string, args ...any) Result {
		r.Status, r.Message = status, fmt.Sprintf(format, args...)
		r.Elapsed = time.Since(start)
		return r
	}
	set, err := ReadSettings(filepath.Join(folder, name+"-settings.txt"))
	if err != nil {
		return fail(Refused, "settings: %v", err)
	}
	header, want, err := readResults(filepath.Join(folder, name+"-results.csv"))
	if err != nil {
		return fail(Refused, "expected results: %v", err)
	}
	file := name + "-sbml-" + level + ".xml"
	data, err := os.ReadFile(filepath.Join(folder, file))
	if err != nil {
		return fail(Refused, "%v", err)
	}
	imp, err := sbml.Parse(data, file)
	if err != nil {
		return fail(Refused, "%s", oneLine(err))
	}
	// The quantities to compare, and where the run holds them.
	type column struct {
		id  string
		sym sbml.Symbol
		col int // in the outcome, or −1 for a constant
		exp int // in the expected results
	}
	var cols []column
	for _, id := range set.Variables {
		sym, ok := imp.Symbols[id]
		if !ok {
			return fail(Refused, "the case compares %q, which the imported model does not hold (not a compartment, species or parameter)", id)
		}
		e := -1
		for j, h := range header {
			if h == id {
				e = j
			}
		}
		if e < 0 {
			return fail(Refused, "the expected results have no column %q", id)
		}
		cols = append(cols, column{id: id, sym: sym, col: -1, exp: e})
	}
	m := imp.Model
	sys, err := network.Compile(m)
	if err != nil {
		return fail(Fail, "the imported model does not compile: %s", oneLine(err))
	}
	times := make([]float64, set.Steps+1)
	for i := range times {
		times[i] = set.Start + set.Duration*float64(i)/float64(set.Steps)
	}
	times[set.Steps] = set.Start + set.Duration
	out, serr := simulate(ctx, m, sys, set.Start, times)
	if serr != nil {
		return fail(Fail, "the solve failed: %s", oneLine(serr))
	}
	colOf := func(name string) int {
		for j, n := range out.Names {
			if n == name && name != "" {
				return j
			}
		}
		return -1
	}
	vols := make([]int, len(cols))
	for i := range cols {
		cols[i].col = colOf(cols[i].sym.Name)
		if cols[i].col < 0 && !cols[i].sym.Constant {
			return fail(Fail, "%q changes during the run but the run does not report it", cols[i].id)
		}
		vols[i] = colOf(cols[i].sym.VolumeName)
		if cols[i].sym.VolumeName != "" && vols[i] < 0 {
			return fail(Fail, "the size of the compartment of %q changes during the run but the run does not report it", cols[i].id)
		}
	}
	if len(out.T) != len(want) {
		return fail(Fail, "the run gives %d rows, the expected results %d", len(out.T), len(want))
	}
	worst, where := 0.0, ""
	for i, row := range want {
		for k, c := range cols {
			v := c.sym.Value
			if c.col >= 0 {
				v = out.Y[i][c.col]
			}
			vol := c.sym.Volume
			if vols[k] >= 0 {
				vol = out.Y[i][vols[k]]
			}
			switch {
			case set.Amount[c.id]:
				v = c.sym.Amount(v, vol)
			case set.Concentration[c.id]:
				v = c.sym.Concentration(v, vol)
			}
			e := row[c.exp]
			var ratio float64
			switch {
			case math.IsNaN(e) && math.IsNaN(v), e == v:
				ratio = 0
			case math.IsNaN(e) || math.IsNaN(v) || math.IsInf(e, 0) || math.IsInf(v, 0):
				ratio = math.Inf(1)
			default:
				ratio = math.Abs(v-e) / (set.Absolute + set.Relative*math.Abs(e))
			}
			if ratio > worst || math.IsNaN(ratio) {
				worst = ratio
				where = fmt.Sprintf("%s at t = %g: %.10g, expected %.10g", c.id, out.T[i], v, e)
			}
		}
	}
	r.MaxErrorRatio = worst
	if worst <= 1 {
		r.Status = Pass
		return r
	}
	return fail(Fail, "largest error %.3g times the tolerance: %s", worst, where)
}

// simulate runs the model to the output times; a model without state
// (assignments of time and parameters only) is evaluated at each time.
func simulate(ctx context.Context, m *network.Model, sys *network.System, t0 float64, times []float64) (*run.Outcome, error) {
	start := time.Now()
	tEnd := times[len(times)-1]
	if sys.Dim() == 0 {
		res := &solve.Result{T: times, Y: make([][]float64, len(times))}
		for i := range res.Y {
			res.Y[i] = []float64{}
		}
		return run.NewOutcome(m, sys, res, nil, start)
	}
	ss := solve.Settings{RTol: 1e-10, ATol: 1e-16, Times: times, MaxSteps: 2_000_000}
	res, err := solve.Solve(ctx, sys, t0, tEnd, sys.Initial(), ss)
	out, _ := run.NewOutcome(m, sys, res, err, start)
	return out, err
}

// oneLine joins the lines of an error's message with "; ".
func oneLine(err error) string {
	var parts []string
	for _, l := range strings.Split(err.Error(), "\n") {
		if l = strings.TrimSpace(l); l != "" {
			parts = append(parts, l)
		}
	}
	return strings.Join(parts, "; ")
}

// readResults reads an expected-results table: the header and the rows.
func readResults(path string) ([]string, [][]float64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 0, 1<<16), 1<<24)
	var header []string
	var rows [][]float64
	for line := 1; sc.Scan(); line++ {
		text := strings.TrimSpace(sc.Text())
		if text == "" {
			continue
		}
		fields := strings.Split(text, ",")
		if header == nil {
			for _, h := range fields {
				header = append(header, strings.TrimSpace(h))
			}
			continue
		}
		row := make([]float64, len(fields))
		for j, x := range fields {
			v, err := strconv.ParseFloat(strings.TrimSpace(x), 64)
			if err != nil {
				v = parseSpecial(strings.TrimSpace(x))
				if math.IsNaN(v) && !strings.EqualFold(strings.TrimSpace(x), "nan") {
					return nil, nil, fmt.Errorf("%s:%d: %q is not a number", path, line, x)
				}
			}
			row[j] = v
		}
		rows = append(rows, row)
	}
	return header, rows, sc.Err()
}

func parseSpecial(s string) float64 {
	switch strings.ToLower(s) {
	case "inf", "infinity":
		return math.Inf(1)
	case "-inf", "-infinity":
		return math.Inf(-1)
	}
	return math.NaN()
}

// Options control Run. The zero value runs every case's Level 3 Version
// 2 file on one goroutine per core.
type Options struct {
	Names    []string // the cases to run; all under the folder when empty
	Level    string   // the file of each case to read, one of Levels; "" is l3v2
	Workers  int      // goroutines; 0 is one per core
	Progress func(done, total int)
}

// Run runs the cases under dir, calling progress, when not nil, after each
// case. Results are in case order.
func Run(ctx context.Context, dir string, opt Options) ([]Result, error) {
	names, workers, progress := opt.Names, opt.Workers, opt.Progress
	level := opt.Level
	if level == "" {
		level = "l3v2"
	}
	if len(names) == 0 {
		var err error
		if names, err = Cases(dir); err != nil {
			return nil, err
		}
	}
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	out := make([]Result, len(names))
	jobs := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				out[i] = runGuarded(ctx, dir, names[i], level)
				if progress != nil {
					mu.Lock()
					done++
					progress(done, len(names))
					mu.Unlock()
				}
			}
		}()
	}
	for i := range names {
		if ctx.Err() != nil {
			break
		}
		jobs <- i
	}
	close(jobs)
	wg.Wait()
	return out, ctx.Err()
}

// runGuarded runs one case with a time limit, turning a panic (a bug)
// into a failure that says so.
func runGuarded(ctx context.Context, dir, name, level string) (r Result) {
	defer func() {
		if p := recover(); p != nil {
			r = Result{Case: name, Status: Fail, MaxErrorRatio: math.NaN(), Message: fmt.Sprintf("panic: %v", p)}
		}
	}()
	ctx, cancel := context.WithTimeout(ctx, 60*time.Second)
	defer cancel()
	return RunCaseLevel(ctx, dir, name, level)
}

// WriteCSV writes one row per case: case,status,max_error_ratio,message.
func WriteCSV(path string, results []Result) error {
	rows := [][]string{{"case", "status", "max_error_ratio", "message"}}
	for _, r := range results {
		ratio := ""
		if !math.IsNaN(r.MaxErrorRatio) {
			ratio = strconv.FormatFloat(r.MaxErrorRatio, 'g', 4, 64)
		}
		rows = append(rows, []string{r.Case, r.Status, ratio, r.Message})
	}
	return atomicfile.WriteCSV(path, rows)
}
