package editor

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// errorsOf returns the error messages of e.
func errorsOf(e *Editor) []Message {
	var out []Message
	for _, m := range e.Messages() {
		if m.Severity == network.Error {
			out = append(out, m)
		}
	}
	return out
}

// runField returns the run settings' field of that model name.
func runField(t *testing.T, e *Editor, name string) *field {
	t.Helper()
	for _, f := range e.run.fields() {
		if f.name == name {
			return f
		}
	}
	t.Fatalf("the run settings have no field %s", name)
	return nil
}

// Run settings choose the units results are shown in: typing a unit
// stores it in the model's display units (the model's values stay), a
// unit that does not convert from the model's shows its message beside
// the field, and clearing it goes back to the model's units.
func TestRunSettingsDisplayUnits(t *testing.T) {
	e, d := newTestEditor(t)
	formInWindow(t, e)
	d.Apply("units", func(m *network.Model) { m.Units = network.Units{Time: "s", Amount: "uM"} })
	tf := runField(t, e, "display.time")
	cf := runField(t, e, "display.concentration")
	te, ce := tf.input.(*widget.SelectEntry), cf.input.(*widget.SelectEntry)
	test.Type(te, "h")
	test.Type(ce, "nM")
	m := d.Model()
	if m.Simulation.Display != (network.Display{Time: "h", Concentration: "nM"}) {
		t.Fatalf("display units %+v, want h and nM", m.Simulation.Display)
	}
	if m.Units != (network.Units{Time: "s", Amount: "uM"}) || m.Species[1].Initial != 10 {
		t.Errorf("the model's units or values changed: %+v, S0 = %v", m.Units, m.Species[1].Initial)
	}
	if len(errorsOf(e)) != 0 {
		t.Errorf("errors for h and nM: %v", errorsOf(e))
	}
	ce.SetText("mg/L")
	if !hasMessage(e, "simulation", 0, "display.concentration", "needs a molar mass") {
		t.Fatalf("no message for mg/L in a model in uM: %v", e.Messages())
	}
	if !strings.Contains(cf.msg.Text, "mg/L") || !cf.msg.Visible() {
		t.Errorf("the field shows %q (visible %v), want the message about mg/L", cf.msg.Text, cf.msg.Visible())
	}
	var described string
	for _, p := range errorsOf(e) {
		described = e.Describe(p)
	}
	if !strings.Contains(described, "Concentration in") {
		t.Errorf("the message is described as %q, want the form's label", described)
	}
	ce.SetText("")
	te.SetText("")
	if d.Model().Simulation.Display != (network.Display{}) || len(errorsOf(e)) != 0 {
		t.Errorf("after clearing: display %+v, errors %v", d.Model().Simulation.Display, errorsOf(e))
	}
}

// A 0 typed in End time, Output points or a tolerance is refused with a
// message at the field: in the model a zero means the default, so it would
// run as something other than what the field shows.
func TestRunSettingsRefuseZero(t *testing.T) {
	e, d := newTestEditor(t)
	d.Apply("set run", func(m *network.Model) {
		m.Simulation.TEnd, m.Simulation.Output.Points = 50, 200
		m.Simulation.RTol, m.Simulation.ATol = 1e-8, 1e-12
	})
	before := d.Model().Simulation
	for _, name := range []string{"t_end", "output.points", "rtol", "atol"} {
		in := runField(t, e, name).input.(*widget.Entry)
		in.SetText("0")
		if got := d.Model().Simulation; got != before {
			t.Errorf("%s: 0 taken: %+v", name, got)
		}
		if !hasMessage(e, "simulation", 0, name, "0 is not allowed") {
			t.Errorf("%s: no message; messages %v", name, e.Messages())
		}
	}
}
