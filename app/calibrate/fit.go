package calibrate

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"sync"
	"time"

	"gonum.org/v1/gonum/mat"

	"kinetarium/app/sliders"
	"kinetarium/network"
	"kinetarium/solve"
	"kinetarium/solve/explore"
	"kinetarium/solve/fit"
)

// Param is one estimated quantity: a knob, shared by every experiment or
// (per_experiment) one copy per experiment.
type Param struct {
	Name         string // the knob, with "[experiment]" for a per-experiment copy
	Target       string // the knob
	Exp          int    // the experiment of a per-experiment copy, else −1
	Lower, Upper float64
	Start        float64 // the given start, or the default (geometric mean or midpoint)
	Log          bool
	Unit         string // from the model, for reports
	// Noise marks a parameter of the noise model (σ_c, σ_a, σ_b; see
	// noise.go) rather than of the model; they come after the model's.
	Noise bool
}

// Problem is a prepared fit: the model, the experiments with their data,
// and the estimated quantities. A Problem is used by one goroutine at a
// time; the multi-start runner gives each worker its own copy.
type Problem struct {
	Spec   *Spec
	Model  *network.Model
	Params []Param
	Exps   []*ExpData
	NData  int
	// ByDifferences makes the Jacobian from central differences of whole
	// solves instead of sensitivities (for comparison and benchmarks).
	ByDifferences bool

	opts []Options // one per experiment, for copies
	// NModel counts the model's quantities in Params; the noise model's
	// parameters follow them.
	NModel int
	sref   float64 // the data's scale, for the log σ residuals (noise.go)
}

// ExpData is one experiment prepared for fitting.
type ExpData struct {
	Name   string
	Data   *Data
	ev     *Evaluator
	pidx   []int     // for each evaluator target, its index in Params
	outIdx []int     // per point: the evaluator output
	tIdx   []int     // per point: the evaluator time
	row0   int       // first residual of this experiment
	yhat   []float64 // the fitted values of the last Residuals
}

// NewProblem loads the model and the data of spec and resolves every name.
func NewProblem(spec *Spec) (*Problem, error) {
	path := spec.Model
	if !filepath.IsAbs(path) {
		path = filepath.Join(spec.Dir, path)
	}
	m, err := network.Load(path)
	if err != nil {
		return nil, err
	}
	return NewProblemModel(spec, m)
}

// NewProblemModel is NewProblem with the model given.
func NewProblemModel(spec *Spec, m *network.Model) (*Problem, error) {
	switch spec.Noise.Model {
	case NoiseSD, NoiseConstant, NoiseProportional, NoiseCombined, "":
	default:
		return nil, fmt.Errorf("noise model %q is unknown; use %q (the data's sd_ columns), %q (one σ, estimated), %q (σ = c·|fitted|) or %q (σ² = a² + (b·fitted)²)", spec.Noise.Model, NoiseSD, NoiseConstant, NoiseProportional, NoiseCombined)
	}
	p := &Problem{Spec: spec, Model: m}
	known := append(speciesNames(m), assignmentNames(m)...)
	units := map[string]string{}
	for _, q := range m.Parameters {
		units[q.Name] = q.Unit
	}
	// Parameters: shared ones first in spec order, per-experiment copies
	// after each.
	for _, e := range spec.Estimate {
		k := sliders.ParseRef(e.Target)
		if _, ok := sliders.Lookup(m, k.Kind, k.Name); !ok {
			return nil, fmt.Errorf("estimate %q: the model has no %s called %q", e.Target, k.Kind, k.Name)
		}
		start := e.Start
		if math.IsNaN(start) {
			if e.Log {
				start = math.Sqrt(e.Lower * e.Upper)
			} else {
				start = (e.Lower + e.Upper) / 2
			}
		}
		base := Param{Name: e.Target, Target: e.Target, Exp: -1, Lower: e.Lower, Upper: e.Upper, Start: start, Log: e.Log, Unit: units[k.Name]}
		if !e.PerExp {
			p.Params = append(p.Params, base)
			continue
		}
		for i, x := range spec.Experiments {
			c := base
			c.Name, c.Exp = e.Target+"["+x.Name+"]", i
			p.Params = append(p.Params, c)
		}
	}
	for i, x := range spec.Experiments {
		dpath := x.Data
		if !filepath.IsAbs(dpath) {
			dpath = filepath.Join(spec.Dir, dpath)
		}
		d, err := LoadData(dpath, known)
		if err != nil {
			return nil, fmt.Errorf("experiment %q: %w", x.Name, err)
		}
		fixed := map[string]float64{}
		for sp, v := range x.Initial {
			fixed["init:"+sp] = v
		}
		for ref, v := range x.Parameters {
			fixed[ref] = v
		}
		ed := &ExpData{Name: x.Name, Data: d, row0: p.NData}
		var targets []string
		for j, q := range p.Params {
			if q.Exp == -1 || q.Exp == i {
				if _, clash := fixed[q.Target]; clash {
					return nil, fmt.Errorf("experiment %q gives %q a fixed value, but it is estimated", x.Name, q.Target)
				}
				targets = append(targets, q.Target)
				ed.pidx = append(ed.pidx, j)
			}
		}
		o := Options{Targets: targets, Fixed: fixed, Outputs: d.Names, Times: d.Times(), RTol: spec.RTol, ATol: spec.ATol, ErrorControl: true}
		sim := m.Simulation.WithDefaults()
		if o.RTol == 0 {
			o.RTol = math.Min(sim.RTol, 1e-8)
		}
		if o.ATol == 0 {
			o.ATol = math.Min(sim.ATol, 1e-12)
		}
		if spec.Method != "" && spec.Method != "auto" {
			o.Method = solve.Method(spec.Method)
		}
		if ts := o.Times; len(ts) > 0 && ts[len(ts)-1] == 0 {
			return nil, fmt.Errorf("experiment %q: every measurement is at time 0; a fit needs later times", x.Name)
		}
		ev, err := NewEvaluator(m, o)
		if err != nil {
			return nil, fmt.Errorf("experiment %q: %w", x.Name, err)
		}
		ed.ev = ev
		times := ev.Times()
		for _, pt := range d.Points {
			k := slices.Index(d.Names, pt.Name)
			ti, _ := slices.BinarySearch(times, pt.Time)
			ed.outIdx = append(ed.outIdx, k)
			ed.tIdx = append(ed.tIdx, ti)
			if spec.Noise.Model == NoiseSD && math.IsNaN(pt.SD) {
				return nil, fmt.Errorf("experiment %q: %s, line %d: no standard deviation for %s at time %g; the noise model sd_column needs an sd_%s value on every row (or use \"noise\": {\"model\": \"constant\"})",
					x.Name, d.Source, pt.Line, pt.Name, pt.Time, pt.Name)
			}
		}
		p.NData += len(d.Points)
		p.Exps = append(p.Exps, ed)
		p.opts = append(p.opts, o)
	}
	p.NModel = len(p.Params)
	p.addNoiseParams()
	if p.NData <= len(p.Params) {
		return nil, fmt.Errorf("%d measured values for %d estimated quantities; a fit needs more values than quantities", p.NData, len(p.Params))
	}
	return p, nil
}

func speciesNames(m *network.Model) []string {
	var out []string
	for _, s := range m.Species {
		out = append(out, s.Name)
	}
	return out
}

func assignmentNames(m *network.Model) []string {
	var out []string
	for _, a := range m.Assignments {
		out = append(out, a.Name)
	}
	return out
}

// MeasurableNames are the names a measurements file may use for m (the
// names LoadData takes): its species, then its assignments.
func MeasurableNames(m *network.Model) []string {
	return append(speciesNames(m), assignmentNames(m)...)
}

// copies returns a function that gives p itself the first time and a
// clone of it every time after, for the workers of explore.Run; it is
// safe for concurrent use.
func (p *Problem) copies() func() (*Problem, error) {
	var mu sync.Mutex
	first := true
	return func() (*Problem, error) {
		mu.Lock()
		defer mu.Unlock()
		if first {
			first = false
			return p, nil
		}
		return p.clone()
	}
}

// clone returns a copy with its own evaluators.
func (p *Problem) clone() (*Problem, error) {
	c := *p
	c.Exps = make([]*ExpData, len(p.Exps))
	for i, e := range p.Exps {
		ev, err := NewEvaluator(p.Model, p.opts[i])
		if err != nil {
			return nil, err
		}
		ce := *e
		ce.ev = ev
		c.Exps[i] = &ce
	}
	return &c, nil
}

// Weighted reports whether the residuals are divided by the data's
// standard deviations.
func (p *Problem) Weighted() bool { return p.Spec.Noise.Model == NoiseSD || p.Spec.Noise.Model == "" }

// Residuals is a fit.Func: the residuals (fitted − observed)/σ at x (σ
// = 1 for the noise model constant, the data's SD for sd_column, the
// noise model's σ for proportional and combined, which add a second block
// of residuals for the log σ terms of the likelihood; see noise.go) and,
// when jac is not nil, their Jacobian.
func (p *Problem) Residuals(ctx context.Context, x, r []float64, jac *mat.Dense) error {
	for _, e := range p.Exps {
		q := make([]float64, len(e.pidx))
		for j, pi := range e.pidx {
			q[j] = x[pi]
		}
		res, err := e.ev.Solve(ctx, q, jac != nil && !p.ByDifferences)
		if err != nil {
			return fmt.Errorf("experiment %q: %w", e.Name, err)
		}
		yhat := p.predictions(e, res)
		e.yhat = yhat
		var dyhat [][]float64 // per point, ∂ŷ/∂q_j
		if jac != nil {
			if p.ByDifferences {
				if dyhat, err = p.differences(ctx, e, q); err != nil {
					return err
				}
			} else {
				nq := len(e.pidx)
				dyhat = make([][]float64, len(e.Data.Points))
				for k := range e.Data.Points {
					d := res.D[e.tIdx[k]]
					dyhat[k] = d[e.outIdx[k]*nq : (e.outIdx[k]+1)*nq]
				}
			}
		}
		if err := p.fill(e, x, yhat, dyhat, r, jac); err != nil {
			return fmt.Errorf("experiment %q: %w", e.Name, err)
		}
	}
	return nil
}

// predictions returns experiment e's fitted values at its points.
func (p *Problem) predictions(e *ExpData, res *Result) []float64 {
	out := make([]float64, len(e.Data.Points))
	for k := range e.Data.Points {
		out[k] = res.Y[e.tIdx[k]][e.outIdx[k]]
	}
	return out
}

// differences returns ∂ŷ/∂q for experiment e's points by central
// differences of whole solves.
func (p *Problem) differences(ctx context.Context, e *ExpData, q []float64) ([][]float64, error) {
	nq := len(q)
	out := make([][]float64, len(e.Data.Points))
	for k := range out {
		out[k] = make([]float64, nq)
	}
	for j := range q {
		h := 1e-6 * math.Max(math.Abs(q[j]), 1e-8)
		qq := slices.Clone(q)
		qq[j] = q[j] + h
		res, err := e.ev.Solve(ctx, qq, false)
		if err != nil {
			return nil, err
		}
		yp := p.predictions(e, res)
		qq[j] = q[j] - h
		if res, err = e.ev.Solve(ctx, qq, false); err != nil {
			return nil, err
		}
		ym := p.predictions(e, res)
		for k := range out {
			out[k][j] = (yp[k] - ym[k]) / (2 * h)
		}
	}
	return out, nil
}

// Settings control Run. The zero value of every field means a sensible
// default.
type Settings struct {
	Workers  int                                               // default: every core
	Progress func(fraction float64)                            // fraction of starts done
	Trace    func(start int, iteration int, objective float64) // each accepted step of each start
	// Profiles asks for profile-likelihood intervals.
	Profiles bool
	// MaxIterations per start; default 200.
	MaxIterations int
}

// Start is the outcome of one start.
type Start struct {
	Index      int
	From       []float64 // the starting values
	X          []float64 // the end point (nil when it failed at once)
	Objective  float64   // negative log-likelihood at X
	Converged  bool
	Reason     string
	Iterations int
	Evals      int
}

// Estimate is one estimated quantity with its uncertainty.
type Estimated struct {
	Param
	Value float64
	SE    float64 // +Inf when the data cannot determine it, NaN at a bound
	// Low and High are the 95 % Fisher interval (on the log scale for
	// "scale": "log", so never below zero there).
	Low, High float64
	// ProfileLow and ProfileHigh are the 95 % profile-likelihood interval
	// (NaN when not computed; ±Inf when open: the likelihood does not
	// rise enough within the bounds).
	ProfileLow, ProfileHigh float64
	Determined              bool
	AtBound                 int // −1 lower, +1 upper, 0 inside
}

// Residual is one measurement against the fit.
type Residual struct {
	Experiment       string
	Time             float64
	Name             string
	Observed, SD     float64 // SD NaN when none
	Fitted, Residual float64 // residual = observed − fitted
	Weighted         float64 // residual / σ
}

// Report is the outcome of a fit.
type Report struct {
	Estimates []Estimated
	// Objective is the negative log-likelihood under Gaussian errors;
	// WSSR the weighted sum of squares Σ((y − ŷ)/σ)² (for sd_column; for
	// constant noise with σ the estimate below); SSR the plain sum.
	Objective, WSSR, SSR float64
	NData, NParams, DOF  int // NParams counts σ when it is estimated
	AIC, AICc, BIC       float64
	Sigma                float64 // the estimated σ, √(SSR/(n − p)), of constant noise; NaN otherwise
	Noise                string
	// NoiseEstimates are the estimated parameters of proportional
	// (sigma_c) and combined (sigma_a, sigma_b) noise, with their
	// uncertainty; Corr's rows and columns are Estimates, then these.
	NoiseEstimates []Estimated
	Starts         []Start
	Converged      int
	Best           int // index of the best start
	Iterations     int // of the best start
	Seconds        float64
	Corr           *mat.SymDense
	Residuals      []Residual
	// Notes say in words what the numbers cannot: parameters the data do
	// not determine, estimates on a bound, open profile intervals,
	// sensitivities taken by differences.
	Notes []string
	// Profiles holds the profile of each estimate when asked for.
	Profiles []Profile
}

// All returns the estimates of the model's quantities, then those of the
// noise model: the order of Corr's rows and columns.
func (r *Report) All() []Estimated {
	return append(slices.Clone(r.Estimates), r.NoiseEstimates...)
}

// internal coordinates: log or linear.
func (p *Problem) toZ(j int, x float64) float64 {
	if p.Params[j].Log {
		return math.Log(x)
	}
	return x
}

func (p *Problem) fromZ(j int, z float64) float64 {
	if p.Params[j].Log {
		return math.Exp(z)
	}
	return z
}

// StartPoints returns the starts: the given (or default) start first, then
// a Latin hypercube in the bounds (on the log scale where asked), drawn by
// explore's population sampler, so the same seed gives the same starts.
func (p *Problem) StartPoints(n int, seed uint64) ([][]float64, error) {
	first := make([]float64, len(p.Params))
	for j, q := range p.Params {
		first[j] = q.Start
	}
	out := [][]float64{first}
	if n <= 1 {
		return out, nil
	}
	var vary []explore.Distribution
	for _, q := range p.Params {
		if q.Log {
			vary = append(vary, explore.LogUniform{Low: q.Lower, High: q.Upper})
		} else {
			vary = append(vary, explore.Uniform{Low: q.Lower, High: q.Upper})
		}
	}
	pts, err := explore.Population{Vary: vary, Size: n - 1, Seed: seed, Sampling: explore.LatinHypercube}.Sample()
	if err != nil {
		return nil, err
	}
	return append(out, pts...), nil
}

// minimize runs Levenberg–Marquardt from x0.
func (p *Problem) minimize(ctx context.Context, x0 []float64, maxIt int, progress func(int, float64)) (*fit.Result, error) {
	s := fit.Settings{MaxIterations: maxIt, Progress: progress, XTol: 1e-13, FTol: 1e-15}
	for _, q := range p.Params {
		s.Lower = append(s.Lower, q.Lower)
		s.Upper = append(s.Upper, q.Upper)
		s.Log = append(s.Log, q.Log)
	}
	return fit.Minimize(ctx, p.Residuals, p.rows(), x0, s)
}

// objective is the negative log-likelihood for the residuals r.
func (p *Problem) objective(r []float64) float64 {
	n := float64(p.NData)
	var ss float64
	for _, v := range r[:p.NData] {
		ss += v * v
	}
	switch {
	case p.Weighted():
		nll := 0.5*ss + 0.5*n*math.Log(2*math.Pi)
		for _, e := range p.Exps {
			for _, pt := range e.Data.Points {
				nll += math.Log(pt.SD)
			}
		}
		return nll
	case p.noiseModelled():
		return 0.5*ss + p.sumLogSigma(r) + 0.5*n*math.Log(2*math.Pi)
	}
	if ss == 0 {
		return math.Inf(-1)
	}
	return 0.5 * n * (math.Log(2*math.Pi*ss/n) + 1)
}

// startSim runs one start for explore.Run: the design point is (start
// index, starting values…); the "trajectory" is the objective.
type startSim struct {
	p       *Problem
	maxIt   int
	results []Start
	mu      *sync.Mutex
	trace   func(int, int, float64)
	out     [][]float64
}

func (s *startSim) Simulate(ctx context.Context, x []float64) (explore.Trajectory, error) {
	idx := int(x[0])
	x0 := slices.Clone(x[1:])
	st := Start{Index: idx, From: slices.Clone(x0), Objective: math.NaN()}
	var progress func(int, float64)
	if s.trace != nil {
		progress = func(it int, cost float64) {
			s.mu.Lock()
			s.trace(idx, it, cost)
			s.mu.Unlock()
		}
	}
	res, err := s.p.minimize(ctx, x0, s.maxIt, progress)
	if res != nil {
		st.X, st.Converged, st.Reason = res.X, res.Converged, res.Reason
		st.Iterations, st.Evals = res.Iterations, res.Evals
		st.Objective = s.p.objective(res.R)
	}
	if err != nil {
		st.Reason = err.Error()
		st.Converged = false
	}
	s.results[idx] = st
	if err != nil {
		return explore.Trajectory{}, err
	}
	if s.out == nil {
		s.out = [][]float64{{0}}
	}
	s.out[0][0] = st.Objective
	return explore.Trajectory{T: []float64{0}, Y: s.out}, nil
}

// Run fits the problem: Levenberg–Marquardt from every start, in parallel
// on explore's runner (the same seed gives the same answer for any number
// of workers), then the uncertainty at the best converged start.
func (p *Problem) Run(ctx context.Context, s Settings) (*Report, error) {
	begin := time.Now()
	starts, err := p.StartPoints(p.Spec.Starts, p.Spec.Seed)
	if err != nil {
		return nil, err
	}
	design := make(explore.Points, len(starts))
	knobs := []string{"start"}
	for _, q := range p.Params {
		knobs = append(knobs, q.Name)
	}
	for i, x := range starts {
		design[i] = append([]float64{float64(i)}, x...)
	}
	results := make([]Start, len(starts))
	var mu sync.Mutex
	copyOf := p.copies()
	newSim := func() (explore.Simulator, error) {
		q, err := copyOf()
		if err != nil {
			return nil, err
		}
		return &startSim{p: q, maxIt: s.MaxIterations, results: results, mu: &mu, trace: s.Trace}, nil
	}
	_, runErr := explore.Run(ctx, design, newSim, explore.Settings{Knobs: knobs, Workers: s.Workers, Progress: s.Progress})
	if runErr != nil && ctx.Err() != nil {
		return nil, runErr
	}
	rep := &Report{Starts: results, Best: -1, Noise: p.Spec.Noise.Model, Sigma: math.NaN()}
	for i, st := range results {
		if st.Converged {
			rep.Converged++
			if rep.Best < 0 || st.Objective < results[rep.Best].Objective {
				rep.Best = i
			}
		}
	}
	if rep.Best < 0 {
		var why []string
		for _, st := range results {
			if len(why) < 5 {
				why = append(why, fmt.Sprintf("start %d: %s", st.Index+1, st.Reason))
			}
		}
		rep.Seconds = time.Since(begin).Seconds()
		return rep, &NoConvergence{Reasons: why}
	}
	best := results[rep.Best]
	rep.Iterations = best.Iterations
	if err := p.assess(ctx, rep, best.X, s); err != nil {
		return rep, err
	}
	rep.Seconds = time.Since(begin).Seconds()
	return rep, nil
}

// NoConvergence is the error of a fit where no start converged.
type NoConvergence struct{ Reasons []string }

func (e *NoConvergence) Error() string {
	return "no start converged: " + strings.Join(e.Reasons, "; ")
}

// assess fills the report at the estimate x: residuals, goodness of fit,
// Fisher uncertainty, notes and, when asked, profiles.
func (p *Problem) assess(ctx context.Context, rep *Report, x []float64, s Settings) error {
	np := len(p.Params)
	r := make([]float64, p.rows())
	jac := mat.NewDense(p.rows(), np, nil)
	if err := p.Residuals(ctx, x, r, jac); err != nil {
		return fmt.Errorf("at the estimate: %w", err)
	}
	n := p.NData
	var ss float64
	for _, v := range r[:n] {
		ss += v * v
	}
	rep.NData = n
	rep.DOF = n - np
	k := np
	rep.WSSR = ss
	if !p.Weighted() && !p.noiseModelled() {
		k++ // σ
	}
	// Fisher information.
	held := make([]bool, np)
	atBound := make([]int, np)
	for j, q := range p.Params {
		switch {
		case x[j] <= q.Lower:
			held[j], atBound[j] = true, -1
		case x[j] >= q.Upper:
			held[j], atBound[j] = true, 1
		}
	}
	u, sigma2 := p.fisher(r, jac, held)
	if !p.Weighted() && !p.noiseModelled() {
		rep.Sigma = math.Sqrt(sigma2)
		rep.WSSR = ss / sigma2
	}
	rep.NParams = k
	rep.Objective = p.objective(r)
	rep.AIC = 2*float64(k) + 2*rep.Objective
	if n-k-1 > 0 {
		rep.AICc = rep.AIC + 2*float64(k*(k+1))/float64(n-k-1)
	} else {
		rep.AICc = math.Inf(1)
	}
	rep.BIC = float64(k)*math.Log(float64(n)) + 2*rep.Objective
	// Residuals per experiment.
	for _, e := range p.Exps {
		for i, pt := range e.Data.Points {
			w := r[e.row0+i]
			fitted := e.yhat[i]
			rr := Residual{Experiment: e.Name, Time: pt.Time, Name: pt.Name, Observed: pt.Value, SD: pt.SD,
				Fitted: fitted, Residual: pt.Value - fitted, Weighted: -w}
			if !p.Weighted() && !p.noiseModelled() {
				rr.Weighted = rr.Residual / math.Sqrt(sigma2)
			}
			rep.Residuals = append(rep.Residuals, rr)
			rep.SSR += rr.Residual * rr.Residual
		}
	}
	rep.Corr = u.Corr
	dofQ := 0
	if !p.Weighted() {
		dofQ = rep.DOF // σ estimated: Student's t
	}
	qt := fit.Quantile97_5(dofQ)
	for j, q := range p.Params {
		e := Estimated{Param: q, Value: x[j], SE: u.SE[j], Determined: u.Determined[j] && !held[j], AtBound: atBound[j],
			ProfileLow: math.NaN(), ProfileHigh: math.NaN(), Low: math.NaN(), High: math.NaN()}
		switch {
		case held[j]:
			side := "lower"
			if atBound[j] > 0 {
				side = "upper"
			}
			rep.Notes = append(rep.Notes, fmt.Sprintf("%s ends on its %s bound (%g): the data push it beyond the range allowed, so no Fisher interval is given; widen the bound or fix the value", q.Name, side, x[j]))
		case !u.Determined[j]:
			e.Low, e.High = math.Inf(-1), math.Inf(1)
			rep.Notes = append(rep.Notes, fmt.Sprintf("%s is not determined by the data: other values fit equally well (the model's outputs do not change along some combination of the estimates involving it), so its interval is unbounded; fix it, or measure what depends on it", q.Name))
		case q.Log:
			f := math.Exp(qt * e.SE / x[j])
			e.Low, e.High = x[j]/f, x[j]*f
		default:
			e.Low, e.High = x[j]-qt*e.SE, x[j]+qt*e.SE
		}
		if e.Determined && e.SE > 10*math.Abs(x[j]) && x[j] != 0 {
			rep.Notes = append(rep.Notes, fmt.Sprintf("%s is poorly determined: its standard error (%.3g) is more than ten times its value", q.Name, e.SE))
		}
		if q.Noise {
			rep.NoiseEstimates = append(rep.NoiseEstimates, e)
		} else {
			rep.Estimates = append(rep.Estimates, e)
		}
	}
	for _, e := range p.Exps {
		for j, why := range e.ev.Inexact() {
			if why != "" {
				rep.Notes = append(rep.Notes, fmt.Sprintf("experiment %q: the sensitivities to %s are taken by central differences of whole solves (%s)", e.Name, e.ev.Targets()[j], why))
			}
		}
	}
	if s.Profiles {
		profs, err := p.Profiles(ctx, x, rep.Objective, s.Workers)
		if err != nil {
			return err
		}
		rep.Profiles = profs
		for j, pr := range profs {
			est := &rep.Estimates
			jj := j
			if j >= p.NModel {
				est, jj = &rep.NoiseEstimates, j-p.NModel
			}
			(*est)[jj].ProfileLow, (*est)[jj].ProfileHigh = pr.Low, pr.High
			if math.IsInf(pr.Low, 0) || math.IsInf(pr.High, 0) {
				rep.Notes = append(rep.Notes, fmt.Sprintf("%s: the profile likelihood does not rise by the 95 %% threshold within the bounds on the %s, so the interval is open there: the data do not bound %s in that direction", p.Params[j].Name, openSide(pr), p.Params[j].Name))
			}
		}
	}
	sort.Strings(rep.Notes)
	return nil
}

func openSide(pr Profile) string {
	switch {
	case math.IsInf(pr.Low, 0) && math.IsInf(pr.High, 0):
		return "both sides"
	case math.IsInf(pr.Low, 0):
		return "low side"
	}
	return "high side"
}

// Profile is the profile likelihood of one estimate: the objective
// minimized over the others at each value.
type Profile struct {
	Values, Objectives []float64
	Low, High          float64 // the 95 % interval; ±Inf when open
}

// Profiles computes the profile likelihood of every estimate; see
// profile.go.
func (p *Problem) Profiles(ctx context.Context, x []float64, best float64, workers int) ([]Profile, error) {
	return p.profiles(ctx, x, best, workers)
}

// Curves solves experiment i at the estimates x on a fine grid from 0 to
// its last measurement (points times, on a log grid when the model's
// output is log-spaced), for figures of the fit over the data.
func (p *Problem) Curves(ctx context.Context, i int, x []float64, points int) (*Result, error) {
	e := p.Exps[i]
	o := p.opts[i]
	times := e.ev.Times()
	last := times[len(times)-1]
	sim := p.Model.Simulation.WithDefaults()
	if points < 2 {
		points = 200
	}
	out := network.Output{Points: points, Spacing: sim.Output.Spacing}
	if out.Spacing == "log" && sim.Output.First > 0 && sim.Output.First < last {
		out.First = sim.Output.First
	}
	grid := network.OutputTimes(last, out)
	o.Times = grid
	o.ErrorControl = false
	ev, err := NewEvaluator(p.Model, o)
	if err != nil {
		return nil, err
	}
	q := make([]float64, len(e.pidx))
	for j, pi := range e.pidx {
		q[j] = x[pi]
	}
	return ev.Solve(ctx, q, false)
}
