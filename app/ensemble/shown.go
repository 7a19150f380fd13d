package ensemble

import (
	"strings"

	"kinetarium/app/run"
	"kinetarium/network"
)

// Molecules is the unit of every count of an ensemble; tables name it
// when the model chooses display units.
const Molecules = "molecules"

// Shown is how an ensemble's tables and figures show it when the model
// chooses display units (network.Display): times in the display time unit
// (the model's when it chooses only a concentration unit), counts in
// molecules, both named in the headers. An ensemble holds no
// concentrations, so a display concentration unit changes no number. A
// nil *Shown shows the ensemble as computed, the tables as they always
// were.
type Shown struct {
	TimeUnit string    `json:"time_unit"`
	Time     run.Scale `json:"time"` // from the model's time unit to TimeUnit
}

// Show works out how m's ensembles are shown: nil when m chooses no
// display units. A display time unit that does not convert from the
// model's is an error.
func Show(m *network.Model) (*Shown, error) {
	d := m.Simulation.Display
	if strings.TrimSpace(d.Time) == "" && strings.TrimSpace(d.Concentration) == "" {
		return nil, nil
	}
	sh, err := run.Show(m.Units.Time, m.Units.Amount, nil, nil, 0, network.Display{Time: d.Time})
	if err != nil {
		return nil, err
	}
	if sh == nil { // only a concentration unit, or the model's own time unit
		return &Shown{TimeUnit: m.Units.Time, Time: run.Scale{Mul: 1, Div: 1}}, nil
	}
	return &Shown{TimeUnit: sh.TimeUnit, Time: sh.Time}, nil
}

// time converts a time from the model's unit.
func (sh *Shown) time(t float64) float64 {
	if sh == nil {
		return t
	}
	return sh.Time.Of(t)
}

// times converts times from the model's unit (ts itself without display
// units).
func (sh *Shown) times(ts []float64) []float64 {
	if sh == nil {
		return ts
	}
	out := make([]float64, len(ts))
	for i, t := range ts {
		out[i] = sh.Time.Of(t)
	}
	return out
}

// head writes a column name with its unit when shown in display units.
func (sh *Shown) head(name, unit string) string {
	if sh == nil || unit == "" {
		return name
	}
	return name + " (" + unit + ")"
}

// unit returns the display time unit, or fallback without display units.
func (sh *Shown) unit(fallback string) string {
	if sh == nil {
		return fallback
	}
	return sh.TimeUnit
}

// after writes " unit" after a time when shown in display units.
func (sh *Shown) after() string {
	if sh == nil {
		return ""
	}
	return " " + sh.TimeUnit
}
