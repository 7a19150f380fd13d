package editor

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

func newTestEditor(t *testing.T) (*Editor, *Document) {
	t.Helper()
	test.NewTempApp(t)
	d := NewDocument(enzymeModel(), "")
	e := New(d, nil)
	return e, d
}

func hasMessage(e *Editor, section string, index int, fld, part string) bool {
	for _, m := range e.Messages() {
		if m.Section == section && m.Index == index && m.Field == fld && strings.Contains(m.Message, part) {
			return true
		}
	}
	return false
}

func TestTypingEquationChangesModel(t *testing.T) {
	e, d := newTestEditor(t)
	rf := e.panes["reactions"].form.(*reactionForm)
	e.SelectRow("reactions", 1)
	rf.equ.SetText("")
	test.Type(rf.equ, "ES -> E + 2 P")
	if got := d.Model().Reactions[1].Equation; got != "ES -> E + 2 P" {
		t.Fatalf("equation in model = %q", got)
	}
	// The whole typing is one undo step.
	d.Undo()
	if got := d.Model().Reactions[1].Equation; got != "ES -> E + P" {
		t.Fatalf("after undo equation = %q, want the original", got)
	}
	if rf.equ.Text != "ES -> E + P" {
		t.Fatalf("after undo the input shows %q", rf.equ.Text)
	}
}

func TestInvalidInputShowsMessageAndKeepsText(t *testing.T) {
	e, d := newTestEditor(t)
	rf := e.panes["reactions"].form.(*reactionForm)
	e.SelectRow("reactions", 0)

	// A broken equation is kept in the model as typed and reported.
	rf.equ.SetText("E + S <=")
	if got := d.Model().Reactions[0].Equation; got != "E + S <=" {
		t.Fatalf("model equation = %q", got)
	}
	if !hasMessage(e, "reactions", 0, "equation", "") {
		t.Fatalf("no message about the broken equation; messages: %v", e.Messages())
	}
	if rf.equ.Text != "E + S <=" {
		t.Fatalf("input text changed to %q", rf.equ.Text)
	}
	eqField := rf.fields()[1]
	if !eqField.msg.Visible() || eqField.msg.Text == "" {
		t.Error("the equation input shows no message")
	}

	// A bad number is kept in its input, not taken, and reported.
	k := rf.rate["k"].input.(*widget.Entry)
	k.SetText("")
	test.Type(k, "1e-")
	if k.Text != "1e-" {
		t.Fatalf("rate constant input = %q, want the typed text", k.Text)
	}
	if got := d.Model().Reactions[0].Rate.Arg("k"); got.Set && got.Name == "" {
		// The last taken value is the number 1 (from typing "1"), never "1e-".
		if got.Num != 1 {
			t.Errorf("model rate constant = %v", got)
		}
	}
	if !hasMessage(e, "reactions", 0, "rate.k", "not a number") {
		t.Fatalf("no message about the bad number; messages: %v", e.Messages())
	}
	// Another edit elsewhere does not lose the typed text.
	e.edit("other", func(m *network.Model) { m.Species[0].Initial = 3 })
	if k.Text != "1e-" {
		t.Fatalf("after another edit the input shows %q", k.Text)
	}
	test.Type(k, "3")
	if got := d.Model().Reactions[0].Rate.Arg("k"); got != network.Number(1e-3) {
		t.Fatalf("model rate constant = %v, want 0.001", got)
	}
	if k.Text != "1e-3" {
		t.Errorf("input rewritten to %q while typing", k.Text)
	}
	if hasMessage(e, "reactions", 0, "rate.k", "") {
		t.Error("message stays after the number was fixed")
	}
}

func TestLawSwitchShowsOnlyItsFields(t *testing.T) {
	e, d := newTestEditor(t)
	rf := e.panes["reactions"].form.(*reactionForm)
	e.SelectRow("reactions", 0)
	visible := func() map[string]bool {
		out := map[string]bool{}
		for _, f := range rf.fields() {
			if strings.HasPrefix(f.name, "rate.") && f.name != "rate.law" && f.name != "rate.preview" && f.name != "rate.units" && f.row.Visible() {
				out[f.name] = true
			}
		}
		return out
	}
	check := func(law string, want ...string) {
		t.Helper()
		got := visible()
		if len(got) != len(want) {
			t.Errorf("%s: visible fields %v, want %v", law, got, want)
		}
		for _, w := range want {
			if !got[w] {
				t.Errorf("%s: field %s hidden; visible %v", law, w, got)
			}
		}
	}
	check("mass action, reversible", "rate.k", "rate.k_reverse")
	// The Expected units hint shows even before the model has units, in
	// words.
	if !rf.unitsField.row.Visible() || !strings.Contains(rf.units.Text, "in 1/(concentration·time) for a second-order step") {
		t.Errorf("units hint %q (visible %v)", rf.units.Text, rf.unitsField.row.Visible())
	}

	rf.law.SetSelected(LawTitle(network.MichaelisMenten))
	if d.Model().Reactions[0].Rate.Law != network.MichaelisMenten {
		t.Fatal("law switch did not change the model")
	}
	check("Michaelis–Menten", "rate.form", "rate.vmax", "rate.km")
	rf.mmForm.SetSelected(mmKcat)
	check("Michaelis–Menten with kcat", "rate.form", "rate.kcat", "rate.enzyme", "rate.km")

	rf.law.SetSelected(LawTitle(network.Expression))
	check("expression", "rate.expression")
	if rf.unitsField.row.Visible() {
		t.Errorf("units hint shown for an expression: %q", rf.units.Text)
	}

	e.SelectRow("reactions", 2) // "-> 2S", irreversible mass action is not set; an expression
	rf.law.SetSelected(LawTitle(network.MassAction))
	check("mass action, irreversible", "rate.k")
}

func TestDeclareUndeclaredSpecies(t *testing.T) {
	e, d := newTestEditor(t)
	rf := e.panes["reactions"].form.(*reactionForm)
	e.SelectRow("reactions", 1)
	rf.equ.SetText("ES -> E + P + Q + 2 R")
	if !rf.declare.Visible() || !strings.Contains(rf.declare.Text, "Q, R") {
		t.Fatalf("declare button: visible %v, text %q", rf.declare.Visible(), rf.declare.Text)
	}
	test.Tap(rf.declare)
	n := len(d.Model().Species)
	if d.Model().Species[n-2].Name != "Q" || d.Model().Species[n-1].Name != "R" {
		t.Fatalf("species after declaring: %v", d.Model().Species)
	}
	if rf.declare.Visible() {
		t.Error("declare button still shown")
	}
	if hasMessage(e, "reactions", 1, "equation", "unknown species") {
		t.Error("unknown-species message stays after declaring")
	}
}

func TestRenameThroughFormAsksAndUpdatesUses(t *testing.T) {
	e, d := newTestEditor(t)
	var asked string
	e.Confirm = func(title, message, yes, no string, answer func(bool)) {
		asked = message
		answer(true)
	}
	e.SelectRow("species", 1) // S
	sf := e.panes["species"].form.(*speciesForm)
	name := sf.fields()[0].input.(*commitEntry)
	name.SetText("Sub")
	name.FocusLost()
	if !strings.Contains(asked, "3 times") {
		t.Errorf("question = %q, want the number of uses", asked)
	}
	if got := d.Model().Reactions[0].Equation; got != "E + Sub <=> ES" {
		t.Errorf("equation = %q", got)
	}

	// A taken name is refused, kept as typed and reported.
	e.SelectRow("species", 0) // E
	name.SetText("ES")
	name.FocusLost()
	if d.Model().Species[0].Name != "E" {
		t.Fatal("taken name accepted")
	}
	if name.Text != "ES" || !hasMessage(e, "species", 0, "name", "already used") {
		t.Errorf("input %q, messages %v", name.Text, e.Messages())
	}
}

func TestPreviewFormula(t *testing.T) {
	m := enzymeModel()
	cases := []struct {
		r    network.Reaction
		want string
	}{
		{m.Reactions[0], "k1·E·S − k1r·ES"},
		{network.Reaction{Equation: "2 A + B -> C", Rate: network.NewRate(network.MassAction, "k", network.Number(0.5))}, "0.5·A²·B"},
		{network.Reaction{Equation: "S -> P", Rate: network.NewRate(network.MichaelisMenten, "vmax", network.Named("V"), "km", network.Named("Km"))}, "V·S/(Km + S)"},
		{network.Reaction{Equation: "S -> P", Rate: network.NewRate(network.MichaelisMenten, "kcat", network.Named("kc"), "enzyme", network.Named("E"), "km", network.Number(2))}, "kc·E·S/(2 + S)"},
		{network.Reaction{Equation: "A ->", Rate: network.Rate{Law: network.Expression, Expression: "k*A - 1e-3*de-2"}}, "k·A − 1e-3·de−2"},
	}
	for _, c := range cases {
		net, _ := network.Check(&network.Model{Reactions: []network.Reaction{c.r}})
		if got := net.Formula(0); got != c.want {
			t.Errorf("Formula(%q) = %q, want %q", c.r.Equation, got, c.want)
		}
	}
}

// The Compartments tab edits a volume's unit: a unit that is not a volume
// is an error at the field, a volume unit is accepted, the list says it,
// and Undo restores the model.
func TestCompartmentUnitField(t *testing.T) {
	test.NewTempApp(t)
	m := enzymeModel()
	m.Compartments = []network.Compartment{{Name: "well", Volume: 2}}
	d := NewDocument(m, "")
	e := New(d, nil)
	cf := e.panes["compartments"].form.(*compartmentForm)
	e.SelectRow("compartments", 0)
	var unit *widget.Entry
	for _, f := range cf.fields() {
		if f.name == "unit" {
			unit = f.input.(*widget.Entry)
		}
	}
	if unit == nil {
		t.Fatal("the compartment form has no unit field")
	}
	test.Type(unit, "uM")
	if got := d.Model().Compartments[0].Unit; got != "uM" {
		t.Fatalf("unit in model = %q", got)
	}
	if !hasMessage(e, "compartments", 0, "unit", "is not a unit of volume") {
		t.Errorf("no message at the unit: %v", e.Messages())
	}
	unit.SetText("mL")
	if hasMessage(e, "compartments", 0, "unit", "") {
		t.Errorf("mL still has a message: %v", e.Messages())
	}
	if got := compartmentKind.summary(d.Model(), 0); got != "volume 2 mL" {
		t.Errorf("list summary %q", got)
	}
	d.Undo()
	if got := d.Model().Compartments[0].Unit; got != "" {
		t.Errorf("after Undo the unit is %q", got)
	}
}

// A species' row names its starting value with the model's concentration
// unit, as parameters' and compartments' rows name theirs.
func TestSpeciesSummaryNamesUnit(t *testing.T) {
	m := enzymeModel()
	m.Units.Amount = "uM"
	m.Species[0].Initial, m.Species[0].Fixed = 0.5, true
	if got := speciesKind.summary(m, 0); got != "start 0.5 uM, held constant" {
		t.Errorf("summary %q", got)
	}
	m.Units.Amount = ""
	if got := speciesKind.summary(m, 0); got != "start 0.5, held constant" {
		t.Errorf("without a unit, summary %q", got)
	}
}
