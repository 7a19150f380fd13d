package editor

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// rowKind describes one section of the model for a rowPane.
type rowKind struct {
	section  string // as network.Problem names it: "reactions", "species", …
	noun     string // "reaction", "species", …
	count    func(m *network.Model) int
	name     func(m *network.Model, i int) string
	summary  func(m *network.Model, i int) string
	add      func(d *Document, m *network.Model, at int) // inserts a new row at index at
	dup      func(m *network.Model, i int, name string)  // inserts a copy of row i named name at i+1
	remove   func(m *network.Model, i int)
	swap     func(m *network.Model, i, j int)
	newName  string // prefix for fresh names
	emptyTip string // shown when the section is empty
}

// rowPane shows one section of the model as a list of rows with buttons to
// add, copy, delete and move rows, and a detail form for the selected row.
type rowPane struct {
	ed       *Editor
	kind     rowKind
	list     *widget.List
	selected int
	form     detailForm
	empty    *widget.Label
	detail   *fyne.Container
	buttons  []*widget.Button
	content  fyne.CanvasObject
	delBtn   *widget.Button
	upBtn    *widget.Button
	downBtn  *widget.Button
	dupBtn   *widget.Button
	selectCB bool // true while the pane selects a row itself
}

// detailForm is the form of one kind of row.
type detailForm interface {
	object() fyne.CanvasObject
	// load shows row i of m; it must not overwrite text the user is typing.
	load(m *network.Model, i int)
	// fields returns the inputs by model field name, for problems.
	fields() []*field
}

func newRowPane(ed *Editor, kind rowKind, form detailForm) *rowPane {
	p := &rowPane{ed: ed, kind: kind, form: form, selected: -1}
	p.list = widget.NewList(
		func() int { return kind.count(ed.Doc.Model()) },
		func() fyne.CanvasObject {
			icon := widget.NewIcon(nil)
			name := widget.NewLabelWithStyle("", fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
			name.Truncation = fyne.TextTruncateEllipsis
			sum := widget.NewLabel("")
			sum.Truncation = fyne.TextTruncateEllipsis
			return container.NewBorder(nil, nil, icon, nil,
				container.NewGridWithColumns(2, name, sum))
		},
		func(id widget.ListItemID, o fyne.CanvasObject) {
			m := ed.Doc.Model()
			if id >= kind.count(m) {
				return
			}
			c := o.(*fyne.Container)
			grid := c.Objects[0].(*fyne.Container)
			icon := c.Objects[1].(*widget.Icon)
			name := kind.name(m, id)
			if name == "" {
				name = "(no name)"
			}
			grid.Objects[0].(*widget.Label).SetText(name)
			grid.Objects[1].(*widget.Label).SetText(kind.summary(m, id))
			switch ed.rowSeverity(kind.section, id) {
			case sevError:
				icon.SetResource(theme.NewErrorThemedResource(theme.ErrorIcon()))
			case sevWarning:
				icon.SetResource(theme.NewWarningThemedResource(theme.WarningIcon()))
			default:
				icon.SetResource(nil)
			}
		})
	p.list.OnSelected = func(id widget.ListItemID) {
		p.selected = id
		p.showSelected()
		if ed.OnSelect != nil && !p.selectCB {
			ed.OnSelect(kind.section, id)
		}
	}
	add := widget.NewButtonWithIcon("Add "+kind.noun, theme.ContentAddIcon(), p.add)
	p.dupBtn = widget.NewButtonWithIcon("", theme.ContentCopyIcon(), p.duplicate)
	p.delBtn = widget.NewButtonWithIcon("", theme.DeleteIcon(), p.delete)
	p.upBtn = widget.NewButtonWithIcon("", theme.MoveUpIcon(), func() { p.move(-1) })
	p.downBtn = widget.NewButtonWithIcon("", theme.MoveDownIcon(), func() { p.move(1) })
	p.buttons = []*widget.Button{add, p.dupBtn, p.delBtn, p.upBtn, p.downBtn}
	bar := container.NewHBox(add, widget.NewSeparator(), p.dupBtn, p.delBtn, p.upBtn, p.downBtn)
	p.empty = widget.NewLabel(kind.emptyTip)
	p.empty.Wrapping = fyne.TextWrapWord
	p.detail = container.NewStack(container.NewVScroll(form.object()), p.empty)
	split := container.NewVSplit(p.list, p.detail)
	split.Offset = 0.42
	p.content = container.NewBorder(bar, nil, nil, nil, split)
	return p
}

// refresh redraws the rows and the form after a change of the model.
func (p *rowPane) refresh() {
	n := p.kind.count(p.ed.Doc.Model())
	if p.selected >= n {
		p.selected = n - 1
	}
	if p.selected < 0 && n > 0 {
		p.selected = 0
	}
	p.list.Refresh()
	if p.selected >= 0 {
		p.selectCB = true
		p.list.Select(p.selected)
		p.selectCB = false
	} else {
		p.list.UnselectAll()
	}
	p.showSelected()
}

func (p *rowPane) showSelected() {
	n := p.kind.count(p.ed.Doc.Model())
	has := p.selected >= 0 && p.selected < n
	for _, b := range []*widget.Button{p.dupBtn, p.delBtn} {
		setEnabled(b, has)
	}
	setEnabled(p.upBtn, has && p.selected > 0)
	setEnabled(p.downBtn, has && p.selected < n-1)
	if !has {
		p.form.object().Hide()
		p.empty.Show()
		return
	}
	p.empty.Hide()
	p.form.object().Show()
	p.form.load(p.ed.Doc.Model(), p.selected)
	p.ed.markFields(p.kind.section, p.selected, p.form.fields())
}

func setEnabled(b *widget.Button, on bool) {
	if on && b.Disabled() {
		b.Enable()
	} else if !on && !b.Disabled() {
		b.Disable()
	}
}

// selectRow selects row i.
func (p *rowPane) selectRow(i int) {
	p.selected = i
	p.list.Select(i)
	p.list.ScrollTo(i)
	p.showSelected()
}

func (p *rowPane) add() {
	at := p.selected + 1
	if at <= 0 {
		at = p.kind.count(p.ed.Doc.Model())
	}
	if p.ed.edit("add "+p.kind.noun, func(m *network.Model) { p.kind.add(p.ed.Doc, m, at) }) {
		// The blank row's mistakes show after its first edit.
		p.ed.fresh = freshRow{p.kind.section, at, p.ed.Doc.Version()}
		p.list.Refresh()
	}
	p.selectRow(at)
	p.ed.focusField(p.form.fields()[0])
}

func (p *rowPane) duplicate() {
	i := p.selected
	if i < 0 {
		return
	}
	name := p.ed.Doc.FreshName(p.kind.name(p.ed.Doc.Model(), i) + "_copy")
	p.ed.edit("duplicate "+p.kind.noun, func(m *network.Model) { p.kind.dup(m, i, name) })
	p.selectRow(i + 1)
}

func (p *rowPane) delete() {
	i := p.selected
	if i < 0 {
		return
	}
	p.ed.edit("delete "+p.kind.noun+" "+p.kind.name(p.ed.Doc.Model(), i), func(m *network.Model) { p.kind.remove(m, i) })
}

func (p *rowPane) move(by int) {
	i, j := p.selected, p.selected+by
	if i < 0 || j < 0 || j >= p.kind.count(p.ed.Doc.Model()) {
		return
	}
	p.ed.edit("move "+p.kind.noun, func(m *network.Model) { p.kind.swap(m, i, j) })
	p.selectRow(j)
}
