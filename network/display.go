package network

import (
	"fmt"
	"strings"

	"kinetarium/network/units"
)

// displayIssue is a mistake in a display unit: its field in the
// simulation settings ("display.time"), the 1-based column in the unit's
// text (0 for the whole text) and the message.
type displayIssue struct {
	field string
	col   int
	msg   string
}

// displayUnit reads the display unit text of one field: time when
// wantTime, else a concentration. An empty text is no choice.
func displayUnit(text string, wantTime bool) (units.Unit, *displayIssue) {
	field, what, expected := "display.concentration", "concentration", "M, mM, uM, nM, pM or mg/L"
	if wantTime {
		field, what, expected = "display.time", "time", "s, min, h or day"
	}
	u, err := units.Parse(text)
	if err != nil {
		col, msg := 0, err.Error()
		if e, ok := err.(*units.Error); ok {
			col, msg = e.Col, e.Msg
		}
		return u, &displayIssue{field, col, fmt.Sprintf("the %s unit to show results in, %q, does not read: %s", what, text, msg)}
	}
	if wantTime && !u.IsTime() || !wantTime && !u.IsConcentration() {
		return u, &displayIssue{field, 0, fmt.Sprintf("%q is not a unit of %s (it is %s); expected a unit such as %s", text, what, u.Kind(), expected)}
	}
	return u, nil
}

// displayIssues checks the display units d on their own (each reads and
// is of its kind) and, when withModel, against the model's units u, from
// which results are converted: the model's unit must be declared and of
// the same kind (a molar concentration cannot be shown as a mass
// concentration without a molar mass).
func displayIssues(d Display, u Units, withModel bool) []displayIssue {
	var out []displayIssue
	for _, f := range []struct {
		text, model, modelField string
		time                    bool
	}{
		{d.Time, u.Time, "Time unit", true},
		{d.Concentration, u.Amount, "Concentration unit", false},
	} {
		if strings.TrimSpace(f.text) == "" {
			continue
		}
		want, issue := displayUnit(f.text, f.time)
		if issue != nil {
			out = append(out, *issue)
			continue
		}
		if !withModel {
			continue
		}
		field, what := "display.concentration", "concentrations"
		if f.time {
			field, what = "display.time", "times"
		}
		have, issue := displayUnit(f.model, f.time)
		if strings.TrimSpace(f.model) == "" || issue != nil {
			out = append(out, displayIssue{field, 0, fmt.Sprintf("showing %s in %s needs the model's own unit to convert from; set the model's %s (now %q) to the unit its values are in, or clear this field", what, f.text, strings.ToLower(f.modelField), f.model)})
			continue
		}
		if _, err := have.To(want); err != nil {
			out = append(out, displayIssue{field, 0, fmt.Sprintf("cannot show %s in %s: the model's %s %s measures %s and %s measures %s, and converting between them needs a molar mass; expected a unit of the model's kind, such as %s", what, f.text, strings.ToLower(f.modelField), f.model, have.Kind(), f.text, want.Kind(), sameKindExample(have))})
		}
	}
	return out
}

// sameKindExample names units of the kind of u, for messages.
func sameKindExample(u units.Unit) string {
	if u.SameDim(units.MustParse("mg/L")) {
		return "mg/L, ug/mL or ng/mL"
	}
	return "mM, uM, nM or pM"
}

// Check reports the problems of the display units d for a model in the
// units u, each at its field ("display.time", "display.concentration") of
// the simulation settings: a unit that does not read, is of the wrong
// kind, or does not convert from the model's. Check of a whole model
// reports the same.
func (d Display) Check(u Units) ErrorList {
	var l ErrorList
	for _, p := range displayIssues(d, u, true) {
		l.Add(Pos{Section: "simulation", Field: p.field, Col: p.col}, Error, "%s", p.msg)
	}
	return l
}

// displayCheck reports the display units' problems as errors: results
// cannot be shown in a unit that does not convert from the model's.
func (v *validator) displayCheck() {
	for _, p := range displayIssues(v.m.Simulation.Display, v.m.Units, true) {
		v.add(Error, "simulation", 0, "", p.field, p.col, "%s", p.msg)
	}
}
