package run

import (
	"fmt"
	"image"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"kinetarium/network"
	"kinetarium/plotting"
	"kinetarium/solve"
)

// Range is a rectangle in data coordinates, for zooming.
type Range struct {
	XMin, XMax, YMin, YMax float64
}

// View is how the user looks at an outcome: the same options give the same
// figure on screen and in exported files.
type View struct {
	LogX, LogY bool
	// Hidden lists species not drawn, by name.
	Hidden map[string]bool
	// Previous is an earlier outcome drawn faintly beneath, or nil.
	Previous *Outcome
	// PreviousLabel names Previous in the legend; empty means the previous
	// run.
	PreviousLabel string
	// Zoom, when not nil, is the part of the data shown.
	Zoom *Range
	// Slots gives series their colour slots (see plotting.Colour) by
	// name, so that a species keeps its colour when others are added,
	// removed or moved (editor.Document.Slots); series not in it, and all
	// when it is nil, take their position.
	Slots map[string]int
	// Measured are measurements drawn over the curves (markers with ±SD
	// bars, in the colour of the series of their name), in the units the
	// outcome is shown in.
	Measured []plotting.Measured
}

// Slot returns the colour slot of series j, named name.
func (v View) Slot(name string, j int) int {
	if s, ok := v.Slots[name]; ok {
		return s
	}
	return j
}

// Trajectories returns the outcome as plotting's series, with the state
// just before and after each event, so that a dose shows as a sharp jump.
func (o *Outcome) Trajectories() plotting.Trajectories {
	e := o.WithEventRows()
	return plotting.Trajectories{Times: e.T, Names: e.Names, Values: e.Y}
}

// Figure draws the outcome with the view. Each series keeps the colour of
// its slot (View.Slot), whichever series are hidden.
func Figure(o *Outcome, v View) (*plot.Plot, error) {
	opt := plotting.Options{
		Title:  o.Title,
		XLabel: "time", XUnit: o.TimeUnit,
		YLabel: "concentration", YUnit: o.AmountUnit,
		LogX: v.LogX, LogY: v.LogY,
		Measured:    v.Measured,
		Visible:     make([]bool, len(o.Names)),
		ColourIndex: make([]int, len(o.Names)),
		SeriesUnits: make([]string, len(o.Names)),
	}
	for j, n := range o.Names {
		opt.Visible[j] = !v.Hidden[n]
		opt.ColourIndex[j] = v.Slot(n, j)
		u := o.UnitOf(j)
		if o.Dimensionless(j) {
			u = "dimensionless" // a fraction among concentrations, say
		}
		if u != o.AmountUnit {
			opt.SeriesUnits[j] = u // or an amount
		}
	}
	for _, e := range o.Events {
		opt.Marks = append(opt.Marks, plotting.TimeMark{X: e.T, Label: e.Name})
	}
	if prev := sameUnits(v.Previous, o); prev != nil && len(prev.T) > 0 {
		prev := prev.Trajectories()
		opt.Overlay = &prev
		opt.OverlayLabel = v.PreviousLabel
	}
	stopped := o.Err != nil && len(o.T) > 0 && o.T[len(o.T)-1] < o.TEnd
	if stopped {
		opt.Title += fmt.Sprintf("\n(the run stopped at t = %s of %s; the part computed is shown)",
			strconv.FormatFloat(o.T[len(o.T)-1], 'g', 4, 64), strconv.FormatFloat(o.TEnd, 'g', 4, 64))
	}
	tr := o.Trajectories()
	if v.LogX {
		// Time 0 has no place on a log axis. On a log-spaced grid it is
		// the only such time and expected to go: leave it out quietly
		// rather than have every figure note it. Otherwise the figure
		// notes it.
		if o.LogGrid {
			tr = positiveTimes(tr)
		}
		if opt.Overlay != nil {
			prev := positiveTimes(*opt.Overlay)
			opt.Overlay = &prev
		}
	}
	p, err := plotting.TrajectoryPlot(tr, opt)
	if err != nil {
		return nil, err
	}
	if stopped && !v.LogX {
		// The time axis a complete run would have, so that the figure
		// shows how far the run got.
		p.X.Min, p.X.Max = math.Min(o.T[0], 0), o.TEnd
	} else if stopped && o.TEnd > p.X.Max {
		p.X.Max = o.TEnd
	}
	if z := v.Zoom; z != nil && validRange(z, v) {
		p.X.Min, p.X.Max = z.XMin, z.XMax
		p.Y.Min, p.Y.Max = z.YMin, z.YMax
	}
	return p, nil
}

// sameUnits returns prev in the units o is shown in (the display units
// may have changed between the runs), or nil when prev is nil or cannot
// be converted.
func sameUnits(prev, o *Outcome) *Outcome {
	if prev == nil || prev.TimeUnit == o.TimeUnit && prev.AmountUnit == o.AmountUnit {
		return prev
	}
	if prev.TimeUnit == "" || o.TimeUnit == "" || prev.AmountUnit == "" || o.AmountUnit == "" {
		return nil // labels only: no common scale
	}
	c, err := prev.Convert(network.Display{Time: o.TimeUnit, Concentration: o.AmountUnit})
	if err != nil {
		return nil
	}
	return c
}

func validRange(z *Range, v View) bool {
	ok := func(a, b float64, log bool) bool {
		return a < b && !math.IsInf(a, 0) && !math.IsInf(b, 0) && (!log || a > 0)
	}
	return ok(z.XMin, z.XMax, v.LogX) && ok(z.YMin, z.YMax, v.LogY)
}

// screenDPI is the resolution plotting.Render draws at.
const screenDPI = 96

// Frame maps between pixels of a figure rendered at a given size and data
// coordinates, using the figure's data area.
type Frame struct {
	// Area is the data area in pixels, origin at the top left.
	Area       image.Rectangle
	xMin, xMax float64
	yMin, yMax float64
	logX, logY bool
}

// FrameOf returns the frame of p rendered at wPx × hPx pixels with
// plotting.Render. Call it after Figure and before changing p.
func FrameOf(p *plot.Plot, wPx, hPx int) Frame {
	w := vg.Length(wPx) * vg.Inch / screenDPI
	h := vg.Length(hPx) * vg.Inch / screenDPI
	c := draw.Canvas{Rectangle: vg.Rectangle{Max: vg.Point{X: w, Y: h}}}
	da := p.DataCanvas(c)
	px := func(l vg.Length) int { return int(math.Round(float64(l / vg.Inch * screenDPI))) }
	_, logX := p.X.Scale.(plot.LogScale)
	_, logY := p.Y.Scale.(plot.LogScale)
	return Frame{
		Area: image.Rect(px(da.Min.X), hPx-px(da.Max.Y), px(da.Max.X), hPx-px(da.Min.Y)),
		xMin: p.X.Min, xMax: p.X.Max, yMin: p.Y.Min, yMax: p.Y.Max,
		logX: logX, logY: logY,
	}
}

// unnorm maps f in [0, 1] to [lo, hi] on a linear or log scale.
func unnorm(f, lo, hi float64, log bool) float64 {
	if log {
		return math.Exp(math.Log(lo) + f*(math.Log(hi)-math.Log(lo)))
	}
	return lo + f*(hi-lo)
}

// norm maps v in [lo, hi] to [0, 1] on a linear or log scale.
func norm(v, lo, hi float64, log bool) float64 {
	if log {
		return (math.Log(v) - math.Log(lo)) / (math.Log(hi) - math.Log(lo))
	}
	return (v - lo) / (hi - lo)
}

// ToData returns the data coordinates of pixel (x, y) and whether it lies
// inside the data area.
func (f Frame) ToData(x, y float64) (dx, dy float64, inside bool) {
	a := f.Area
	if a.Dx() <= 0 || a.Dy() <= 0 {
		return 0, 0, false
	}
	fx := (x - float64(a.Min.X)) / float64(a.Dx())
	fy := (float64(a.Max.Y) - y) / float64(a.Dy())
	inside = fx >= 0 && fx <= 1 && fy >= 0 && fy <= 1
	return unnorm(fx, f.xMin, f.xMax, f.logX), unnorm(fy, f.yMin, f.yMax, f.logY), inside
}

// ToPixel returns the pixel position of data point (x, y); ok is false
// when a log axis cannot show it.
func (f Frame) ToPixel(x, y float64) (px, py float64, ok bool) {
	if f.logX && x <= 0 || f.logY && y <= 0 {
		return 0, 0, false
	}
	a := f.Area
	px = float64(a.Min.X) + norm(x, f.xMin, f.xMax, f.logX)*float64(a.Dx())
	py = float64(a.Max.Y) - norm(y, f.yMin, f.yMax, f.logY)*float64(a.Dy())
	return px, py, true
}

// EventNear returns the event of o whose mark on the time axis lies
// within maxDist pixels of (x, y), a point near the bottom of the data
// area.
func EventNear(o *Outcome, f Frame, x, y, maxDist float64) (solve.Firing, bool) {
	a := f.Area
	if y < float64(a.Max.Y)-3*maxDist || y > float64(a.Max.Y)+maxDist {
		return solve.Firing{}, false
	}
	best, found := maxDist, false
	var near solve.Firing
	for _, e := range o.Events {
		if f.logX && e.T <= 0 {
			continue
		}
		px := float64(a.Min.X) + norm(e.T, f.xMin, f.xMax, f.logX)*float64(a.Dx())
		if d := math.Abs(px - x); d <= best {
			best, near, found = d, e, true
		}
	}
	return near, found
}

// Point is a data point of one species.
type Point struct {
	Species int // index into Outcome.Names
	Index   int // index into Outcome.T
	T, Y    float64
	Dist    float64 // distance from the pointer in pixels
}

// Nearest returns the drawn data point nearest to pixel (x, y) among the
// species not hidden by v, and whether there is one within maxDist pixels.
func Nearest(o *Outcome, v View, f Frame, x, y, maxDist float64) (Point, bool) {
	best := Point{Dist: math.Inf(1)}
	for j, name := range o.Names {
		if v.Hidden[name] {
			continue
		}
		for i, t := range o.T {
			val := o.Y[i][j]
			px, py, ok := f.ToPixel(t, val)
			if !ok || math.IsNaN(px) || math.IsNaN(py) {
				continue
			}
			if d := math.Hypot(px-x, py-y); d < best.Dist {
				best = Point{Species: j, Index: i, T: t, Y: val, Dist: d}
			}
		}
	}
	return best, best.Dist <= maxDist
}

// Render draws the outcome with the view at wPx × hPx pixels and returns
// the image with its frame.
func Render(o *Outcome, v View, wPx, hPx int) (image.Image, Frame, error) {
	p, err := Figure(o, v)
	if err != nil {
		return nil, Frame{}, err
	}
	fr := FrameOf(p, wPx, hPx)
	return plotting.Render(p, wPx, hPx), fr, nil
}

// positiveTimes returns tr without its rows at times ≤ 0.
func positiveTimes(tr plotting.Trajectories) plotting.Trajectories {
	i := 0
	for i < len(tr.Times) && tr.Times[i] <= 0 {
		i++
	}
	tr.Times, tr.Values = tr.Times[i:], tr.Values[i:]
	return tr
}

// SpansDecades reports whether the positive values of o, over all species
// and times, span more than the given number of decades — a sign that a log
// concentration axis will show more than a linear one.
func SpansDecades(o *Outcome, decades float64) bool {
	lo, hi := math.Inf(1), 0.0
	for _, row := range o.Y {
		for _, v := range row {
			if v > 0 && !math.IsInf(v, 0) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
	}
	return hi > 0 && math.Log10(hi/lo) > decades
}
