package study

import (
	"strconv"
	"strings"

	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/network"
	"kinetarium/solve/explore"
)

// show works out how a job's results are shown when the model chooses
// display units (network.Display): nil when it chooses none, so that the
// tables stay as they were. Knob values are never converted (they are the
// model's stored values); figures name the model's unit of each on their
// axes, and with display units the tables' headers do too.
func (j *Job) show() error {
	p := j.Prepared
	m := p.Model
	j.KnobUnits = make([]string, len(j.Settings.Knobs))
	for k, ref := range j.Settings.Knobs {
		j.KnobUnits[k] = KnobUnit(m, ref)
	}
	d := m.Simulation.Display
	if strings.TrimSpace(d.Time) == "" && strings.TrimSpace(d.Concentration) == "" {
		return nil
	}
	names := p.Quantities()
	colUnits := run.ColumnUnits(m, p.Sys) // assignments' inferred units too
	sh, err := run.Show(m.Units.Time, m.Units.Amount, names, colUnits, len(m.Species), d)
	if err != nil || sh == nil {
		return err
	}
	j.Shown = sh
	return nil
}

// quantityUnit is the declared unit of a parameter in the state or of an
// assignment named n.
func quantityUnit(m *network.Model, n string) string {
	for _, a := range m.Assignments {
		if a.Name == n {
			return a.Unit
		}
	}
	for _, q := range m.Parameters {
		if q.Name == n {
			return q.Unit
		}
	}
	return ""
}

// KnobUnit is the unit of a knob's values in the model: a parameter's
// unit, the concentration unit for init:SPECIES, the compartment's unit
// for volume:COMPARTMENT, the time unit for an event's time or interval;
// "" when none is known.
func KnobUnit(m *network.Model, ref string) string {
	k := sliders.ParseRef(ref)
	switch k.Kind {
	case sliders.Initial:
		return m.Units.Amount
	case sliders.Volume:
		for _, c := range m.Compartments {
			if c.Name == k.Name {
				return c.Unit
			}
		}
	case sliders.Event:
		field := k.Name[strings.LastIndex(k.Name, ".")+1:]
		switch field {
		case "at", "every", "from", "to":
			return m.Units.Time
		}
	default:
		return quantityUnit(m, k.Name)
	}
	return ""
}

// colScale is the scale of trajectory component c as shown.
func (f Figures) colScale(c int) run.Scale {
	if f.Shown == nil || c < 0 || c >= len(f.Shown.Scales) {
		return run.Scale{Mul: 1, Div: 1}
	}
	return f.Shown.Scales[c]
}

// timeScale is the scale of times as shown.
func (f Figures) timeScale() run.Scale {
	if f.Shown == nil {
		return run.Scale{Mul: 1, Div: 1}
	}
	return f.Shown.Time
}

// timeUnit and quantityUnit are the units times and component c are
// shown in.
func (f Figures) timeUnit() string {
	if f.Shown != nil {
		return f.Shown.TimeUnit
	}
	return f.TimeUnit
}

func (f Figures) quantityUnit(c int) string {
	if f.Shown != nil {
		if c >= 0 && c < len(f.Shown.Units) {
			return f.Shown.Units[c]
		}
		return ""
	}
	return f.AmountUnit
}

// readoutScale is the scale of readout r's values as shown: the time's
// for times, the component's times the time's for an area, else the
// component's.
func (f Figures) readoutScale(r int) run.Scale {
	ro := f.Readouts[r]
	switch ro.Kind {
	case explore.TimeOfMax, explore.TimeOfMin, explore.CrossUp, explore.CrossDown:
		return f.timeScale()
	case explore.AUC:
		return f.colScale(ro.Component).Times(f.timeScale())
	}
	return f.colScale(ro.Component)
}

// ReadoutUnit is the unit readout r's values are shown in: the time unit
// for times, concentration × time for an area, else the unit of the
// quantity it reads ("" when not known).
func (f Figures) ReadoutUnit(r int) string {
	if f.Shown == nil {
		return f.readoutUnit(r)
	}
	switch f.Readouts[r].Kind {
	case explore.TimeOfMax, explore.TimeOfMin, explore.CrossUp, explore.CrossDown:
		return f.Shown.TimeUnit
	case explore.AUC:
		u, t := f.quantityUnit(f.Readouts[r].Component), f.Shown.TimeUnit
		if u != "" && t != "" {
			return u + "·" + t
		}
		return ""
	}
	return f.quantityUnit(f.Readouts[r].Component)
}

// ReadoutValues returns the defined values of readout r, shown in its
// unit (ReadoutUnit), sorted, and the number of undefined ones (see
// ReadoutValues).
func (f Figures) ReadoutValues(res *explore.Result, r int) ([]float64, int, error) {
	vals, undefined, err := ReadoutValues(res, r)
	if s := f.readoutScale(r); f.Shown != nil {
		for i, v := range vals {
			vals[i] = s.Of(v)
		}
	}
	return vals, undefined, err
}

// Values returns readout r for every design point (explore.Result.Values)
// in its shown unit.
func (f Figures) Values(res *explore.Result, r int) []float64 {
	vals := res.Values(r)
	if s := f.readoutScale(r); f.Shown != nil {
		for i, v := range vals {
			vals[i] = s.Of(v)
		}
	}
	return vals
}

// header writes a column name with its unit when display units are
// chosen; the name alone otherwise, as tables always were.
func (f Figures) header(name, unit string) string {
	if f.Shown == nil || unit == "" {
		return name
	}
	return name + " (" + unit + ")"
}

// knobHeaders are the knob names of a table's header.
func (f Figures) knobHeaders(knobs []string) []string {
	h := make([]string, len(knobs))
	for k, n := range knobs {
		u := ""
		if k < len(f.KnobUnits) {
			u = f.KnobUnits[k]
		}
		h[k] = f.header(n, u)
	}
	return h
}

// RunRows is RunRows with readouts shown in their units and, when the
// model chooses display units, every column's unit in the header
// ("peak (nM)", "kon (1/(uM·s))"). Knob values are the model's.
func (f Figures) RunRows(res *explore.Result) ([][]string, error) {
	return collect(res, f.EachRunRow)
}

// EachRunRow gives the rows of RunRows one at a time, as EachRunRow does
// (from the spill file of a streamed population).
func (f Figures) EachRunRow(res *explore.Result, row func([]string) error) error {
	if f.Shown == nil {
		return EachRunRow(res, row)
	}
	head := append([]string{"index"}, f.knobHeaders(res.Knobs)...)
	scales := make([]run.Scale, len(res.Readouts))
	for r, name := range res.Readouts {
		head = append(head, f.header(name, f.ReadoutUnit(r)))
		scales[r] = f.readoutScale(r)
	}
	return eachRunRow(res, head, scales, row)
}

// FailureRows is FailureRows with the knobs' units in the header when
// the model chooses display units.
func (f Figures) FailureRows(res *explore.Result) ([][]string, error) {
	return collect(res, f.EachFailureRow)
}

// EachFailureRow gives the rows of FailureRows one at a time.
func (f Figures) EachFailureRow(res *explore.Result, row func([]string) error) error {
	if f.Shown == nil {
		return EachFailureRow(res, row)
	}
	first := true
	return EachFailureRow(res, func(r []string) error {
		if first {
			first = false
			r = append(append([]string{"index"}, f.knobHeaders(res.Knobs)...), "error")
		}
		return row(r)
	})
}

// TrajectoryRows lays out every kept trajectory of res: point number,
// knob values, time and every species and assignment, one row per output
// time (the batch command's trajectories.csv). Times and quantities are
// shown in the display units, with units in the header, when the model
// chooses them.
func (f Figures) TrajectoryRows(res *explore.Result) [][]string {
	head := append([]string{"index"}, f.knobHeaders(res.Knobs)...)
	head = append(head, f.header("time", f.timeUnit()))
	for c, n := range f.Species {
		head = append(head, f.header(n, f.quantityUnit(c)))
	}
	rows := [][]string{head}
	ts := f.timeScale()
	for _, s := range res.Samples {
		if s.Traj == nil {
			continue
		}
		for i, t := range s.Traj.T {
			row := []string{strconv.Itoa(s.Index)}
			for _, v := range s.X {
				row = append(row, FormatNumber(v))
			}
			if f.Shown != nil {
				t = ts.Of(t)
			}
			row = append(row, FormatNumber(t))
			for c, v := range s.Traj.Y[i] {
				if f.Shown != nil {
					v = f.colScale(c).Of(v)
				}
				row = append(row, FormatNumber(v))
			}
			rows = append(rows, row)
		}
	}
	return rows
}

// MatrixRows lays out readout r over a grid of two knobs: the first
// knob's values down, the second's across. With display units the corner
// names the readout and its unit.
func (f Figures) MatrixRows(res *explore.Result, r int) [][]string {
	xs, ys := f.Axes[1], f.Axes[0]
	vals := f.Values(res, r)
	corner := res.Knobs[0] + " \\ " + res.Knobs[1]
	if f.Shown != nil {
		kh := f.knobHeaders(res.Knobs)
		corner = kh[0] + " \\ " + kh[1] + ": " + f.header(res.Readouts[r], f.ReadoutUnit(r))
	}
	rows := [][]string{{corner}}
	for _, x := range xs {
		rows[0] = append(rows[0], FormatNumber(x))
	}
	for i1 := range ys {
		row := []string{FormatNumber(ys[i1])}
		for _, v := range vals[i1*len(xs) : (i1+1)*len(xs)] {
			row = append(row, FormatNumber(v))
		}
		rows = append(rows, row)
	}
	return rows
}

// ReadoutSummaryRows lays out, for a population, each readout's count,
// undefined count and percentiles (the batch command's readouts.csv); with
// display units the readout column names its unit.
func (f Figures) ReadoutSummaryRows(res *explore.Result) ([][]string, error) {
	rows := [][]string{{"readout", "species", "n", "undefined", "p5", "p25", "p50", "p75", "p95"}}
	for r, name := range res.Readouts {
		vals, undefined, err := f.ReadoutValues(res, r)
		if err != nil {
			return nil, err
		}
		row := []string{f.header(name, f.ReadoutUnit(r)), f.ReadoutSpecies[r], strconv.Itoa(len(vals)), strconv.Itoa(undefined)}
		for _, p := range Percentiles {
			row = append(row, FormatNumber(EmpiricalQuantile(vals, p)))
		}
		rows = append(rows, row)
	}
	return rows, nil
}

// BandRows is BandRows in the shown units: with display units, times and
// values are converted and the header says the time unit and gives each
// row's unit in a column of its own.
func (f Figures) BandRows(b *explore.Bands, species []string) [][]string {
	if f.Shown == nil {
		return BandRows(b, species)
	}
	rows := [][]string{{"species", "unit", f.header("time", f.timeUnit()), "p5", "p25", "p50", "p75", "p95", "min", "max", "n"}}
	ts := f.timeScale()
	for c, sp := range species {
		comp := -1
		if c < len(b.Components) {
			comp = b.Components[c]
		}
		cs := f.colScale(comp)
		for i, t := range b.Times {
			cell := &b.Cells[c*len(b.Times)+i]
			row := []string{sp, f.quantityUnit(comp), FormatNumber(ts.Of(t))}
			for _, p := range Percentiles {
				row = append(row, FormatNumber(cs.Of(cell.Quantile(p))))
			}
			if cell.N == 0 {
				row = append(row, "NaN", "NaN")
			} else {
				row = append(row, FormatNumber(cs.Of(cell.Min)), FormatNumber(cs.Of(cell.Max)))
			}
			rows = append(rows, append(row, strconv.FormatUint(cell.N, 10)))
		}
	}
	return rows
}
