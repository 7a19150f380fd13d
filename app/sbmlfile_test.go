package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"

	"kinetarium/network/sbml"
)

// File ▸ Import SBML… opens the model as a new model that is not saved,
// and simulates it; a file that cannot be imported leaves the open model
// as it was and says so. Both items are in the File menu.
func TestImportSBMLInWindow(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.ctrl.Deliver = onUI
	found := 0
	for _, it := range w.mainMenu.Items[0].Items {
		if it.Label == "Import SBML…" || it.Label == "Export SBML…" {
			found++
		}
	}
	if found != 2 {
		t.Errorf("the File menu has %d of Import SBML… and Export SBML…", found)
	}
	m := tuneDecayModel()
	m.Title = "decay from SBML"
	data, err := sbml.Encode(m)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	good := filepath.Join(dir, "decay.xml")
	os.WriteFile(good, data, 0o644)
	onUI(func() { w.importSBML(good) })
	waitFor(t, "the imported model's run", func() bool {
		return w.doc.Model().Title == "decay from SBML" && w.current != nil && !w.ctrl.Running()
	})
	onUI(func() {
		if !w.doc.Dirty() || w.doc.Path != "" {
			t.Errorf("the imported model should be new and unsaved (dirty %v, path %q)", w.doc.Dirty(), w.doc.Path)
		}
	})
	bad := filepath.Join(dir, "bad.xml")
	os.WriteFile(bad, []byte(strings.Replace(string(data), "<listOfSpecies>", "<listOfRules><algebraicRule/></listOfRules><listOfSpecies>", 1)), 0o644)
	onUI(func() { w.importSBML(bad) })
	waitFor(t, "the refusal", func() bool { return strings.Contains(w.status.Text, "Import failed: bad.xml") })
	onUI(func() {
		if w.doc.Model().Title != "decay from SBML" {
			t.Errorf("a failed import replaced the model")
		}
	})
}
