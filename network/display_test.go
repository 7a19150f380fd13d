package network

import (
	"bytes"
	"errors"
	"strings"
	"testing"
)

const displayModel = `{
  "format": "kinetarium.model/1",
  "units": {"time": "s", "amount": "uM"},
  "species": [{"name": "A", "initial": 1}],
  "parameters": [{"name": "k", "value": 1, "unit": "1/s"}],
  "reactions": [{"name": "r", "equation": "A ->", "rate": {"law": "mass_action", "k": "k"}}],
  "simulation": {"t_end": 10, "display": {"time": %TIME%, "concentration": %CONC%}}
}`

func displaySrc(time, conc string) string {
	return strings.NewReplacer("%TIME%", time, "%CONC%", conc).Replace(displayModel)
}

// Display units are read, written back in the same place, and survive a
// round trip.
func TestDisplayRoundTrip(t *testing.T) {
	m, err := Read(strings.NewReader(displaySrc(`"h"`, `"nM"`)), "d.json")
	if err != nil {
		t.Fatal(err)
	}
	if want := (Display{Time: "h", Concentration: "nM"}); m.Simulation.Display != want {
		t.Fatalf("Display = %+v, want %+v", m.Simulation.Display, want)
	}
	if _, l := Check(m); l.HasErrors() {
		t.Fatalf("errors: %v", l.Errors())
	}
	var buf bytes.Buffer
	if err := m.Write(&buf); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), `"display": {`) || !strings.Contains(buf.String(), `"concentration": "nM"`) {
		t.Errorf("written file lacks the display units:\n%s", buf.String())
	}
	back, err := Read(&buf, "back.json")
	if err != nil {
		t.Fatal(err)
	}
	if back.Simulation.Display != m.Simulation.Display {
		t.Errorf("after a round trip Display = %+v, want %+v", back.Simulation.Display, m.Simulation.Display)
	}
	// No display units: no "display" key.
	m.Simulation.Display = Display{}
	buf.Reset()
	if err := m.Write(&buf); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(buf.String(), "display") {
		t.Errorf("a model without display units writes them:\n%s", buf.String())
	}
}

// A display unit that does not read, or measures the wrong kind of
// quantity, is refused by the reader with its line and column: the
// column of the mistake inside the text, or of the text's opening quote.
// Line 7 reads `  "simulation": {"t_end": 10, "display": {"time": "…`, so
// the time's text opens at column 51.
func TestDisplayReadErrors(t *testing.T) {
	for _, c := range []struct {
		time, conc, want string
	}{
		{`"hr"`, `"nM"`, `d.json:7:52: simulation.display.time: the time unit to show results in, "hr", does not read: unknown unit "hr"`},
		{`"h"`, `"uM/s"`, `d.json:7:73: simulation.display.concentration: "uM/s" is not a unit of concentration (it is concentration per time)`},
		{`"nM"`, `"nM"`, `d.json:7:51: simulation.display.time: "nM" is not a unit of time (it is concentration)`},
		{`"h"`, `"nM*"`, `d.json:7:76: simulation.display.concentration: the concentration unit to show results in, "nM*", does not read: "*" needs a unit after it`},
		{`3`, `"nM"`, `d.json:7:51: simulation.display.time: expected text in quotes, found a number`},
	} {
		_, err := Read(strings.NewReader(displaySrc(c.time, c.conc)), "d.json")
		var l ErrorList
		if !errors.As(err, &l) || len(l) != 1 {
			t.Errorf("time %s, concentration %s: error %v, want one problem", c.time, c.conc, err)
			continue
		}
		if !strings.HasPrefix(l[0].String(), c.want) {
			t.Errorf("time %s, concentration %s:\n got %s\nwant %s…", c.time, c.conc, l[0], c.want)
		}
	}
}

// Check refuses display units that cannot be converted from the model's:
// a mass concentration for a model in molar units, or any display unit
// when the model does not say its own; each error is located in the file.
func TestDisplayCheckAgainstModelUnits(t *testing.T) {
	m, err := Read(strings.NewReader(displaySrc(`"h"`, `"mg/L"`)), "d.json")
	if err != nil {
		t.Fatal(err)
	}
	_, l := Check(m)
	errs := l.Errors()
	want := `d.json:7:73: simulation, display.concentration: cannot show concentrations in mg/L: the model's concentration unit uM measures concentration and mg/L measures mass concentration`
	if len(errs) != 1 || !strings.HasPrefix(errs[0].String(), want) {
		t.Fatalf("errors %v, want one starting %q", errs, want)
	}

	m.Simulation.Display = Display{Time: "min"}
	m.Units.Time = ""
	_, l = Check(m)
	errs = l.Errors()
	if len(errs) != 1 || errs[0].Pos.Field != "display.time" || !strings.Contains(errs[0].Message, "needs the model's own unit") {
		t.Fatalf("errors %v, want one at display.time asking for the model's time unit", errs)
	}

	m.Units.Time = "s"
	m.Simulation.Display = Display{Time: "day", Concentration: "pM"}
	if _, l = Check(m); l.HasErrors() {
		t.Fatalf("day and pM for a model in s and uM: %v", l.Errors())
	}
	m.Simulation.Display = Display{Time: "uM"}
	_, l = Check(m)
	if errs = l.Errors(); len(errs) != 1 || errs[0].Pos.Field != "display.time" || !strings.Contains(errs[0].Message, "not a unit of time") {
		t.Fatalf("errors %v, want one saying uM is not a unit of time", errs)
	}
}
