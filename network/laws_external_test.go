package network_test

import (
	"fmt"
	"reflect"
	"testing"

	"kinetarium/internal/gennet"
	"kinetarium/network"
)

// The sparse elimination gives the same laws, weight for weight and in the
// same order, as the earlier dense rational elimination on 300 random
// networks of 2 to 60 species (the reduced row echelon form is unique, and
// the sign improvement only combines laws that share species, so the
// results must be identical, not only span the same space).
func TestConservationLawsMatchDenseMethod(t *testing.T) {
	total, withLaws, multi := 0, 0, 0
	for seed := range uint64(300) {
		m := gennet.Random(seed, 2+int(seed%59))
		net, probs := network.Check(m)
		if err := probs.Err(); err != nil {
			t.Fatalf("random network %d: %v", seed, err)
		}
		got := net.ConservationLaws()
		want := network.DenseConservationLaws(net)
		if !reflect.DeepEqual(got, want) {
			t.Errorf("random network %d (%d species): sparse laws\n%v\ndense laws\n%v", seed, len(m.Species), texts(got), texts(want))
		}
		total += len(got)
		if len(got) > 0 {
			withLaws++
		}
		for _, l := range got {
			if len(l.Terms) > 2 {
				multi++
				break
			}
		}
	}
	// The comparison means something only if the networks have laws, and
	// laws of more than two species.
	if withLaws < 150 || multi < 50 {
		t.Errorf("only %d of 300 random networks have laws (%d in all), %d with a law of 3 or more species; the generator no longer exercises the method", withLaws, total, multi)
	}
	t.Logf("%d laws in %d networks; %d networks with a law of 3 or more species", total, withLaws, multi)
}

func texts(ls []network.ConservationLaw) []string {
	var s []string
	for _, l := range ls {
		s = append(s, fmt.Sprintf("%s %v", l.Text, l.Terms))
	}
	return s
}
