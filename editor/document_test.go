package editor

import (
	"bytes"
	"testing"

	"kinetarium/network"
)

// enzymeModel is an invented test scenario: an enzyme binding a substrate
// and a second reaction whose parameter names contain "k1" as a part.
func enzymeModel() *network.Model {
	return &network.Model{
		Title:   "test enzyme",
		Species: []network.Species{{Name: "E", Initial: 1}, {Name: "S", Initial: 10}, {Name: "ES"}, {Name: "P"}, {Name: "S2"}},
		Parameters: []network.Parameter{
			{Name: "k1", Value: 2}, {Name: "k1r", Value: 0.5}, {Name: "k2", Value: 0.1},
		},
		Reactions: []network.Reaction{
			{Name: "bind", Equation: "E + S <=> ES", Rate: network.NewRate(network.MassAction, "k", network.Named("k1"), "k_reverse", network.Named("k1r"))},
			{Name: "make", Equation: "ES -> E + P", Rate: network.Rate{Law: network.Expression, Expression: "k2*ES + 0*k1r*S2 + 1e-3*S"}},
			{Name: "feed", Equation: "-> 2S", Rate: network.Rate{Law: network.Expression, Expression: "k1*(1+S2)"}},
		},
	}
}

func modelBytes(t *testing.T, m *network.Model) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := m.Write(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestUndoRedoRestoreExactStates(t *testing.T) {
	d := NewDocument(enzymeModel(), "")
	s0 := modelBytes(t, d.Model())
	if d.Dirty() {
		t.Fatal("new document is dirty")
	}
	d.Apply("set S", func(m *network.Model) { m.Species[1].Initial = 20 })
	s1 := modelBytes(t, d.Model())
	d.Apply("add reaction", func(m *network.Model) {
		m.Reactions = append(m.Reactions, network.Reaction{Name: "r4", Equation: "P ->", Rate: network.NewRate(network.MassAction, "k", network.Number(3))})
	})
	s2 := modelBytes(t, d.Model())
	if !d.Dirty() {
		t.Fatal("edited document is not dirty")
	}
	if desc, ok := d.CanUndo(); !ok || desc != "add reaction" {
		t.Fatalf("CanUndo = %q, %v", desc, ok)
	}
	d.Undo()
	if got := modelBytes(t, d.Model()); !bytes.Equal(got, s1) {
		t.Fatalf("after one undo:\n%s\nwant\n%s", got, s1)
	}
	d.Undo()
	if got := modelBytes(t, d.Model()); !bytes.Equal(got, s0) {
		t.Fatalf("after two undos:\n%s\nwant\n%s", got, s0)
	}
	if d.Dirty() {
		t.Error("document back at its loaded state is dirty")
	}
	if d.Undo() {
		t.Error("Undo past the first state reported success")
	}
	d.Redo()
	d.Redo()
	if got := modelBytes(t, d.Model()); !bytes.Equal(got, s2) {
		t.Fatalf("after two redos:\n%s\nwant\n%s", got, s2)
	}
	// A new edit clears the redo history.
	d.Undo()
	d.Apply("set E", func(m *network.Model) { m.Species[0].Initial = 5 })
	if _, ok := d.CanRedo(); ok {
		t.Error("redo still possible after a new edit")
	}
}

func TestApplyWithoutChangeRecordsNothing(t *testing.T) {
	d := NewDocument(enzymeModel(), "")
	if d.Apply("nothing", func(m *network.Model) { m.Species[0].Initial = 1 }) {
		t.Error("Apply reported a change for an edit that changed nothing")
	}
	if _, ok := d.CanUndo(); ok {
		t.Error("an edit that changed nothing can be undone")
	}
}

func TestApplyMergedMakesOneUndoStep(t *testing.T) {
	d := NewDocument(enzymeModel(), "")
	before := modelBytes(t, d.Model())
	for _, s := range []string{"E", "E ", "E +", "E + S", "E + S -", "E + S ->", "E + S -> P"} {
		d.ApplyMerged("reaction/0/equation", "edit equation", func(m *network.Model) { m.Reactions[0].Equation = s })
	}
	if got := d.Model().Reactions[0].Equation; got != "E + S -> P" {
		t.Fatalf("equation = %q", got)
	}
	d.Undo()
	if got := modelBytes(t, d.Model()); !bytes.Equal(got, before) {
		t.Fatalf("one undo did not undo the typing:\n%s", got)
	}
}

func TestRenamePropagatesAsWholeNames(t *testing.T) {
	d := NewDocument(enzymeModel(), "")
	n, err := d.Rename(KindSpecies, "S", "Sub", true)
	if err != nil {
		t.Fatal(err)
	}
	m := d.Model()
	if m.Species[1].Name != "Sub" {
		t.Errorf("species name = %q", m.Species[1].Name)
	}
	if got, want := m.Reactions[0].Equation, "E + Sub <=> ES"; got != want {
		t.Errorf("equation = %q, want %q (ES must stay)", got, want)
	}
	if got, want := m.Reactions[2].Equation, "-> 2Sub"; got != want {
		t.Errorf("equation = %q, want %q", got, want)
	}
	if got, want := m.Reactions[1].Rate.Expression, "k2*ES + 0*k1r*S2 + 1e-3*Sub"; got != want {
		t.Errorf("expression = %q, want %q (S2 and ES must stay)", got, want)
	}
	if n != 3 {
		t.Errorf("uses updated = %d, want 3", n)
	}

	if _, err := d.Rename(KindParameter, "k1", "kon", true); err != nil {
		t.Fatal(err)
	}
	m = d.Model()
	if m.Reactions[0].Rate.Arg("k").Name != "kon" || m.Reactions[0].Rate.Arg("k_reverse").Name != "k1r" {
		t.Errorf("rate fields = %q, %q; want kon, k1r", m.Reactions[0].Rate.Arg("k").Name, m.Reactions[0].Rate.Arg("k_reverse").Name)
	}
	if got, want := m.Reactions[2].Rate.Expression, "kon*(1+S2)"; got != want {
		t.Errorf("expression = %q, want %q", got, want)
	}
	if got, want := m.Reactions[1].Rate.Expression, "k2*ES + 0*k1r*Sub2"; got == want {
		t.Errorf("expression renamed inside a longer name")
	}

	// Renaming the item alone leaves the uses as they were.
	if _, err := d.Rename(KindParameter, "k2", "kcat2", false); err != nil {
		t.Fatal(err)
	}
	if got := d.Model().Reactions[1].Rate.Expression; got != "k2*ES + 0*k1r*S2 + 1e-3*Sub" {
		t.Errorf("rename without updating uses changed the expression to %q", got)
	}
}

func TestRenameRejectsBadOrTakenNames(t *testing.T) {
	d := NewDocument(enzymeModel(), "")
	for _, name := range []string{"", "2x", "a-b", "ES"} {
		if _, err := d.Rename(KindSpecies, "S", name, true); err == nil {
			t.Errorf("Rename to %q: no error", name)
		}
	}
	if d.Model().Species[1].Name != "S" {
		t.Error("a rejected rename changed the model")
	}
}

func TestReplaceName(t *testing.T) {
	cases := []struct{ in, old, new, want string }{
		{"A + 2A -> AA", "A", "B", "B + 2B -> AA"},
		{"2e5*e5 + e5x", "e5", "q", "2e5*q + e5x"},
		{"k*1.5e-3/k_2", "k", "kf", "kf*1.5e-3/k_2"},
		{"E⇌S", "S", "T", "E⇌T"},
		{"exp(-t/tau)", "t", "time", "exp(-time/tau)"},
	}
	for _, c := range cases {
		if got, _ := ReplaceName(c.in, c.old, c.new); got != c.want {
			t.Errorf("ReplaceName(%q, %q, %q) = %q, want %q", c.in, c.old, c.new, got, c.want)
		}
	}
}

func TestUses(t *testing.T) {
	d := NewDocument(enzymeModel(), "")
	if got := d.Uses(KindSpecies, "S2"); got != 2 {
		t.Errorf("uses of S2 = %d, want 2", got)
	}
	if got := d.Uses(KindParameter, "k1"); got != 2 {
		t.Errorf("uses of k1 = %d, want 2", got)
	}
}

// Saving is not an edit: MarkSaved and MarkModified change the unsaved
// flag without calling the document's change listeners.
func TestMarkSavedNotifiesNoListener(t *testing.T) {
	d := NewDocument(enzymeModel(), "")
	calls := 0
	d.OnChange(func() { calls++ })
	d.Apply("edit", func(m *network.Model) { m.Title = "edited" })
	if calls != 1 || !d.Dirty() {
		t.Fatalf("after an edit: %d calls, dirty %v; want 1 call and unsaved", calls, d.Dirty())
	}
	d.MarkSaved("model.json")
	if calls != 1 || d.Dirty() || d.Path != "model.json" {
		t.Errorf("after MarkSaved: %d calls, dirty %v, path %q; want no new call, saved, model.json", calls, d.Dirty(), d.Path)
	}
	d.MarkModified()
	if calls != 1 || !d.Dirty() {
		t.Errorf("after MarkModified: %d calls, dirty %v; want no new call, unsaved", calls, d.Dirty())
	}
}

// Renaming a parameter updates the model's rates: the name a rate belongs
// to and the expressions that read it.
func TestRenameUpdatesRates(t *testing.T) {
	m := enzymeModel()
	m.Rates = []network.RateRule{{Name: "k1", Expression: "-k1/k2"}}
	d := NewDocument(m, "")
	if _, err := d.Rename(KindParameter, "k1", "kon", true); err != nil {
		t.Fatal(err)
	}
	if got := d.Model().Rates[0]; got.Name != "kon" || got.Expression != "-kon/k2" {
		t.Errorf("rate after renaming k1 to kon: %+v", got)
	}
}

// A renamed species or reaction keeps its place in the diagram, and Undo
// gives the old name its place back.
func TestRenameKeepsDiagramPlace(t *testing.T) {
	m := enzymeModel()
	m.Layout.Put(network.PlaceSpecies, "S", 10, 20)
	m.Layout.Put(network.PlaceReaction, m.Reactions[0].Name, 30, 40)
	d := NewDocument(m, "")
	if _, err := d.Rename(KindSpecies, "S", "Sub", false); err != nil {
		t.Fatal(err)
	}
	rx := d.Model().Reactions[0].Name
	if _, err := d.Rename(KindReaction, rx, "binding", true); err != nil {
		t.Fatal(err)
	}
	l := d.Model().Layout
	if x, y, ok := l.Find(network.PlaceSpecies, "Sub"); !ok || x != 10 || y != 20 {
		t.Errorf("Sub at (%v, %v, %v), want (10, 20)", x, y, ok)
	}
	if x, _, ok := l.Find(network.PlaceReaction, "binding"); !ok || x != 30 {
		t.Errorf("binding at %v, %v", x, ok)
	}
	d.Undo()
	d.Undo()
	if _, _, ok := d.Model().Layout.Find(network.PlaceSpecies, "S"); !ok {
		t.Error("after Undo S has no place")
	}
}
