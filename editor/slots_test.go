package editor

import (
	"testing"

	"kinetarium/network"
)

// Colour slots belong to species and assignments, not to list positions:
// duplicating, adding, deleting, moving and renaming keep every other
// item's slot, a rename keeps the item's own, and undo brings back the
// slots of the state it returns to.
func TestColourSlotsFollowItems(t *testing.T) {
	test := func(t *testing.T, d *Document, want map[string]int) {
		t.Helper()
		got := d.Slots()
		for n, s := range want {
			if got[n] != s {
				t.Errorf("slot of %s = %d, want %d (slots %v)", n, got[n], s, got)
			}
		}
		seen := map[int]string{}
		for n, s := range got {
			if o, dup := seen[s]; dup {
				t.Errorf("%s and %s share slot %d", n, o, s)
			}
			seen[s] = n
		}
	}
	m := enzymeModel() // species E, S, ES, P, S2
	m.Assignments = []network.Assignment{{Name: "E_total", Expression: "E + ES"}}
	d := NewDocument(m, "")
	start := map[string]int{"E": 0, "S": 1, "ES": 2, "P": 3, "S2": 4, "E_total": 5}
	test(t, d, start)

	// Duplicate S (as the Species tab does: the copy right after it).
	d.Apply("duplicate species", func(m *network.Model) { speciesKind.dup(m, 1, "S_copy") })
	test(t, d, map[string]int{"E": 0, "S": 1, "S_copy": 6, "ES": 2, "P": 3, "S2": 4, "E_total": 5})

	// Delete E, move P up, rename ES.
	d.Apply("delete species", func(m *network.Model) { speciesKind.remove(m, 0) })
	d.Apply("move species", func(m *network.Model) { speciesKind.swap(m, 2, 3) })
	if _, err := d.Rename(KindSpecies, "ES", "C", true); err != nil {
		t.Fatal(err)
	}
	test(t, d, map[string]int{"S": 1, "S_copy": 6, "C": 2, "P": 3, "S2": 4, "E_total": 5})

	// A new species takes the smallest free slot, E's.
	d.Apply("add species", func(m *network.Model) { speciesKind.add(d, m, 0) })
	if got := d.Slots()[d.Model().Species[0].Name]; got != 0 {
		t.Errorf("new species has slot %d, want 0, the smallest free", got)
	}

	// Undo back to the start restores its slots exactly.
	for d.Undo() {
	}
	test(t, d, start)
}
