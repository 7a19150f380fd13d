package network_test

import (
	"bytes"
	"fmt"
	"testing"

	"kinetarium/internal/gennet"
	"kinetarium/network"
)

// modelFile returns the model m as the bytes of its JSON file.
func modelFile(tb testing.TB, m *network.Model) []byte {
	var buf bytes.Buffer
	if err := m.Write(&buf); err != nil {
		tb.Fatal(err)
	}
	return buf.Bytes()
}

// Reading, checking and compiling the generated networks of 5,000 and
// 20,000 species (the target: under a second at 20,000).
func BenchmarkLoadCheckCompile(b *testing.B) {
	for _, fam := range []struct {
		name string
		gen  func(int) *network.Model
	}{{"cascade", gennet.Cascade}, {"feedback", gennet.Feedback}} {
		for _, n := range []int{5000, 20000} {
			data := modelFile(b, fam.gen(n))
			b.Run(fmt.Sprintf("%s-%d", fam.name, n), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					m, err := network.Read(bytes.NewReader(data), "gen.json")
					if err != nil {
						b.Fatal(err)
					}
					if _, err := network.Compile(m); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// Conservation laws of the generated networks (one law per module).
func BenchmarkConservationLaws(b *testing.B) {
	for _, n := range []int{1000, 5000, 20000} {
		net, _ := network.Check(gennet.Cascade(n))
		b.Run(fmt.Sprintf("cascade-%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if len(net.ConservationLaws()) != n/4 {
					b.Fatal("wrong number of laws")
				}
			}
		})
	}
}
