package main

import (
	"bytes"
	"fmt"
	"image"
	"image/png"
	"os"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/driver/software"

	"kinetarium/app/run"
	"kinetarium/internal/atomicfile"
)

// screenshotTimeout is the longest the screenshot mode waits for the plot.
const screenshotTimeout = 60 * time.Second

// screenshot arranges for the window to be captured to path once the
// first plot is drawn, and for the program to exit afterwards.
func (w *mainWindow) screenshot(path string) {
	w.pictureOnly = true
	timer := time.AfterFunc(screenshotTimeout, func() {
		fmt.Fprintf(os.Stderr, "app: no plot was drawn within %v; no screenshot saved\n", screenshotTimeout)
		os.Exit(1)
	})
	w.captureSoon = func() {
		w.captureSoon = nil
		// Let the window paint, then capture it.
		time.AfterFunc(2*time.Second, func() {
			fyne.Do(func() {
				timer.Stop()
				target := w.win
				if w.shotTarget != nil {
					target = w.shotTarget
				}
				img, err := capture(target, path)
				if err != nil {
					fmt.Fprintln(os.Stderr, "app:", err)
					w.exitCode = 1
				} else if w.diagram.shown {
					// Where the diagram is in the picture, for checks.
					k := float32(img.Dx()) / w.win.Canvas().Size().Width
					pos := fyne.CurrentApp().Driver().AbsolutePositionForObject(w.diagram.view)
					size := w.diagram.view.Size()
					fmt.Printf("app: diagram region %d %d %d %d\n", int(pos.X*k), int(pos.Y*k), int((pos.X+size.Width)*k), int((pos.Y+size.Height)*k))
				}
				w.app.Quit()
			})
		})
	}
	w.onDrawn = func() {
		if w.captureSoon != nil {
			w.captureSoon()
		}
	}
	// A run that fails to start draws nothing: capture the window as it is.
	done := w.ctrl.OnDone
	w.ctrl.OnDone = func(gen int, o *run.Outcome, err error) {
		done(gen, o, err)
		if o == nil && w.captureSoon != nil {
			w.captureSoon()
		}
	}
}

// capture writes a PNG picture of the window's canvas to path atomically
// and returns its bounds.
//
// Some virtual displays (Xvfb with software OpenGL) read the window's
// front buffer back blank; the window's content is then drawn again by
// Fyne's software painter at the window's size.
func capture(win fyne.Window, path string) (image.Rectangle, error) {
	img := win.Canvas().Capture()
	if uniform(img) {
		fmt.Fprintln(os.Stderr, "app: the window read back blank (usual on virtual displays); drawing it with the software painter instead")
		c := software.NewCanvas()
		c.SetPadded(false)
		size := win.Canvas().Size()
		content := win.Content()
		c.SetContent(content)
		c.Resize(size)
		content.Resize(size)
		img = c.Capture()
	}
	var b bytes.Buffer
	if err := png.Encode(&b, img); err != nil {
		return image.Rectangle{}, fmt.Errorf("encoding screenshot: %w", err)
	}
	if err := atomicfile.Write(path, b.Bytes()); err != nil {
		return image.Rectangle{}, fmt.Errorf("saving screenshot: %w", err)
	}
	return img.Bounds(), nil
}

// uniform reports whether every pixel of img has the same colour.
func uniform(img image.Image) bool {
	b := img.Bounds()
	if b.Empty() {
		return true
	}
	r0, g0, b0, a0 := img.At(b.Min.X, b.Min.Y).RGBA()
	for y := b.Min.Y; y < b.Max.Y; y += 3 {
		for x := b.Min.X; x < b.Max.X; x += 3 {
			r, g, bb, a := img.At(x, y).RGBA()
			if r != r0 || g != g0 || bb != b0 || a != a0 {
				return false
			}
		}
	}
	return true
}

// startFitView opens the fit window on the model and measurements at
// start-up (--view fit), with the fit plan at plan when given; for a
// screenshot it runs the fit and captures the fit window when it is done.
func (w *mainWindow) startFitView(plan string, shot bool) error {
	f := w.fitWindow()
	if f == nil {
		return fmt.Errorf("the fit window cannot open: %s", w.status.Text)
	}
	if plan != "" {
		if err := f.loadPlan(plan); err != nil {
			return err
		}
	}
	f.win.Show()
	if shot {
		w.shotTarget, w.onDrawn = f.win, nil
		f.afterRun = func() {
			if w.captureSoon != nil {
				w.captureSoon()
			}
		}
		f.start()
	}
	return nil
}

// startSensitivityView opens the Sensitivity over time window at start-up
// (--view sensitivity); for a screenshot it captures that window once the
// heat map is drawn.
func (w *mainWindow) startSensitivityView(shot bool) error {
	m, name, ok := w.studyModel()
	if !ok {
		return fmt.Errorf("the sensitivity window cannot open: %s", w.status.Text)
	}
	s, err := newTimeSensWindow(w.app, m, name)
	if err != nil {
		return err
	}
	s.win.Show()
	if shot {
		w.shotTarget, w.onDrawn = s.win, nil
		s.afterRun = func() {
			if w.captureSoon != nil {
				w.captureSoon()
			}
		}
	}
	s.start()
	return nil
}
