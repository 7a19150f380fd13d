package stochastic

import (
	"context"
	"math"
)

// iheap is an indexed binary min-heap of channels keyed by their putative
// firing times: the channel that fires next is at the top, and a channel's
// key can be changed in O(log n) through its position.
type iheap struct {
	h   []int32 // channels in heap order
	pos []int32 // position of each channel in h
}

func newIHeap(n int) iheap {
	h := iheap{h: make([]int32, n), pos: make([]int32, n)}
	for i := range n {
		h.h[i], h.pos[i] = int32(i), int32(i)
	}
	return h
}

// build orders the heap by the keys.
func (h *iheap) build(key []float64) {
	for i := len(h.h)/2 - 1; i >= 0; i-- {
		h.down(i, key)
	}
}

func (h *iheap) swap(i, j int) {
	h.h[i], h.h[j] = h.h[j], h.h[i]
	h.pos[h.h[i]] = int32(i)
	h.pos[h.h[j]] = int32(j)
}

func (h *iheap) up(i int, key []float64) {
	for i > 0 {
		p := (i - 1) / 2
		if key[h.h[p]] <= key[h.h[i]] {
			return
		}
		h.swap(i, p)
		i = p
	}
}

func (h *iheap) down(i int, key []float64) {
	n := len(h.h)
	for {
		l := 2*i + 1
		if l >= n {
			return
		}
		m := l
		if r := l + 1; r < n && key[h.h[r]] < key[h.h[l]] {
			m = r
		}
		if key[h.h[i]] <= key[h.h[m]] {
			return
		}
		h.swap(i, m)
		i = m
	}
}

// fix restores the heap after channel j's key changed.
func (h *iheap) fix(j int, key []float64) {
	i := int(h.pos[j])
	h.up(i, key)
	h.down(int(h.pos[j]), key)
}

// drawAll gives every channel a fresh putative firing time after t.
func (s *Simulator) drawAll(t float64) {
	for j, a := range s.a {
		s.tnext[j] = s.putative(t, a)
	}
	s.heap.build(s.tnext)
}

// putative returns t plus an exponential time of rate a (+Inf for a = 0).
func (s *Simulator) putative(t, a float64) float64 {
	if a <= 0 {
		return math.Inf(1)
	}
	return t + s.rng.exp()/a
}

// runNext is the next-reaction method (Gibson and Bruck 2000): every
// channel has a putative firing time in an indexed priority queue; the
// earliest fires; the channels whose propensity changed get their times
// rescaled, (a_old/a_new)(T − t) + t, so that one random number is used
// per firing; the channel that fired draws a new one.
func (s *Simulator) runNext(ctx context.Context, t0 float64, times, out []float64) error {
	t := t0
	if err := s.recomputeAll(t); err != nil {
		return err
	}
	s.drawAll(t)
	tEnd := times[len(times)-1]
	k := s.record(times, out, 0, t, true)
	stop := s.nextStop(t)
	for {
		var j int
		tn := math.Inf(1)
		if s.nc > 0 {
			j = int(s.heap.h[0])
			tn = s.tnext[j]
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
				s.drawAll(t)
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
		d := &s.ch[j]
		self := false
		for _, kk := range s.dep[d.d0:d.d1] {
			if err := s.rescale(int(kk), j, t); err != nil {
				return err
			}
			self = self || int(kk) == j
		}
		for _, kk := range s.tdep {
			if err := s.rescale(int(kk), j, t); err != nil {
				return err
			}
			self = self || int(kk) == j
		}
		if !self { // its propensity did not change, but its time is spent
			s.tnext[j] = s.putative(t, s.a[j])
			s.heap.fix(j, s.tnext)
		}
		fired, err := s.afterFiring(j, t)
		if err != nil {
			return err
		}
		if fired {
			if err := s.recomputeAll(t); err != nil {
				return err
			}
			s.drawAll(t)
			stop = s.nextStop(t)
		}
	}
}

// rescale recomputes channel k's propensity after channel j fired at t
// and updates its putative time.
func (s *Simulator) rescale(k, j int, t float64) error {
	old := s.a[k]
	v := s.propensity(k, t)
	if s.ch[k].general {
		if err := s.checkProp(k, t, v); err != nil {
			return err
		}
	}
	s.a[k] = v
	switch {
	case k == j || old <= 0:
		s.tnext[k] = s.putative(t, v)
	case v <= 0:
		s.tnext[k] = math.Inf(1)
	default:
		s.tnext[k] = t + (old/v)*(s.tnext[k]-t)
	}
	s.heap.fix(k, s.tnext)
	return nil
}
