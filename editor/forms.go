package editor

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// formBase holds what every detail form shares: the row shown and a flag
// that mutes the inputs' callbacks while the form loads a row.
type formBase struct {
	ed      *Editor
	section string
	row     int
	loading bool
	all     []*field
	box     *fyne.Container
}

func (f *formBase) object() fyne.CanvasObject { return f.box }
func (f *formBase) fields() []*field          { return f.all }

func (f *formBase) addField(label, name string, input fyne.CanvasObject) *field {
	fl := newField(label, name, input)
	f.all = append(f.all, fl)
	f.box.Add(fl.row)
	return fl
}

// nameInput is the name of the row, renamed when the user presses Enter or
// leaves the input. Species, parameters and compartments offer to update
// every use of the old name.
func (f *formBase) nameInput(kind Kind, get func(m *network.Model, i int) string) (*commitEntry, func(m *network.Model, i int)) {
	e := newCommitEntry()
	e.onCommit = func(text string) {
		if f.loading {
			return
		}
		i := f.row
		old := get(f.ed.Doc.Model(), i)
		text = strings.TrimSpace(text)
		if text == old {
			f.ed.setPending(f.section, i, "name", "", "")
			return
		}
		if err := CheckName(text); err != nil {
			f.ed.setPending(f.section, i, "name", e.Text, err.Error())
			return
		}
		if k, taken := f.ed.Doc.NameTaken(text); taken {
			f.ed.setPending(f.section, i, "name", e.Text, fmt.Sprintf("the name %q is already used by a %s; choose another", text, k))
			return
		}
		f.ed.setPending(f.section, i, "name", "", "")
		uses := f.ed.Doc.Uses(kind, old)
		rename := func(everywhere bool) {
			f.ed.own = true
			defer func() { f.ed.own = false }()
			if _, err := f.ed.Doc.Rename(kind, old, text, everywhere); err != nil {
				f.ed.setPending(f.section, i, "name", e.Text, err.Error())
			}
		}
		if uses == 0 {
			rename(false)
			return
		}
		where := "equations and rate laws"
		if kind == KindCompartment {
			where = "species"
		}
		times := "once"
		if uses > 1 {
			times = fmt.Sprintf("%d times", uses)
		}
		f.ed.Confirm("Rename "+kind.String(),
			fmt.Sprintf("%q is used %s in %s.\nUpdate every use to %q as well?", old, times, where, text),
			"Update every use", "Rename only", rename)
	}
	load := func(m *network.Model, i int) {
		if s, ok := f.ed.pendingText(f.section, i, "name"); ok {
			e.last = s
			if e.Text != s {
				e.SetText(s)
			}
			return
		}
		e.setLoaded(get(m, i))
	}
	return e, load
}

// numberInput is a number field of the row, taken on every keystroke when
// it reads as a number and otherwise kept as typed with a message.
func (f *formBase) numberInput(name, desc string, get func(m *network.Model, i int) float64, set func(m *network.Model, i int, v float64)) (*widget.Entry, func(m *network.Model, i int)) {
	return f.parsedInput(parseNumber, name, desc, get, set)
}

// countInput is numberInput for a whole number of things (parseCount).
func (f *formBase) countInput(name, desc string, get func(m *network.Model, i int) float64, set func(m *network.Model, i int, v float64)) (*widget.Entry, func(m *network.Model, i int)) {
	return f.parsedInput(parseCount, name, desc, get, set)
}

// parsedInput is a number field read by parse.
func (f *formBase) parsedInput(parse func(string) (float64, string), name, desc string, get func(m *network.Model, i int) float64, set func(m *network.Model, i int, v float64)) (*widget.Entry, func(m *network.Model, i int)) {
	e := widget.NewEntry()
	e.OnChanged = func(text string) {
		if f.loading {
			return
		}
		i := f.row
		v, msg := parse(text)
		f.ed.setPending(f.section, i, name, text, msg)
		if msg == "" {
			f.ed.editMerged(fmt.Sprintf("%s/%d/%s", f.section, i, name), desc, func(m *network.Model) { set(m, i, v) })
		}
	}
	load := func(m *network.Model, i int) {
		if s, ok := f.ed.pendingText(f.section, i, name); ok {
			if e.Text != s {
				e.SetText(s)
			}
			return
		}
		if v := get(m, i); !sameNumber(e.Text, v) {
			e.SetText(formatNumber(v))
		}
	}
	return e, load
}

// valueInput is a rate-law field: a number or a name.
func (f *formBase) valueInput(name, desc string, get func(m *network.Model, i int) network.Value, set func(m *network.Model, i int, v network.Value)) (*widget.Entry, func(m *network.Model, i int)) {
	e := widget.NewEntry()
	e.SetPlaceHolder("number or parameter name")
	e.OnChanged = func(text string) {
		if f.loading {
			return
		}
		i := f.row
		v, msg := parseValue(text)
		f.ed.setPending(f.section, i, name, text, msg)
		if msg == "" {
			f.ed.editMerged(fmt.Sprintf("%s/%d/%s", f.section, i, name), desc, func(m *network.Model) { set(m, i, v) })
		}
	}
	load := func(m *network.Model, i int) {
		if s, ok := f.ed.pendingText(f.section, i, name); ok {
			if e.Text != s {
				e.SetText(s)
			}
			return
		}
		if v := get(m, i); !sameValue(e.Text, v) {
			e.SetText(v.String())
		}
	}
	return e, load
}

// textInput is a free-text field, taken on every keystroke as typed.
func (f *formBase) textInput(name, desc string, ptr func(m *network.Model, i int) *string) (*widget.Entry, func(m *network.Model, i int)) {
	e := widget.NewEntry()
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

// loader runs the load functions of a form.
type loader []func(m *network.Model, i int)

func (l loader) run(m *network.Model, i int) {
	for _, f := range l {
		f(m, i)
	}
}

// reactionForm edits one reaction.
type reactionForm struct {
	formBase
	loads   loader
	equ     *widget.Entry
	declare *widget.Button
	// addParams adds the parameters that rate fields name but the model
	// does not declare.
	addParams *widget.Button
	// declareRow holds declare, and addParamRow addParams, under the
	// equation and under the rate fields; each is hidden with its button.
	declareRow, addParamRow *fyne.Container
	law                     *widget.Select
	mmForm                  *widget.RadioGroup
	mmField                 *field
	// rate holds a field for every key of every law, in registry order;
	// load shows those the reaction's law reads.
	rate    map[string]*field
	preview *widget.Label
	// units shows the unit each rate field should carry with the model's
	// units (network.Net.UnitHint); hidden when there is none.
	units      *widget.Label
	unitsField *field
}

const (
	mmVmax = "Vmax·S/(Km + S)"
	mmKcat = "kcat·E·S/(Km + S)"
)

func newReactionForm(ed *Editor) *reactionForm {
	f := &reactionForm{formBase: formBase{ed: ed, section: "reactions", box: container.NewVBox()}}
	r := func(m *network.Model, i int) *network.Reaction { return &m.Reactions[i] }

	name, load := f.nameInput(KindReaction, func(m *network.Model, i int) string { return m.Reactions[i].Name })
	f.addField("Name", "name", name)
	f.loads = append(f.loads, load)

	equ, load := f.textInput("equation", "edit equation", func(m *network.Model, i int) *string { return &r(m, i).Equation })
	equ.SetPlaceHolder("e.g. E + S <=> ES")
	f.equ = equ
	f.addField("Equation", "equation", equ)
	f.loads = append(f.loads, load)

	f.declare = widget.NewButtonWithIcon("", theme.ContentAddIcon(), func() {
		i := f.row
		names := Undeclared(ed.Doc.Net(), i)
		if len(names) > 0 {
			ed.edit("declare "+strings.Join(names, ", "), func(m *network.Model) { declareSpecies(m, names) })
		}
	})
	f.declare.Importance = widget.HighImportance
	f.addParams = widget.NewButtonWithIcon("", theme.ContentAddIcon(), func() {
		i := f.row
		names := UndeclaredParameters(ed.Doc.Net(), i)
		if len(names) > 0 {
			ed.edit("add parameter "+strings.Join(names, ", "), func(m *network.Model) { declareParameters(m, names) })
		}
	})
	f.addParams.Importance = widget.HighImportance
	f.declareRow = container.New(labelledLayout{}, widget.NewLabel(""), container.NewHBox(f.declare))
	f.box.Add(f.declareRow)
	f.declareRow.Hide()
	f.declare.Hide()
	f.addParamRow = container.New(labelledLayout{}, widget.NewLabel(""), container.NewHBox(f.addParams))
	f.addParamRow.Hide()
	f.addParams.Hide()

	titles := make([]string, len(network.Laws))
	for i, l := range network.Laws {
		titles[i] = LawTitle(l)
	}
	f.law = widget.NewSelect(titles, func(title string) {
		if f.loading {
			return
		}
		i := f.row
		law := lawFromTitle(title)
		net := ed.Doc.Net()
		ed.edit("change rate law to "+title, func(m *network.Model) { switchLaw(m, net, i, law) })
	})
	f.addField("Rate law", "rate.law", f.law)

	f.mmForm = widget.NewRadioGroup([]string{mmVmax, mmKcat}, func(choice string) {
		if f.loading || choice == "" {
			return
		}
		i := f.row
		ed.edit("change Michaelis–Menten form", func(m *network.Model) {
			rt := &m.Reactions[i].Rate
			if choice == mmVmax {
				*rt = rt.With("kcat", network.Value{}).With("enzyme", network.Value{})
				if !rt.Arg("vmax").Set {
					*rt = rt.With("vmax", network.Number(1))
				}
			} else {
				*rt = rt.With("vmax", network.Value{})
				if !rt.Arg("kcat").Set {
					*rt = rt.With("kcat", network.Number(1))
				}
			}
		})
	})
	f.mmForm.Horizontal = true
	f.mmField = f.addField("Form", "rate.form", f.mmForm)

	f.rate = map[string]*field{}
	for _, name := range network.Laws {
		law, _ := network.LawNamed(name)
		for _, lf := range law.Fields() {
			if f.rate[lf.Key] != nil {
				continue
			}
			key, name := lf.Key, "rate."+lf.Key
			if lf.Kind == network.ExprField {
				ex, load := f.textInput(name, "edit rate expression", func(m *network.Model, i int) *string { return &r(m, i).Rate.Expression })
				ex.SetPlaceHolder("e.g. k1*A*B/(1 + B/Ki)")
				f.rate[key] = f.addField(lf.Label, name, ex)
				f.loads = append(f.loads, load)
				continue
			}
			e, load := f.valueInput(name, "edit "+lf.Label,
				func(m *network.Model, i int) network.Value { return m.Reactions[i].Rate.Arg(key) },
				func(m *network.Model, i int, v network.Value) { m.Reactions[i].Rate = m.Reactions[i].Rate.With(key, v) })
			if lf.Kind == network.SpeciesField {
				e.SetPlaceHolder("species name")
			}
			f.loads = append(f.loads, load)
			f.rate[key] = f.addField(lf.Label, name, e)
		}
	}

	f.box.Add(f.addParamRow)

	// The note, the last field a user types in, comes before the
	// read-only preview and unit hint, so that it stays in view in a
	// short form pane.
	note, load := f.textInput("note", "edit note", func(m *network.Model, i int) *string { return &r(m, i).Note })
	f.addField("Note", "note", note)
	f.loads = append(f.loads, load)

	f.preview = widget.NewLabel("")
	f.preview.Wrapping = fyne.TextWrapWord
	f.preview.TextStyle = fyne.TextStyle{Italic: true}
	f.addField("Rate", "rate.preview", f.preview)

	f.units = widget.NewLabel("")
	f.units.Wrapping = fyne.TextWrapWord
	f.units.Importance = widget.LowImportance
	f.unitsField = f.addField("Expected units", "rate.units", f.units)
	return f
}

// switchLaw changes reaction i's rate law, keeping the fields the new law
// shares with the old one and clearing the rest. A reaction switched to
// an expression starts from its old rate written out, when it was
// complete.
func switchLaw(m *network.Model, net *network.Net, i int, name string) {
	r := &m.Reactions[i]
	old := r.Rate
	r.Rate = network.Rate{Law: name}
	law, ok := network.LawNamed(name)
	if !ok {
		return
	}
	for _, lf := range law.Fields() {
		if v := old.Arg(lf.Key); v.Set {
			r.Rate = r.Rate.With(lf.Key, v)
		}
	}
	cr := net.Reactions[i]
	switch name {
	case network.MassAction:
		if cr.EqOK && !cr.Equation.Reversible {
			r.Rate = r.Rate.With("k_reverse", network.Value{})
		}
	case network.MichaelisMenten:
		if !r.Rate.Arg("kcat").Set && !r.Rate.Arg("vmax").Set {
			r.Rate = r.Rate.With("vmax", old.Arg("k"))
		}
	case network.Expression:
		r.Rate.Expression = old.Expression
		if r.Rate.Expression == "" && cr.Expr != nil {
			r.Rate.Expression = cr.Expr.String()
		}
	}
}

func (f *reactionForm) load(m *network.Model, i int) {
	f.loading = true
	defer func() { f.loading = false }()
	f.row = i
	f.loads.run(m, i)
	r := m.Reactions[i]
	net := f.ed.Doc.Net()
	cr := net.Reactions[i]
	f.law.SetSelected(LawTitle(r.Rate.Law))
	reversible := cr.EqOK && cr.Equation.Reversible
	mm := r.Rate.Law == network.MichaelisMenten
	if mm {
		if r.Rate.Arg("kcat").Set || r.Rate.Arg("enzyme").Set {
			f.mmForm.SetSelected(mmKcat)
		} else {
			f.mmForm.SetSelected(mmVmax)
		}
	}
	f.mmField.setVisible(mm)
	show := map[string]bool{}
	for _, k := range net.FieldsInUse(i) {
		show[k] = true
	}
	if law, ok := network.LawNamed(r.Rate.Law); ok {
		for _, lf := range law.Fields() {
			// A field given but not used stays visible, so its message
			// can point at it.
			show[lf.Key] = show[lf.Key] || r.Rate.Arg(lf.Key).Set
		}
	}
	for k, fl := range f.rate {
		fl.setVisible(show[k])
	}
	if r.Rate.Law == network.MassAction {
		if reversible {
			f.rate["k"].row.Objects[0].(*widget.Label).SetText("Forward constant")
		} else {
			f.rate["k"].row.Objects[0].(*widget.Label).SetText("Rate constant")
		}
	}
	p := net.Formula(i)
	if p == "" {
		p = "(shown when the equation reads correctly)"
	}
	f.preview.SetText(p)
	hint := net.UnitHint(i)
	f.units.SetText(hint)
	f.unitsField.setVisible(hint != "")
	species, params := Undeclared(net, i), UndeclaredParameters(net, i)
	if len(species) > 0 {
		f.declare.SetText(declareLabel(species))
		f.declare.Show()
		f.declareRow.Show()
	} else {
		f.declare.Hide()
		f.declareRow.Hide()
	}
	if len(params) > 0 {
		f.addParams.SetText(addParameterLabel(params))
		f.addParams.Show()
		f.addParamRow.Show()
	} else {
		f.addParams.Hide()
		f.addParamRow.Hide()
	}
}

// speciesForm edits one species.
type speciesForm struct {
	formBase
	loads loader
	comp  *widget.Select
	fixed *widget.Check
}

// firstCompartment is how the compartment menu shows an empty compartment.
const firstCompartment = "(first compartment)"

func newSpeciesForm(ed *Editor) *speciesForm {
	f := &speciesForm{formBase: formBase{ed: ed, section: "species", box: container.NewVBox()}}
	name, load := f.nameInput(KindSpecies, func(m *network.Model, i int) string { return m.Species[i].Name })
	f.addField("Name", "name", name)
	f.loads = append(f.loads, load)
	init, load := f.numberInput("initial", "edit initial concentration",
		func(m *network.Model, i int) float64 { return m.Species[i].Initial },
		func(m *network.Model, i int, v float64) { m.Species[i].Initial = v })
	f.addField("Initial concentration", "initial", init)
	f.loads = append(f.loads, load)
	f.comp = widget.NewSelect(nil, func(s string) {
		if f.loading {
			return
		}
		if s == firstCompartment {
			s = ""
		}
		i := f.row
		ed.edit("change compartment", func(m *network.Model) { m.Species[i].Compartment = s })
	})
	f.addField("Compartment", "compartment", f.comp)
	f.fixed = widget.NewCheck("Held constant (a fixed source or buffer)", func(on bool) {
		if f.loading {
			return
		}
		i := f.row
		ed.edit("change held constant", func(m *network.Model) { m.Species[i].Fixed = on })
	})
	f.addField("", "fixed", f.fixed)
	note, load := f.textInput("note", "edit note", func(m *network.Model, i int) *string { return &m.Species[i].Note })
	f.addField("Note", "note", note)
	f.loads = append(f.loads, load)
	return f
}

func (f *speciesForm) load(m *network.Model, i int) {
	f.loading = true
	defer func() { f.loading = false }()
	f.row = i
	f.loads.run(m, i)
	opts := []string{firstCompartment}
	for _, c := range m.Compartments {
		opts = append(opts, c.Name)
	}
	s := m.Species[i]
	if s.Compartment != "" && !containsString(opts, s.Compartment) {
		opts = append(opts, s.Compartment)
	}
	f.comp.SetOptions(opts)
	if s.Compartment == "" {
		f.comp.SetSelected(firstCompartment)
	} else {
		f.comp.SetSelected(s.Compartment)
	}
	f.fixed.SetChecked(s.Fixed)
}

func containsString(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// parameterForm edits one parameter.
type parameterForm struct {
	formBase
	loads loader
}

func newParameterForm(ed *Editor) *parameterForm {
	f := &parameterForm{formBase: formBase{ed: ed, section: "parameters", box: container.NewVBox()}}
	name, load := f.nameInput(KindParameter, func(m *network.Model, i int) string { return m.Parameters[i].Name })
	f.addField("Name", "name", name)
	f.loads = append(f.loads, load)
	val, load := f.numberInput("value", "edit parameter value",
		func(m *network.Model, i int) float64 { return m.Parameters[i].Value },
		func(m *network.Model, i int, v float64) { m.Parameters[i].Value = v })
	f.addField("Value", "value", val)
	f.loads = append(f.loads, load)
	unit, load := f.textInput("unit", "edit unit", func(m *network.Model, i int) *string { return &m.Parameters[i].Unit })
	unit.SetPlaceHolder("e.g. 1/s, uM, 1/(uM*s) or 1")
	f.addField("Unit", "unit", unit)
	f.loads = append(f.loads, load)
	note, load := f.textInput("note", "edit note", func(m *network.Model, i int) *string { return &m.Parameters[i].Note })
	f.addField("Note", "note", note)
	f.loads = append(f.loads, load)
	return f
}

func (f *parameterForm) load(m *network.Model, i int) {
	f.loading = true
	defer func() { f.loading = false }()
	f.row = i
	f.loads.run(m, i)
}

// assignmentForm edits one assignment.
type assignmentForm struct {
	formBase
	loads loader
}

func newAssignmentForm(ed *Editor) *assignmentForm {
	f := &assignmentForm{formBase: formBase{ed: ed, section: "assignments", box: container.NewVBox()}}
	name, load := f.nameInput(KindAssignment, func(m *network.Model, i int) string { return m.Assignments[i].Name })
	f.addField("Name", "name", name)
	f.loads = append(f.loads, load)
	ex, load := f.textInput("expression", "edit assignment", func(m *network.Model, i int) *string { return &m.Assignments[i].Expression })
	ex.SetPlaceHolder("e.g. E + ES, or ES/(E + ES)")
	f.addField("Expression", "expression", ex)
	f.loads = append(f.loads, load)
	unit, load := f.textInput("unit", "edit unit", func(m *network.Model, i int) *string { return &m.Assignments[i].Unit })
	unit.SetPlaceHolder("e.g. uM")
	f.addField("Unit", "unit", unit)
	f.loads = append(f.loads, load)
	note, load := f.textInput("note", "edit note", func(m *network.Model, i int) *string { return &m.Assignments[i].Note })
	f.addField("Note", "note", note)
	f.loads = append(f.loads, load)
	return f
}

func (f *assignmentForm) load(m *network.Model, i int) {
	f.loading = true
	defer func() { f.loading = false }()
	f.row = i
	f.loads.run(m, i)
}

// compartmentForm edits one compartment.
type compartmentForm struct {
	formBase
	loads loader
}

func newCompartmentForm(ed *Editor) *compartmentForm {
	f := &compartmentForm{formBase: formBase{ed: ed, section: "compartments", box: container.NewVBox()}}
	name, load := f.nameInput(KindCompartment, func(m *network.Model, i int) string { return m.Compartments[i].Name })
	f.addField("Name", "name", name)
	f.loads = append(f.loads, load)
	vol, load := f.numberInput("volume", "edit volume",
		func(m *network.Model, i int) float64 { return m.Compartments[i].Volume },
		func(m *network.Model, i int, v float64) { m.Compartments[i].Volume = v })
	f.addField("Volume", "volume", vol)
	f.loads = append(f.loads, load)
	unit, load := f.textInput("unit", "edit volume unit", func(m *network.Model, i int) *string { return &m.Compartments[i].Unit })
	unit.SetPlaceHolder("L, mL, uL or fL")
	f.addField("Unit", "unit", unit)
	f.loads = append(f.loads, load)
	note, load := f.textInput("note", "edit note", func(m *network.Model, i int) *string { return &m.Compartments[i].Note })
	f.addField("Note", "note", note)
	f.loads = append(f.loads, load)
	rule := widget.NewLabel("Rule: a species' concentration is per volume of its own compartment. A reaction's rate is per volume of the compartment of its first reactant (of its first product when it has no reactants); a species in another compartment changes by that rate times the ratio of the two volumes, compared in one unit when they are given in different ones (30 000 mL and 30 L are the same volume).")
	rule.Wrapping = fyne.TextWrapWord
	rule.Importance = widget.LowImportance
	f.box.Add(rule)
	return f
}

func (f *compartmentForm) load(m *network.Model, i int) {
	f.loading = true
	defer func() { f.loading = false }()
	f.row = i
	f.loads.run(m, i)
}
