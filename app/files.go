package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/storage"

	"kinetarium/app/calibrate"
	"kinetarium/examples"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
)

// maxRecent is the number of recent files remembered.
const maxRecent = 8

// recentKey is the preference holding the recent files, newest first.
const recentKey = "recentFiles"

// openStart opens path, or the default example when path is empty, and
// simulates it.
func (w *mainWindow) openStart(path string) error {
	if path == "" {
		if err := w.loadExample(examples.Default); err != nil {
			return err
		}
	} else if ext := strings.ToLower(filepath.Ext(path)); ext == ".xml" || ext == ".sbml" {
		w.logX.SetChecked(true)
		w.importSBML(path) // as File ▸ Import SBML…; simulates once imported
		return nil
	} else if err := w.loadFile(path); err != nil {
		return err
	}
	w.logX.SetChecked(true)
	w.simulate()
	return nil
}

// loadFile reads the model file at path into the document.
func (w *mainWindow) loadFile(path string) error {
	m, err := network.Load(path)
	if err != nil {
		return err
	}
	w.exampleOf = ""
	w.setModel(m, path)
	w.restoreMeasurements(path)
	w.addRecent(path)
	return nil
}

func (w *mainWindow) loadExample(name string) error {
	b, err := examples.Open(name)
	if err != nil {
		return err
	}
	m, err := network.Read(bytes.NewReader(b), name)
	if err != nil {
		return err
	}
	w.exampleOf = name
	w.setModel(m, "")
	return nil
}

// setModel replaces the document's model and forgets the old results.
func (w *mainWindow) setModel(m *network.Model, path string) {
	w.ctrl.Cancel()
	w.current, w.previous = nil, nil
	w.meas = measurements{}
	w.fresh = true
	w.hidden = map[string]bool{}
	w.plot.view.Zoom = nil
	w.plot.Set(nil, w.plot.view)
	w.refreshSpecies()
	w.doc.Replace(m, path)
	w.ed.Reset()
	w.removeRecovery()
	w.updateTitle()
}

func (w *mainWindow) openExample(name string) {
	if err := w.loadExample(name); err != nil {
		w.showError(err)
		return
	}
	w.simulate()
}

func (w *mainWindow) newModel() {
	w.exampleOf = ""
	w.setModel(&network.Model{Title: "New model"}, "")
	w.setStatus("New model. Add reactions under Reactions: type an equation such as “A + B -> C”.", false)
	w.ed.SelectTab("Reactions")
}

func (w *mainWindow) openDialog() {
	askOpen(w.win, []string{".json"}, w.lastDir(), w.showError, w.openPath)
}

// askOpen shows a file-open dialog in win for files ending in one of exts,
// starting in dir when it is not nil, and calls open with the chosen path;
// an error of the dialog goes to fail, and Cancel does nothing.
func askOpen(win fyne.Window, exts []string, dir fyne.ListableURI, fail func(error), open func(path string)) {
	d := dialog.NewFileOpen(func(r fyne.URIReadCloser, err error) {
		if err != nil {
			fail(err)
			return
		}
		if r == nil {
			return
		}
		path := r.URI().Path()
		r.Close()
		open(path)
	}, win)
	d.SetFilter(storage.NewExtensionFileFilter(exts))
	if dir != nil {
		d.SetLocation(dir)
	}
	d.Resize(fyne.NewSize(900, 600))
	d.Show()
}

func (w *mainWindow) openPath(path string) {
	if err := w.loadFile(path); err != nil {
		w.showError(err)
		return
	}
	w.simulate()
}

func (w *mainWindow) lastDir() fyne.ListableURI {
	dir := ""
	if w.doc.Path != "" {
		dir = filepath.Dir(w.doc.Path)
	} else if r := w.recent(); len(r) > 0 {
		dir = filepath.Dir(r[0])
	}
	if dir == "" {
		return nil
	}
	l, err := storage.ListerForURI(storage.NewFileURI(dir))
	if err != nil {
		return nil
	}
	return l
}

// save writes the model to its file, or asks for one.
func (w *mainWindow) save() {
	if w.doc.Path == "" {
		w.saveAs()
		return
	}
	w.saveTo(w.doc.Path)
}

func (w *mainWindow) saveTo(path string) {
	if err := w.doc.Model().Save(path); err != nil {
		w.showError(err)
		return
	}
	w.exampleOf = ""
	w.doc.MarkSaved(path)
	w.addRecent(path)
	w.removeRecovery()
	w.updateTitle()
	if w.meas.data != nil {
		if err := calibrate.SaveCompanion(path, w.meas.path); err != nil {
			w.showError(fmt.Errorf("the model is saved, but its measurements could not be remembered beside it: %w", err))
		}
	}
	if n := w.ed.Untaken(); n > 0 {
		w.setStatus(fmt.Sprintf("Saved %s, but %d %s typed text that could not be taken (see Messages); the file has the earlier %s.",
			path, n, plural(n, "field holds", "fields hold"), plural(n, "value", "values")), true)
		return
	}
	w.setStatus("Saved "+path, false)
}

func (w *mainWindow) saveAs() {
	name := "model.json"
	if w.doc.Path != "" {
		name = filepath.Base(w.doc.Path)
	} else if w.exampleOf != "" {
		name = w.exampleOf
	}
	w.saveFileDialog(name, ".json", w.saveTo)
}

// recent returns the recent files, newest first.
func (w *mainWindow) recent() []string {
	return w.app.Preferences().StringList(recentKey)
}

func (w *mainWindow) addRecent(path string) {
	abs, err := filepath.Abs(path)
	if err == nil {
		path = abs
	}
	list := []string{path}
	for _, p := range w.recent() {
		if p != path && len(list) < maxRecent {
			list = append(list, p)
		}
	}
	w.app.Preferences().SetStringList(recentKey, list)
	if w.mainMenu != nil {
		w.fillRecent(w.mainMenu.Items[0].Items[3])
		w.mainMenu.Refresh()
	}
}

// fillRecent lists the recent files under item.
func (w *mainWindow) fillRecent(item *fyne.MenuItem) {
	item.ChildMenu = fyne.NewMenu("")
	for _, p := range w.recent() {
		item.ChildMenu.Items = append(item.ChildMenu.Items, fyne.NewMenuItem(p, func() {
			w.confirmDiscard("opening another model", func() { w.openPath(p) })
		}))
	}
	if len(item.ChildMenu.Items) == 0 {
		none := fyne.NewMenuItem("(no recent files)", nil)
		none.Disabled = true
		item.ChildMenu.Items = append(item.ChildMenu.Items, none)
	}
}

// startAutosave writes the model to the recovery file every 30 s while it
// has unsaved changes.
func (w *mainWindow) startAutosave() {
	if w.screenshotMode {
		return
	}
	go func() {
		for range time.Tick(30 * time.Second) {
			fyne.Do(w.autosave)
		}
	}()
}

func (w *mainWindow) autosave() {
	if !w.doc.Dirty() {
		return
	}
	b, err := modelBytes(w.doc.Model())
	if err != nil {
		return // a model that cannot be written (NaN) is saved on the next change
	}
	p := w.recoveryFile
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		return
	}
	if err := atomicfile.Write(p, b); err == nil {
		w.notice("Unsaved changes kept in " + p + " at " + time.Now().Format("15:04:05"))
	}
}

func (w *mainWindow) removeRecovery() {
	if w.screenshotMode {
		return
	}
	os.Remove(w.recoveryFile)
}
