package run

import (
	"context"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"kinetarium/plotting"
)

// A column whose unit is not the concentration axis's names its unit in
// the legend, so that an amount in mg is not read as mg/L nor a fraction
// as uM; the species are named alone, and the readout's unit (UnitOf)
// agrees.
func TestFigureLegendNamesOtherUnits(t *testing.T) {
	for _, c := range []struct {
		example, column, want, unit string
	}{
		{"twice-daily-oral-dose.json", "body_amount", "body_amount (mg)", "mg"},
		{"twice-daily-oral-dose.json", "D_plasma", "D_plasma", "mg/L"},
		{"protease-inhibitor.json", "inhibited", "inhibited (dimensionless)", ""},
		{"protease-inhibitor.json", "E_total", "E_total", "uM"},
	} {
		o, err := Run(context.Background(), loadExample(t, c.example), nil)
		if err != nil {
			t.Fatal(err)
		}
		j := slices.Index(o.Names, c.column)
		if got := o.UnitOf(j); got != c.unit {
			t.Errorf("%s: unit %q, want %q", c.column, got, c.unit)
		}
		hidden := map[string]bool{}
		for _, n := range o.Names {
			hidden[n] = n != c.column
		}
		p, err := Figure(o, View{Hidden: hidden})
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(t.TempDir(), "f.svg")
		if err := plotting.Save(p, path, plotting.DefaultWidth, plotting.DefaultHeight, 96, nil); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		svg := string(b)
		if !strings.Contains(svg, ">"+c.want+"<") {
			t.Errorf("%s: the legend does not read %q", c.column, c.want)
		}
	}
}
