package main

import (
	"os"
	"strings"

	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/run"
	"kinetarium/network"
)

// pressKey delivers Ctrl (with Shift when shift is set) and key to the
// window the way Fyne's desktop driver does (internal/driver/glfw,
// window.triggersShortcut in Fyne v2.7): Ctrl+Z and Ctrl+Y arrive as
// Fyne's own fyne.ShortcutUndo and fyne.ShortcutRedo, any other
// combination as a desktop.CustomShortcut; a main-menu item whose shortcut
// has the same name runs first, otherwise the canvas's shortcuts.
func pressKey(w *mainWindow, key fyne.KeyName, shift bool) {
	mod := fyne.KeyModifierShortcutDefault
	var sc fyne.Shortcut
	switch {
	case !shift && key == fyne.KeyZ:
		sc = &fyne.ShortcutUndo{}
	case !shift && key == fyne.KeyY:
		sc = &fyne.ShortcutRedo{}
	default:
		if shift {
			mod |= fyne.KeyModifierShift
		}
		sc = &desktop.CustomShortcut{KeyName: key, Modifier: mod}
	}
	for _, m := range w.mainMenu.Items {
		for _, it := range m.Items {
			if it.Shortcut != nil && it.Shortcut.ShortcutName() == sc.ShortcutName() && it.Action != nil {
				it.Action()
				return
			}
		}
	}
	w.win.Canvas().(fyne.Shortcutable).TypedShortcut(sc)
}

// Ctrl+Z undoes and Ctrl+Y and Ctrl+Shift+Z redo an edit of the model,
// though Fyne turns Ctrl+Z and Ctrl+Y into its own undo and redo
// shortcuts; the menu names the keys that work.
func TestUndoRedoKeys(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.autoRerun = false
	onUI(func() { w.setModel(tuneDecayModel(), "") })
	edit := func() {
		w.doc.Apply("edit k", func(m *network.Model) { m.Parameters[0].Value = 3 })
	}
	k := func() float64 { return w.doc.Model().Parameters[0].Value }
	onUI(func() {
		edit()
		pressKey(w, fyne.KeyZ, false)
		if k() != 0.7 {
			t.Fatalf("after Ctrl+Z k = %g, want 0.7 (the edit undone)", k())
		}
		pressKey(w, fyne.KeyY, false)
		if k() != 3 {
			t.Fatalf("after Ctrl+Y k = %g, want 3 (the edit redone)", k())
		}
		pressKey(w, fyne.KeyZ, false)
		pressKey(w, fyne.KeyZ, true)
		if k() != 3 {
			t.Fatalf("after Ctrl+Z, Ctrl+Shift+Z k = %g, want 3 (the edit redone)", k())
		}
	})
	for _, it := range w.mainMenu.Items[1].Items {
		ks, ok := it.Shortcut.(fyne.KeyboardShortcut)
		if !ok {
			t.Errorf("Edit ▸ %s names no key", it.Label)
			continue
		}
		if want := map[string]fyne.KeyName{"Undo": fyne.KeyZ, "Redo": fyne.KeyY}[it.Shortcut.ShortcutName()]; ks.Key() != want {
			t.Errorf("Edit ▸ %s names key %s (shortcut %q), want the undo or redo key", it.Label, ks.Key(), it.Shortcut.ShortcutName())
		}
	}
}

// README names the key that the Run menu shows for Simulate.
func TestReadmeNamesSimulateKey(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	var sim *fyne.MenuItem
	for _, it := range w.mainMenu.Items[2].Items {
		if it.Label == "Simulate" {
			sim = it
		}
	}
	if sim == nil {
		t.Fatal("no Run ▸ Simulate")
	}
	key := string(sim.Shortcut.(*desktop.CustomShortcut).KeyName)
	b, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	want := "Simulate (Ctrl+" + key
	if !strings.Contains(string(b), want) {
		t.Errorf("README does not contain %q, the key the menu shows", want)
	}
	if got := w.plot.placeholder.Text; !strings.Contains(got, want) {
		t.Errorf("the empty figure says %q, not the key the menu shows (%q)", got, want)
	}
}

// Duplicating a species keeps the colour of every species after it, in
// the figure and in the species list, and the copy takes a colour of its
// own.
func TestColoursSurviveDuplication(t *testing.T) {
	a := test.NewTempApp(t)
	w := newMainWindow(a, true)
	defer w.win.Close()
	w.ctrl.Deliver = onUI
	onUI(func() { w.setModel(tuneDecayModel(), "") }) // species A, B
	onUI(w.simulate)
	waitFor(t, "the first run", func() bool { return w.current != nil && !w.ctrl.Running() })
	var before map[string]int
	var first *run.Outcome
	onUI(func() {
		first = w.current
		before = map[string]int{}
		for j, n := range w.current.Names {
			before[n] = w.plot.view.Slot(n, j)
		}
		// The Species tab's duplicate button on A.
		w.ed.SelectRow("species", 0)
		tab := w.ed.Tabs().Selected().Content.(*fyne.Container)
		bar := tab.Objects[1].(*fyne.Container) // the Border's top: the buttons
		test.Tap(bar.Objects[2].(*widget.Button))
	})
	waitFor(t, "the re-run", func() bool { return w.current != first && !w.ctrl.Running() })
	onUI(func() {
		if got := w.current.Names; len(got) != 3 || got[1] != "A_copy1" {
			t.Fatalf("names %v, want A, A_copy1, B", got)
		}
		slots := map[int]string{}
		for j, n := range w.current.Names {
			s := w.plot.view.Slot(n, j)
			if b, ok := before[n]; ok && s != b {
				t.Errorf("%s has colour slot %d after the duplication, %d before", n, s, b)
			}
			if o, dup := slots[s]; dup {
				t.Errorf("%s and %s share colour slot %d", n, o, s)
			}
			slots[s] = n
		}
		w.refreshSpecies()
		for row, j := range w.shownSpecies {
			o := w.speciesList.CreateItem()
			w.speciesList.UpdateItem(row, o)
			sw := o.(*fyne.Container).Objects[1].(*swatch)
			if n := w.current.Names[j]; sw.slot != w.plot.view.Slot(n, j) {
				t.Errorf("the species list shows %s in slot %d, the figure in %d", n, sw.slot, w.plot.view.Slot(n, j))
			}
		}
	})
}
