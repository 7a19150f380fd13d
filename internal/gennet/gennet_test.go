package gennet

import (
	"bytes"
	"testing"

	"kinetarium/network"
)

// The generated networks check without problems, have the size asked for
// and are the same on every call.
func TestGeneratedNetworksCheck(t *testing.T) {
	for _, c := range []struct {
		name string
		gen  func(int) *network.Model
	}{{"cascade", Cascade}, {"feedback", Feedback}} {
		for _, n := range []int{50, 1000} {
			m := c.gen(n)
			if len(m.Species) != (n+3)/4*4 {
				t.Errorf("%s(%d): %d species", c.name, n, len(m.Species))
			}
			if _, probs := network.Check(m); len(probs) > 0 {
				t.Errorf("%s(%d): %v", c.name, n, probs)
			}
			var a, b bytes.Buffer
			if err := m.Write(&a); err != nil {
				t.Fatal(err)
			}
			if err := c.gen(n).Write(&b); err != nil {
				t.Fatal(err)
			}
			if a.String() != b.String() {
				t.Errorf("%s(%d) differs between calls", c.name, n)
			}
		}
	}
}
