package editor

import (
	"fmt"
	"slices"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// DosingCaution is shown wherever doses are entered: at the top of the
// event form, where it is seen before a dose is typed.
const DosingCaution = "Dosing simulations are research aids, not clinical or dosing advice: doses and schedules for people or animals are decided by qualified professionals under local rules."

var eventKind = rowKind{
	section: "events", noun: "event", newName: "event",
	emptyTip: "No events yet. An event changes the run while it goes: a dose every 12 hours, substrate added when it runs low, an inhibitor washed out, an infusion. " + DosingCaution,
	count:    func(m *network.Model) int { return len(m.Events) },
	name:     func(m *network.Model, i int) string { return m.Events[i].Name },
	summary:  func(m *network.Model, i int) string { return EventSummary(m.Events[i]) },
	add: func(d *Document, m *network.Model, at int) {
		name := "event1"
		for k := 1; slices.ContainsFunc(m.Events, func(e network.Event) bool { return e.Name == name }); k++ {
			name = fmt.Sprintf("event%d", k+1)
		}
		m.Events = slices.Insert(m.Events, at, network.Event{Name: name, At: network.Number(0)})
	},
	dup: func(m *network.Model, i int, name string) {
		e := m.Events[i]
		e.Name = name
		e.Add = slices.Clone(e.Add)
		e.Set = slices.Clone(e.Set)
		e.Infuse = slices.Clone(e.Infuse)
		m.Events = slices.Insert(m.Events, i+1, e)
	},
	remove: func(m *network.Model, i int) { m.Events = slices.Delete(m.Events, i, i+1) },
	swap:   func(m *network.Model, i, j int) { m.Events[i], m.Events[j] = m.Events[j], m.Events[i] },
}

// EventSummary describes an event in a few words: "at 0, every 12 ×14:
// add D_gut", "when S < 2: add S", "from 0 to 2: infuse C".
func EventSummary(e network.Event) string {
	var b strings.Builder
	switch {
	case e.When != "":
		b.WriteString("when " + e.When)
		if e.Once {
			b.WriteString(" (once)")
		}
	case e.From.Set || e.To.Set:
		b.WriteString("from " + e.From.String() + " to " + e.To.String())
	default:
		b.WriteString("at " + e.At.String())
	}
	if e.Every.Set {
		fmt.Fprintf(&b, ", every %s ×%d", e.Every, e.Count)
	}
	b.WriteString(":")
	for _, a := range []struct {
		verb string
		cs   []network.Change
	}{{"add", e.Add}, {"set", e.Set}, {"infuse", e.Infuse}} {
		if len(a.cs) == 0 {
			continue
		}
		targets := make([]string, len(a.cs))
		for i, c := range a.cs {
			targets[i] = c.Target
		}
		b.WriteString(" " + a.verb + " " + strings.Join(targets, ", "))
	}
	return b.String()
}

// Event timings as the form offers them.
const (
	timingAt       = "At a time (with repeats)"
	timingWhen     = "When a condition turns true"
	timingInfusion = "An infusion over an interval"
)

// eventForm edits one event.
type eventForm struct {
	formBase
	loads                        loader
	timing                       *widget.Select
	at, every, count, when, once *field
	from, to, add, set, infuse   *field
	onceCheck                    *widget.Check
}

func newEventForm(ed *Editor) *eventForm {
	f := &eventForm{formBase: formBase{ed: ed, section: "events", box: container.NewVBox()}}
	caution := widget.NewLabel("Caution: " + DosingCaution)
	caution.Wrapping = fyne.TextWrapWord
	caution.Importance = widget.WarningImportance
	f.box.Add(caution)
	ev := func(m *network.Model, i int) *network.Event { return &m.Events[i] }
	name, load := f.textInput("name", "rename event", func(m *network.Model, i int) *string { return &ev(m, i).Name })
	f.addField("Name", "name", name)
	f.loads = append(f.loads, load)

	f.timing = widget.NewSelect([]string{timingAt, timingWhen, timingInfusion}, func(choice string) {
		if f.loading {
			return
		}
		i := f.row
		ed.edit("change event timing", func(m *network.Model) { switchTiming(ev(m, i), choice) })
	})
	f.addField("Timing", "timing", f.timing)

	value := func(label, key string, v func(e *network.Event) *network.Value) *field {
		e, load := f.valueInput(key, "edit event "+key,
			func(m *network.Model, i int) network.Value { return *v(ev(m, i)) },
			func(m *network.Model, i int, x network.Value) { *v(ev(m, i)) = x })
		f.loads = append(f.loads, load)
		return f.addField(label, key, e)
	}
	f.at = value("Time", "at", func(e *network.Event) *network.Value { return &e.At })
	f.from = value("Starts at", "from", func(e *network.Event) *network.Value { return &e.From })
	f.to = value("Ends at", "to", func(e *network.Event) *network.Value { return &e.To })
	f.every = value("Repeat every", "every", func(e *network.Event) *network.Value { return &e.Every })
	f.every.input.(*widget.Entry).SetPlaceHolder("interval (empty: once)")
	cnt, load := f.countInput("count", "edit event count",
		func(m *network.Model, i int) float64 { return float64(ev(m, i).Count) },
		func(m *network.Model, i int, v float64) { ev(m, i).Count = int(v) })
	cnt.SetPlaceHolder("number of times")
	f.count = f.addField("Times", "count", cnt)
	f.loads = append(f.loads, load)
	when, load := f.textInput("when", "edit event condition", func(m *network.Model, i int) *string { return &ev(m, i).When })
	when.SetPlaceHolder("e.g. S < 2, or P > 0.5*P_max")
	f.when = f.addField("Condition", "when", when)
	f.loads = append(f.loads, load)
	f.onceCheck = widget.NewCheck("Only the first time", func(on bool) {
		if f.loading {
			return
		}
		i := f.row
		ed.edit("change event once", func(m *network.Model) { ev(m, i).Once = on })
	})
	f.once = f.addField("", "once", f.onceCheck)

	changes := func(label, key, hint string, list func(e *network.Event) *[]network.Change) *field {
		e, load := f.changesInput(key, "edit event "+key, func(m *network.Model, i int) *[]network.Change { return list(ev(m, i)) })
		e.SetPlaceHolder(hint)
		f.loads = append(f.loads, load)
		return f.addField(label, key, e)
	}
	f.add = changes("Add", "add", "one per line: SPECIES = amount, e.g. D_gut = dose", func(e *network.Event) *[]network.Change { return &e.Add })
	f.set = changes("Set", "set", "one per line: NAME = value or expression, e.g. I = 0", func(e *network.Event) *[]network.Change { return &e.Set })
	f.infuse = changes("Infuse", "infuse", "one per line: SPECIES = amount per time", func(e *network.Event) *[]network.Change { return &e.Infuse })

	note, load := f.textInput("note", "edit note", func(m *network.Model, i int) *string { return &ev(m, i).Note })
	f.addField("Note", "note", note)
	f.loads = append(f.loads, load)
	return f
}

// switchTiming gives e the timing the form's choice names, keeping what
// it can.
func switchTiming(e *network.Event, choice string) {
	switch choice {
	case timingAt:
		if !e.At.Set {
			e.At = e.From
			if !e.At.Set {
				e.At = network.Number(0)
			}
		}
		e.When, e.Once, e.From, e.To = "", false, network.Value{}, network.Value{}
		e.Add, e.Infuse = append(e.Add, e.Infuse...), nil
	case timingWhen:
		if e.When == "" {
			e.When = "? > 1"
		}
		e.At, e.Every, e.Count, e.From, e.To = network.Value{}, network.Value{}, 0, network.Value{}, network.Value{}
		e.Add, e.Infuse = append(e.Add, e.Infuse...), nil
	case timingInfusion:
		if !e.From.Set {
			e.From = e.At
			if !e.From.Set {
				e.From = network.Number(0)
			}
		}
		if !e.To.Set {
			e.To = network.Number(1)
		}
		e.At, e.When, e.Once = network.Value{}, "", false
		e.Infuse, e.Add, e.Set = append(e.Infuse, e.Add...), nil, nil
	}
}

// changesInput is a list of actions written one a line as "TARGET =
// VALUE"; a line that does not read stays as typed, with a message.
func (f *formBase) changesInput(name, desc string, list func(m *network.Model, i int) *[]network.Change) (*widget.Entry, func(m *network.Model, i int)) {
	e := widget.NewMultiLineEntry()
	e.SetMinRowsVisible(2)
	e.OnChanged = func(text string) {
		if f.loading {
			return
		}
		i := f.row
		cs, msg := ParseChanges(text)
		f.ed.setPending(f.section, i, name, text, msg)
		if msg == "" {
			f.ed.editMerged(fmt.Sprintf("%s/%d/%s", f.section, i, name), desc, func(m *network.Model) { *list(m, i) = cs })
		}
	}
	load := func(m *network.Model, i int) {
		if s, ok := f.ed.pendingText(f.section, i, name); ok {
			if e.Text != s {
				e.SetText(s)
			}
			return
		}
		if s := FormatChanges(*list(m, i)); e.Text != s {
			if cs, _ := ParseChanges(e.Text); !slices.Equal(cs, *list(m, i)) {
				e.SetText(s)
			}
		}
	}
	return e, load
}

// ParseChanges reads actions written one a line as "TARGET = VALUE"; blank
// lines are skipped. The message says which line does not read.
func ParseChanges(text string) ([]network.Change, string) {
	var out []network.Change
	for n, line := range strings.Split(text, "\n") {
		line = strings.TrimSpace(line)
		if line == "" {
			continue
		}
		target, value, ok := strings.Cut(line, "=")
		target, value = strings.TrimSpace(target), strings.TrimSpace(value)
		switch {
		case !ok:
			return nil, fmt.Sprintf("line %d: expected NAME = VALUE, such as \"S = 10\"", n+1)
		case CheckName(target) != nil:
			return nil, fmt.Sprintf("line %d: %q is not a name; expected NAME = VALUE", n+1, target)
		case value == "":
			return nil, fmt.Sprintf("line %d: the value after \"=\" is missing", n+1)
		}
		out = append(out, network.Change{Target: target, Value: value})
	}
	return out, ""
}

// FormatChanges writes actions one a line as "TARGET = VALUE".
func FormatChanges(cs []network.Change) string {
	lines := make([]string, len(cs))
	for i, c := range cs {
		lines[i] = c.Target + " = " + c.Value
	}
	return strings.Join(lines, "\n")
}

func (f *eventForm) load(m *network.Model, i int) {
	f.loading = true
	defer func() { f.loading = false }()
	f.row = i
	f.loads.run(m, i)
	e := m.Events[i]
	timing := timingAt
	switch {
	case e.When != "":
		timing = timingWhen
	case e.From.Set || e.To.Set:
		timing = timingInfusion
	}
	f.timing.SetSelected(timing)
	f.onceCheck.SetChecked(e.Once)
	f.at.setVisible(timing == timingAt)
	f.from.setVisible(timing == timingInfusion)
	f.to.setVisible(timing == timingInfusion)
	f.every.setVisible(timing != timingWhen)
	f.count.setVisible(timing != timingWhen && (e.Every.Set || e.Count > 0))
	f.when.setVisible(timing == timingWhen)
	f.once.setVisible(timing == timingWhen)
	f.add.setVisible(timing != timingInfusion || len(e.Add) > 0)
	f.set.setVisible(timing != timingInfusion || len(e.Set) > 0)
	f.infuse.setVisible(timing == timingInfusion || len(e.Infuse) > 0)
}
