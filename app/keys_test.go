package main

import (
	"os"
	"strings"

	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/test"

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
