package editor

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// Adding an event in the Events tab and filling in its form gives the
// model a dose schedule that checks clean; a line that does not read stays
// as typed with a message, and switching to an infusion moves the amounts.
func TestEventForm(t *testing.T) {
	e, d := newTestEditor(t)
	p := e.panes["events"]
	ef := p.form.(*eventForm)
	d.Apply("add event", func(m *network.Model) { eventKind.add(d, m, 0) })
	e.SelectRow("events", 0)
	every := ef.every.input.(*widget.Entry)
	test.Type(every, "12")
	ef.count.input.(*widget.Entry).SetText("")
	test.Type(ef.count.input.(*widget.Entry), "3")
	add := ef.add.input.(*widget.Entry)
	test.Type(add, "S = 10")
	ev := d.Model().Events[0]
	if ev.Every != network.Number(12) || ev.Count != 3 || len(ev.Add) != 1 || ev.Add[0] != (network.Change{Target: "S", Value: "10"}) {
		t.Fatalf("event after typing: %+v", ev)
	}
	if _, l := network.Check(d.Model()); l.HasErrors() {
		t.Errorf("the event has errors: %v", l)
	}
	if got := EventSummary(ev); got != "at 0, every 12 ×3: add S" {
		t.Errorf("summary %q", got)
	}
	test.Type(add, "\nP 3")
	if add.Text != "S = 10\nP 3" || !hasMessage(e, "events", 0, "add", "line 2: expected NAME = VALUE") {
		t.Errorf("bad line: text %q, messages %v", add.Text, e.Messages())
	}
	if len(d.Model().Events[0].Add) != 1 {
		t.Errorf("a line that does not read was taken: %+v", d.Model().Events[0].Add)
	}
	ef.timing.SetSelected(timingInfusion)
	ev = d.Model().Events[0]
	if !ev.From.Set || !ev.To.Set || len(ev.Infuse) != 1 || len(ev.Add) != 0 || ev.At.Set {
		t.Errorf("after switching to an infusion: %+v", ev)
	}
}

// The event form, where doses are entered, opens with the caution, so that
// it is in view before a dose is typed rather than below the fold; it says
// what results are and defers to professionals and local rules.
func TestEventFormOpensWithCaution(t *testing.T) {
	e, _ := newTestEditor(t)
	ef := e.panes["events"].form.(*eventForm)
	first, ok := ef.box.Objects[0].(*widget.Label)
	if !ok {
		t.Fatalf("the event form starts with a %T, want the caution", ef.box.Objects[0])
	}
	for _, part := range []string{"research aids", "not clinical or dosing advice", "qualified professionals", "local rules"} {
		if !strings.Contains(first.Text, part) {
			t.Errorf("the caution %q does not say %q", first.Text, part)
		}
	}
}

// A count that is not a whole number (the event's number of times, the
// run's output points) is kept as typed with a message naming the field,
// and the model keeps its count, rather than being cut to a whole number
// or, when negative, taken as a single dose.
func TestCountsMustBeWholeNumbers(t *testing.T) {
	e, d := newTestEditor(t)
	ef := e.panes["events"].form.(*eventForm)
	d.Apply("add event", func(m *network.Model) {
		eventKind.add(d, m, 0)
		m.Events[0].Every, m.Events[0].Count = network.Number(12), 3
	})
	e.SelectRow("events", 0)
	count := ef.count.input.(*widget.Entry)
	points := runField(t, e, "output.points").input.(*widget.Entry)
	before := d.Model().Simulation.Output.Points
	for _, typed := range []string{"2.5", "-1", "1e12"} {
		count.SetText(typed)
		if got := d.Model().Events[0].Count; got != 3 {
			t.Errorf("count %q taken as %d", typed, got)
		}
		if !hasMessage(e, "events", 0, "count", "not a whole number") {
			t.Errorf("count %q: no message; messages %v", typed, e.Messages())
		}
		points.SetText(typed)
		if got := d.Model().Simulation.Output.Points; got != before {
			t.Errorf("output points %q taken as %d", typed, got)
		}
		if !hasMessage(e, "simulation", 0, "output.points", "not a whole number") {
			t.Errorf("output points %q: no message; messages %v", typed, e.Messages())
		}
	}
	count.SetText("14")
	if got := d.Model().Events[0].Count; got != 14 || hasMessage(e, "events", 0, "count", "") {
		t.Errorf("count 14 taken as %d, messages %v", got, e.Messages())
	}
}

// A mistake in one line of an event's Add is shown under the Add input
// (not under the event's name) and named by the form's label and the
// line's species, not by the file's key "add.S".
func TestEventLineMessageAtItsInput(t *testing.T) {
	e, d := newTestEditor(t)
	formInWindow(t, e)
	ef := e.panes["events"].form.(*eventForm)
	d.Apply("add event", func(m *network.Model) {
		eventKind.add(d, m, 0)
		m.Events[0].Add = []network.Change{{Target: "S", Value: "1"}}
	})
	e.SelectRow("events", 0)
	add := ef.add.input.(*widget.Entry)
	add.SetText("S = dosee")
	var msg *Message
	for i, m := range e.Messages() {
		if m.Section == "events" && strings.Contains(m.Message, `"dosee"`) {
			msg = &e.Messages()[i]
		}
	}
	if msg == nil {
		t.Fatalf("no message about dosee: %v", e.Messages())
	}
	if got := e.Describe(*msg); !strings.Contains(got, `event "event1", Add (S)`) {
		t.Errorf("described as %q, want the place named as the form names it", got)
	}
	if !ef.add.msg.Visible() || !strings.Contains(ef.add.msg.Text, "dosee") {
		t.Errorf("the Add input shows %q", ef.add.msg.Text)
	}
	for _, f := range ef.fields() {
		if f != ef.add && f.msg.Visible() && strings.Contains(f.msg.Text, "dosee") {
			t.Errorf("the message is shown under %s too", f.label)
		}
	}
}
