package stochastic

import (
	"context"
	"math"
)

// runDirect is Gillespie's direct method (Gillespie 1977): the time to the
// next firing is exponential with rate a0 = Σ a_j, the channel is chosen
// with probability a_j/a0. After a firing only the propensities of the
// channels in its dependency list are recomputed; the channel is found by
// a linear search or by descending the partial-sums tree.
func (s *Simulator) runDirect(ctx context.Context, t0 float64, times, out []float64) error {
	t := t0
	if err := s.recomputeAll(t); err != nil {
		return err
	}
	s.fillTree()
	tEnd := times[len(times)-1]
	k := s.record(times, out, 0, t, true)
	stop := s.nextStop(t)
	a0 := s.total()
	for {
		tn := math.Inf(1)
		if a0 > 0 {
			tn = t + s.rng.exp()/a0
		}
		if tn > stop || tn > tEnd {
			end := math.Min(stop, tEnd)
			k = s.record(times, out, k, end, false)
			t = end
			if stop <= tEnd {
				if _, err := s.events(t, false); err != nil {
					return err
				}
				if err := s.recomputeAll(t); err != nil {
					return err
				}
				s.fillTree()
				a0 = s.total()
				stop = s.nextStop(t)
				k = s.record(times, out, k, t, true)
				if t < tEnd {
					continue
				}
			}
			s.record(times, out, k, tEnd, true)
			return nil
		}
		k = s.record(times, out, k, tn, false)
		t = tn
		j := s.pick(a0)
		if j < 0 { // roundoff left nothing to fire
			a0 = s.total()
			continue
		}
		s.apply(j)
		s.stats.Firings++
		if err := canceled(ctx, s.stats.Firings); err != nil {
			return err
		}
		if s.stats.Firings&0xffff == 0 {
			if err := s.checkLimit(t); err != nil {
				return err
			}
		}
		if err := s.updateDeps(j, t); err != nil {
			return err
		}
		fired, err := s.afterFiring(j, t)
		if err != nil {
			return err
		}
		if fired {
			if err := s.recomputeAll(t); err != nil {
				return err
			}
			s.fillTree()
			stop = s.nextStop(t)
		}
		a0 = s.total()
	}
}

// total returns a0: the root of the tree, or the sum of the propensities
// (summed afresh, so that no drift accumulates).
func (s *Simulator) total() float64 {
	if s.tree != nil {
		return s.tree[1]
	}
	a0 := 0.0
	for _, v := range s.a {
		a0 += v
	}
	return a0
}

// fillTree builds the partial-sums tree from the propensities.
func (s *Simulator) fillTree() {
	if s.tree == nil {
		return
	}
	copy(s.tree[s.size:], s.a)
	for i := s.size - 1; i >= 1; i-- {
		s.tree[i] = s.tree[2*i] + s.tree[2*i+1]
	}
}

// setProp sets the propensity of channel j, keeping the tree.
func (s *Simulator) setProp(j int, v float64) {
	s.a[j] = v
	if s.tree == nil {
		return
	}
	i := s.size + j
	s.tree[i] = v
	for i >>= 1; i >= 1; i >>= 1 {
		s.tree[i] = s.tree[2*i] + s.tree[2*i+1]
	}
}

// updateDeps recomputes the propensities that channel j's firing changed,
// and the time-dependent ones.
func (s *Simulator) updateDeps(j int, t float64) error {
	d := &s.ch[j]
	for _, k := range s.dep[d.d0:d.d1] {
		v := s.propensity(int(k), t)
		if s.ch[k].general {
			if err := s.checkProp(int(k), t, v); err != nil {
				return err
			}
		}
		s.setProp(int(k), v)
	}
	for _, k := range s.tdep {
		v := s.propensity(int(k), t)
		if err := s.checkProp(int(k), t, v); err != nil {
			return err
		}
		s.setProp(int(k), v)
	}
	return nil
}

// pick chooses the channel to fire with probability a_j/a0, or −1 when
// roundoff left none.
func (s *Simulator) pick(a0 float64) int {
	r := s.rng.uniform() * a0
	if s.tree != nil {
		i := 1
		for i < s.size {
			l := s.tree[2*i]
			if r < l {
				i = 2 * i
			} else {
				r -= l
				i = 2*i + 1
			}
		}
		if j := i - s.size; j < s.nc && s.a[j] > 0 {
			return j
		}
		return s.lastPositive()
	}
	for j, v := range s.a {
		if r < v {
			return j
		}
		r -= v
	}
	return s.lastPositive()
}

// lastPositive returns the last channel with a positive propensity, or −1.
func (s *Simulator) lastPositive() int {
	for j := s.nc - 1; j >= 0; j-- {
		if s.a[j] > 0 {
			return j
		}
	}
	return -1
}
