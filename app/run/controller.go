package run

import (
	"context"
	"sync"
	"time"

	"kinetarium/network"
)

// Controller starts simulations for the user interface, one at a time:
// starting a run cancels the one in progress, and every run carries a
// generation number so that the result of a run overtaken by a newer one is
// dropped rather than shown. It also re-runs a model after edits, once the
// edits pause, when the last run was quick.
//
// Callbacks are made through Deliver, which the user interface sets to a
// function that runs its argument on the interface's goroutine (fyne.Do).
// The zero value is usable: it runs Run, calls back directly and uses the
// default delays.
type Controller struct {
	// Run does one simulation; nil means the package's Run.
	Run func(ctx context.Context, m *network.Model, progress func(float64)) (*Outcome, error)
	// Deliver runs f where the callbacks may touch the interface; nil
	// calls f directly.
	Deliver func(f func())

	// OnStart is called when a run starts, OnProgress with its fraction
	// done, and OnDone with its outcome (nil when the model could not be
	// compiled) and error, only while the run is the newest one.
	OnStart    func(gen int)
	OnProgress func(gen int, fraction float64)
	OnDone     func(gen int, o *Outcome, err error)

	// Debounce is the pause in editing after which Changed re-runs
	// (default 300 ms); QuickRun is the longest last run for which Changed
	// re-runs at all (default 1 s).
	Debounce, QuickRun time.Duration

	mu      sync.Mutex
	gen     int
	cancel  context.CancelFunc
	timer   *time.Timer
	last    time.Duration // wall time of the last finished run
	running bool
}

func (c *Controller) deliver(f func()) {
	if c.Deliver != nil {
		c.Deliver(f)
	} else {
		f()
	}
}

// Generation returns the number of the newest run.
func (c *Controller) Generation() int {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.gen
}

// Running reports whether the newest run is still going.
func (c *Controller) Running() bool {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.running
}

// Start cancels any run in progress and simulates m (which the caller must
// not change afterwards; pass a snapshot) in a new goroutine. It returns the
// run's generation. Call it where the callbacks may run (the interface's
// goroutine): it calls OnStart directly.
func (c *Controller) Start(m *network.Model) int {
	c.mu.Lock()
	if c.cancel != nil {
		c.cancel()
	}
	if c.timer != nil {
		c.timer.Stop()
		c.timer = nil
	}
	c.gen++
	gen := c.gen
	ctx, cancel := context.WithCancel(context.Background())
	c.cancel = cancel
	c.running = true
	run := c.Run
	if run == nil {
		run = Run
	}
	c.mu.Unlock()

	if c.OnStart != nil {
		c.OnStart(gen)
	}
	go func() {
		defer cancel()
		start := time.Now()
		progress := func(f float64) {
			if !c.current(gen) {
				return
			}
			c.deliver(func() {
				if c.current(gen) && c.OnProgress != nil {
					c.OnProgress(gen, f)
				}
			})
		}
		o, err := run(ctx, m, progress)
		took := time.Since(start)
		c.mu.Lock()
		if gen == c.gen {
			c.last = took
			c.running = false
		}
		c.mu.Unlock()
		c.deliver(func() {
			if c.current(gen) && c.OnDone != nil {
				c.OnDone(gen, o, err)
			}
		})
	}()
	return gen
}

// current reports whether gen is the newest run.
func (c *Controller) current(gen int) bool {
	c.mu.Lock()
	defer c.mu.Unlock()
	return gen == c.gen
}

// Cancel stops the run in progress; its partial outcome is still
// delivered to OnDone with an error saying it was cancelled.
func (c *Controller) Cancel() {
	c.mu.Lock()
	defer c.mu.Unlock()
	if c.timer != nil {
		c.timer.Stop()
		c.timer = nil
	}
	if c.cancel != nil {
		c.cancel()
	}
}

// Changed tells the controller that the model changed. When the last run
// took less than QuickRun, it starts a run of snapshot() after Debounce,
// unless another change comes first. It reports whether a re-run was
// scheduled. snapshot is called through Deliver, when the run starts.
func (c *Controller) Changed(snapshot func() *network.Model) bool {
	debounce, quick := c.Debounce, c.QuickRun
	if debounce <= 0 {
		debounce = 300 * time.Millisecond
	}
	if quick <= 0 {
		quick = time.Second
	}
	c.mu.Lock()
	defer c.mu.Unlock()
	if c.timer != nil {
		c.timer.Stop()
		c.timer = nil
	}
	if c.last >= quick {
		return false
	}
	var t *time.Timer
	t = time.AfterFunc(debounce, func() {
		c.deliver(func() {
			// A Cancel, Start or newer change between the timer firing
			// and this delivery stops the re-run.
			c.mu.Lock()
			live := c.timer == t
			if live {
				c.timer = nil
			}
			c.mu.Unlock()
			if !live {
				return
			}
			if m := snapshot(); m != nil {
				c.Start(m)
			}
		})
	})
	c.timer = t
	return true
}

// LastDuration returns the wall time of the last run that finished as the
// newest run.
func (c *Controller) LastDuration() time.Duration {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.last
}
