// Package sliders re-simulates a model while the user turns its values: a
// Knob is one parameter, initial concentration or compartment volume with
// the range of its slider; a Session simulates one compiled model again and
// again with changed values, reusing one compiled system and one solver; a
// Runner does this off the caller's goroutine, solving only the newest
// values asked for (a Mailbox where the latest value wins) and dropping any
// result overtaken by newer values.
//
// The package holds no widgets and builds without cgo, so the work of a
// slider frame can be measured and tested on its own.
package sliders

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"kinetarium/network"
)

// Kind says which sort of model value a Knob sets.
type Kind int

// The kinds of value a Knob can set.
const (
	Parameter Kind = iota // a parameter's value
	Initial               // a species' initial concentration
	Volume                // a declared compartment's volume
	Event                 // an event's time, interval, amount or rate ("dose.add.C")
)

// String returns the kind in plain words.
func (k Kind) String() string {
	switch k {
	case Parameter:
		return "parameter"
	case Initial:
		return "initial concentration"
	case Volume:
		return "volume"
	case Event:
		return "event quantity"
	}
	return "kind " + strconv.Itoa(int(k))
}

// Knob is one model value tied to a slider. The slider runs from Min to
// Max, on a log scale when Min > 0 and linearly otherwise.
type Knob struct {
	Kind     Kind
	Name     string  // the parameter, species or compartment
	Model    float64 // the value in the model
	Value    float64 // the value being tried
	Min, Max float64 // the slider's range, Min < Max
}

// Log reports whether the slider is logarithmic.
func (k Knob) Log() bool { return k.Min > 0 }

// Label names the knob for people: "kcat", "S initial", "well volume".
func (k Knob) Label() string {
	switch k.Kind {
	case Initial:
		return k.Name + " initial"
	case Volume:
		return k.Name + " volume"
	case Event:
		return eventLabel(k.Name)
	}
	return k.Name
}

// eventLabel writes an event quantity for people: "dose: amount of C",
// "dose: first time", "dose: interval".
func eventLabel(ref string) string {
	event, field, _ := strings.Cut(ref, ".")
	switch {
	case field == "at":
		field = "time"
	case field == "every":
		field = "interval"
	case field == "from":
		field = "start"
	case field == "to":
		field = "end"
	case strings.HasPrefix(field, "add."):
		field = "amount of " + strings.TrimPrefix(field, "add.")
	case strings.HasPrefix(field, "infuse."):
		field = "rate into " + strings.TrimPrefix(field, "infuse.")
	}
	return event + ": " + field
}

// Ref is the knob's name in studies and spec files: "k" for a parameter,
// "init:S" for species S's initial concentration, "volume:C" for
// compartment C's volume, "event:E.FIELD" for a quantity of event E
// ("event:dose.add.C", "event:dose.at", "event:dose.every").
func (k Knob) Ref() string {
	switch k.Kind {
	case Initial:
		return "init:" + k.Name
	case Volume:
		return "volume:" + k.Name
	case Event:
		return "event:" + k.Name
	}
	return k.Name
}

// ParseRef reads a knob name written as Ref writes it. The knob is not
// looked up in any model: the name may be one the model lacks.
func ParseRef(ref string) Knob {
	if name, ok := strings.CutPrefix(ref, "init:"); ok {
		return Knob{Kind: Initial, Name: name}
	}
	if name, ok := strings.CutPrefix(ref, "volume:"); ok {
		return Knob{Kind: Volume, Name: name}
	}
	if name, ok := strings.CutPrefix(ref, "event:"); ok {
		return Knob{Kind: Event, Name: name}
	}
	return Knob{Kind: Parameter, Name: ref}
}

// Key identifies the knob's model value.
func (k Knob) Key() string { return k.Kind.String() + " " + k.Name }

// DefaultRange returns the slider range offered for value v: v/10 to v·10
// for a positive v (log scale); for zero, 0 to ref when ref > 0 and 0 to 1
// otherwise (linear); for a negative v, 10·v to v/10 (linear).
func DefaultRange(v, ref float64) (lo, hi float64) {
	switch {
	case v > 0:
		return v / 10, v * 10
	case v < 0:
		return v * 10, v / 10
	case ref > 0:
		return 0, ref
	}
	return 0, 1
}

// Candidates returns a knob for every value of m that can be tuned, at the
// model's value with the default range: the parameters, then the species'
// initial concentrations, then the declared compartments' volumes, each in
// model order. A zero initial concentration gets the range 0 to the largest
// initial concentration in the model.
func Candidates(m *network.Model) []Knob {
	var out []Knob
	add := func(kind Kind, name string, v, ref float64) {
		lo, hi := DefaultRange(v, ref)
		out = append(out, Knob{Kind: kind, Name: name, Model: v, Value: v, Min: lo, Max: hi})
	}
	for _, p := range m.Parameters {
		add(Parameter, p.Name, p.Value, 0)
	}
	largest := 0.0
	for _, s := range m.Species {
		largest = math.Max(largest, s.Initial)
	}
	for _, s := range m.Species {
		add(Initial, s.Name, s.Initial, largest)
	}
	for _, c := range m.Compartments {
		add(Volume, c.Name, c.Volume, 0)
	}
	for _, ref := range m.EventQuantities() {
		v, _ := m.EventValue(ref)
		add(Event, ref, v, 0)
	}
	return out
}

// Lookup returns the value of m that a knob of the kind and name sets, and
// whether m has it.
func Lookup(m *network.Model, kind Kind, name string) (float64, bool) {
	switch kind {
	case Parameter:
		for _, p := range m.Parameters {
			if p.Name == name {
				return p.Value, true
			}
		}
	case Initial:
		for _, s := range m.Species {
			if s.Name == name {
				return s.Initial, true
			}
		}
	case Volume:
		for _, c := range m.Compartments {
			if c.Name == name {
				return c.Volume, true
			}
		}
	case Event:
		return m.EventValue(name)
	}
	return 0, false
}

// WriteBack stores each knob's Value in m and reports how many values it
// found in m. Use it inside editor.Document.Apply, so that the whole change
// is one undoable edit.
func WriteBack(m *network.Model, knobs []Knob) int {
	n := 0
	for _, k := range knobs {
		switch k.Kind {
		case Parameter:
			for i := range m.Parameters {
				if m.Parameters[i].Name == k.Name {
					m.Parameters[i].Value = k.Value
					n++
				}
			}
		case Initial:
			for i := range m.Species {
				if m.Species[i].Name == k.Name {
					m.Species[i].Initial = k.Value
					n++
				}
			}
		case Volume:
			for i := range m.Compartments {
				if m.Compartments[i].Name == k.Name {
					m.Compartments[i].Volume = k.Value
					n++
				}
			}
		case Event:
			if m.SetEventValue(k.Name, k.Value) {
				n++
			}
		}
	}
	return n
}

// Check reports whether v is allowed for the knob: a finite number, not
// negative for an initial concentration, positive for a volume.
func (k Knob) Check(v float64) error {
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return fmt.Errorf("%s = %v: expected a finite number", k.Label(), v)
	case k.Kind == Initial && v < 0:
		return fmt.Errorf("%s = %g: an initial concentration must be ≥ 0", k.Label(), v)
	case k.Kind == Volume && v <= 0:
		return fmt.Errorf("%s = %g: a volume must be positive", k.Label(), v)
	case k.Kind == Event && strings.HasSuffix(k.Name, ".every") && v <= 0:
		return fmt.Errorf("%s = %g: an interval must be positive", k.Label(), v)
	case k.Kind == Event && v < 0:
		return fmt.Errorf("%s = %g: expected 0 or more", k.Label(), v)
	}
	return nil
}

// Set makes v the value being tried, widening the range when v lies
// outside it. A range that must reach zero or below becomes linear.
func (k *Knob) Set(v float64) error {
	if err := k.Check(v); err != nil {
		return err
	}
	k.Value = v
	if v < k.Min {
		k.Min = v
	}
	if v > k.Max {
		k.Max = v
	}
	if k.Min == k.Max { // only possible for v = 0 on a range [0, 0]
		k.Max = 1
	}
	return nil
}

// SetRange makes lo to hi the slider's range and moves the value inside it
// when it lies outside.
func (k *Knob) SetRange(lo, hi float64) error {
	switch {
	case math.IsNaN(lo) || math.IsInf(lo, 0) || math.IsNaN(hi) || math.IsInf(hi, 0):
		return fmt.Errorf("%s: the range %g to %g is not allowed; expected finite numbers", k.Label(), lo, hi)
	case !(lo < hi):
		return fmt.Errorf("%s: the range %g to %g is empty; the lower end must be below the upper end", k.Label(), lo, hi)
	}
	if err := k.Check(lo); err != nil && !(k.Kind == Volume && lo == 0) {
		return fmt.Errorf("the lower end of the range: %w", err)
	}
	k.Min, k.Max = lo, hi
	if k.Kind == Volume && k.Min == 0 {
		k.Min = hi / 1000 // a volume must stay positive
	}
	k.Value = math.Min(math.Max(k.Value, k.Min), k.Max)
	return nil
}

// Position returns where value v sits on the slider, from 0 at Min to 1 at
// Max, clamped to that interval.
func (k Knob) Position(v float64) float64 {
	var f float64
	if k.Log() {
		if v <= 0 {
			return 0
		}
		f = math.Log(v/k.Min) / math.Log(k.Max/k.Min)
	} else {
		f = (v - k.Min) / (k.Max - k.Min)
	}
	return math.Min(math.Max(f, 0), 1)
}

// At returns the value at slider position f (0 at Min, 1 at Max).
func (k Knob) At(f float64) float64 {
	f = math.Min(math.Max(f, 0), 1)
	switch {
	case f == 0:
		return k.Min
	case f == 1:
		return k.Max
	case k.Log():
		return k.Min * math.Exp(f*math.Log(k.Max/k.Min))
	}
	return k.Min + f*(k.Max-k.Min)
}
