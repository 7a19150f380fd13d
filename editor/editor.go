package editor

import (
	"fmt"
	"slices"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// Tab titles of the editor.
const (
	TabReactions    = "Reactions"
	TabSpecies      = "Species"
	TabParameters   = "Parameters"
	TabAssignments  = "Assignments"
	TabEvents       = "Events"
	TabCompartments = "Compartments"
	TabRun          = "Run settings"
)

type severity int

const (
	sevNone severity = iota
	sevWarning
	sevError
)

// Message is one entry of the message list: a problem found in the model,
// or text typed into a field that could not be taken.
type Message struct {
	network.Problem
}

// Editor is the model-editing part of the window: tabs with the model's
// reactions, species, parameters, compartments and run settings, and a list
// of messages about mistakes. It edits Doc and nothing else.
type Editor struct {
	// Doc is the document being edited.
	Doc *Document

	// Confirm asks a yes/no question; the default uses a dialog in the
	// window given to New. Tests replace it.
	Confirm func(title, message, yes, no string, answer func(yes bool))

	// OnMessages, when set, is called with the number of errors and
	// warnings after every change.
	OnMessages func(errors, warnings int)

	// OnSelect, when set, is called when a row is selected in a table
	// (section is "species", "reactions", …), so that other views can
	// follow the selection.
	OnSelect func(section string, row int)

	win       fyne.Window
	tabs      *container.AppTabs
	panes     map[string]*rowPane // by section
	tabOf     map[string]*container.TabItem
	run       *runForm
	runScroll *container.Scroll // holds run's form
	msgList   *widget.List
	messages  []Message

	// pending holds text typed into number and value fields that could not
	// be taken, by "section/index/field", so it is shown as typed until
	// fixed.
	pending map[string]pendingText
	// own is true while the editor itself changes the document.
	own bool
	// fresh is the row just added, whose mistakes (it is blank) its form
	// and its row do not show until the next edit.
	fresh freshRow
}

// freshRow is a row added at document version version.
type freshRow struct {
	section        string
	index, version int
}

// isFresh reports whether row i of section was just added and not edited
// since.
func (e *Editor) isFresh(section string, i int) bool {
	f := e.fresh
	return f.section == section && f.index == i && f.version == e.Doc.Version()
}

// New returns an editor of doc. Dialogs open over win, which may be nil in
// tests.
func New(doc *Document, win fyne.Window) *Editor {
	e := &Editor{Doc: doc, win: win, pending: map[string]pendingText{}, panes: map[string]*rowPane{}, tabOf: map[string]*container.TabItem{}}
	e.Confirm = func(title, message, yes, no string, answer func(bool)) {
		if e.win == nil {
			answer(true)
			return
		}
		d := dialog.NewConfirm(title, message, answer, e.win)
		d.SetConfirmText(yes)
		d.SetDismissText(no)
		d.Show()
	}
	e.panes["reactions"] = newRowPane(e, reactionKind, newReactionForm(e))
	e.panes["species"] = newRowPane(e, speciesKind, newSpeciesForm(e))
	e.panes["parameters"] = newRowPane(e, parameterKind, newParameterForm(e))
	e.panes["compartments"] = newRowPane(e, compartmentKind, newCompartmentForm(e))
	e.panes["assignments"] = newRowPane(e, assignmentKind, newAssignmentForm(e))
	e.panes["events"] = newRowPane(e, eventKind, newEventForm(e))
	e.run = newRunForm(e)
	e.tabs = container.NewAppTabs()
	for _, t := range []struct{ title, section string }{
		{TabReactions, "reactions"}, {TabSpecies, "species"}, {TabParameters, "parameters"}, {TabAssignments, "assignments"}, {TabEvents, "events"}, {TabCompartments, "compartments"},
	} {
		item := container.NewTabItem(t.title, e.panes[t.section].content)
		e.tabOf[t.section] = item
		e.tabs.Append(item)
	}
	e.runScroll = container.NewVScroll(e.run.object())
	runItem := container.NewTabItem(TabRun, e.runScroll)
	e.tabOf["simulation"] = runItem
	e.tabs.Append(runItem)

	e.msgList = widget.NewList(
		func() int { return len(e.messages) },
		func() fyne.CanvasObject {
			l := widget.NewLabel("")
			l.Truncation = fyne.TextTruncateEllipsis
			return container.NewBorder(nil, nil, widget.NewIcon(nil), nil, l)
		},
		func(id widget.ListItemID, o fyne.CanvasObject) {
			if id >= len(e.messages) {
				return
			}
			c := o.(*fyne.Container)
			m := e.messages[id]
			icon := c.Objects[1].(*widget.Icon)
			if m.Severity == network.Warning {
				icon.SetResource(theme.NewWarningThemedResource(theme.WarningIcon()))
			} else {
				icon.SetResource(theme.NewErrorThemedResource(theme.ErrorIcon()))
			}
			c.Objects[0].(*widget.Label).SetText(e.Describe(m))
		})
	e.msgList.OnSelected = func(id widget.ListItemID) {
		if id < len(e.messages) {
			e.Focus(e.messages[id].Problem)
		}
		e.msgList.UnselectAll()
	}
	doc.OnChange(e.changed)
	e.changed()
	return e
}

// Reset selects the first row of every table and scrolls the tables to
// the top, for a newly opened model.
func (e *Editor) Reset() {
	for _, p := range e.panes {
		p.selected = -1
		p.list.UnselectAll()
		p.refresh()
		p.list.ScrollToTop()
	}
}

// Tabs returns the tabs with the model's tables.
func (e *Editor) Tabs() *container.AppTabs { return e.tabs }

// MessageList returns the list of messages; selecting one shows the place
// it is about.
func (e *Editor) MessageList() fyne.CanvasObject { return e.msgList }

// Messages returns the current messages: problems of the model and text
// that could not be taken.
func (e *Editor) Messages() []Message { return e.messages }

// HasErrors reports whether any message is an error, so that the model
// cannot be simulated as it stands.
func (e *Editor) HasErrors() bool {
	for _, m := range e.messages {
		if m.Severity == network.Error {
			return true
		}
	}
	return false
}

// Describe writes a message for people: its place, with the field named
// by the form's label ("Rate constant") rather than the file's key
// ("rate.k"), and what is wrong.
func (e *Editor) Describe(m Message) string {
	p := m.Problem
	if p.Field == "rate" {
		p.Field = "rate.law"
	}
	var fields []*field
	if pane := e.panes[p.Section]; pane != nil {
		fields = pane.form.fields()
	} else if p.Section == "simulation" {
		fields = e.run.fields()
	}
	for _, f := range fields {
		if f.label == "" {
			continue
		}
		if f.name == p.Field {
			p.Field = f.label
			break
		}
		if line, ok := strings.CutPrefix(p.Field, f.name+"."); ok {
			p.Field = f.label + " (" + line + ")"
			break
		}
	}
	return p.String()
}

// edit applies an edit made by the editor itself.
func (e *Editor) edit(desc string, f func(*network.Model)) bool {
	e.own = true
	defer func() { e.own = false }()
	return e.Doc.Apply(desc, f)
}

// editMerged applies a keystroke edit made by the editor itself.
func (e *Editor) editMerged(key, desc string, f func(*network.Model)) bool {
	e.own = true
	defer func() { e.own = false }()
	return e.Doc.ApplyMerged(key, desc, f)
}

// changed follows a change of the document.
func (e *Editor) changed() {
	if !e.own {
		// Undo, redo or a new file: typed text that was not taken belongs
		// to the old state.
		clear(e.pending)
	}
	e.revalidate()
	for _, p := range e.panes {
		p.refresh()
	}
	e.run.load(e.Doc.Model(), 0)
	e.markFieldsRun()
}

// revalidate recomputes the messages.
func (e *Editor) revalidate() {
	e.messages = e.messages[:0]
	var pend []Message
	for key, pt := range e.pending {
		sec, idx, fld := splitKey(key)
		item := ""
		m := e.Doc.Model()
		if p := e.panes[sec]; p != nil && idx < p.kind.count(m) {
			item = p.kind.name(m, idx)
		}
		pend = append(pend, Message{network.Problem{Severity: network.Error, Pos: network.Pos{Section: sec, Index: idx, Item: item, Field: fld},
			Message: pt.msg + " (not taken yet; the model keeps the previous value)"}})
	}
	sortMessages(pend)
	for _, p := range e.Doc.Net().Problems {
		if _, ok := e.pending[fmt.Sprintf("%s/%d/%s", p.Section, p.Index, p.Field)]; ok {
			continue
		}
		e.messages = append(e.messages, Message{p})
	}
	e.messages = append(pend, e.messages...)
	e.msgList.Refresh()
	if e.OnMessages != nil {
		nerr, nwarn := 0, 0
		for _, m := range e.messages {
			if m.Severity == network.Warning {
				nwarn++
			} else {
				nerr++
			}
		}
		e.OnMessages(nerr, nwarn)
	}
}

func sortMessages(ms []Message) {
	for i := 1; i < len(ms); i++ {
		for j := i; j > 0 && pendKey(ms[j]) < pendKey(ms[j-1]); j-- {
			ms[j], ms[j-1] = ms[j-1], ms[j]
		}
	}
}

func pendKey(m Message) string { return fmt.Sprintf("%s/%06d/%s", m.Section, m.Index, m.Field) }

func pendingKey(section string, index int, fld string) string {
	return fmt.Sprintf("%s/%d/%s", section, index, fld)
}

func splitKey(key string) (section string, index int, fld string) {
	parts := strings.SplitN(key, "/", 3)
	fmt.Sscan(parts[1], &index)
	return parts[0], index, parts[2]
}

// pendingText is text typed into a field that could not be taken, with the
// reason.
type pendingText struct {
	text, msg string
}

// setPending records (msg not empty) or clears untaken text of a field and
// updates the messages.
func (e *Editor) setPending(section string, index int, fld, text, msg string) {
	key := pendingKey(section, index, fld)
	old, had := e.pending[key]
	bad := msg != ""
	if bad {
		e.pending[key] = pendingText{text, msg}
	} else {
		delete(e.pending, key)
	}
	if had != bad || old.text != text || old.msg != msg {
		e.revalidate()
		if p := e.panes[section]; p != nil && p.selected == index {
			e.markFields(section, index, p.form.fields())
			p.list.Refresh()
		} else if section == "simulation" {
			e.markFieldsRun()
		}
	}
}

// Untaken returns how many fields hold typed text that could not be
// taken into the model (each has a message), which saving leaves out.
func (e *Editor) Untaken() int { return len(e.pending) }

// pendingText returns the untaken text of a field, if any.
func (e *Editor) pendingText(section string, index int, fld string) (string, bool) {
	s, ok := e.pending[pendingKey(section, index, fld)]
	return s.text, ok
}

// rowSeverity is the worst message about row i of section.
func (e *Editor) rowSeverity(section string, i int) severity {
	s := sevNone
	if e.isFresh(section, i) {
		return s
	}
	for _, m := range e.messages {
		if m.Section == section && m.Index == i {
			if m.Severity == network.Error {
				return sevError
			}
			s = sevWarning
		}
	}
	return s
}

// markFields shows the messages about row i of section under its fields:
// each message under the first visible input it is about, and a message
// about no visible input under the first one, so that the form shows every
// message the Messages list shows. The form is then laid out again, so
// that each message takes its own lines.
func (e *Editor) markFields(section string, i int, fields []*field) {
	texts := make([][]string, len(fields))
	errs := make([]bool, len(fields))
	for _, m := range e.messages {
		if m.Section != section || m.Index != i || e.isFresh(section, i) {
			continue
		}
		at := -1
		for j, f := range fields {
			if f.row.Visible() && fieldMatches(f.name, m.Field) {
				at = j
				break
			}
		}
		if at < 0 {
			for j, f := range fields {
				if f.row.Visible() {
					at = j
					break
				}
			}
		}
		if at < 0 {
			continue
		}
		msg := m.Message
		if m.Col > 0 {
			msg = fmt.Sprintf("column %d: %s", m.Col, msg)
		}
		texts[at] = append(texts[at], msg)
		errs[at] = errs[at] || m.Severity == network.Error
	}
	for j, f := range fields {
		f.setMessage(strings.Join(texts[j], "\n"), !errs[j])
	}
	var form, scroll fyne.CanvasObject
	if p := e.panes[section]; p != nil {
		form, scroll = p.form.object(), p.detail
	} else if section == "simulation" {
		form, scroll = e.run.object(), e.runScroll
	}
	if form == nil {
		return
	}
	// Lay the form out again, and its scroll, for the new heights. A
	// wrapped message knows its height only once it has its width: lay out
	// again while a row is shorter than its content needs.
	for pass := 0; pass < 3; pass++ {
		form.Refresh()
		scroll.Refresh()
		if !slices.ContainsFunc(fields, (*field).cramped) {
			break
		}
	}
}

// fieldMatches reports whether a message about field msgField belongs to
// the input named name. Messages about the whole item go to the name,
// messages about the rate as a whole to the rate law, and messages about
// one line of a list, such as "add.D_gut" (the line for D_gut in an
// event's Add), to the list's input.
func fieldMatches(name, msgField string) bool {
	switch msgField {
	case name:
		return true
	case "":
		return name == "name"
	case "rate":
		return name == "rate.law"
	}
	return strings.HasPrefix(msgField, name+".")
}

func (e *Editor) markFieldsRun() {
	e.markFields("simulation", 0, e.run.fields())
}

// Focus shows the place a problem is about: it opens the tab, selects the
// row and puts the keyboard focus in the field.
func (e *Editor) Focus(p network.Problem) {
	item := e.tabOf[p.Section]
	if item == nil {
		return
	}
	e.tabs.Select(item)
	var fields []*field
	if pane := e.panes[p.Section]; pane != nil {
		if p.Index < 0 || p.Index >= pane.kind.count(e.Doc.Model()) {
			return
		}
		pane.selectRow(p.Index)
		fields = pane.form.fields()
	} else {
		fields = e.run.fields()
	}
	for _, f := range fields {
		if fieldMatches(f.name, p.Field) && f.row.Visible() {
			e.focusField(f)
			return
		}
	}
}

func (e *Editor) focusField(f *field) {
	if e.win == nil || f.input == nil {
		return
	}
	e.win.Canvas().Focus(f.input)
}

// SelectedRow returns the tab shown and the index of its selected row (-1
// for none or for the run settings).
func (e *Editor) SelectedRow() (tab string, row int) {
	sel := e.tabs.Selected()
	for sec, item := range e.tabOf {
		if item == sel {
			if p := e.panes[sec]; p != nil {
				return item.Text, p.selected
			}
			return item.Text, -1
		}
	}
	return "", -1
}

// SelectTab opens the tab with the given title.
func (e *Editor) SelectTab(title string) {
	for _, item := range e.tabs.Items {
		if item.Text == title {
			e.tabs.Select(item)
		}
	}
}

// SelectRow opens the tab of section ("reactions", "species", …) and
// selects row i.
func (e *Editor) SelectRow(section string, i int) {
	if p := e.panes[section]; p != nil && i >= 0 && i < p.kind.count(e.Doc.Model()) {
		e.tabs.Select(e.tabOf[section])
		p.selectRow(i)
	}
}
