package main

// Crash recovery: every window keeps its unsaved work in a recovery file
// of its own (so two windows, or two running programs, never overwrite
// each other's), and at start-up the program offers the files left by
// sessions that ended without saving.

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"kinetarium/network"
)

// recoveryDir is the folder of the recovery files.
func recoveryDir() string {
	dir, err := os.UserConfigDir()
	if err != nil {
		dir = os.TempDir()
	}
	return filepath.Join(dir, "kinetarium", "recovery")
}

// newRecoveryPath names the recovery file of a new window:
// unsaved-PID-NANOSECONDS.json, unique to the program run and the window.
func newRecoveryPath() string {
	return filepath.Join(recoveryDir(), fmt.Sprintf("unsaved-%d-%d.json", os.Getpid(), time.Now().UnixNano()))
}

// recoveryPID reads the process number from a recovery file's name; ok is
// false for other files.
func recoveryPID(name string) (pid int, ok bool) {
	rest, ok := strings.CutPrefix(name, "unsaved-")
	if !ok {
		return 0, false
	}
	rest, ok = strings.CutSuffix(rest, ".json")
	if !ok {
		return 0, false
	}
	a, b, ok := strings.Cut(rest, "-")
	if !ok {
		return 0, false
	}
	pid, err := strconv.Atoi(a)
	if _, err2 := strconv.ParseInt(b, 10, 64); err != nil || err2 != nil {
		return 0, false
	}
	return pid, true
}

// sessionAlive reports whether the program run pid is still running (its
// recovery file is then in use, not left behind). A variable for tests.
var sessionAlive = processAlive

// recovery is unsaved work left behind by an earlier session.
type recovery struct {
	path  string
	model *network.Model
	when  time.Time
}

// findRecoveries lists the recovery files of sessions that are no longer
// running, newest first, other than this window's own. Files that cannot
// be read as models are removed (they hold nothing to restore).
func (w *mainWindow) findRecoveries() []recovery {
	entries, err := os.ReadDir(recoveryDir())
	if err != nil {
		return nil
	}
	var out []recovery
	for _, e := range entries {
		pid, ok := recoveryPID(e.Name())
		p := filepath.Join(recoveryDir(), e.Name())
		if !ok || p == w.recoveryFile || sessionAlive(pid) {
			continue
		}
		fi, err := e.Info()
		if err != nil {
			continue
		}
		m, err := network.Load(p)
		if err != nil {
			os.Remove(p)
			continue
		}
		out = append(out, recovery{path: p, model: m, when: fi.ModTime()})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].when.After(out[j].when) })
	return out
}

// offerRecovery asks, for each recovery in turn, whether to restore it.
func (w *mainWindow) offerRecovery(recs []recovery) {
	if len(recs) == 0 {
		return
	}
	r := recs[0]
	title := strings.TrimSpace(r.model.Title)
	if title == "" {
		title = "untitled"
	}
	msg := widget.NewLabel(fmt.Sprintf("Kinetarium kept unsaved work from %s (model “%s”).\nRestore it? The restored model opens as a new, unsaved file.",
		r.when.Format("2 Jan 15:04"), title))
	d := dialog.NewCustomConfirm("Restore unsaved work?", "Restore", "Discard it", msg, func(ok bool) {
		if ok {
			w.restoreRecovery(r)
		} else {
			os.Remove(r.path)
		}
		if len(recs) > 1 {
			fyne.Do(func() { w.offerRecovery(recs[1:]) })
		}
	}, w.win)
	fyne.Do(d.Show)
}

// restoreRecovery opens the recovered model as a new, unsaved file, moves
// it into this window's recovery file and removes the old one.
func (w *mainWindow) restoreRecovery(r recovery) {
	w.exampleOf = ""
	w.setModel(r.model, "")
	// The restored work exists only in a recovery file until saved: keep
	// it in this window's own at once, then drop the old one.
	w.doc.MarkModified()
	w.updateTitle()
	w.autosave()
	if _, err := os.Stat(w.recoveryFile); err == nil {
		os.Remove(r.path)
	}
	w.simulate()
}
