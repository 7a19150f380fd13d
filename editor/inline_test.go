package editor

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// formInWindow puts the editor's tabs in a window of a usual size, so
// that the forms are laid out as on screen.
func formInWindow(t *testing.T, e *Editor) {
	t.Helper()
	w := test.NewWindow(e.Tabs())
	t.Cleanup(w.Close)
	w.Resize(fyne.NewSize(520, 900))
}

// checkInline checks that every message the Messages list has about row i
// of section is shown in the form, each on its own lines: no visible
// message overlaps the row below it.
func checkInline(t *testing.T, e *Editor, section string, i int, fields []*field) {
	t.Helper()
	d := fyne.CurrentApp().Driver()
	shown := ""
	for _, f := range fields {
		if f.row.Visible() && f.msg.Visible() {
			shown += f.msg.Text + "\n"
		}
	}
	for _, m := range e.Messages() {
		if m.Section == section && m.Index == i && !strings.Contains(shown, m.Message) {
			t.Errorf("the form does not show %q; it shows %q", m.Message, shown)
		}
	}
	var visible []*field
	for _, f := range fields {
		if f.row.Visible() {
			visible = append(visible, f)
		}
	}
	for j := 0; j+1 < len(visible); j++ {
		f, next := visible[j], visible[j+1]
		if !f.msg.Visible() {
			continue
		}
		bottom := d.AbsolutePositionForObject(f.msg).Y + f.msg.Size().Height
		if top := d.AbsolutePositionForObject(next.row).Y; bottom > top+0.5 {
			t.Errorf("the message of %s (%q) ends at y = %g, below the top of %s at y = %g", f.name, f.msg.Text, bottom, next.name, top)
		}
		if f.msg.Size().Height < f.msg.MinSize().Height-0.5 {
			t.Errorf("the message of %s is %g high, less than the %g its text needs", f.name, f.msg.Size().Height, f.msg.MinSize().Height)
		}
	}
}

// An unknown parameter as the rate constant, and an equation ending in a
// stray "+", are shown under their inputs at once, each message on its own
// lines above the next field, as the Messages list has them.
func TestInlineMessagesTakeTheirOwnLines(t *testing.T) {
	e, _ := newTestEditor(t)
	formInWindow(t, e)
	rf := e.panes["reactions"].form.(*reactionForm)
	e.SelectRow("reactions", 0)
	k := rf.rate["k"].input.(*widget.Entry)
	k.SetText("")
	test.Type(k, "kk")
	if !rf.rate["k"].msg.Visible() {
		t.Fatal("no message under the rate constant")
	}
	checkInline(t, e, "reactions", 0, rf.fields())

	rf.equ.SetText("E + S <=> ES +")
	checkInline(t, e, "reactions", 0, rf.fields())
}

// A reaction just added shows no mistakes in its form or row before
// anything is typed into it (the Messages list has them, and the model
// cannot run); after the first edit its form shows them.
func TestNewRowShowsMistakesAfterFirstEdit(t *testing.T) {
	e, d := newTestEditor(t)
	formInWindow(t, e)
	p := e.panes["reactions"]
	rf := p.form.(*reactionForm)
	e.SelectRow("reactions", 2)
	p.add()
	if p.selected != 3 || len(d.Model().Reactions) != 4 {
		t.Fatalf("row %d selected of %d", p.selected, len(d.Model().Reactions))
	}
	if !e.HasErrors() {
		t.Fatal("a blank reaction is no mistake")
	}
	for _, f := range rf.fields() {
		if f.row.Visible() && f.msg.Visible() {
			t.Errorf("before any typing %s says %q", f.name, f.msg.Text)
		}
	}
	if e.rowSeverity("reactions", 3) != sevNone {
		t.Error("the new row is marked before any typing")
	}
	test.Type(rf.equ, "A ->")
	checkInline(t, e, "reactions", 3, rf.fields())
	if e.rowSeverity("reactions", 3) != sevError {
		t.Error("after typing the row is not marked")
	}
}

// The Messages list names fields by the form's labels, not by the model
// file's keys.
func TestMessagesUseFormLabels(t *testing.T) {
	e, d := newTestEditor(t)
	d.Apply("unknown k", func(m *network.Model) { m.Reactions[0].Rate = m.Reactions[0].Rate.With("k", network.Named("kk")) })
	d.Apply("bad end", func(m *network.Model) { m.Simulation.TEnd = -1 })
	var got []string
	for _, m := range e.Messages() {
		got = append(got, e.Describe(m))
	}
	all := strings.Join(got, "\n")
	for _, want := range []string{`reaction "bind", Rate constant: unknown parameter "kk"`, "simulation, End time: "} {
		if !strings.Contains(all, want) {
			t.Errorf("messages\n%s\ndo not contain %q", all, want)
		}
	}
	for _, key := range []string{"rate.k", "t_end"} {
		if strings.Contains(all, key+":") {
			t.Errorf("messages\n%s\nname the file key %s", all, key)
		}
	}
}

// An unknown parameter typed as a rate constant is offered as a new
// parameter in one click, as undeclared species are, and the message
// suggests the near miss.
func TestAddUnknownParameter(t *testing.T) {
	e, d := newTestEditor(t)
	rf := e.panes["reactions"].form.(*reactionForm)
	e.SelectRow("reactions", 0)
	k := rf.rate["k"].input.(*widget.Entry)
	k.SetText("")
	test.Type(k, "k1x")
	if !hasMessage(e, "reactions", 0, "rate.k", `did you mean "k1"?`) {
		t.Errorf("no suggestion of k1 for k1x: %v", e.Messages())
	}
	if !rf.addParams.Visible() || rf.addParams.Text != "Add parameter k1x" || !rf.addParamRow.Visible() {
		t.Fatalf("add-parameter button: visible %v, text %q", rf.addParams.Visible(), rf.addParams.Text)
	}
	test.Tap(rf.addParams)
	ps := d.Model().Parameters
	if ps[len(ps)-1].Name != "k1x" {
		t.Fatalf("parameters after adding: %v", ps)
	}
	if rf.addParams.Visible() || hasMessage(e, "reactions", 0, "rate.k", "unknown parameter") {
		t.Error("the button or the message stays after adding the parameter")
	}
	if desc, _ := d.CanUndo(); desc != "add parameter k1x" {
		t.Errorf("undo step %q", desc)
	}
}
