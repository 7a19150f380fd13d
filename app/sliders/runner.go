package sliders

import (
	"context"
	"sync"
	"sync/atomic"

	"kinetarium/app/run"
	"kinetarium/network"
)

// Request asks for a simulation of Model with the knobs' values.
type Request struct {
	// Model is the model to simulate; the Runner compiles it again only
	// when a request brings a different *Model, so the caller must not
	// change it after handing it over and should pass the same pointer
	// while the model is unchanged.
	Model *network.Model
	// Knobs hold the values to try; the caller must not change the slice
	// after handing it over.
	Knobs []Knob
}

// Runner simulates requests on a goroutine of its own, one at a time,
// while the caller goes on. When requests come faster than solves finish,
// only the newest is solved: a request waiting in the Runner's Mailbox is
// replaced by a newer one, never queued behind it, a solve in progress is
// cancelled when a newer request arrives, and a result is delivered only
// while its request is still the newest.
//
// Set the exported fields before the first Request. The zero value solves
// with a Session and calls back directly.
type Runner struct {
	// Solve does one simulation; nil means compiling req.Model into a
	// Session (again only when the model changes), setting the knobs'
	// values and running it. It is called on the Runner's goroutine.
	Solve func(ctx context.Context, req Request) (*run.Outcome, error)
	// Deliver runs f where OnResult may touch the user interface (fyne.Do);
	// nil calls f directly.
	Deliver func(f func())
	// OnResult receives the outcome of the newest request (nil when the
	// model cannot be compiled) and its error.
	OnResult func(gen int, req Request, o *run.Outcome, err error)

	box     Mailbox[Request]
	once    sync.Once
	stop    context.CancelFunc
	done    chan struct{}
	mu      sync.Mutex
	solving int                // generation of the solve in progress, 0 when none
	cancel  context.CancelFunc // cancels the solve in progress
	session *Session           // used by the default Solve, on the Runner's goroutine

	solved, shown atomic.Int64
}

// Request asks for req to be simulated and returns its generation. Any
// request not yet started is dropped, and a solve in progress is
// cancelled.
func (r *Runner) Request(req Request) int {
	r.once.Do(r.start)
	gen := r.box.Put(req)
	r.mu.Lock()
	if r.cancel != nil && r.solving < gen {
		r.cancel()
	}
	r.mu.Unlock()
	return gen
}

// Latest returns the generation of the newest request.
func (r *Runner) Latest() int { return r.box.Latest() }

// Counts returns how many solves the Runner has started and how many
// results it has delivered; the difference was dropped as stale.
func (r *Runner) Counts() (solved, shown int) {
	return int(r.solved.Load()), int(r.shown.Load())
}

// Close stops the Runner's goroutine, cancelling a solve in progress, and
// waits for it to end. Requests made afterwards are not solved.
func (r *Runner) Close() {
	r.once.Do(func() {}) // a Runner never started stays stopped
	r.mu.Lock()
	stop, done := r.stop, r.done
	if r.cancel != nil {
		r.cancel()
	}
	r.mu.Unlock()
	if stop != nil {
		stop()
		<-done
	}
}

func (r *Runner) start() {
	ctx, stop := context.WithCancel(context.Background())
	r.mu.Lock()
	r.stop, r.done = stop, make(chan struct{})
	r.mu.Unlock()
	go r.loop(ctx)
}

func (r *Runner) loop(ctx context.Context) {
	defer close(r.done)
	for {
		req, gen, err := r.box.Take(ctx)
		if err != nil {
			return
		}
		sctx, cancel := context.WithCancel(ctx)
		r.mu.Lock()
		r.solving, r.cancel = gen, cancel
		r.mu.Unlock()
		if !r.box.Current(gen) { // overtaken while starting
			r.mu.Lock()
			r.solving, r.cancel = 0, nil
			r.mu.Unlock()
			cancel()
			continue
		}
		r.solved.Add(1)
		o, err := r.solve(sctx, req)
		r.mu.Lock()
		r.solving, r.cancel = 0, nil
		r.mu.Unlock()
		cancel()
		if !r.box.Current(gen) {
			continue // stale: a newer request waits in the mailbox
		}
		deliver := func() {
			if r.box.Current(gen) && r.OnResult != nil {
				r.shown.Add(1)
				r.OnResult(gen, req, o, err)
			}
		}
		if r.Deliver != nil {
			r.Deliver(deliver)
		} else {
			deliver()
		}
	}
}

// solve runs one request with Solve or with the Runner's Session.
func (r *Runner) solve(ctx context.Context, req Request) (*run.Outcome, error) {
	if r.Solve != nil {
		return r.Solve(ctx, req)
	}
	if r.session == nil || r.session.Model() != req.Model {
		r.session = nil
		s, err := NewSession(req.Model)
		if err != nil {
			return nil, err
		}
		r.session = s
	}
	if err := r.session.Set(req.Knobs); err != nil {
		return nil, err
	}
	return r.session.Run(ctx)
}
