package network

import (
	"bytes"
	"encoding/json"
)

// DenseConservationLaws is the earlier dense method, for the comparison
// of laws_external_test.go.
var DenseConservationLaws = denseConservationLaws

// wholeModel is the file form of a whole model, for the reference
// encoding of WholeDocument.
type (
	fileModel struct {
		Format       string            `json:"format"`
		Title        string            `json:"title,omitempty"`
		Note         string            `json:"note,omitempty"`
		Units        *fileUnits        `json:"units,omitempty"`
		Compartments []fileCompartment `json:"compartments,omitempty"`
		Species      []fileSpecies     `json:"species"`
		Parameters   []fileParameter   `json:"parameters,omitempty"`
		Assignments  []fileAssignment  `json:"assignments,omitempty"`
		Reactions    []fileReaction    `json:"reactions"`
		Events       []fileEvent       `json:"events,omitempty"`
		Rates        []fileRateRule    `json:"rates,omitempty"`
		Simulation   *fileSimulation   `json:"simulation,omitempty"`
		Layout       *fileLayout       `json:"layout,omitempty"`
	}
)

// WholeDocument encodes m as one value with encoding/json (two-space
// indent, no HTML escapes): the text Model.Write, which encodes a field
// and a list item at a time, is to give byte for byte.
func WholeDocument(m *Model) ([]byte, error) {
	f := fileModel{Format: Format, Title: m.Title, Note: m.Note,
		Species: []fileSpecies{}, Reactions: []fileReaction{}}
	if m.Units != (Units{}) {
		f.Units = &fileUnits{Time: m.Units.Time, Amount: m.Units.Amount, MoleculesPerAmount: m.Units.MoleculesPerAmount}
	}
	for _, c := range m.Compartments {
		f.Compartments = append(f.Compartments, fileCompartment(c))
	}
	for _, s := range m.Species {
		f.Species = append(f.Species, fileSpecies(s))
	}
	for _, p := range m.Parameters {
		f.Parameters = append(f.Parameters, fileParameter(p))
	}
	for _, a := range m.Assignments {
		f.Assignments = append(f.Assignments, fileAssignment(a))
	}
	for _, r := range m.Reactions {
		f.Reactions = append(f.Reactions, fileReaction{Name: r.Name, Equation: r.Equation, Note: r.Note, Rate: fileRate(r.Rate)})
	}
	for _, e := range m.Events {
		f.Events = append(f.Events, fileEvent{Name: e.Name, Note: e.Note, At: optValue(e.At), Every: optValue(e.Every),
			Count: e.Count, When: e.When, Once: e.Once, From: optValue(e.From), To: optValue(e.To),
			Add: e.Add, Set: e.Set, Infuse: e.Infuse})
	}
	for _, r := range m.Rates {
		f.Rates = append(f.Rates, fileRateRule(r))
	}
	fs := fileSimulationOf(m.Simulation)
	if fs != (fileSimulation{}) {
		f.Simulation = &fs
	}
	f.Layout = layoutForFile(m.Layout)
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(&f); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}
