package run

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/plotting"
	"kinetarium/solve"
)

// Program names the program in the files it writes.
const Program = "Kinetarium"

// Version is the program's version, set when building a release with
// -ldflags "-X kinetarium/app/run.Version=…"; "devel" otherwise.
var Version = "devel"

// Provenance says where an exported file came from. Figures carry it as
// their format's metadata; a CSV table gets it beside it, in
// NAME.provenance.json (see SaveProvenance).
type Provenance struct {
	Program string `json:"program"`
	Version string `json:"version"`
	// What is the kind of result: "simulation", "sweep" or "population".
	What       string `json:"what"`
	ModelTitle string `json:"model_title"`
	// ModelSHA256 is the SHA-256, in hex, of the model as saved: the
	// bytes network.Model.Write gives for it, before any value tried on a
	// slider or given on the command line.
	ModelSHA256 string `json:"model_sha256"`
	Solver      Solver `json:"solver"`
	// Changed lists the values tried on sliders that differ from the
	// model's.
	Changed []Change `json:"changed,omitempty"`
	// ShownIn gives the display units results were converted to, when
	// any were chosen (the model's own units otherwise).
	ShownIn *ShownIn `json:"shown_in,omitempty"`
	// Stochastic describes a stochastic ensemble (nil for other results).
	Stochastic *Stochastic `json:"stochastic,omitempty"`
	// Exported is the time of export, in UTC to the second.
	Exported time.Time `json:"exported"`
	// Partial is set when the run was stopped (Ctrl-C, SIGTERM, Cancel)
	// before it finished: the file holds what was complete by then.
	Partial bool `json:"partial,omitempty"`
}

// Stochastic is the settings of a stochastic ensemble: the method, the
// number of runs, the seed, and the molecules per amount unit × volume
// unit the counts were computed with.
type Stochastic struct {
	Method             string  `json:"method"`
	Runs               int     `json:"runs"`
	Seed               uint64  `json:"seed"`
	MoleculesPerAmount float64 `json:"molecules_per_amount"`
}

// Solver is the run settings a result was computed with, defaults filled
// in.
type Solver struct {
	TEnd        float64 `json:"t_end"`
	Points      int     `json:"points"`
	Spacing     string  `json:"spacing"`
	First       float64 `json:"first,omitempty"` // first time of a log grid
	RTol        float64 `json:"rtol"`
	ATol        float64 `json:"atol"`
	Method      string  `json:"method"`
	NonNegative bool    `json:"non_negative"`
	// Used lists the methods the solve used, in order (the automatic
	// choice may switch), and Choice gives the automatic choice's reason;
	// both are empty before a solve.
	Used   []string `json:"used,omitempty"`
	Choice string   `json:"choice,omitempty"`
}

// withMethods returns a copy of p whose solver settings name the methods
// st reports and the automatic choice's reason (p itself when st names
// none).
func (p *Provenance) withMethods(st solve.Stats) *Provenance {
	if len(st.Methods) == 0 {
		return p
	}
	q := *p
	q.Solver.Used = nil
	for _, m := range st.Methods {
		q.Solver.Used = append(q.Solver.Used, string(m))
	}
	q.Solver.Choice = st.Choice
	return &q
}

// ShownIn is the display units of a result: empty fields are the
// model's own.
type ShownIn struct {
	Time          string `json:"time,omitempty"`
	Concentration string `json:"concentration,omitempty"`
}

// Change is a model value run with another value: Name is a knob
// reference ("k1", "init:A", "volume:cell").
type Change struct {
	Name  string  `json:"name"`
	Model float64 `json:"model"`
	Value float64 `json:"value"`
}

// ModelSHA256 returns the SHA-256, in hex, of m as saved.
func ModelSHA256(m *network.Model) (string, error) {
	h := sha256.New()
	if err := m.Write(h); err != nil { // straight into the hash
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// NewProvenance describes a result of kind what computed from model m (as
// saved) with the run settings sim and the slider values changed, exported
// now (see ExportTime).
func NewProvenance(what string, m *network.Model, sim network.Simulation, changed []Change) (*Provenance, error) {
	sum, err := ModelSHA256(m)
	if err != nil {
		return nil, fmt.Errorf("provenance: %w", err)
	}
	sim = sim.WithDefaults()
	var shown *ShownIn
	if d := sim.Display; d != (network.Display{}) {
		shown = &ShownIn{Time: d.Time, Concentration: d.Concentration}
	}
	return &Provenance{
		Program: Program, Version: Version, What: what,
		ModelTitle: m.Title, ModelSHA256: sum,
		Solver: Solver{
			TEnd: sim.TEnd, Points: sim.Output.Points, Spacing: sim.Output.Spacing, First: sim.Output.First,
			RTol: sim.RTol, ATol: sim.ATol, Method: sim.Method, NonNegative: sim.NonNegative == nil || *sim.NonNegative,
		},
		Changed:  changed,
		ShownIn:  shown,
		Exported: ExportTime(),
	}, nil
}

// ExportTime is the time written as the time of export: the present in
// UTC to the second, or, when the environment variable SOURCE_DATE_EPOCH
// holds a count of seconds since 1970 (the reproducible-builds.org
// convention), that time, so that the same result exported twice gives the
// same bytes.
func ExportTime() time.Time {
	if s := os.Getenv("SOURCE_DATE_EPOCH"); s != "" {
		if sec, err := strconv.ParseInt(s, 10, 64); err == nil {
			return time.Unix(sec, 0).UTC()
		}
	}
	return time.Now().UTC().Truncate(time.Second)
}

// JSON returns p as an indented JSON document.
func (p *Provenance) JSON() []byte {
	b, err := json.MarshalIndent(p, "", "  ")
	if err != nil {
		// Only non-finite numbers fail, and a model holding one
		// cannot be saved in the first place.
		panic(fmt.Sprintf("run: encoding provenance: %v", err))
	}
	return append(b, '\n')
}

// Metadata returns p as figure metadata, titled title (the model's title
// when empty).
func (p *Provenance) Metadata(title string) *plotting.Metadata {
	if p == nil {
		return nil
	}
	if title == "" {
		title = p.ModelTitle
	}
	return &plotting.Metadata{
		Title: title, Software: p.Program + " " + p.Version, Created: p.Exported,
		Provenance: bytes.TrimSpace(p.JSON()),
	}
}

// ProvenancePath is the companion of a table: "runs.csv" has
// "runs.provenance.json".
func ProvenancePath(csvPath string) string {
	return strings.TrimSuffix(csvPath, filepath.Ext(csvPath)) + ".provenance.json"
}

// SaveProvenance writes p, atomically, beside the table at csvPath (see
// ProvenancePath).
func SaveProvenance(csvPath string, p *Provenance) error {
	return atomicfile.Write(ProvenancePath(csvPath), p.JSON())
}

// ReadProvenance reads a provenance document, rejecting unknown fields.
func ReadProvenance(data []byte) (*Provenance, error) {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	var p Provenance
	if err := dec.Decode(&p); err != nil {
		return nil, fmt.Errorf("reading provenance: %w", err)
	}
	if dec.More() {
		return nil, fmt.Errorf("reading provenance: data after the document")
	}
	return &p, nil
}

// WithoutTime returns a copy of p without its export time (nil for nil),
// to compare the provenance of parts of one run written at different
// times.
func (p *Provenance) WithoutTime() *Provenance {
	if p == nil {
		return nil
	}
	c := *p
	c.Exported = time.Time{}
	return &c
}
