package sliders

import (
	"context"
	"sync"
)

// Mailbox holds at most one value: putting a value replaces any value not
// yet taken, so a reader that falls behind sees only the newest one. Every
// value put gets the next generation number, which tells a reader whether
// the value it took is still the newest. The zero value is an empty
// mailbox, safe for use by many goroutines.
type Mailbox[T any] struct {
	mu     sync.Mutex
	val    T
	full   bool
	gen    int
	signal chan struct{} // holds a token while the mailbox may be full
}

func (m *Mailbox[T]) init() {
	if m.signal == nil {
		m.signal = make(chan struct{}, 1)
	}
}

// Put leaves v in the mailbox, in place of any value not yet taken, and
// returns v's generation.
func (m *Mailbox[T]) Put(v T) int {
	m.mu.Lock()
	m.init()
	m.gen++
	g := m.gen
	m.val, m.full = v, true
	sig := m.signal
	m.mu.Unlock()
	select {
	case sig <- struct{}{}:
	default: // a token is already waiting
	}
	return g
}

// TryTake takes the value in the mailbox, if there is one.
func (m *Mailbox[T]) TryTake() (v T, gen int, ok bool) {
	m.mu.Lock()
	defer m.mu.Unlock()
	if !m.full {
		return v, 0, false
	}
	v, gen = m.val, m.gen
	var zero T
	m.val, m.full = zero, false
	return v, gen, true
}

// Take waits for a value and takes it. It returns ctx's error when ctx is
// done first.
func (m *Mailbox[T]) Take(ctx context.Context) (T, int, error) {
	for {
		if v, gen, ok := m.TryTake(); ok {
			return v, gen, nil
		}
		m.mu.Lock()
		m.init()
		sig := m.signal
		m.mu.Unlock()
		select {
		case <-sig:
		case <-ctx.Done():
			var zero T
			return zero, 0, ctx.Err()
		}
	}
}

// Latest returns the generation of the newest value put, taken or not (0
// before the first).
func (m *Mailbox[T]) Latest() int {
	m.mu.Lock()
	defer m.mu.Unlock()
	return m.gen
}

// Current reports whether gen is the generation of the newest value put.
func (m *Mailbox[T]) Current(gen int) bool { return gen == m.Latest() }
