//go:build sundials

package main

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"runtime/pprof"
	"slices"
	"strings"
	"time"

	"kinetarium/internal/cvodecmp"
	"kinetarium/solve"
)

// stage is one part of a solve's time, recognised in a CPU profile's
// stack by the innermost frame that matches one of its patterns.
type stage struct {
	name string
	re   *regexp.Regexp
}

// stages are tried on each frame from the innermost outwards; the first
// frame that matches any stage decides. Frames of package solve that match
// none are step logic; stacks without a frame of solve or network are the
// Go runtime's own work (garbage collection, scheduler).
var stages = []stage{
	{"factorization (LU of the Newton matrix)", regexp.MustCompile(`kinetarium/solve\.\(\*\w*LU\w*\)\.(?i:\w*factor\w*|analy\w*|symbolic\w*|numeric\w*|refactor\w*)$`)},
	{"triangular solves", regexp.MustCompile(`kinetarium/solve\.\(\*\w*LU\w*\)\.(?i:\w*solve\w*)$`)},
	{"Jacobian evaluation", regexp.MustCompile(`kinetarium/network\.\(\*System\)\.Jacobian\w*$`)},
	{"right-hand side", regexp.MustCompile(`kinetarium/network\.\(\*System\)\.RHS$`)},
	{"forming the Newton matrix", regexp.MustCompile(`kinetarium/solve\.\(\*(bdf|radau|rosenbrock)\)\.(factor|newtonMatrix\w*)$`)},
	{"output (dense output at the output times)", regexp.MustCompile(`kinetarium/solve\.\(\*\w+\)\.dense$`)},
}

const (
	stepLogic = "step logic (predictor, Newton loop, error norms, step and order control)"
	runtimeGC = "Go runtime (garbage collection, scheduler)"
)

// classify returns the stage of one stack, innermost frame first.
func classify(frames []string) string {
	inSolve := false
	for _, f := range frames {
		for _, s := range stages {
			if s.re.MatchString(f) {
				return s.name
			}
		}
		if strings.HasPrefix(f, "kinetarium/solve") || strings.HasPrefix(f, "kinetarium/network") {
			inSolve = true
		}
	}
	if inSolve {
		return stepLogic
	}
	return runtimeGC
}

// stageTimes reads a CPU profile with `go tool pprof -traces` and adds the
// samples up by stage.
func stageTimes(profile string) (map[string]time.Duration, time.Duration, error) {
	out, err := exec.Command("go", "tool", "pprof", "-traces", profile).Output()
	if err != nil {
		return nil, 0, fmt.Errorf("go tool pprof -traces %s: %w", profile, err)
	}
	byStage := map[string]time.Duration{}
	var total time.Duration
	var value time.Duration
	var frames []string
	flush := func() {
		if value > 0 && len(frames) > 0 {
			byStage[classify(frames)] += value
			total += value
		}
		value, frames = 0, frames[:0]
	}
	sc := bufio.NewScanner(bytes.NewReader(out))
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	started := false
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "-----------+") {
			flush()
			started = true
			continue
		}
		if !started || strings.TrimSpace(line) == "" {
			continue
		}
		fn := strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(line), "(inline)"))
		if len(line) > 11 && strings.TrimSpace(line[:11]) != "" {
			// A new sample: "     10ms   leaf".
			f := strings.Fields(line)
			d, err := time.ParseDuration(strings.Replace(f[0], "µ", "u", 1))
			if err != nil {
				return nil, 0, fmt.Errorf("reading %s: %q: %w", profile, line, err)
			}
			value = d
			fn = strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(strings.Join(f[1:], " ")), "(inline)"))
		}
		frames = append(frames, fn)
	}
	flush()
	return byStage, total, sc.Err()
}

// profileStages profiles Kinetarium's automatic choice on the generated
// networks of the given sizes at rtol (atol = rtol·atolRatio) and sets the
// stage times beside CVODE–KLU's counters and stage times on the same
// problem. The CPU profiles are written to dir as profile-netN.pprof.
func profileStages(sizes []int, rtol, atolRatio, seconds float64, dir string) (string, error) {
	var b strings.Builder
	b.WriteString("# Where the time of a solve goes: Kinetarium and CVODE–KLU by stage\n\n")
	fmt.Fprintf(&b, "Measured %s on %s/%s, %d CPUs (GOMAXPROCS %d), %s, load average %s. Regenerate with `make cvode-compare`.\n\n",
		time.Now().UTC().Format("2006-01-02 15:04 UTC"), runtime.GOOS, runtime.GOARCH, runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.Version(), loadavg())
	fmt.Fprintf(&b, "Generated networks of internal/gennet (t from 0 to 1000) at rtol %g, atol %g, output at the end time only. "+
		"**Kinetarium** (automatic choice, one `solve.Solver` reused): a CPU profile (runtime/pprof, 100 samples a second) of repeated solves for %g s, each sample's stack assigned to the innermost frame that names a stage (LU factor or solve methods of package solve, `network.System.Jacobian*` or `RHS`, the integrator's forming of the Newton matrix, its dense output); the rest of package solve is step logic, and stacks outside solve and network are the Go runtime's own work. The profiles are beside this file (`go tool pprof -top bench/profile-netN.pprof`). "+
		"**CVODE–KLU** (as in cvode-comparison.md): clock_gettime around each call of f and J (Go callbacks through cgo, so their cost includes the cgo crossing) and of SUNLinSol_KLU's setup (KLU's factorization, or its numeric refactorization with the symbolic analysis kept) and solve, over the whole CVode call; the rest is CVODE's step logic, the copy of J and the forming of I − γJ. Median over 5 solves.\n\n",
		rtol, rtol*atolRatio, seconds)
	for _, n := range sizes {
		p, err := generated(n)
		if err != nil {
			return "", err
		}
		atol := rtol * atolRatio

		// Kinetarium.
		sv := solve.NewSolver(p.Sys.Clone(), solve.Settings{RTol: rtol, ATol: atol, Times: []float64{p.TEnd}})
		y0 := p.Sys.Initial()
		res, err := sv.Solve(context.Background(), 0, p.TEnd, y0) // warm-up
		if err != nil {
			return "", fmt.Errorf("%s: %w", p.Name, err)
		}
		st := res.Stats
		file := filepath.Join(dir, fmt.Sprintf("profile-%s.pprof", strings.ToLower(p.Name)))
		f, err := os.Create(file)
		if err != nil {
			return "", err
		}
		if err := pprof.StartCPUProfile(f); err != nil {
			f.Close()
			return "", err
		}
		solves := 0
		var walls []time.Duration
		start := time.Now()
		for time.Since(start).Seconds() < seconds || solves < 3 {
			t0 := time.Now()
			if _, err := sv.Solve(context.Background(), 0, p.TEnd, y0); err != nil {
				pprof.StopCPUProfile()
				f.Close()
				return "", fmt.Errorf("%s: %w", p.Name, err)
			}
			walls = append(walls, time.Since(t0))
			solves++
		}
		pprof.StopCPUProfile()
		if err := f.Close(); err != nil {
			return "", err
		}
		byStage, total, err := stageTimes(file)
		if err != nil {
			return "", err
		}
		slices.Sort(walls)
		kWall := walls[len(walls)/2]

		// CVODE–KLU.
		k, err := cvodecmp.NewKLU(p)
		if err != nil {
			return "", err
		}
		var runs []cvodecmp.Stages
		var work cvodecmp.Work
		for i := 0; i < 6; i++ {
			_, w, _, err := k.Solve(rtol, atol)
			if err != nil {
				k.Close()
				return "", err
			}
			if i > 0 {
				runs = append(runs, k.Stages())
			}
			work = w
		}
		k.Close()
		slices.SortFunc(runs, func(a, b cvodecmp.Stages) int { return int(a.Total - b.Total) })
		cs := runs[len(runs)/2]

		rp, _ := p.Sys.JacobianPattern()
		fmt.Fprintf(&b, "## %s: %d species, %d Jacobian nonzeros\n\n", p.Name, n, rp[len(rp)-1])
		fmt.Fprintf(&b, "| counter | Kinetarium (%s) | CVODE–KLU |\n|---|---|---|\n", strings.Join(methodNames(st.Methods), ", "))
		fmt.Fprintf(&b, "| wall time of one solve (ms, median) | %.2f | %.2f |\n", ms(kWall), ms(cs.Total))
		fmt.Fprintf(&b, "| accepted steps | %d | %d |\n", st.Steps, work.Steps)
		fmt.Fprintf(&b, "| rejected steps | %d | %d |\n", st.Rejected, work.Rejected)
		fmt.Fprintf(&b, "| right-hand-side evaluations | %d | %d |\n", st.RHSEvals, work.RHSEvals)
		fmt.Fprintf(&b, "| Jacobian evaluations | %d | %d |\n", st.JacobianEvals, work.JacobianEvals)
		fmt.Fprintf(&b, "| LU factorizations | %d | %d |\n", st.Factorizations, cs.Factors)
		fmt.Fprintf(&b, "| linear solves | %d | %d |\n", st.LinearSolves, cs.Solves)
		fmt.Fprintf(&b, "| time per step (µs) | %.1f | %.1f |\n", us(kWall)/float64(st.Steps), us(cs.Total)/float64(work.Steps))
		fmt.Fprintf(&b, "| time per factorization (µs) | %.1f | %.1f |\n",
			us(share(byStage["factorization (LU of the Newton matrix)"], total, kWall))/float64(max(st.Factorizations, 1)), us(cs.Factor)/float64(max(cs.Factors, 1)))
		fmt.Fprintf(&b, "| time per linear solve (µs) | %.1f | %.1f |\n",
			us(share(byStage["triangular solves"], total, kWall))/float64(max(st.LinearSolves, 1)), us(cs.Solve)/float64(max(cs.Solves, 1)))
		fmt.Fprintf(&b, "| time per f (µs) | %.1f | %.1f |\n",
			us(share(byStage["right-hand side"], total, kWall))/float64(max(st.RHSEvals, 1)), us(cs.RHS)/float64(max(work.RHSEvals, 1)))
		fmt.Fprintf(&b, "| time per J (µs) | %.1f | %.1f |\n\n",
			us(share(byStage["Jacobian evaluation"], total, kWall))/float64(max(st.JacobianEvals, 1)), us(cs.Jacobian)/float64(max(work.JacobianEvals, 1)))
		fmt.Fprintf(&b, "Time of one solve by stage (ms, and share of the solve; Kinetarium's profile covers %d solves, %.2f s of samples):\n\n", solves, total.Seconds())
		b.WriteString("| stage | Kinetarium (ms) | share | CVODE–KLU (ms) | share |\n|---|---|---|---|---|\n")
		cvStage := map[string]time.Duration{
			"factorization (LU of the Newton matrix)": cs.Factor,
			"triangular solves":                       cs.Solve,
			"Jacobian evaluation":                     cs.Jacobian,
			"right-hand side":                         cs.RHS,
			stepLogic:                                 cs.Other(),
		}
		names := []string{}
		for _, s := range stages {
			names = append(names, s.name)
		}
		names = append(names, stepLogic, runtimeGC)
		for _, name := range names {
			kv := share(byStage[name], total, kWall)
			cv, ok := cvStage[name]
			cvText := "–"
			if ok {
				cvText = fmt.Sprintf("%.2f | %.0f%%", ms(cv), 100*float64(cv)/float64(cs.Total))
			} else {
				cvText = "– | –"
			}
			if name == stepLogic {
				cvText = fmt.Sprintf("%.2f | %.0f%% (with copying J and forming I − γJ)", ms(cv), 100*float64(cv)/float64(cs.Total))
			}
			fmt.Fprintf(&b, "| %s | %.2f | %.0f%% | %s |\n", name, ms(kv), 100*float64(byStage[name])/float64(max(total, 1)), cvText)
		}
		b.WriteString("\n")
		fmt.Fprintf(os.Stderr, "profiled %s: Kinetarium %.2f ms, CVODE–KLU %.2f ms\n", p.Name, ms(kWall), ms(cs.Total))
	}
	return b.String(), nil
}

// share scales a stage's sampled time to one solve of wall time wall.
func share(d, total, wall time.Duration) time.Duration {
	if total <= 0 {
		return 0
	}
	return time.Duration(float64(wall) * float64(d) / float64(total))
}

func methodNames(ms []solve.Method) []string {
	var s []string
	for _, m := range ms {
		s = append(s, string(m))
	}
	if len(s) == 0 {
		return []string{"auto"}
	}
	return s
}

func ms(d time.Duration) float64 { return float64(d.Nanoseconds()) / 1e6 }
func us(d time.Duration) float64 { return float64(d.Nanoseconds()) / 1e3 }
