package editor

import (
	"fmt"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/run"
	"kinetarium/network"
)

// TolerancePreset is a named pair of tolerances offered in the run
// settings.
type TolerancePreset struct {
	Title      string
	RTol, ATol float64
}

// TolerancePresets are the tolerance choices; the last choice, "Custom…",
// shows the two numbers.
var TolerancePresets = []TolerancePreset{
	{"Quick (1e-4)", 1e-4, 1e-8},
	{"Standard (1e-6)", network.DefaultRTol, network.DefaultATol},
	{"Tight (1e-9)", 1e-9, 1e-14},
}

const customTolerance = "Custom…"

const (
	spacingLinear = "Evenly spaced"
	spacingLog    = "Logarithmic (many early points)"
)

// runForm edits the model's title, units and simulation settings.
type runForm struct {
	formBase
	loads   loader
	spacing *widget.Select
	preset  *widget.Select
	rtol    *field
	atol    *field
	method  *widget.Select
	nonneg  *widget.Check
	custom  bool
}

func newRunForm(ed *Editor) *runForm {
	f := &runForm{formBase: formBase{ed: ed, section: "simulation", box: container.NewVBox()}}
	sim := func(m *network.Model) *network.Simulation { return &m.Simulation }
	text := func(label, name, desc string, ptr func(m *network.Model) *string) {
		e, load := f.textInput(name, desc, func(m *network.Model, _ int) *string { return ptr(m) })
		f.addField(label, name, e)
		f.loads = append(f.loads, load)
	}
	number := func(label, name, desc string, get func(s network.Simulation) float64, set func(s *network.Simulation, v float64)) *field {
		parse := parseNumber
		if name == "output.points" {
			parse = parseCount
		}
		e, load := f.parsedInput(nonZero(parse), name, desc,
			func(m *network.Model, _ int) float64 { return get(m.Simulation.WithDefaults()) },
			func(m *network.Model, _ int, v float64) { set(sim(m), v) })
		f.loads = append(f.loads, load)
		return f.addField(label, name, e)
	}
	heading := func(s string) {
		l := widget.NewLabelWithStyle(s, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
		f.box.Add(l)
	}
	heading("Model")
	text("Title", "title", "edit title", func(m *network.Model) *string { return &m.Title })
	text("Time unit", "units.time", "edit time unit", func(m *network.Model) *string { return &m.Units.Time })
	text("Concentration unit", "units.amount", "edit concentration unit", func(m *network.Model) *string { return &m.Units.Amount })
	text("Note", "note", "edit note", func(m *network.Model) *string { return &m.Note })
	heading("Simulation")
	number("End time", "t_end", "edit end time",
		func(s network.Simulation) float64 { return s.TEnd }, func(s *network.Simulation, v float64) { s.TEnd = v })
	number("Output points", "output.points", "edit output points",
		func(s network.Simulation) float64 { return float64(s.Output.Points) },
		func(s *network.Simulation, v float64) { s.Output.Points = int(v) })
	f.spacing = widget.NewSelect([]string{spacingLinear, spacingLog}, func(choice string) {
		if f.loading {
			return
		}
		sp := "linear"
		if choice == spacingLog {
			sp = "log"
		}
		ed.edit("change output spacing", func(m *network.Model) { m.Simulation.Output.Spacing = sp })
	})
	f.addField("Output times", "output.spacing", f.spacing)
	titles := []string{}
	for _, p := range TolerancePresets {
		titles = append(titles, p.Title)
	}
	titles = append(titles, customTolerance)
	f.preset = widget.NewSelect(titles, func(choice string) {
		if f.loading {
			return
		}
		for _, p := range TolerancePresets {
			if p.Title == choice {
				f.custom = false
				ed.edit("change tolerance", func(m *network.Model) { m.Simulation.RTol, m.Simulation.ATol = p.RTol, p.ATol })
				return
			}
		}
		f.custom = true
		f.load(ed.Doc.Model(), 0)
	})
	f.addField("Accuracy", "tolerance", f.preset)
	f.rtol = number("Relative tolerance", "rtol", "edit relative tolerance",
		func(s network.Simulation) float64 { return s.RTol }, func(s *network.Simulation, v float64) { s.RTol = v })
	f.atol = number("Absolute tolerance", "atol", "edit absolute tolerance",
		func(s network.Simulation) float64 { return s.ATol }, func(s *network.Simulation, v float64) { s.ATol = v })
	var methods []string
	for _, m := range run.Methods {
		methods = append(methods, m.Choice())
	}
	f.method = widget.NewSelect(methods, func(choice string) {
		if f.loading {
			return
		}
		for _, m := range run.Methods {
			if m.Choice() == choice {
				ed.edit("change method", func(mod *network.Model) { mod.Simulation.Method = m.Name })
			}
		}
	})
	f.addField("Method", "method", f.method)
	f.nonneg = widget.NewCheck("Keep concentrations non-negative", func(on bool) {
		if f.loading {
			return
		}
		ed.edit("change non-negative", func(m *network.Model) { m.Simulation.NonNegative = &on })
	})
	f.addField("", "non_negative", f.nonneg)
	heading("Units of results")
	shown := func(label, name, desc string, choices []string, ptr func(m *network.Model) *string) {
		e, load := f.choiceInput(name, desc, choices, func(m *network.Model, _ int) *string { return ptr(m) })
		e.SetPlaceHolder("the model's unit")
		f.addField(label, name, e)
		f.loads = append(f.loads, load)
	}
	shown("Time in", "display.time", "change the time unit shown", TimeChoices,
		func(m *network.Model) *string { return &m.Simulation.Display.Time })
	shown("Concentration in", "display.concentration", "change the concentration unit shown", ConcentrationChoices,
		func(m *network.Model) *string { return &m.Simulation.Display.Concentration })
	return f
}

// TimeChoices and ConcentrationChoices are the display units offered in
// the run settings; any other unit may be typed.
var (
	TimeChoices          = []string{"s", "min", "h", "day"}
	ConcentrationChoices = []string{"M", "mM", "uM", "nM", "pM", "mg/L", "ug/mL", "ng/mL"}
)

// choiceInput is textInput with a list of common values to pick from.
func (f *formBase) choiceInput(name, desc string, choices []string, ptr func(m *network.Model, i int) *string) (*widget.SelectEntry, func(m *network.Model, i int)) {
	e := widget.NewSelectEntry(choices)
	e.OnChanged = func(text string) {
		if f.loading {
			return
		}
		i := f.row
		f.ed.editMerged(fmt.Sprintf("%s/%d/%s", f.section, i, name), desc, func(m *network.Model) { *ptr(m, i) = text })
	}
	load := func(m *network.Model, i int) {
		if s := *ptr(m, i); e.Text != s {
			e.SetText(s)
		}
	}
	return e, load
}

func (f *runForm) load(m *network.Model, _ int) {
	f.loading = true
	defer func() { f.loading = false }()
	f.row = 0
	f.loads.run(m, 0)
	s := m.Simulation.WithDefaults()
	if s.Output.Spacing == "log" {
		f.spacing.SetSelected(spacingLog)
	} else {
		f.spacing.SetSelected(spacingLinear)
	}
	preset := customTolerance
	if !f.custom {
		for _, p := range TolerancePresets {
			if p.RTol == s.RTol && p.ATol == s.ATol {
				preset = p.Title
			}
		}
	}
	f.preset.SetSelected(preset)
	custom := preset == customTolerance
	f.rtol.setVisible(custom)
	f.atol.setVisible(custom)
	f.method.SetSelected(methodChoice(s.Method))
	f.nonneg.SetChecked(s.KeepNonNegative())
}

// methodChoice returns the label of a model file's method word in the
// method list; an unknown word shows as itself.
func methodChoice(name string) string {
	if m, err := run.LookupMethod(name); err == nil {
		return m.Choice()
	}
	return name
}
