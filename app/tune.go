package main

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/layout"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/run"
	"kinetarium/app/sliders"
	"kinetarium/app/study"
	"kinetarium/network"
)

// sliderSteps is the number of steps of every slider, from its range's
// lower end to its upper end.
const sliderSteps = 1000

// tunePanel is the panel of sliders under the figure: one slider for each
// parameter, initial concentration or compartment volume the user picks.
// Moving a slider simulates the model again with the new value, on a
// goroutine of the sliders.Runner (the newest value only), and shows the
// result in the figure. The model itself changes only with "Write into
// model", as one undoable edit.
type tunePanel struct {
	w      *mainWindow
	runner *sliders.Runner

	knobs []sliders.Knob
	rows  []*tuneRow

	toggle   *widget.Button // "Sliders": opens and closes the panel
	content  *fyne.Container
	body     *fyne.Container // what the panel shows when open
	tools    *fyne.Container // the buttons of the open panel
	open     bool
	list     *fyne.Container
	hint     *widget.Label
	add      *widget.Select
	options  []sliders.Knob // the knobs behind add's entries
	pin      *widget.Button
	reset    *widget.Button
	write    *widget.Button
	info     *widget.Label // the last solve, or what is wrong with a typed value
	note     *widget.Label // beside the closed panel's title
	captions fyne.CanvasObject

	model   *network.Model // snapshot of the document handed to the runner
	version int            // the document version model was taken at
	ref     *run.Outcome
	tuned   bool // the figure shows a run with values differing from the model
}

// tuneRow is the widgets of one knob.
type tuneRow struct {
	name     *widget.Label
	min, max *widget.Entry
	value    *widget.Entry
	unit     *widget.Label
	slider   *widget.Slider
	setting  bool // the slider is being moved by the program, not the user
	object   fyne.CanvasObject
}

func newTunePanel(w *mainWindow) *tunePanel {
	p := &tunePanel{w: w}
	p.runner = &sliders.Runner{Deliver: fyne.Do, OnResult: p.result}

	p.toggle = widget.NewButtonWithIcon("Sliders", theme.MenuExpandIcon(), func() { p.setOpen(!p.open) })
	p.toggle.Importance = widget.LowImportance
	p.toggle.Alignment = widget.ButtonAlignLeading
	p.add = widget.NewSelect(nil, p.addChosen)
	p.add.PlaceHolder = "Add a slider…"
	p.pin = widget.NewButtonWithIcon("Pin as reference", theme.ContentCopyIcon(), p.togglePin)
	p.reset = widget.NewButtonWithIcon("Reset to model", theme.HistoryIcon(), p.resetValues)
	p.write = widget.NewButtonWithIcon("Write into model", theme.DocumentSaveIcon(), p.writeBack)
	p.info = widget.NewLabel("")
	p.info.Wrapping = fyne.TextWrapWord
	p.note = widget.NewLabel(closedNote)
	p.note.Importance = widget.LowImportance
	p.info.Hide()
	p.hint = widget.NewLabel("Choose a parameter, initial concentration or volume under “Add a slider…”. " +
		"Dragging a slider simulates again at once; the model keeps its values until you write them in.")
	p.hint.Wrapping = fyne.TextWrapWord
	p.hint.Importance = widget.LowImportance
	p.list = container.NewVBox()

	addBox := container.NewGridWrap(fyne.NewSize(190, p.add.MinSize().Height), p.add)
	p.tools = container.NewHBox(addBox, p.pin, p.reset, p.write)
	p.tools.Hide()
	header := container.NewHScroll(container.NewBorder(nil, nil, p.toggle, p.tools, p.note))
	p.captions = captionRow()
	scroll := container.NewScroll(container.NewVBox(p.hint, p.captions, p.list))
	scroll.SetMinSize(fyne.NewSize(0, 168))
	p.body = container.NewBorder(nil, p.info, nil, nil, scroll)
	p.body.Hide()
	p.content = container.NewBorder(container.NewVBox(widget.NewSeparator(), header), nil, nil, nil, p.body)
	w.doc.OnChange(p.modelChanged)
	p.updateButtons()
	return p
}

// reference returns the pinned run to draw beneath the current one, or nil.
func (p *tunePanel) reference() *run.Outcome {
	if p == nil || !p.open {
		return nil
	}
	return p.ref
}

// setOpen shows or hides the panel. Opening it the first time offers the
// model's first parameters; closing it puts the figure back to the
// model's values.
func (p *tunePanel) setOpen(on bool) {
	if on == p.open {
		return
	}
	p.open = on
	defer p.w.win.Content().Refresh() // lay the window out again
	if !on {
		p.body.Hide()
		p.tools.Hide()
		p.toggle.SetIcon(theme.MenuExpandIcon())
		p.note.SetText(closedNote)
		if p.tuned || p.differs() {
			p.setAll(func(k *sliders.Knob) { k.Value = k.Model })
			p.request()
		}
		p.w.redraw()
		return
	}
	p.body.Show()
	p.tools.Show()
	p.toggle.SetIcon(theme.MenuDropDownIcon())
	p.note.SetText("")
	if len(p.knobs) == 0 {
		for _, k := range sliders.Candidates(p.w.doc.Model()) {
			if k.Kind == sliders.Parameter && len(p.knobs) < 3 {
				p.knobs = append(p.knobs, k)
			}
		}
		p.rebuild()
	}
	p.refreshOptions()
	p.w.redraw()
}

// differs reports whether any knob's value differs from the model's.
func (p *tunePanel) differs() bool {
	for _, k := range p.knobs {
		if k.Value != k.Model {
			return true
		}
	}
	return false
}

// optionLabel is the entry of the "Add a slider…" list for k.
func optionLabel(k sliders.Knob) string { return k.Name + " (" + k.Kind.String() + ")" }

// refreshOptions lists in "Add a slider…" the model's values that have no
// slider yet.
func (p *tunePanel) refreshOptions() {
	p.options = p.options[:0]
	var labels []string
	for _, k := range sliders.Candidates(p.w.doc.Model()) {
		if slices.ContainsFunc(p.knobs, func(c sliders.Knob) bool { return c.Key() == k.Key() }) {
			continue
		}
		p.options = append(p.options, k)
		labels = append(labels, optionLabel(k))
	}
	p.add.SetOptions(labels)
}

func (p *tunePanel) addChosen(label string) {
	if label == "" {
		return
	}
	for _, k := range p.options {
		if optionLabel(k) == label {
			p.knobs = append(p.knobs, k)
			break
		}
	}
	p.add.ClearSelected()
	p.rebuild()
	p.refreshOptions()
}

func (p *tunePanel) remove(key string) {
	i := slices.IndexFunc(p.knobs, func(k sliders.Knob) bool { return k.Key() == key })
	if i < 0 {
		return
	}
	changed := p.knobs[i].Value != p.knobs[i].Model
	p.knobs = slices.Delete(p.knobs, i, i+1)
	p.rebuild()
	p.refreshOptions()
	if changed {
		p.request()
	}
}

// rebuild makes one row of widgets per knob.
func (p *tunePanel) rebuild() {
	p.rows = p.rows[:0]
	p.list.RemoveAll()
	for i := range p.knobs {
		r := p.newRow(p.knobs[i].Key())
		p.rows = append(p.rows, r)
		p.list.Add(r.object)
		p.show(i)
	}
	if len(p.knobs) == 0 {
		p.hint.Show()
		p.captions.Hide()
	} else {
		p.hint.Hide()
		p.captions.Show()
	}
	p.updateButtons()
}

// newRow makes the widgets of the knob with the given key.
func (p *tunePanel) newRow(key string) *tuneRow {
	r := &tuneRow{
		name:   widget.NewLabel(""),
		min:    widget.NewEntry(),
		max:    widget.NewEntry(),
		value:  widget.NewEntry(),
		unit:   widget.NewLabel(""),
		slider: widget.NewSlider(0, sliderSteps),
	}
	r.name.TextStyle.Bold = true
	r.name.Truncation = fyne.TextTruncateEllipsis
	r.unit.Importance = widget.LowImportance
	r.unit.Truncation = fyne.TextTruncateEllipsis
	index := func() int { return slices.IndexFunc(p.knobs, func(k sliders.Knob) bool { return k.Key() == key }) }
	r.slider.OnChanged = func(f float64) {
		i := index()
		if r.setting || i < 0 {
			return
		}
		k := &p.knobs[i]
		k.Value = k.At(f / sliderSteps)
		r.value.SetText(short(k.Value))
		p.request()
	}
	r.value.OnSubmitted = func(s string) {
		i := index()
		if i < 0 {
			return
		}
		v, ok := p.number(s)
		if ok {
			if err := p.knobs[i].Set(v); err != nil {
				p.say(err.Error(), true)
			} else {
				p.say("", false)
				p.request()
			}
		}
		p.show(i)
	}
	rangeEnd := func(upper bool) func(string) {
		return func(s string) {
			i := index()
			if i < 0 {
				return
			}
			k := &p.knobs[i]
			if v, ok := p.number(s); ok {
				lo, hi := k.Min, k.Max
				if upper {
					hi = v
				} else {
					lo = v
				}
				old := k.Value
				if err := k.SetRange(lo, hi); err != nil {
					p.say(err.Error(), true)
				} else {
					p.say("", false)
					if k.Value != old {
						p.request()
					}
				}
			}
			p.show(i)
		}
	}
	r.min.OnSubmitted = rangeEnd(false)
	r.max.OnSubmitted = rangeEnd(true)
	remove := widget.NewButtonWithIcon("", theme.ContentClearIcon(), func() { p.remove(key) })
	remove.Importance = widget.LowImportance

	r.value.TextStyle.Bold = true
	r.object = rowLayout(r.value.MinSize().Height, r.name, r.value, r.unit, r.min, r.slider, r.max, remove)
	return r
}

// closedNote is shown beside the title of the closed panel.
const closedNote = "try other values without changing the model"

// rowLayout lays out one row of the panel: name, value and unit, then the
// slider between the ends of its range, then the remove button.
// Every part is h high.
func rowLayout(h float32, name, value, unit, lo, slider, hi, remove fyne.CanvasObject) fyne.CanvasObject {
	fixed := func(w float32, o fyne.CanvasObject) fyne.CanvasObject {
		return container.NewGridWrap(fyne.NewSize(w, h), o)
	}
	left := container.NewHBox(fixed(110, name), fixed(96, value), fixed(72, unit), fixed(72, lo))
	right := container.NewHBox(fixed(72, hi), fixed(widget.NewEntry().MinSize().Height, remove))
	return container.NewBorder(nil, nil, left, right, slider)
}

// captionRow names the columns of the rows.
func captionRow() fyne.CanvasObject {
	th := fyne.CurrentApp().Settings().Theme()
	size := th.Size(theme.SizeNameCaptionText)
	col := th.Color(theme.ColorNameForeground, theme.VariantLight)
	c := func(s string, align fyne.TextAlign) fyne.CanvasObject {
		t := canvas.NewText(s, col)
		t.TextSize = size
		t.Alignment = align
		// Line the caption up with the text inside the entries below.
		return container.New(layout.NewCustomPaddedLayout(0, 0, th.Size(theme.SizeNameInnerPadding), 0), t)
	}
	return rowLayout(size+4, c("", fyne.TextAlignLeading), c("value", fyne.TextAlignLeading), c("", fyne.TextAlignLeading),
		c("from", fyne.TextAlignLeading), c("log scale when the range is above zero", fyne.TextAlignCenter),
		c("to", fyne.TextAlignLeading), c("", fyne.TextAlignLeading))
}

// number reads a typed number, saying in the panel what is wrong with it.
func (p *tunePanel) number(s string) (float64, bool) {
	t := strings.TrimSpace(s)
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		p.say("“"+s+"” is not a number; write it like 0.5, 12 or 1e-3.", true)
		return 0, false
	}
	return v, true
}

// show puts knob i's name, range and value in its row.
func (p *tunePanel) show(i int) {
	k, r := p.knobs[i], p.rows[i]
	r.name.SetText(k.Label())
	r.min.SetText(short(k.Min))
	r.max.SetText(short(k.Max))
	r.value.SetText(short(k.Value))
	r.unit.SetText(study.KnobUnit(p.w.doc.Model(), k.Ref()))
	r.setting = true
	r.slider.SetValue(math.Round(k.Position(k.Value) * sliderSteps))
	r.setting = false
}

// setAll changes every knob with f and shows the new values.
func (p *tunePanel) setAll(f func(k *sliders.Knob)) {
	for i := range p.knobs {
		f(&p.knobs[i])
		if i < len(p.rows) {
			p.show(i)
		}
	}
}

// request asks the runner to simulate the model with the knobs' values.
func (p *tunePanel) request() {
	if p.w.ed.HasErrors() {
		p.say("The model has mistakes (see Messages); correct them to simulate.", true)
		return
	}
	d := p.w.doc
	if p.model == nil || p.version != d.Version() {
		p.model, p.version = d.Snapshot(), d.Version()
	}
	p.runner.Request(sliders.Request{Model: p.model, Knobs: slices.Clone(p.knobs)})
}

// say shows msg under the sliders, as a warning when warn is set; an
// empty msg hides the line.
func (p *tunePanel) say(msg string, warn bool) {
	p.info.Importance = widget.MediumImportance
	if warn {
		p.info.Importance = widget.WarningImportance
	}
	p.info.SetText(msg)
	if msg == "" {
		p.info.Hide()
	} else {
		p.info.Show()
	}
}

// result shows the outcome of the newest values.
func (p *tunePanel) result(_ int, req sliders.Request, o *run.Outcome, err error) {
	w := p.w
	if req.Model != p.model {
		return // the model changed since
	}
	if o == nil {
		p.say(plainError(err), true)
		return
	}
	newNames := w.current == nil || !slices.Equal(w.current.Names, o.Names)
	if w.current != nil && len(w.current.T) > 0 && !p.tuned {
		// The run at the model's values is the previous run while the
		// sliders move away from them.
		w.previous = w.current
	}
	w.current = o
	p.tuned = false
	for _, k := range req.Knobs {
		if k.Value != k.Model {
			p.tuned = true
		}
	}
	if newNames {
		w.refreshSpecies()
	}
	w.redraw()
	line := fmt.Sprintf("Solved in %s (%d steps).", roundDuration(o.Elapsed), o.Stats.Steps)
	p.say("", false)
	if err != nil {
		// The reason in full under the sliders, where the text wraps.
		p.say(stoppedAt(o)+": "+plainError(err), true)
		line = stoppedLine(o)
	}
	if p.tuned {
		w.setStatus("Showing the slider values (not yet in the model). "+line, err != nil)
	} else {
		w.setStatus("Showing the model's values. "+line, err != nil)
	}
}

// togglePin pins the run shown as the reference drawn beneath later runs,
// or removes the pin.
func (p *tunePanel) togglePin() {
	if p.ref != nil {
		p.ref = nil
	} else if p.w.current != nil {
		p.ref = p.w.current
	} else {
		p.say("There is no run to pin yet.", true)
	}
	p.updateButtons()
	p.w.redraw()
}

// resetValues puts every slider back at the model's value.
func (p *tunePanel) resetValues() {
	p.setAll(func(k *sliders.Knob) {
		if err := k.Set(k.Model); err != nil {
			k.Value = k.Model
		}
	})
	p.request()
}

// writeBack stores the sliders' values in the model as one edit.
func (p *tunePanel) writeBack() {
	knobs := slices.Clone(p.knobs)
	n := 0
	for _, k := range knobs {
		if k.Value != k.Model {
			n++
		}
	}
	desc := fmt.Sprintf("set %d %s from sliders", n, plural(n, "value", "values"))
	if !p.w.doc.Apply(desc, func(m *network.Model) { sliders.WriteBack(m, knobs) }) {
		p.say("The model already has these values.", false)
		return
	}
	p.say(fmt.Sprintf("Wrote %d %s into the model; Edit ▸ Undo takes %s back.", n, plural(n, "value", "values"), plural(n, "it", "them")), false)
}

// modelChanged follows edits, undo and loading: the sliders go to the
// model's new values, and sliders of values no longer in the model go.
func (p *tunePanel) modelChanged() {
	p.model = nil // drops the results of solves of the old model
	// What the information line said was about the model as it was.
	p.say("", false)
	m := p.w.doc.Model()
	kept := p.knobs[:0]
	for _, k := range p.knobs {
		v, ok := sliders.Lookup(m, k.Kind, k.Name)
		if !ok {
			continue
		}
		k.Model = v
		if err := k.Set(v); err != nil {
			k.Value = v // a mistake the editor reports; keep the range
		}
		kept = append(kept, k)
	}
	p.knobs = kept
	if p.ref != nil && !sameSpecies(p.ref.Names, m) {
		p.ref = nil
	}
	p.rebuild()
	p.refreshOptions()
}

// sameSpecies reports whether names are m's species then its assignments,
// in order.
func sameSpecies(names []string, m *network.Model) bool {
	if len(names) != len(m.Species)+len(m.Assignments) {
		return false
	}
	for i, a := range m.Assignments {
		if names[len(m.Species)+i] != a.Name {
			return false
		}
	}
	for i, s := range m.Species {
		if names[i] != s.Name {
			return false
		}
	}
	return true
}

func (p *tunePanel) updateButtons() {
	if p.ref != nil {
		p.pin.SetText("Unpin reference")
	} else {
		p.pin.SetText("Pin as reference")
	}
	if len(p.knobs) == 0 {
		p.reset.Disable()
		p.write.Disable()
	} else {
		p.reset.Enable()
		p.write.Enable()
	}
}
