package ensemble

import (
	"fmt"
	"math"
	"strconv"

	"gonum.org/v1/plot"

	"kinetarium/app/run"
	"kinetarium/app/study"
	"kinetarium/plotting"
	"kinetarium/solve/stochastic"
)

func num(v float64) string { return study.FormatNumber(v) }

// grid lays out f(i, s) as rows "time, species…".
func grid(e *stochastic.Ensemble, f func(i, s int) float64, sh *Shown) [][]string {
	rows := [][]string{append([]string{sh.head("time", sh.unit(""))}, sh.counts(e.Species)...)}
	for i, t := range e.Times {
		row := []string{num(sh.time(t))}
		for s := range e.Species {
			row = append(row, num(f(i, s)))
		}
		rows = append(rows, row)
	}
	return rows
}

// counts are the species' names as headers of counts: with their unit,
// molecules, when shown in display units.
func (sh *Shown) counts(species []string) []string {
	if sh == nil {
		return species
	}
	h := make([]string, len(species))
	for i, sp := range species {
		h[i] = sh.head(sp, Molecules)
	}
	return h
}

// The tables below show e as sh says: times in its time unit and the
// units named in the headers; with a nil sh, as computed and without
// units, as they always were.

// MeanRows is mean.csv: the ensemble mean of every species in molecules.
func MeanRows(e *stochastic.Ensemble, sh *Shown) [][]string { return grid(e, e.Mean, sh) }

// SDRows is sd.csv: the sample standard deviation in molecules.
func SDRows(e *stochastic.Ensemble, sh *Shown) [][]string { return grid(e, e.SD, sh) }

// BandRows is bands.csv: the population bands' layout (study.BandRows;
// with display units study.Figures.BandRows, every row in molecules).
func BandRows(e *stochastic.Ensemble, sh *Shown) [][]string {
	if sh == nil {
		return study.BandRows(e.Bands, e.Species)
	}
	cols := &run.Shown{TimeUnit: sh.TimeUnit, Time: sh.Time, Units: make([]string, len(e.Species)), Scales: make([]run.Scale, len(e.Species))}
	for s := range e.Species {
		cols.Units[s], cols.Scales[s] = Molecules, run.Scale{Mul: 1, Div: 1}
	}
	return study.Figures{Shown: cols}.BandRows(e.Bands, e.Species)
}

// RunRows is runs.csv: the kept single runs, "run, time, species…".
func RunRows(e *stochastic.Ensemble, sh *Shown) [][]string {
	rows := [][]string{append([]string{"run", sh.head("time", sh.unit(""))}, sh.counts(e.Species)...)}
	for _, k := range e.Kept {
		for i, t := range e.Times {
			row := []string{strconv.Itoa(k.Run), num(sh.time(t))}
			for _, v := range k.Counts[i] {
				row = append(row, num(v))
			}
			rows = append(rows, row)
		}
	}
	return rows
}

// HistogramRows is histograms.csv: "time, species, molecules, runs".
func HistogramRows(e *stochastic.Ensemble, sh *Shown) [][]string {
	rows := [][]string{{sh.head("time", sh.unit("")), "species", "molecules", "runs"}}
	ns := len(e.Species)
	for h, i := range e.HistTimes {
		for s, sp := range e.Species {
			hist := e.Hist[h*ns+s]
			for k, v := range hist.Values {
				rows = append(rows, []string{num(sh.time(e.Times[i])), sp, strconv.FormatInt(v, 10), strconv.FormatUint(hist.Counts[k], 10)})
			}
		}
	}
	return rows
}

// PassageRows is passages.csv: each run's first-passage time to each
// level ("" when not reached by the end).
func PassageRows(e *stochastic.Ensemble, sh *Shown) [][]string {
	head := []string{"run"}
	for _, p := range e.Passages {
		if sh == nil {
			head = append(head, fmt.Sprintf("%s reaches %s", e.Species[p.Species], num(p.Level)))
		} else {
			head = append(head, sh.head(fmt.Sprintf("%s reaches %s molecules", e.Species[p.Species], num(p.Level)), sh.TimeUnit))
		}
	}
	rows := [][]string{head}
	for _, pt := range e.PassTimes {
		row := []string{strconv.Itoa(pt.Run)}
		for _, t := range pt.T {
			if math.IsInf(t, 1) {
				row = append(row, "")
			} else {
				row = append(row, num(sh.time(t)))
			}
		}
		rows = append(rows, row)
	}
	return rows
}

// PassageSummary returns, for passage p, the passage times of the runs
// that reached the level (in run order) and the number that did not.
func PassageSummary(e *stochastic.Ensemble, p int) (reached []float64, missed int) {
	for _, pt := range e.PassTimes {
		if math.IsInf(pt.T[p], 1) {
			missed++
		} else {
			reached = append(reached, pt.T[p])
		}
	}
	return reached, missed
}

// Figure draws species s of e: bands, mean, the ODE solution in molecules
// (ode, row by time; nil leaves it out) and the kept single runs as
// steps. Times are in timeUnit, or as sh shows them.
func Figure(e *stochastic.Ensemble, s int, ode [][]float64, timeUnit string, logTime bool, sh *Shown) (*plot.Plot, error) {
	nt := len(e.Times)
	timeUnit = sh.unit(timeUnit)
	fig := plotting.Ensemble{Name: e.Species[s], Times: sh.times(e.Times), Mean: make([]float64, nt)}
	q := study.BandCurves(e.Bands, s) // 5, 25, 50, 75, 95 %
	fig.Lo5, fig.Lo25, fig.Hi75, fig.Hi95 = q[0], q[1], q[3], q[4]
	for i := range nt {
		fig.Mean[i] = e.Mean(i, s)
	}
	if ode != nil {
		fig.ODE = make([]float64, nt)
		for i := range nt {
			fig.ODE[i] = ode[i][s]
		}
	}
	for _, k := range e.Kept {
		r := make([]float64, nt)
		for i := range nt {
			r[i] = k.Counts[i][s]
		}
		fig.Runs = append(fig.Runs, r)
	}
	times, xl := fig.Times, logTime
	if logTime { // time 0 cannot be shown on a log axis: start after it
		for len(times) > 0 && times[0] <= 0 {
			times = times[1:]
		}
		cut := nt - len(times)
		fig = cutFront(fig, cut)
	}
	return plotting.EnsemblePlot(fig, plotting.Options{
		Title:  fmt.Sprintf("%s: %d stochastic runs (%s method)", e.Species[s], e.Done, e.Method),
		XLabel: "time", XUnit: timeUnit, YLabel: "molecules", LogX: xl})
}

// cutFront drops the first n times of f.
func cutFront(f plotting.Ensemble, n int) plotting.Ensemble {
	if n == 0 {
		return f
	}
	cut := func(v []float64) []float64 {
		if v == nil {
			return nil
		}
		return v[n:]
	}
	f.Times, f.Mean, f.ODE = cut(f.Times), cut(f.Mean), cut(f.ODE)
	f.Lo5, f.Hi95, f.Lo25, f.Hi75 = cut(f.Lo5), cut(f.Hi95), cut(f.Lo25), cut(f.Hi75)
	for k := range f.Runs {
		f.Runs[k] = cut(f.Runs[k])
	}
	return f
}

// HistogramFigure draws the counts of species s at HistTimes[h] (the
// time as sh shows it).
func HistogramFigure(e *stochastic.Ensemble, h, s int, sh *Shown) (*plot.Plot, error) {
	hist := e.Hist[h*len(e.Species)+s]
	var vals []float64
	for k, v := range hist.Values {
		for range hist.Counts[k] {
			vals = append(vals, float64(v))
		}
	}
	bins := 0
	if len(hist.Values) > 0 {
		bins = int(min(60, hist.Values[len(hist.Values)-1]-hist.Values[0]+1))
	}
	return plotting.Histogram(vals, bins, plotting.Options{
		Title:  fmt.Sprintf("%s at t = %s%s: %d runs", e.Species[s], num(sh.time(e.Times[e.HistTimes[h]])), sh.after(), e.Done),
		XLabel: "molecules", YLabel: "runs"})
}

// PassageFigure draws the first-passage times of passage p (as sh shows
// them).
func PassageFigure(e *stochastic.Ensemble, p int, sh *Shown) (*plot.Plot, error) {
	reached, missed := PassageSummary(e, p)
	reached = sh.times(reached)
	ps := e.Passages[p]
	return plotting.Histogram(reached, 0, plotting.Options{
		Title: fmt.Sprintf("time for %s to reach %s (%d of %d runs; %d did not by the end)",
			e.Species[ps.Species], num(ps.Level), len(reached), e.Done, missed),
		XLabel: "first-passage time", XUnit: sh.unit(""), YLabel: "runs"})
}
