package study

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/plot"

	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/plotting"
	"kinetarium/solve/explore"
)

// Figures draws the figures of a study's result: the window and the batch
// command both draw through it, so that the same study gives the same
// figure in either. Its fields are what the figures need besides the
// result; they travel in the batch command's partial-result files.
type Figures struct {
	TimeUnit   string      `json:"time_unit"`
	AmountUnit string      `json:"amount_unit"`
	Species    []string    `json:"species"`            // the model's species then assignments, in trajectory order
	Axes       [][]float64 `json:"axes,omitempty"`     // a sweep's axis values, per knob
	AxisLog    []bool      `json:"axis_log,omitempty"` // a sweep's spacing, per knob
	// Readouts and ReadoutSpecies describe each readout and the species it
	// is computed on.
	Readouts       []explore.Readout `json:"readouts"`
	ReadoutSpecies []string          `json:"readout_species"`
	// Shown, when the model chooses display units, converts results for
	// tables and figures. KnobUnits are the units of the knobs' values in
	// the model, for figures' axes, and for headers with display units.
	Shown     *run.Shown `json:"shown,omitempty"`
	KnobUnits []string   `json:"knob_units,omitempty"`
}

// Figures returns the description of j's figures.
func (j *Job) Figures() Figures {
	u := j.Prepared.Model.Units
	return Figures{
		TimeUnit: u.Time, AmountUnit: u.Amount, Species: j.Prepared.Quantities(),
		Axes: j.Axes, AxisLog: j.AxisLog, Readouts: j.Readouts, ReadoutSpecies: j.Species,
		Shown: j.Shown, KnobUnits: j.KnobUnits,
	}
}

// KnobLabel writes a knob reference for people: "init:A" is "A initial".
func KnobLabel(ref string) string { return sliders.ParseRef(ref).Label() }

// ReadoutLabel describes readout r in words, for titles: "final value of
// P", "P at t = 2.5", "time P rises past 10", "minimum of C from t = 12
// to 24".
func (f Figures) ReadoutLabel(r int) string {
	ro := f.Readouts[r]
	s := f.readoutWords(r)
	if ro.Window {
		s += fmt.Sprintf(" from t = %.4g to %.4g", ro.From, ro.To)
	}
	return s
}

func (f Figures) readoutWords(r int) string {
	ro, sp := f.Readouts[r], f.ReadoutSpecies[r]
	num := func(v float64) string { return fmt.Sprintf("%.4g", v) }
	switch ro.Kind {
	case explore.ValueAt:
		return sp + " at t = " + num(ro.At)
	case explore.CrossUp:
		return "time " + sp + " rises past " + num(ro.Level)
	case explore.CrossDown:
		return "time " + sp + " falls past " + num(ro.Level)
	case explore.Max:
		return "maximum of " + sp
	case explore.TimeOfMax:
		return "time of maximum of " + sp
	case explore.Min:
		return "minimum of " + sp
	case explore.TimeOfMin:
		return "time of minimum of " + sp
	case explore.Final:
		return "final value of " + sp
	case explore.AUC:
		return "area under the curve of " + sp
	}
	return strings.ReplaceAll(string(ro.Kind), "_", " ") + " of " + sp
}

// Family draws, for a sweep, the curves of species over time, one per
// value of the first knob; on a grid of two, those at value index at of the
// second knob. logTime draws time on a log axis. When every run failed,
// the figure says there is no data.
func (f Figures) Family(res *explore.Result, species string, at int, logTime bool) (*plot.Plot, error) {
	j := slices.Index(f.Species, species)
	if j < 0 {
		return nil, fmt.Errorf("no species %q in the model", species)
	}
	second := math.NaN()
	title := species
	if len(f.Axes) == 2 {
		if at < 0 || at >= len(f.Axes[1]) {
			return nil, fmt.Errorf("no value %d of the second quantity", at)
		}
		second = f.Axes[1][at]
		title += " at " + KnobLabel(res.Knobs[1]) + " = " + fmt.Sprintf("%.4g", second)
	}
	var curves [][]float64
	var values, times []float64
	ts, cs := f.timeScale(), f.colScale(j)
	for _, s := range res.Samples {
		if s.Traj == nil || (len(s.X) == 2 && s.X[1] != second) {
			continue
		}
		times = s.Traj.T
		c := make([]float64, len(times))
		for i := range c {
			c[i] = s.Traj.Y[i][j]
		}
		if f.Shown != nil {
			times = make([]float64, len(s.Traj.T))
			for i, t := range s.Traj.T {
				times[i], c[i] = ts.Of(t), cs.Of(c[i])
			}
		}
		curves, values = append(curves, c), append(values, s.X[0])
	}
	return plotting.FamilyPlot(times, curves, values, plotting.AxisLabel(KnobLabel(res.Knobs[0]), f.knobUnit(0)), plotting.Options{
		Title: title, XLabel: "time", XUnit: f.timeUnit(), YLabel: species, YUnit: f.quantityUnit(j), LogX: logTime,
	})
}

// Readout draws, for a sweep, readout r against the knob, or as a heat map
// over a grid of two.
func (f Figures) Readout(res *explore.Result, r int) (*plot.Plot, error) {
	if r < 0 || r >= len(res.Readouts) || r >= len(f.Readouts) {
		return nil, errors.New("no readout chosen; add one under Readouts and run again")
	}
	vals := f.Values(res, r)
	name := res.Readouts[r]
	if len(f.Axes) == 2 {
		xs, ys := f.Axes[1], f.Axes[0]
		z := make([][]float64, len(ys))
		for i := range ys {
			z[i] = vals[i*len(xs) : (i+1)*len(xs)]
		}
		return plotting.HeatMap(xs, ys, z, plotting.Options{
			Title: f.ReadoutLabel(r), XLabel: KnobLabel(res.Knobs[1]), XUnit: f.knobUnit(1), YLabel: KnobLabel(res.Knobs[0]), YUnit: f.knobUnit(0),
			LogX: f.AxisLog[1], LogY: f.AxisLog[0],
		}, f.header(name, f.ReadoutUnit(r)))
	}
	return plotting.XYPlot(f.Axes[0], vals, plotting.Options{
		Title: f.ReadoutLabel(r), XLabel: KnobLabel(res.Knobs[0]), XUnit: f.knobUnit(0), YLabel: f.readoutWords(r), YUnit: f.ReadoutUnit(r), LogX: f.AxisLog[0],
	})
}

// readoutUnit is the unit of readout r's values: the time unit for times,
// amount × time for an area, else the amount unit ("" when the model
// names none).
func (f Figures) readoutUnit(r int) string {
	switch f.Readouts[r].Kind {
	case explore.TimeOfMax, explore.TimeOfMin, explore.CrossUp, explore.CrossDown:
		return f.TimeUnit
	case explore.AUC:
		if f.AmountUnit != "" && f.TimeUnit != "" {
			return f.AmountUnit + "·" + f.TimeUnit
		}
		return ""
	}
	return f.AmountUnit
}

// Bands draws, for a population, the median and percentile bands of
// species over time.
func (f Figures) Bands(res *explore.Result, species string, logTime, logY bool) (*plot.Plot, error) {
	if res.Bands == nil {
		return nil, errors.New("no bands were gathered")
	}
	c := slices.IndexFunc(res.Bands.Components, func(c int) bool { return c < len(f.Species) && f.Species[c] == species })
	if c < 0 {
		return nil, fmt.Errorf("no bands of %q were gathered", species)
	}
	if res.Points == res.Failed {
		return nil, errors.New("every sample failed; see the failures")
	}
	q, times := f.BandCurves(res.Bands, c)
	comp := res.Bands.Components[c]
	return plotting.BandPlot(times, q[2], q[0], q[4], q[1], q[3], species, plotting.Options{
		Title: species + ": median, 25–75 % and 5–95 %", XLabel: "time", XUnit: f.timeUnit(), YLabel: species, YUnit: f.quantityUnit(comp),
		LogX: logTime, LogY: logY,
	})
}

// Histogram draws, for a population, the distribution of readout r.
func (f Figures) Histogram(res *explore.Result, r int) (*plot.Plot, error) {
	if r < 0 || r >= len(res.Readouts) || r >= len(f.Readouts) {
		return nil, errors.New("no readout chosen; add one under Readouts and run again")
	}
	vals, _, err := f.ReadoutValues(res, r)
	if err != nil {
		return nil, err
	}
	return plotting.Histogram(vals, 0, plotting.Options{Title: f.ReadoutLabel(r), XLabel: f.readoutWords(r), XUnit: f.ReadoutUnit(r), YLabel: "samples"})
}

// BandCurves returns BandCurves of component c of b and the output times,
// both in the shown units.
func (f Figures) BandCurves(b *explore.Bands, c int) (q [][]float64, times []float64) {
	q, times = BandCurves(b, c), b.Times
	if f.Shown == nil {
		return q, times
	}
	cs, ts := f.colScale(b.Components[c]), f.timeScale()
	for _, row := range q {
		for i, v := range row {
			row[i] = cs.Of(v)
		}
	}
	times = make([]float64, len(b.Times))
	for i, t := range b.Times {
		times[i] = ts.Of(t)
	}
	return q, times
}

// knobUnit is the unit of knob k's values on an axis, as the readouts'
// axes name theirs.
func (f Figures) knobUnit(k int) string {
	if k >= len(f.KnobUnits) {
		return ""
	}
	return f.KnobUnits[k]
}
