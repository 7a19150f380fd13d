package calibrate

import (
	"context"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve/explore"
	"kinetarium/solve/fit"
)

// Profile likelihood (Venzon & Moolgavkar, Appl. Stat. 37, 1988; Raue et
// al., Bioinformatics 25, 2009, for its use on ODE models): for each
// estimate, fix it at values stepping away from the best fit, re-fit the
// others, and find where the objective (the negative log-likelihood) has
// risen by ½·χ²₁(0.95) = 1.920729: the 95 % interval. A side on which the
// bound is reached first is open.

// profileRise is ½·χ²₁(0.95), the rise of the negative log-likelihood at
// the ends of a 95 % profile interval (common practice).
const profileRise = 1.9207294103

// profileSteps bounds the re-fits on each side of a profile.
const profileSteps = 30

// sideResult is one side of one profile.
type sideResult struct {
	values, objs []float64
	end          float64 // the crossing, or ±Inf when open
}

// profiles computes every profile, each side of each a task on explore's
// runner.
func (p *Problem) profiles(ctx context.Context, x []float64, best float64, workers int) ([]Profile, error) {
	np := len(p.Params)
	// A first step from the Fisher standard errors in the internal scale.
	r := make([]float64, p.rows())
	jac := mat.NewDense(p.rows(), np, nil)
	if err := p.Residuals(ctx, x, r, jac); err != nil {
		return nil, err
	}
	u, _ := p.fisher(r, jac, nil)
	steps := make([]float64, np)
	for j, q := range p.Params {
		span := p.toZ(j, q.Upper) - p.toZ(j, q.Lower)
		h := span / 20
		if se := u.SE[j]; se > 0 && !math.IsInf(se, 0) && !math.IsNaN(se) {
			if q.Log {
				se /= x[j]
			}
			h = math.Min(h, 0.5*se)
		}
		steps[j] = math.Max(h, 1e-6*span)
	}
	results := make([]sideResult, 2*np)
	design := make(explore.Points, 2*np)
	for i := range design {
		design[i] = []float64{float64(i)}
	}
	copyOf := p.copies()
	newSim := func() (explore.Simulator, error) {
		q, err := copyOf()
		if err != nil {
			return nil, err
		}
		return &profileSim{p: q, x: x, best: best, steps: steps, out: results}, nil
	}
	if _, err := explore.Run(ctx, design, newSim, explore.Settings{Knobs: []string{"task"}, Workers: workers}); err != nil && ctx.Err() != nil {
		return nil, err
	}
	out := make([]Profile, np)
	for j := range out {
		lo, hi := results[2*j], results[2*j+1]
		pr := Profile{Low: lo.end, High: hi.end}
		for k := len(lo.values) - 1; k >= 0; k-- {
			pr.Values = append(pr.Values, lo.values[k])
			pr.Objectives = append(pr.Objectives, lo.objs[k])
		}
		pr.Values = append(pr.Values, x[j])
		pr.Objectives = append(pr.Objectives, best)
		pr.Values = append(pr.Values, hi.values...)
		pr.Objectives = append(pr.Objectives, hi.objs...)
		out[j] = pr
	}
	return out, nil
}

// profileSim walks one side of one profile.
type profileSim struct {
	p     *Problem
	x     []float64
	best  float64
	steps []float64
	out   []sideResult
	traj  [][]float64
}

func (s *profileSim) Simulate(ctx context.Context, task []float64) (explore.Trajectory, error) {
	t := int(task[0])
	j, dir := t/2, -1.0
	if t%2 == 1 {
		dir = 1
	}
	res := s.p.profileSide(ctx, s.x, j, dir, s.best, s.steps[j])
	s.out[t] = res
	if s.traj == nil {
		s.traj = [][]float64{{0}}
	}
	s.traj[0][0] = res.end
	if math.IsInf(res.end, 0) {
		s.traj[0][0] = 0
	}
	return explore.Trajectory{T: []float64{0}, Y: s.traj}, nil
}

// profileSide steps parameter j away from the estimate x in direction dir
// (internal scale), re-fitting the others at each value.
func (p *Problem) profileSide(ctx context.Context, x []float64, j int, dir, best, h float64) sideResult {
	q := p.Params[j]
	zEnd := p.toZ(j, q.Lower)
	if dir > 0 {
		zEnd = p.toZ(j, q.Upper)
	}
	res := sideResult{end: math.Inf(int(dir))}
	z := p.toZ(j, x[j])
	others := slices.Delete(slices.Clone(x), j, j+1)
	prevZ, prevObj := z, best
	for k := 0; k < profileSteps && ctx.Err() == nil; k++ {
		zn := z + dir*h
		if (dir > 0 && zn >= zEnd) || (dir < 0 && zn <= zEnd) {
			zn = zEnd
		}
		v := p.fromZ(j, zn)
		obj, xo, ok := p.refitFixed(ctx, j, v, others)
		if !ok {
			h /= 2
			if h < 1e-8 {
				break
			}
			continue
		}
		res.values = append(res.values, v)
		res.objs = append(res.objs, obj)
		if obj-best >= profileRise {
			// Narrow the crossing by bisection (each a re-fit) until the
			// rise at the outer point is within 20 % of the threshold or
			// the bracket is small, then interpolate linearly in the
			// internal scale.
			lo, hi, olo, ohi := prevZ, zn, prevObj, obj
			for b := 0; b < 12 && ohi-best > 1.2*profileRise && math.Abs(hi-lo) > 1e-4*math.Abs(zEnd-p.toZ(j, x[j]))+1e-12; b++ {
				mid := (lo + hi) / 2
				om, xm, ok := p.refitFixed(ctx, j, p.fromZ(j, mid), others)
				if !ok {
					break
				}
				if om-best >= profileRise {
					hi, ohi = mid, om
				} else {
					lo, olo, others = mid, om, xm
				}
			}
			f := (best + profileRise - olo) / (ohi - olo)
			res.end = p.fromZ(j, lo+f*(hi-lo))
			return res
		}
		if zn == zEnd {
			return res // open: the bound is reached first
		}
		others = xo
		// Grow the step where the profile is flat.
		if obj-prevObj < 0.1*profileRise {
			h *= 2
		}
		prevZ, prevObj, z = zn, obj, zn
	}
	return res
}

// refitFixed minimizes over every estimate but j, held at v, from others.
func (p *Problem) refitFixed(ctx context.Context, j int, v float64, others []float64) (float64, []float64, bool) {
	np := len(p.Params)
	full := make([]float64, np)
	expand := func(y []float64) {
		copy(full[:j], y[:j])
		full[j] = v
		copy(full[j+1:], y[j:])
	}
	jfull := mat.NewDense(p.rows(), np, nil)
	f := func(ctx context.Context, y, r []float64, jac *mat.Dense) error {
		expand(y)
		var jj *mat.Dense
		if jac != nil {
			jj = jfull
		}
		if err := p.Residuals(ctx, full, r, jj); err != nil {
			return err
		}
		if jac != nil {
			for row := 0; row < p.rows(); row++ {
				for c := 0; c < np-1; c++ {
					src := c
					if c >= j {
						src = c + 1
					}
					jac.Set(row, c, jfull.At(row, src))
				}
			}
		}
		return nil
	}
	if np == 1 {
		r := make([]float64, p.rows())
		full[0] = v
		if err := p.Residuals(ctx, full, r, nil); err != nil {
			return 0, nil, false
		}
		return p.objective(r), nil, true
	}
	s := fit.Settings{MaxIterations: 100}
	for k, q := range p.Params {
		if k == j {
			continue
		}
		s.Lower = append(s.Lower, q.Lower)
		s.Upper = append(s.Upper, q.Upper)
		s.Log = append(s.Log, q.Log)
	}
	res, err := fit.Minimize(ctx, f, p.rows(), others, s)
	if err != nil || res == nil {
		return 0, nil, false
	}
	return p.objective(res.R), res.X, true
}
