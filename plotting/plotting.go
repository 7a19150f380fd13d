// Package plotting draws the figures of Kinetarium: species trajectories,
// parameter families, readouts against a parameter, two-parameter heat
// maps, population bands and histograms. It builds on gonum.org/v1/plot and
// knows nothing of the solver or of the user interface; data come in as
// plain slices.
//
// Every figure uses colour-blind-safe colours (the Okabe–Ito palette for
// series, a viridis-like sequential scale for continuous values), lines at
// least 1.5 pt wide and, on logarithmic axes, decade ticks labelled 10^k.
// Points that a logarithmic axis cannot show (values ≤ 0) and non-finite
// values are left out, and the figure says how many in a note under its
// title.
package plotting

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
)

// Options control a figure. The zero value gives linear axes, no title, every
// series shown and colours by position.
type Options struct {
	Title  string
	XLabel string // axis quantity, e.g. "time"
	YLabel string // axis quantity, e.g. "concentration"
	XUnit  string // when set, the X label reads "XLabel (XUnit)"
	YUnit  string // when set, the Y label reads "YLabel (YUnit)"

	LogX, LogY bool // logarithmic axes

	// Visible says which series of a TrajectoryPlot to draw; nil draws all.
	Visible []bool

	// Width and Height are the preferred figure size, for callers to pass to
	// Save or Render; see Size. Zero means 16 cm × 10 cm.
	Width, Height vg.Length

	// Overlay is a previous run drawn faintly and dashed beneath a
	// TrajectoryPlot, each series in the colour of the series of the same
	// name.
	Overlay *Trajectories
	// OverlayLabel names the overlay in the legend; empty means
	// "previous run (faint, dashed)".
	OverlayLabel string

	// Decades limits a logarithmic value axis of a TrajectoryPlot to this
	// many decades below its largest value, so that vanishing early or
	// late values do not squeeze the curves that matter into a strip;
	// zero means 12, a negative value means no limit.
	Decades int

	// SeriesUnits name a unit after a series of a TrajectoryPlot in its
	// legend ("body_amount (mg)") where not empty: for a series whose
	// unit is not the value axis's. nil names every series alone.
	SeriesUnits []string

	// ColourIndex gives each series of a TrajectoryPlot a stable colour slot
	// (see Colour), so that a species keeps its colour when others are
	// hidden; nil colours series by position.
	ColourIndex []int

	// Signed colours a HeatMap of a signed quantity (a sensitivity, a
	// correlation) on a diverging scale centred on 0, symmetric about it,
	// instead of the sequential scale from the smallest to the largest
	// value.
	Signed bool

	// NoLegend leaves out the legend of a TrajectoryPlot, giving its margin
	// to the data. It suits a display that lists the series with their
	// colours beside the figure; a figure saved for readers should keep its
	// legend.
	NoLegend bool

	// Marks are times drawn as thin ticks rising from the time axis of a
	// TrajectoryPlot, such as the events of a run.
	Marks []TimeMark

	// Measured are measurements drawn over a TrajectoryPlot as markers
	// with ±SD bars, each in the colour slot of the series of its name
	// and hidden with it (see Visible); measurements of a name the plot
	// lacks take slots after its series.
	Measured []Measured
}

// TimeMark is a labelled time on a TrajectoryPlot's time axis.
type TimeMark struct {
	X     float64
	Label string
}

// Default figure size.
const (
	DefaultWidth  = 16 * vg.Centimeter
	DefaultHeight = 10 * vg.Centimeter
)

// Size returns o.Width and o.Height, with defaults for zero values.
func (o Options) Size() (w, h vg.Length) {
	w, h = o.Width, o.Height
	if w <= 0 {
		w = DefaultWidth
	}
	if h <= 0 {
		h = DefaultHeight
	}
	return w, h
}

// AxisLabel joins a quantity and its unit as "quantity (unit)"; with no
// unit it returns the quantity alone.
func AxisLabel(quantity, unit string) string {
	switch {
	case unit == "":
		return quantity
	case quantity == "":
		return "(" + unit + ")"
	}
	return quantity + " (" + unit + ")"
}

// lineWidth is the width of data lines.
const lineWidth = 1.5 // points

// notes collects what a figure leaves out, to be shown under its title.
type notes struct {
	info   []string // e.g. "no data"
	hidden []string // e.g. "3 values ≤ 0 on the log axis"
}

func (n *notes) addf(format string, args ...any) {
	n.info = append(n.info, fmt.Sprintf(format, args...))
}

// count records k things left out, described by what (plural) or one (for
// k = 1), when k > 0.
func (n *notes) count(k int, one, what string) {
	switch {
	case k == 1:
		n.hidden = append(n.hidden, "1 "+one)
	case k > 1:
		n.hidden = append(n.hidden, fmt.Sprintf("%d %s", k, what))
	}
}

// line returns the note line, or "".
func (n notes) line() string {
	parts := n.info
	if len(n.hidden) > 0 {
		parts = append(parts[:len(parts):len(parts)], "not shown: "+strings.Join(n.hidden, ", "))
	}
	if len(parts) == 0 {
		return ""
	}
	return "(" + strings.Join(parts, "; ") + ")"
}

// newPlot returns a plot with the labels and scales of o.
func newPlot(o Options) *plot.Plot {
	p := plot.New()
	p.X.Label.Text = AxisLabel(o.XLabel, o.XUnit)
	p.Y.Label.Text = AxisLabel(o.YLabel, o.YUnit)
	p.Legend.Top = true
	p.Title.Padding = vg.Points(6)
	p.Legend.ThumbnailWidth = vg.Points(24)
	p.X.Tick.Marker, p.Y.Tick.Marker = niceTicks{}, niceTicks{}
	if o.LogX {
		p.X.Scale = plot.LogScale{}
		p.X.Tick.Marker = decadeTicks{}
		p.X.Tick.Label.Handler = powerLabels
		p.X.Label.TextStyle.Handler = logAxisLabel{powerLabels.Plain}
	}
	if o.LogY {
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = decadeTicks{}
		p.Y.Tick.Label.Handler = powerLabels
		p.Y.Label.TextStyle.Handler = logAxisLabel{powerLabels.Plain}
	}
	return p
}

// finish sets the title with any notes and makes the axis ranges valid for
// their scales, so that drawing never panics.
func finish(p *plot.Plot, o Options, n notes) {
	title := o.Title
	if note := n.line(); note != "" {
		if title == "" {
			title = note
		} else {
			title += "\n" + note
		}
	}
	p.Title.Text = title
	fixRange(&p.X, o.LogX)
	fixRange(&p.Y, o.LogY)
}

// fixRange replaces an empty, infinite or (on a log axis) non-positive range.
func fixRange(a *plot.Axis, log bool) {
	lo, hi := a.Min, a.Max
	bad := func(v float64) bool { return math.IsNaN(v) || math.IsInf(v, 0) }
	if bad(lo) || bad(hi) || lo > hi {
		lo, hi = 0, 1
		if log {
			lo, hi = 1, 10
		}
	}
	if log {
		switch {
		case hi <= 0:
			lo, hi = 1, 10
		case lo <= 0:
			lo = hi / 10
		}
		if lo == hi {
			lo, hi = lo/math.Sqrt(10), hi*math.Sqrt(10)
		}
	} else if lo == hi {
		d := math.Max(math.Abs(lo)*0.1, 1)
		if lo == 0 {
			d = 1
		}
		lo, hi = lo-d, hi+d
	}
	a.Min, a.Max = lo, hi
}

// usable reports whether v can be drawn on an axis (finite and, on a log
// axis, positive).
func usable(v float64, log bool) bool {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return false
	}
	return !log || v > 0
}

// decadeTicks marks a logarithmic axis with major ticks at powers of ten,
// labelled 10^k, and minor ticks at 2–9 times them. Over many decades it
// labels every 2nd, 5th, 10th... decade and drops the minor ticks; within
// about a decade it labels minor ticks too.
type decadeTicks struct{}

// decadeSteps are the strides between labelled decades.
var decadeSteps = []int{1, 2, 5, 10, 20, 50, 100}

// Ticks implements plot.Ticker.
func (decadeTicks) Ticks(min, max float64) []plot.Tick {
	if !(min > 0) || !(max > 0) || math.IsInf(max, 0) {
		return nil
	}
	if min > max {
		min, max = max, min
	}
	k0 := int(math.Floor(math.Log10(min) + 1e-9))
	k1 := int(math.Ceil(math.Log10(max) - 1e-9))
	span := k1 - k0
	step := decadeSteps[len(decadeSteps)-1]
	for _, s := range decadeSteps {
		if span/s <= 8 {
			step = s
			break
		}
	}
	inside := func(v float64) bool { return v >= min*(1-1e-9) && v <= max*(1+1e-9) }
	var ticks []plot.Tick
	labelled := 0
	for k := k0; k <= k1; k++ {
		v := math.Pow(10, float64(k))
		switch {
		case !inside(v):
		case k%step == 0:
			ticks = append(ticks, plot.Tick{Value: v, Label: fmt.Sprintf("10^%d", k)})
			labelled++
		case span <= 30:
			ticks = append(ticks, plot.Tick{Value: v})
		}
		if step == 1 && k < k1 {
			for m := 2; m <= 9; m++ {
				if w := float64(m) * v; inside(w) {
					ticks = append(ticks, plot.Tick{Value: w})
				}
			}
		}
	}
	if labelled < 2 {
		// About a decade or less: label 2× and 5× too, or every tick.
		label := func(keep func(float64) bool) {
			for i, t := range ticks {
				if t.Label == "" && keep(t.Value) {
					ticks[i].Label = strconv.FormatFloat(t.Value, 'g', 3, 64)
					labelled++
				}
			}
		}
		label(func(v float64) bool {
			m := v / math.Pow(10, math.Floor(math.Log10(v)+1e-9))
			return math.Abs(m-2) < 1e-6 || math.Abs(m-5) < 1e-6
		})
		if labelled < 2 {
			label(func(float64) bool { return true })
		}
		sameFormat(ticks)
	}
	return ticks
}

// sameFormat writes every label of a short log axis in one form, so that
// the decades and the ticks between them read alike: plain numbers ("2, 5,
// 10, 20") when every labelled value lies in [0.001, 10000), else
// mantissa times a power of ten ("2×10^-5, 5×10^-5, 10^-4").
func sameFormat(ticks []plot.Tick) {
	plain := true
	for _, t := range ticks {
		if t.Label != "" && !(t.Value >= 1e-3 && t.Value < 1e4) {
			plain = false
		}
	}
	for i, t := range ticks {
		if t.Label == "" {
			continue
		}
		if plain {
			ticks[i].Label = strconv.FormatFloat(t.Value, 'g', 3, 64)
			continue
		}
		k := math.Floor(math.Log10(t.Value) + 1e-9)
		m := t.Value / math.Pow(10, k)
		if math.Abs(m-1) < 1e-6 {
			ticks[i].Label = fmt.Sprintf("10^%d", int(k))
		} else {
			ticks[i].Label = strconv.FormatFloat(m, 'g', 3, 64) + "×10^" + strconv.Itoa(int(k))
		}
	}
}

// Figures use the sans-serif Liberation face, which reads better at small
// sizes on screen and in reports than gonum/plot's default serif.
func init() {
	plot.DefaultFont.Variant = "Sans"
	plotter.DefaultFont = plot.DefaultFont
}
