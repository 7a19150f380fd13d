package main

// What the Sweep and Population windows share: the choice of model values
// to vary, the readout editor, the figure area, the run controls and the
// file export.

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot"

	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/app/study"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/plotting"
	"kinetarium/solve/explore"
)

// quantity is a model value a study can vary.
type quantity struct {
	label string  // shown in lists: "k (parameter)"
	knob  string  // the study knob name: "k", "init:A", "volume:cell"
	value float64 // the model's value
}

// quantities lists the values of m that a study can vary, in the order of
// the slider panel: parameters, initial concentrations, volumes.
func quantities(m *network.Model) []quantity {
	var out []quantity
	for _, k := range sliders.Candidates(m) {
		out = append(out, quantity{label: optionLabel(k), value: k.Model, knob: k.Ref()})
	}
	return out
}

// quantityLabels returns the labels of qs.
func quantityLabels(qs []quantity) []string {
	var out []string
	for _, q := range qs {
		out = append(out, q.label)
	}
	return out
}

// findQuantity returns the quantity with the label.
func findQuantity(qs []quantity, label string) (quantity, bool) {
	for _, q := range qs {
		if q.label == label {
			return q, true
		}
	}
	return quantity{}, false
}

// readoutKinds are the readout kinds in plain words, in the order of
// explore.Kinds.
var readoutKinds = []struct {
	kind  explore.Kind
	label string
	extra string // the number the kind needs: "time", "level" or ""
}{
	{explore.ValueAt, "Value at time", "time"},
	{explore.Max, "Maximum", ""},
	{explore.TimeOfMax, "Time of maximum", ""},
	{explore.Min, "Minimum", ""},
	{explore.TimeOfMin, "Time of minimum", ""},
	{explore.Final, "Final value", ""},
	{explore.AUC, "Area under curve", ""},
	{explore.CrossUp, "Time rising past level", "level"},
	{explore.CrossDown, "Time falling past level", "level"},
}

// readoutRow is the widgets of one readout.
type readoutRow struct {
	kind    *widget.Select
	species *widget.Select
	number  *widget.Entry
	object  fyne.CanvasObject
}

// readoutEditor edits a list of readouts: what is computed, on which
// species, and at which time or level.
type readoutEditor struct {
	species []string
	rows    []*readoutRow
	list    *fyne.Container
	content fyne.CanvasObject
}

func newReadoutEditor(species []string) *readoutEditor {
	e := &readoutEditor{species: species, list: container.NewVBox()}
	add := widget.NewButtonWithIcon("Add readout", theme.ContentAddIcon(), func() { e.add(explore.Final, "", 0) })
	add.Importance = widget.LowImportance
	caption := func(s string, w float32) fyne.CanvasObject {
		l := widget.NewLabel(s)
		l.Importance = widget.LowImportance
		if w == 0 {
			return l
		}
		return container.NewGridWrap(fyne.NewSize(w, l.MinSize().Height), l)
	}
	captions := container.NewBorder(nil, nil, nil,
		container.NewHBox(caption("Species", 120), caption("Time, level", 80), caption("", 34)), caption("Compute", 0))
	e.content = container.NewVBox(captions, e.list, container.NewHBox(add))
	return e
}

// noteUnits adds, below the readouts, which units their times and levels
// are read in when the model shows results in other units: they are the
// model's, like every value typed into the study.
func (e *readoutEditor) noteUnits(m *network.Model) {
	d, u := m.Simulation.Display, m.Units
	differs := func(show, own string) bool {
		return strings.TrimSpace(show) != "" && strings.TrimSpace(show) != strings.TrimSpace(own)
	}
	if !differs(d.Time, u.Time) && !differs(d.Concentration, u.Amount) {
		return
	}
	l := widget.NewLabel(fmt.Sprintf("Values typed here (quantities, times, levels) are in the model's units (%s, %s); results are shown in %s and %s.",
		u.Time, u.Amount, orOwn(d.Time, u.Time), orOwn(d.Concentration, u.Amount)))
	l.Wrapping = fyne.TextWrapWord
	l.Importance = widget.LowImportance
	e.content.(*fyne.Container).Add(l)
}

// orOwn returns show, or own when show is empty.
func orOwn(show, own string) string {
	if strings.TrimSpace(show) == "" {
		return own
	}
	return show
}

// kindLabels returns the labels of the readout kinds.
func kindLabels() []string {
	var out []string
	for _, k := range readoutKinds {
		out = append(out, k.label)
	}
	return out
}

// add appends a readout row; an empty species means the first one.
func (e *readoutEditor) add(kind explore.Kind, species string, number float64) *readoutRow {
	r := &readoutRow{
		kind:    widget.NewSelect(kindLabels(), nil),
		species: widget.NewSelect(e.species, nil),
		number:  widget.NewEntry(),
	}
	r.kind.OnChanged = func(string) { e.updateRow(r) }
	if species == "" && len(e.species) > 0 {
		species = e.species[0]
	}
	for _, k := range readoutKinds {
		if k.kind == kind {
			r.kind.SetSelected(k.label)
		}
	}
	r.species.SetSelected(species)
	if number != 0 {
		r.number.SetText(short(number))
	}
	e.updateRow(r)
	var remove *widget.Button
	remove = widget.NewButtonWithIcon("", theme.DeleteIcon(), func() {
		for i, x := range e.rows {
			if x == r {
				e.rows = append(e.rows[:i], e.rows[i+1:]...)
				e.list.Remove(r.object)
				break
			}
		}
	})
	remove.Importance = widget.LowImportance
	h := r.number.MinSize().Height
	right := container.NewHBox(container.NewGridWrap(fyne.NewSize(120, h), r.species),
		container.NewGridWrap(fyne.NewSize(80, h), r.number), remove)
	r.object = container.NewBorder(nil, nil, nil, right, r.kind)
	e.rows = append(e.rows, r)
	e.list.Add(r.object)
	return r
}

// kindOf returns the readout kind behind a label.
func kindOf(label string) (explore.Kind, string) {
	for _, k := range readoutKinds {
		if k.label == label {
			return k.kind, k.extra
		}
	}
	return "", ""
}

// updateRow enables the number entry when the kind needs one.
func (e *readoutEditor) updateRow(r *readoutRow) {
	_, extra := kindOf(r.kind.Selected)
	if extra == "" {
		r.number.SetPlaceHolder("")
		r.number.Disable()
		return
	}
	r.number.SetPlaceHolder(extra)
	r.number.Enable()
}

// specs reads the readouts; errors name the row, counting from 1.
func (e *readoutEditor) specs() ([]study.ReadoutSpec, error) {
	var out []study.ReadoutSpec
	for i, r := range e.rows {
		kind, extra := kindOf(r.kind.Selected)
		if kind == "" {
			return nil, fmt.Errorf("readout %d: choose what to compute", i+1)
		}
		if r.species.Selected == "" {
			return nil, fmt.Errorf("readout %d: choose a species", i+1)
		}
		s := study.ReadoutSpec{Kind: kind, Species: r.species.Selected}
		if extra != "" {
			v, err := number(r.number.Text, fmt.Sprintf("readout %d: the %s", i+1, extra))
			if err != nil {
				return nil, err
			}
			if extra == "time" {
				s.Time = &v
			} else {
				s.Level = &v
			}
		}
		out = append(out, s)
	}
	return out, nil
}

// number reads a finite number typed into the named field.
func number(s, name string) (float64, error) {
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%s %q is not a number", name, s)
	}
	return v, nil
}

// count reads a whole number in [lo, hi] typed into the named field.
func count(s, name string, lo, hi int) (int, error) {
	v, err := strconv.Atoi(strings.TrimSpace(s))
	if err != nil || v < lo || v > hi {
		return 0, fmt.Errorf("%s %q is not usable; expected a whole number from %d to %d", name, s, lo, hi)
	}
	return v, nil
}

// studyFigure shows a figure drawn at the widget's size.
type studyFigure struct {
	widget.BaseWidget
	plot        *plot.Plot
	img         *canvas.Image
	placeholder *widget.Label
	drawn       fyne.Size
}

func newStudyFigure(hint string) *studyFigure {
	f := &studyFigure{img: canvas.NewImageFromImage(nil), placeholder: widget.NewLabel(hint)}
	f.img.FillMode = canvas.ImageFillStretch
	f.img.ScaleMode = canvas.ImageScaleFastest
	f.placeholder.Alignment = fyne.TextAlignCenter
	f.placeholder.Wrapping = fyne.TextWrapWord
	f.ExtendBaseWidget(f)
	return f
}

// set shows p (nil: the placeholder with the hint).
func (f *studyFigure) set(p *plot.Plot, hint string) {
	f.plot = p
	f.placeholder.SetText(hint)
	f.drawn = fyne.Size{}
	f.render(f.Size())
}

// render draws the figure at size s, in pixels of the canvas.
func (f *studyFigure) render(s fyne.Size) {
	if f.plot == nil {
		f.img.Image = nil
		f.img.Hide()
		f.placeholder.Show()
		f.img.Refresh()
		return
	}
	f.placeholder.Hide()
	if s.Width < 10 || s.Height < 10 || s == f.drawn {
		return
	}
	scale := float32(1)
	if c := fyne.CurrentApp().Driver().CanvasForObject(f); c != nil {
		scale = c.Scale()
	}
	f.drawn = s
	f.img.Image = plotting.Render(f.plot, int(s.Width*scale), int(s.Height*scale))
	f.img.Show()
	f.img.Refresh()
}

// Resize draws the figure again at the new size.
func (f *studyFigure) Resize(s fyne.Size) {
	f.BaseWidget.Resize(s)
	f.render(s)
}

// CreateRenderer implements fyne.Widget.
func (f *studyFigure) CreateRenderer() fyne.WidgetRenderer {
	return widget.NewSimpleRenderer(container.NewStack(f.img, f.placeholder))
}

// MinSize keeps a figure legible.
func (f *studyFigure) MinSize() fyne.Size { return fyne.NewSize(360, 240) }

// runControls are the Run button, the progress bar and Cancel of a study
// window, with the status line and the caution (run.Caution) under them.
// The work runs on its own goroutine; every widget update goes
// through deliver (fyne.Do in the program).
type runControls struct {
	run      *widget.Button
	cancel   *widget.Button
	progress *widget.ProgressBar
	status   *widget.Label
	caution  *widget.Label
	stop     context.CancelFunc
	deliver  func(func())
	running  bool
	content  fyne.CanvasObject
}

func newRunControls(start func()) *runControls {
	c := &runControls{deliver: fyne.Do}
	c.run = widget.NewButtonWithIcon("Run", theme.MediaPlayIcon(), start)
	c.run.Importance = widget.HighImportance
	c.cancel = widget.NewButtonWithIcon("Cancel", theme.CancelIcon(), c.stopRun)
	c.cancel.Disable()
	c.progress = widget.NewProgressBar()
	c.status = widget.NewLabel("")
	c.status.Wrapping = fyne.TextWrapWord
	c.caution = widget.NewLabel(run.Caution)
	c.caution.Wrapping = fyne.TextWrapWord
	c.caution.Importance = widget.WarningImportance // as legible as the event form's
	c.content = container.NewVBox(container.NewBorder(nil, nil, c.run, c.cancel, c.progress), c.status, c.caution)
	return c
}

// stopRun cancels the run in progress.
func (c *runControls) stopRun() {
	if c.stop != nil {
		c.stop()
	}
}

// runAsync runs work on its own goroutine with the controls' progress bar
// and Cancel: work gets a context and a progress function safe to call
// from any goroutine; done is called on the UI goroutine with work's
// outcome. Every study-like window (sweeps, populations, analyses,
// stochastic ensembles) runs its work through it.
func runAsync[T any](c *runControls, work func(ctx context.Context, progress func(float64)) (T, error), done func(T, error)) {
	if c.running {
		return
	}
	ctx, stop := context.WithCancel(context.Background())
	c.stop, c.running = stop, true
	c.run.Disable()
	c.cancel.Enable()
	c.progress.SetValue(0)
	c.status.SetText("Running…")
	go func() {
		res, err := work(ctx, func(f float64) { c.deliver(func() { c.progress.SetValue(f) }) })
		stop()
		c.deliver(func() {
			c.running, c.stop = false, nil
			c.run.Enable()
			c.cancel.Disable()
			if err == nil {
				// Finished: work that ends early (a steady state found at
				// once, a branch that turns back) reports no last step.
				c.progress.SetValue(1)
			}
			done(res, err)
		})
	}()
}

// runJob reads the window's form with prepare and runs the job on every
// core; finished gets the outcome on the UI goroutine. A form that cannot
// be read is reported on the status line.
func (c *runControls) runJob(prepare func() (*study.Job, error), finished func(*study.Job, *explore.Result, error)) {
	job, err := prepare()
	if err != nil {
		c.status.SetText(plainError(err))
		return
	}
	runAsync(c, func(ctx context.Context, progress func(float64)) (*explore.Result, error) {
		return job.Run(ctx, 0, progress)
	}, func(res *explore.Result, err error) { finished(job, res, err) })
}

// exportTable asks for a CSV file in win and writes it with save, once
// there is a result to save (have).
func (c *runControls) exportTable(win fyne.Window, have bool, name string, save func(path string) error) {
	if !have {
		c.status.SetText("Nothing to export yet: press Run first.")
		return
	}
	saveAs(win, name, ".csv", save, func(path string) { c.status.SetText("Table saved to " + path) })
}

// saveAs asks for a file to write in win, adds ext when the name has none,
// and calls save with the path; save writes the file (atomically).
func saveAs(win fyne.Window, name, ext string, save func(path string) error, saved func(path string)) {
	saveDialog(win, name, ext, nil, func(path string) {
		if err := save(path); err != nil {
			dialog.ShowError(err, win)
			return
		}
		saved(path)
	})
}

// studyProvenance describes the outputs of a study of kind what ("sweep",
// "population") on the prepared model: the model the window was opened
// on, with its own run settings. partial marks the outputs of a run
// stopped by Cancel, as the batch command marks those of a run stopped
// by a signal.
func studyProvenance(what string, prep *study.Prepared, partial bool) (*run.Provenance, error) {
	prov, err := run.NewProvenance(what, prep.Model, prep.Sim, nil)
	if err != nil {
		return nil, err
	}
	prov.Partial = partial
	return prov, nil
}

// partialNote is added to the status line of a run stopped by Cancel.
const partialNote = " Exports from them are marked partial (partial: true in their provenance)."

// saveTable writes rows to path as CSV, atomically, and the provenance of
// a study of kind what on prep beside it (partial: of a cancelled run).
func saveTable(path string, rows [][]string, what string, prep *study.Prepared, partial bool) error {
	prov, err := studyProvenance(what, prep, partial)
	if err != nil {
		return err
	}
	if err := atomicfile.WriteCSV(path, rows); err != nil {
		return err
	}
	return run.SaveProvenance(path, prov)
}

// exportFigureAs asks for a format, then a file, and saves the figure made
// by figure there, with the provenance of a study of kind what on prep
// (partial: of a cancelled run).
func exportFigureAs(win fyne.Window, base, what string, prep *study.Prepared, partial bool, figure func() (*plot.Plot, error), saved func(path string)) {
	exportPlot(win, base, func() (*run.Provenance, error) { return studyProvenance(what, prep, partial) }, figure, saved)
}

// exportPlot asks for a format, then a file, and saves the figure made by
// figure there, at the size and resolution the batch command uses, with
// the provenance prov gives.
func exportPlot(win fyne.Window, base string, prov func() (*run.Provenance, error), figure func() (*plot.Plot, error), saved func(path string)) {
	format := widget.NewSelect(figureFormats, nil)
	format.SetSelected(figureFormats[0])
	dialog.ShowForm("Export figure", "Choose file…", "Cancel",
		[]*widget.FormItem{widget.NewFormItem("Format", format)}, func(ok bool) {
			if !ok {
				return
			}
			ext := formatExt(format.Selected)
			saveAs(win, base+ext, ext, func(path string) error {
				return savePlot(path, prov, figure)
			}, saved)
		}, win)
}

// savePlot saves the figure made by figure to path with the provenance
// prov gives.
func savePlot(path string, prov func() (*run.Provenance, error), figure func() (*plot.Plot, error)) error {
	p, err := figure()
	if err != nil {
		return err
	}
	pv, err := prov()
	if err != nil {
		return err
	}
	return plotting.Save(p, path, 0, 0, 0, pv.Metadata(""))
}

// saveStudyFigure saves the figure made by figure to path, at the size
// and resolution the batch command uses, with the provenance of a study of
// kind what on prep (partial: of a cancelled run).
func saveStudyFigure(path, what string, prep *study.Prepared, partial bool, figure func() (*plot.Plot, error)) error {
	return savePlot(path, func() (*run.Provenance, error) { return studyProvenance(what, prep, partial) }, figure)
}

// sectionTitle is a bold heading inside a study window.
func sectionTitle(s string) *widget.Label {
	return widget.NewLabelWithStyle(s, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
}

// failureText describes a result's failed points in plain words.
func failureText(res *explore.Result, what string) string {
	if res.Failed == 0 {
		return ""
	}
	return fmt.Sprintf(" %d %s failed; see “Failed %s”.", res.Failed, plural(res.Failed, what, what+"s"), what+"s")
}

// studyModel returns a snapshot of the model and its name for a study
// window, or reports on the status line why there is none.
func (w *mainWindow) studyModel() (*network.Model, string, bool) {
	if w.ed.HasErrors() {
		w.status.SetText("Cannot start a study yet: the model has mistakes; see Messages.")
		return nil, "", false
	}
	name := "untitled"
	switch {
	case w.doc.Path != "":
		name = filepath.Base(w.doc.Path)
	case w.exampleOf != "":
		name = exampleTitle(w.exampleOf)
	}
	return w.doc.Snapshot(), name, true
}

// openSweep opens a Sweep window on the model as it is now.
func (w *mainWindow) openSweep() {
	m, name, ok := w.studyModel()
	if !ok {
		return
	}
	s, err := newSweepWindow(w.app, m, name)
	if err != nil {
		w.showError(err)
		return
	}
	s.win.Show()
}

// openPopulation opens a Population window on the model as it is now.
func (w *mainWindow) openPopulation() {
	m, name, ok := w.studyModel()
	if !ok {
		return
	}
	p, err := newPopulationWindow(w.app, m, name)
	if err != nil {
		w.showError(err)
		return
	}
	p.win.Show()
}
