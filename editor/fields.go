package editor

import (
	"math"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// commitEntry is an entry that reports its text when the user presses
// Enter or leaves it, for edits such as renames that must not happen on
// every keystroke.
type commitEntry struct {
	widget.Entry
	onCommit func(string)
	last     string // text at the last commit or load, to skip repeats
}

func newCommitEntry() *commitEntry {
	e := &commitEntry{}
	e.ExtendBaseWidget(e)
	e.OnSubmitted = func(string) { e.commit() }
	return e
}

func (e *commitEntry) commit() {
	if e.Text == e.last || e.onCommit == nil {
		return
	}
	e.last = e.Text
	e.onCommit(e.Text)
}

// FocusLost commits the text.
func (e *commitEntry) FocusLost() {
	e.Entry.FocusLost()
	e.commit()
}

// setLoaded shows s as the text that is already in the model.
func (e *commitEntry) setLoaded(s string) {
	e.last = s
	if e.Text != s {
		e.SetText(s)
	}
}

// labelWidth is the width of the labels in the detail forms.
const labelWidth = 150

// labelledLayout puts its first object in a column of fixed width and the
// second to the right of it, filling the rest.
type labelledLayout struct{}

func (labelledLayout) MinSize(objs []fyne.CanvasObject) fyne.Size {
	l, r := objs[0].MinSize(), objs[1].MinSize()
	return fyne.NewSize(labelWidth+theme.Padding()+r.Width, max(l.Height, r.Height))
}

func (labelledLayout) Layout(objs []fyne.CanvasObject, size fyne.Size) {
	l := objs[0].MinSize()
	objs[0].Move(fyne.NewPos(0, 0))
	objs[0].Resize(fyne.NewSize(labelWidth, l.Height))
	x := labelWidth + theme.Padding()
	objs[1].Move(fyne.NewPos(x, 0))
	objs[1].Resize(fyne.NewSize(size.Width-x, size.Height))
}

// field is one labelled input of a detail form with room for a message
// about its content under it.
type field struct {
	name  string // the model field, as Validate names it ("equation", "rate.k")
	label string // the form's label, as messages name the field
	input fyne.Focusable
	msg   *widget.Label
	row   *fyne.Container
}

func newField(label, name string, input fyne.CanvasObject) *field {
	msg := widget.NewLabel("")
	msg.Importance = widget.DangerImportance
	msg.Wrapping = fyne.TextWrapWord
	msg.Hide()
	l := widget.NewLabel(label)
	l.Alignment = fyne.TextAlignTrailing
	l.Truncation = fyne.TextTruncateEllipsis
	f := &field{name: name, label: label, msg: msg,
		row: container.New(labelledLayout{}, l, container.NewVBox(input, msg))}
	if fo, ok := input.(fyne.Focusable); ok {
		f.input = fo
	}
	return f
}

// setMessage shows text under the input, or hides the message when text is
// empty. Warnings use a milder colour than errors.
func (f *field) setMessage(text string, warning bool) {
	if text == "" {
		if f.msg.Visible() {
			f.msg.Hide()
		}
		return
	}
	f.msg.Importance = widget.DangerImportance
	if warning {
		f.msg.Importance = widget.WarningImportance
	}
	if f.msg.Text != text {
		f.msg.SetText(text)
	} else {
		f.msg.Refresh()
	}
	f.msg.Show()
}

// cramped reports whether the field's row, or its message, is laid out
// in less height than it needs.
func (f *field) cramped() bool {
	return f.row.Visible() && (f.row.Size().Height < f.row.MinSize().Height ||
		f.msg.Visible() && f.msg.Size().Height < f.msg.MinSize().Height)
}

func (f *field) setVisible(v bool) {
	if v && !f.row.Visible() {
		f.row.Show()
	} else if !v && f.row.Visible() {
		f.row.Hide()
	}
}

// parseNumber reads a number the way users type it: surrounding spaces are
// ignored. It returns a message in plain words when s is not a number.
func parseNumber(s string) (float64, string) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, "a number is needed here"
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil {
		return 0, "“" + s + "” is not a number; write it like 0.5, 12 or 1e-3"
	}
	return v, ""
}

// parseCount reads a whole number of things, such as the number of
// doses, as parseNumber reads a number; it returns a message in plain words
// when s is not a whole number from 0 up. Larger counts than the model
// allows are taken, for network.Check to name the limit.
func parseCount(s string) (float64, string) {
	v, msg := parseNumber(s)
	if msg == "" && (v != math.Trunc(v) || v < 0 || v > math.MaxInt32) {
		msg = "“" + s + "” is not a whole number; write a count such as 14"
	}
	return v, msg
}

// nonZero is parse refusing 0, for the run settings: a zero there means
// the default in the model, so a typed 0 would run as something else.
func nonZero(parse func(string) (float64, string)) func(string) (float64, string) {
	return func(s string) (float64, string) {
		v, msg := parse(s)
		if msg == "" && v == 0 {
			msg = "0 is not allowed here; expected a positive number"
		}
		return v, msg
	}
}

// parseValue reads a rate-law field: a number or the name of a parameter
// (or, for an enzyme, a species). An empty text leaves the field unset.
func parseValue(s string) (network.Value, string) {
	t := strings.TrimSpace(s)
	if t == "" {
		return network.Value{}, ""
	}
	if isDigit(t[0]) || t[0] == '.' || t[0] == '-' || t[0] == '+' {
		v, msg := parseNumber(t)
		if msg != "" {
			return network.Value{}, msg
		}
		return network.Number(v), ""
	}
	if err := CheckName(t); err != nil {
		return network.Value{}, "“" + s + "” is neither a number nor a name; write a number such as 0.5 or the name of a parameter"
	}
	return network.Named(t), ""
}

// formatNumber writes v in its shortest exact form.
func formatNumber(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// sameNumber reports whether the text s reads as v, so that a form does not
// rewrite "1e-3" as "0.001" while the user types.
func sameNumber(s string, v float64) bool {
	x, msg := parseNumber(s)
	return msg == "" && x == v
}

// sameValue is sameNumber for rate-law fields.
func sameValue(s string, v network.Value) bool {
	x, msg := parseValue(s)
	return msg == "" && x == v
}
