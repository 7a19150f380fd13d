// Package editor edits reaction-network models: a Document holds the model
// being edited with its file path, unsaved-changes flag and undo history,
// and the widgets in this package show the model's compartments, species,
// parameters, reactions and run settings as lists with a detail form for
// the selected row.
//
// Every change to the model goes through Document.Apply, so that every edit
// can be undone. The Document itself holds no widgets and is tested without
// a display.
package editor

import (
	"bytes"
	"fmt"
	"reflect"
	"time"

	"kinetarium/network"
)

// maxHistory is the number of undo steps kept.
const maxHistory = 500

// snapshot is a whole-model state in the undo history.
type snapshot struct {
	model *network.Model
	slots map[string]int // colour slots of the state; see Document.Slots
	desc  string         // what the edit that left this state did
	id    int
}

// Document is a model being edited: the model, the file it came from, and
// the history of edits. The zero value is not usable; use NewDocument.
//
// A Document is not safe for concurrent use; the user interface uses it
// from its own goroutine only. Snapshots handed out by Snapshot are
// independent copies and may be used anywhere.
type Document struct {
	model *network.Model
	id    int // identifies the current state; new for every edit
	next  int

	// Path is the file the model was read from or last saved to; empty for
	// a new model.
	Path string

	savedID int
	undo    []snapshot // states before each edit, oldest first
	redo    []snapshot // states undone, most recent last

	mergeKey  string // key of the last edit, for merging keystrokes
	mergeTime time.Time

	listeners []func()
	net       *network.Net // the model checked; see Net

	// slots holds the colour slot of every species and assignment, by
	// name; see Slots. A map is never changed once made, so that
	// snapshots may share it.
	slots map[string]int
}

// NewDocument returns a Document holding m (nil means an empty model), with
// no history and no unsaved changes.
func NewDocument(m *network.Model, path string) *Document {
	if m == nil {
		m = &network.Model{}
	}
	d := &Document{model: m.Clone(), Path: path}
	d.next = 1
	d.slots = nextSlots(nil, d.model, nil)
	return d
}

// Slots returns the colour slot (see plotting.Colour) of every species and
// assignment of the model, by name. A slot belongs to the item: it stays
// when other items are added, duplicated, deleted or moved, and follows a
// rename; a new item takes the smallest slot not in use. A model just
// opened has slots in model order, species first, as figures drawn
// without a Document (the headless command) colour them. Callers must not
// change the map.
func (d *Document) Slots() map[string]int { return d.slots }

// nextSlots returns the colour slots of m, following old: names renamed
// (old name to new) keep their slot, names gone free theirs, and new
// names take the smallest free slots in model order.
func nextSlots(old map[string]int, m *network.Model, renamed map[string]string) map[string]int {
	names := make([]string, 0, len(m.Species)+len(m.Assignments))
	for _, s := range m.Species {
		names = append(names, s.Name)
	}
	for _, a := range m.Assignments {
		names = append(names, a.Name)
	}
	slots := make(map[string]int, len(names))
	used := map[int]bool{}
	for _, n := range names {
		from := n
		for o, nw := range renamed {
			if nw == n {
				from = o
			}
		}
		if s, ok := old[from]; ok && !used[s] {
			slots[n] = s
			used[s] = true
		}
	}
	free := 0
	for _, n := range names {
		if _, ok := slots[n]; ok {
			continue
		}
		for used[free] {
			free++
		}
		slots[n] = free
		used[free] = true
	}
	return slots
}

// Model returns the current model. Callers must not modify it; make
// changes with Apply.
func (d *Document) Model() *network.Model { return d.model }

// Net returns the current model checked (see network.Check): parsed once
// per version and shared by the messages, the forms and the previews.
func (d *Document) Net() *network.Net {
	if d.net == nil || d.net.Model != d.model {
		d.net, _ = network.Check(d.model)
	}
	return d.net
}

// Snapshot returns an independent copy of the current model, safe to hand
// to another goroutine.
func (d *Document) Snapshot() *network.Model { return d.model.Clone() }

// Version identifies the current state of the model: it changes with every
// edit, undo and redo, and comes back to an earlier value when undo returns
// to that state.
func (d *Document) Version() int { return d.id }

// Dirty reports whether the model differs from the state last saved or
// loaded.
func (d *Document) Dirty() bool { return d.id != d.savedID }

// MarkSaved records the current state as saved to path. Saving is not an
// edit: it calls no OnChange listener, so that what follows edits (slider
// values going back to the model's, re-runs) does not happen; the caller
// updates what shows the file's name and state.
func (d *Document) MarkSaved(path string) {
	d.Path = path
	d.savedID = d.id
}

// MarkModified records the current state as not saved, for a model that
// exists only in memory, such as one restored after a crash. Like
// MarkSaved it calls no OnChange listener.
func (d *Document) MarkModified() {
	d.savedID = -1
}

// OnChange registers f to be called after every edit, undo, redo and load
// (Replace), but not after MarkSaved or MarkModified.
func (d *Document) OnChange(f func()) { d.listeners = append(d.listeners, f) }

func (d *Document) notify() {
	for _, f := range d.listeners {
		f()
	}
}

// Apply makes one edit: it calls edit on a copy of the model and, when the
// copy differs from the model, makes it the current model and records the
// previous state for Undo under description (shown as "Undo <description>").
// It reports whether the model changed.
func (d *Document) Apply(description string, edit func(*network.Model)) bool {
	return d.apply("", description, edit, nil)
}

// ApplyMerged is Apply for a stream of small edits to one field, such as
// keystrokes: successive calls with the same non-empty key, less than two
// seconds apart and with no other edit, undo or redo between them, make a
// single undo step.
func (d *Document) ApplyMerged(key, description string, edit func(*network.Model)) bool {
	return d.apply(key, description, edit, nil)
}

// apply makes an edit; renamed maps old names to new for the colour
// slots.
func (d *Document) apply(key, description string, edit func(*network.Model), renamed map[string]string) bool {
	next := d.model.Clone()
	edit(next)
	if reflect.DeepEqual(next, d.model) {
		return false
	}
	now := time.Now()
	merge := key != "" && key == d.mergeKey && now.Sub(d.mergeTime) < 2*time.Second && len(d.undo) > 0
	if !merge {
		d.undo = append(d.undo, snapshot{model: d.model, slots: d.slots, desc: description, id: d.id})
		if len(d.undo) > maxHistory {
			d.undo = append(d.undo[:0:0], d.undo[len(d.undo)-maxHistory:]...)
		}
	}
	d.redo = d.redo[:0]
	d.slots = nextSlots(d.slots, next, renamed)
	d.model = next
	d.id = d.next
	d.next++
	d.mergeKey, d.mergeTime = key, now
	d.notify()
	return true
}

// CanUndo reports whether there is an edit to undo, and describes it.
func (d *Document) CanUndo() (string, bool) {
	if len(d.undo) == 0 {
		return "", false
	}
	return d.undo[len(d.undo)-1].desc, true
}

// CanRedo reports whether there is an undone edit to redo, and describes it.
func (d *Document) CanRedo() (string, bool) {
	if len(d.redo) == 0 {
		return "", false
	}
	return d.redo[len(d.redo)-1].desc, true
}

// Undo returns the model to the state before the last edit. It reports
// whether there was an edit to undo.
func (d *Document) Undo() bool {
	if len(d.undo) == 0 {
		return false
	}
	s := d.undo[len(d.undo)-1]
	d.undo = d.undo[:len(d.undo)-1]
	d.redo = append(d.redo, snapshot{model: d.model, slots: d.slots, desc: s.desc, id: d.id})
	d.model, d.slots, d.id = s.model, s.slots, s.id
	d.mergeKey = ""
	d.notify()
	return true
}

// Redo makes again the edit last undone. It reports whether there was one.
func (d *Document) Redo() bool {
	if len(d.redo) == 0 {
		return false
	}
	s := d.redo[len(d.redo)-1]
	d.redo = d.redo[:len(d.redo)-1]
	d.undo = append(d.undo, snapshot{model: d.model, slots: d.slots, desc: s.desc, id: d.id})
	d.model, d.slots, d.id = s.model, s.slots, s.id
	d.mergeKey = ""
	d.notify()
	return true
}

// Replace puts m in place of the model, as a new file at path, and forgets
// the history. The result has no unsaved changes.
func (d *Document) Replace(m *network.Model, path string) {
	if m == nil {
		m = &network.Model{}
	}
	d.model = m.Clone() // edits compare clones, which leave out file positions
	d.slots = nextSlots(nil, d.model, nil)
	d.Path = path
	d.undo, d.redo = nil, nil
	d.id = d.next
	d.next++
	d.savedID = d.id
	d.mergeKey = ""
	d.notify()
}

// Rename renames the item of kind k called old to new. When everywhere is
// true it also updates every use of the name: equations, rate expressions
// and rate-law fields for species and parameters, species' compartments for
// compartments. Names are matched as whole words, never as parts of longer
// names. Rename returns the number of uses updated, or an error when new is
// not a valid name or is already taken.
func (d *Document) Rename(k Kind, old, new string, everywhere bool) (int, error) {
	if err := CheckName(new); err != nil {
		return 0, err
	}
	if old == new {
		return 0, nil
	}
	if owner, taken := d.NameTaken(new); taken {
		return 0, fmt.Errorf("the name %q is already used by a %s", new, owner)
	}
	uses := 0
	d.apply("", fmt.Sprintf("rename %s %s to %s", k, old, new), func(m *network.Model) {
		uses = renameInModel(m, k, old, new, everywhere)
	}, map[string]string{old: new})
	return uses, nil
}

// Uses counts the uses of the name of an item of kind k in the model's
// equations, rate laws and species' compartments.
func (d *Document) Uses(k Kind, name string) int {
	if k == KindReaction {
		return 0
	}
	return renameInModel(d.model.Clone(), k, name, name+"\x00", true)
}

// NameTaken reports whether name is used by a species, parameter,
// compartment, assignment or reaction, and by which kind.
func (d *Document) NameTaken(name string) (Kind, bool) {
	m := d.model
	for _, s := range m.Species {
		if s.Name == name {
			return KindSpecies, true
		}
	}
	for _, p := range m.Parameters {
		if p.Name == name {
			return KindParameter, true
		}
	}
	for _, c := range m.Compartments {
		if c.Name == name {
			return KindCompartment, true
		}
	}
	for _, a := range m.Assignments {
		if a.Name == name {
			return KindAssignment, true
		}
	}
	for _, r := range m.Reactions {
		if r.Name == name {
			return KindReaction, true
		}
	}
	return 0, false
}

// FreshName returns prefix followed by the smallest number ≥ 1 that makes a
// name not used in the model.
func (d *Document) FreshName(prefix string) string {
	for i := 1; ; i++ {
		name := fmt.Sprintf("%s%d", prefix, i)
		if _, taken := d.NameTaken(name); !taken {
			return name
		}
	}
}

// CheckName returns an error in plain words when s is not a valid name: a
// letter or underscore followed by letters, digits and underscores.
func CheckName(s string) error {
	if s == "" {
		return fmt.Errorf("a name is needed")
	}
	if !isNameStart(s[0]) {
		return fmt.Errorf("the name %q must start with a letter or an underscore", s)
	}
	for i := 1; i < len(s); i++ {
		if !isNameChar(s[i]) {
			return fmt.Errorf("the name %q may contain only letters, digits and underscores (found %q)", s, s[i:i+1])
		}
	}
	return nil
}

// Bytes returns the model file text of the current model.
func (d *Document) Bytes() ([]byte, error) {
	var b bytes.Buffer
	if err := d.model.Write(&b); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}
