package main

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// findButton returns the first button labelled text among o and what it
// holds.
func findButton(o fyne.CanvasObject, text string) *widget.Button {
	var found *widget.Button
	walkObjects(o, false, func(c fyne.CanvasObject) {
		if b, ok := c.(*widget.Button); ok && b.Text == text && found == nil {
			found = b
		}
	})
	return found
}

// The whole path of crash recovery, headless: edit, autosave, a crash (the
// window is abandoned, its program run counted as ended), restart (the
// default example opens, which used to delete the recovery file before it
// was offered), the offer, Restore, and the identical model. A second
// window keeps its own recovery file.
func TestCrashRecoveryRestoresTheModel(t *testing.T) {
	t.Setenv("XDG_CONFIG_HOME", t.TempDir())
	t.Setenv("HOME", t.TempDir())
	a := test.NewTempApp(t)

	// The first session: edit and autosave.
	w1 := newMainWindow(a, false)
	w1.autoRerun = false
	var want []byte
	onUI(func() {
		if err := w1.openStart(""); err != nil {
			t.Fatal(err)
		}
		w1.doc.Apply("rename", func(m *network.Model) { m.Title = "Work in progress"; m.Parameters[0].Value = 42.5 })
		w1.autosave()
		var err error
		if want, err = modelBytes(w1.doc.Model()); err != nil {
			t.Fatal(err)
		}
	})
	if _, err := os.Stat(w1.recoveryFile); err != nil {
		t.Fatalf("no recovery file after the autosave: %v", err)
	}

	// A second window of a running program keeps its own file and is not
	// offered: its session is alive.
	w2 := newMainWindow(a, false)
	w2.autoRerun = false
	onUI(func() {
		w2.setModel(tuneDecayModel(), "")
		w2.doc.MarkModified()
		w2.autosave()
	})
	if w2.recoveryFile == w1.recoveryFile {
		t.Fatal("two windows share a recovery file")
	}
	if b, _ := os.ReadFile(w1.recoveryFile); !bytes.Equal(b, want) {
		t.Fatal("the second window's autosave changed the first's recovery file")
	}

	// The crash: the first window's program run has ended; the second's
	// has not.
	sessionAlive = func(pid int) bool { return false }
	defer func() { sessionAlive = processAlive }()
	dead := w1.recoveryFile
	w2file := w2.recoveryFile
	os.Remove(w2file) // the second closes normally, nothing to offer

	// The restart, in main's order: look, open the default example, offer.
	w3 := newMainWindow(a, false)
	w3.autoRerun = false
	var recs []recovery
	onUI(func() {
		recs = w3.findRecoveries()
		if err := w3.openStart(""); err != nil {
			t.Fatal(err)
		}
	})
	if len(recs) != 1 || recs[0].path != dead {
		t.Fatalf("found %d recoveries %v, want the first window's %s", len(recs), recs, dead)
	}
	if _, err := os.Stat(dead); err != nil {
		t.Fatalf("opening the default example removed the recovery file: %v", err)
	}
	onUI(func() { w3.offerRecovery(recs) })
	var restore *widget.Button
	onUI(func() {
		top := w3.win.Canvas().Overlays().Top()
		if top == nil {
			t.Fatal("no dialog offers the unsaved work")
		}
		restore = findButton(top, "Restore")
	})
	if restore == nil {
		t.Fatal("the dialog has no Restore button")
	}
	onUI(func() { test.Tap(restore) })
	onUI(func() {
		got, err := modelBytes(w3.doc.Model())
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want) {
			t.Errorf("restored model differs:\n%s\nwant:\n%s", got, want)
		}
		if !w3.doc.Dirty() || w3.doc.Path != "" {
			t.Errorf("the restored model is dirty %v, path %q; want an unsaved new file", w3.doc.Dirty(), w3.doc.Path)
		}
	})
	// The work now lives in the new window's recovery file only.
	if b, err := os.ReadFile(w3.recoveryFile); err != nil || !bytes.Equal(b, want) {
		t.Errorf("the new window's recovery file: %v", err)
	}
	if _, err := os.Stat(dead); !os.IsNotExist(err) {
		t.Errorf("the old recovery file is still there: %v", err)
	}
	if left, _ := filepath.Glob(filepath.Join(recoveryDir(), "*")); len(left) != 1 {
		t.Errorf("recovery folder holds %v, want only the new window's file", left)
	}
	for _, w := range []*mainWindow{w1, w2, w3} {
		onUI(w.win.Close)
	}
}
