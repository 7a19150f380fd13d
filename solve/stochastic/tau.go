package stochastic

import (
	"context"
	"math"
)

// prepareLeap finds, for every species, the highest order of the channels
// it is a reactant of (HOR) and its own largest order in those channels,
// which give the g_i of Cao, Gillespie and Petzold (2006, eq. 27).
func (s *Simulator) prepareLeap() {
	s.hor = make([]int32, s.ns)
	s.horN = make([]int32, s.ns)
	s.isReac = make([]bool, s.ns)
	for j := range s.net.Channels {
		ch := &s.net.Channels[j]
		o := int32(ch.order())
		if ch.General {
			for _, sp := range ch.Reads {
				s.isReac[sp] = true
				if o > s.hor[sp] {
					s.hor[sp], s.horN[sp] = o, 1
				}
			}
			continue
		}
		for _, t := range ch.Reactants {
			sp := t.Species
			s.isReac[sp] = true
			switch {
			case o > s.hor[sp]:
				s.hor[sp], s.horN[sp] = o, int32(t.N)
			case o == s.hor[sp] && int32(t.N) > s.horN[sp]:
				s.horN[sp] = int32(t.N)
			}
		}
	}
	s.prop = make([]float64, s.ns)
	s.crit = make([]bool, s.nc)
	s.kfire = make([]float64, s.nc)
	s.mu = make([]float64, s.ns)
	s.s2 = make([]float64, s.ns)
}

// gi is g_i of Cao, Gillespie and Petzold (2006, after eq. 27) for species
// i at count x: 1, 2 or 3 for first-, second- and third-order channels,
// with the corrections for channels that need two or three of its
// molecules; orders above three use the order itself.
func (s *Simulator) gi(i int, x float64) float64 {
	h, n := s.hor[i], s.horN[i]
	var g float64
	switch {
	case h <= 1:
		g = 1
	case h == 2 && n >= 2:
		g = 2 + 1/(x-1)
	case h == 2:
		g = 2
	case h == 3 && n == 2:
		g = 1.5 * (2 + 1/(x-1))
	case h == 3 && n >= 3:
		g = 3 + 1/(x-1) + 2/(x-2)
	default:
		g = float64(h)
	}
	if !(g >= float64(max(h, 1))) { // x too small for the corrections: those channels are critical anyway
		g = float64(max(h, 1))
	}
	return g
}

// leapSize is τ' of Cao, Gillespie and Petzold (2006, eq. 33) over the
// non-critical channels: the largest step in which every reactant
// species' expected change and its standard deviation stay within
// max(ε·x_i/g_i, 1).
func (s *Simulator) leapSize() float64 {
	for i := range s.mu {
		s.mu[i], s.s2[i] = 0, 0
	}
	any := false
	for j, a := range s.a {
		if s.crit[j] || a <= 0 {
			continue
		}
		any = true
		d := &s.ch[j]
		for k := d.c0; k < d.c1; k++ {
			v := s.cDel[k]
			s.mu[s.cSp[k]] += v * a
			s.s2[s.cSp[k]] += v * v * a
		}
	}
	if !any {
		return math.Inf(1)
	}
	tau := math.Inf(1)
	for i, x := range s.x {
		if !s.isReac[i] {
			continue
		}
		b := math.Max(s.set.Epsilon*x/s.gi(i, x), 1)
		if m := math.Abs(s.mu[i]); m > 0 {
			tau = math.Min(tau, b/m)
		}
		if v := s.s2[i]; v > 0 {
			tau = math.Min(tau, b*b/v)
		}
	}
	return tau
}

// markCritical marks the channels with a positive propensity that can
// fire fewer than Critical more times before one of the species they
// consume runs out (L_j of Cao, Gillespie and Petzold 2006, eq. 10).
func (s *Simulator) markCritical() {
	nc := float64(s.set.Critical)
	for j, a := range s.a {
		s.crit[j] = false
		if a <= 0 {
			continue
		}
		d := &s.ch[j]
		for k := d.c0; k < d.c1; k++ {
			if v := s.cDel[k]; v < 0 && math.Floor(s.x[s.cSp[k]]/-v) < nc {
				s.crit[j] = true
				break
			}
		}
	}
}

// runLeap is tau-leaping with the step selection of Cao, Gillespie and
// Petzold (2006, "Efficient step size selection for the tau-leaping
// simulation method", J. Chem. Phys. 124, 044109; their procedure of
// section IV): critical channels fire only exactly, at most one of them
// per leap; the others fire Poisson numbers of times; a leap that would
// make a count negative is rejected and retried with τ' halved; when τ' is
// below ExactFactor/a0, ExactSteps exact (direct-method) steps are taken
// instead. Leaps end at output times and events, so that the counts
// recorded are those of the leaping path at those times.
func (s *Simulator) runLeap(ctx context.Context, t0 float64, times, out []float64) error {
	t := t0
	tEnd := times[len(times)-1]
	k := s.record(times, out, 0, t, true)
	stop := s.nextStop(t)
	for t < tEnd || (stop <= tEnd && stop == t) {
		if stop <= t { // an event due now
			if _, err := s.events(t, false); err != nil {
				return err
			}
			stop = s.nextStop(t)
			k = s.record(times, out, k, t, true)
			continue
		}
		if err := ctx.Err(); err != nil {
			return err
		}
		if err := s.checkLimit(t); err != nil {
			return err
		}
		if err := s.recomputeAll(t); err != nil {
			return err
		}
		a0 := s.total()
		horizon := math.Min(stop, tEnd)
		if k < len(times) && times[k] < horizon {
			horizon = times[k]
		}
		if a0 <= 0 {
			t = horizon
			k = s.record(times, out, k, t, t < stop)
			continue
		}
		s.markCritical()
		tau1 := s.leapSize()
		if tau1 < s.set.ExactFactor/a0 {
			var err error
			if t, err = s.exactSteps(t, horizon, times, out, &k); err != nil {
				return err
			}
			k = s.record(times, out, k, t, t < stop)
			continue
		}
		ac := 0.0
		for j, a := range s.a {
			if s.crit[j] {
				ac += a
			}
		}
		for {
			tau2 := math.Inf(1)
			if ac > 0 {
				tau2 = s.rng.exp() / ac
			}
			tau, critFires := tau1, false
			if tau2 <= tau1 {
				tau, critFires = tau2, true
			}
			if t+tau >= horizon {
				tau, critFires = horizon-t, false
			}
			for j, a := range s.a {
				s.kfire[j] = 0
				if !s.crit[j] && a > 0 {
					s.kfire[j] = s.rng.poisson(a * tau)
				}
			}
			if critFires {
				r := s.rng.uniform() * ac
				last := -1
				for j, a := range s.a {
					if !s.crit[j] {
						continue
					}
					last = j
					if r < a {
						break
					}
					r -= a
				}
				s.kfire[last] = 1
			}
			copy(s.prop, s.x)
			for j, n := range s.kfire {
				if n == 0 {
					continue
				}
				d := &s.ch[j]
				for q := d.c0; q < d.c1; q++ {
					s.prop[s.cSp[q]] += n * s.cDel[q]
				}
			}
			ok := true
			for _, x := range s.prop {
				if x < 0 {
					ok = false
					break
				}
			}
			if !ok {
				s.stats.Rejected++
				tau1 /= 2
				continue
			}
			var fired int64
			for _, n := range s.kfire {
				fired += int64(n)
			}
			copy(s.x, s.prop)
			t += tau
			if t >= horizon {
				t = horizon // no drift past an output time or event
			}
			s.stats.Leaps++
			s.stats.Firings += fired
			break
		}
		if len(s.passages) > 0 {
			s.checkPassages(t)
		}
		if _, err := s.events(t, true); err != nil {
			return err
		}
		k = s.record(times, out, k, t, t < stop) // at an event time, after it
	}
	s.record(times, out, k, tEnd, true)
	return nil
}

// exactSteps takes up to ExactSteps direct-method steps from t, not past
// horizon, recording outputs, and returns the new time. After each step
// only the propensities the firing changed are recomputed (the
// dependency graph of the direct method).
func (s *Simulator) exactSteps(t, horizon float64, times, out []float64, k *int) (float64, error) {
	for n := 0; n < s.set.ExactSteps; n++ {
		a0 := s.total()
		tn := math.Inf(1)
		if a0 > 0 {
			tn = t + s.rng.exp()/a0
		}
		if tn >= horizon {
			*k = s.record(times, out, *k, horizon, false)
			return horizon, nil
		}
		*k = s.record(times, out, *k, tn, false)
		t = tn
		j := s.pick(a0)
		if j < 0 {
			return t, nil
		}
		s.apply(j)
		s.stats.Firings++
		s.stats.Exact++
		fired, err := s.afterFiring(j, t)
		if err != nil {
			return t, err
		}
		if fired {
			return t, nil
		}
		if err := s.updateDeps(j, t); err != nil {
			return t, err
		}
	}
	return t, nil
}
