package network_test

import (
	"bytes"
	"reflect"
	"testing"

	"kinetarium/network"
)

// A rate's fields are a short list in the order of their keys, whatever
// order they are given, read or changed in; With copies, so that copies
// of a rate never share a change; Equal does not depend on the order.
// (The properties of a key–value list are common practice.)
func TestRateArgs(t *testing.T) {
	r := network.NewRate(network.MassAction, "k_reverse", 0.5, "k", "kon")
	want := []network.Arg{{Key: "k", Value: network.Named("kon")}, {Key: "k_reverse", Value: network.Number(0.5)}}
	if !reflect.DeepEqual(r.Args, want) {
		t.Fatalf("NewRate gave %v, want %v", r.Args, want)
	}
	if got := r.Arg("k_reverse"); got != network.Number(0.5) {
		t.Errorf("Arg(k_reverse) = %v, want 0.5", got)
	}
	if got := r.Arg("km"); got.Set {
		t.Errorf("Arg of an absent key is set: %v", got)
	}
	s := r.With("k", network.Number(2))
	if r.Arg("k") != network.Named("kon") || s.Arg("k") != network.Number(2) {
		t.Errorf("With changed the original (%v) or not the copy (%v)", r.Arg("k"), s.Arg("k"))
	}
	u := s.With("k_reverse", network.Value{}).With("aa", network.Number(1))
	if len(s.Args) != 2 || !reflect.DeepEqual(u.Args, []network.Arg{{Key: "aa", Value: network.Number(1)}, {Key: "k", Value: network.Number(2)}}) {
		t.Errorf("removing and adding by With: %v (from %v)", u.Args, s.Args)
	}
	if got := u.With("aa", network.Value{}).With("k", network.Value{}).Args; got != nil {
		t.Errorf("a rate with every field removed keeps %v", got)
	}
	if !r.Equal(network.Rate{Law: network.MassAction, Args: []network.Arg{want[1], want[0]}}) {
		t.Error("Equal depends on the order of the fields")
	}
	if r.Equal(s) || r.Equal(network.NewRate(network.MassAction, "k", "kon")) {
		t.Error("Equal of rates with different fields")
	}
	// A file with the fields in another order reads as the same rate.
	const file = `{"format": "kinetarium.model/1", "species": [{"name": "A", "initial": 1}, {"name": "B", "initial": 0}],
 "parameters": [{"name": "kon", "value": 1}],
 "reactions": [{"name": "r", "equation": "A <=> B", "rate": {"k_reverse": 0.5, "law": "mass_action", "k": "kon"}}]}`
	m, err := network.Read(bytes.NewReader([]byte(file)), "rate.json")
	if err != nil {
		t.Fatal(err)
	}
	if got := m.Reactions[0].Rate; !reflect.DeepEqual(got.Args, want) || !got.Equal(r) {
		t.Errorf("read %v, want %v", got.Args, want)
	}
}
