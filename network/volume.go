package network

import (
	"strconv"
	"strings"

	"kinetarium/network/units"
)

// VolumeUnits lists the units a compartment's volume may carry.
const VolumeUnits = "L, mL, uL, nL or fL"

// VolumeUnit returns the model's unit of volume and, per declared
// compartment, the factor that turns its volume into that unit. The
// model's unit is that of the first compartment that gives one; a
// compartment without a unit is read in it. With no units at all the unit
// is "" and every factor 1, so volumes are used as they stand. A unit
// that does not read or is not a volume counts as none (Check reports
// it).
//
// The equations use volumes in the model's unit: amounts are
// concentration × volume in it, and the dilution factor V_r/V_i of the
// compartment rule compares volumes in one unit.
func (m *Model) VolumeUnit() (unit string, scale []float64) {
	scale = make([]float64, len(m.Compartments))
	parsed := make([]units.Unit, len(m.Compartments))
	var ref units.Unit
	for i, c := range m.Compartments {
		scale[i] = 1
		u, ok := compartmentUnit(c)
		if !ok {
			continue
		}
		parsed[i] = u
		if unit == "" {
			unit, ref = strings.TrimSpace(c.Unit), u
		}
	}
	if unit == "" {
		return "", scale
	}
	for i, c := range m.Compartments {
		if _, ok := compartmentUnit(c); ok {
			scale[i] = wholeRatio(parsed[i].Factor / ref.Factor)
		}
	}
	return unit, scale
}

// compartmentUnit returns the parsed unit of c and whether it gives one
// that is a volume.
func compartmentUnit(c Compartment) (units.Unit, bool) {
	if strings.TrimSpace(c.Unit) == "" {
		return units.Unit{}, false
	}
	u, err := units.Parse(c.Unit)
	return u, err == nil && u.IsVolume()
}

// wholeRatio rounds a ratio of the trade's units (1000, 0.001, 1e-12) to
// its exact decimal value, so that mL and L compare as exactly 1/1000.
func wholeRatio(f float64) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(f, 'g', 12, 64), 64)
	if err != nil {
		return f
	}
	return r
}
