package units

import (
	"math"
	"strings"
	"testing"
)

// The factors to SI base units follow from the definitions of the SI
// (BIPM, The International System of Units, 9th edition, 2019: the litre
// is 1 dm³ = 1e-3 m³, the minute 60 s, the hour 3600 s, the day 86400 s,
// the gram 1e-3 kg, and the prefixes m = 1e-3, µ = 1e-6, n = 1e-9,
// p = 1e-12, f = 1e-15) and from the molar, 1 M = 1 mol/L (IUPAC Green
// Book, 3rd edition, 2007). The table writes the expected factor from
// those definitions, not from this package's table.
func TestSIFactors(t *testing.T) {
	const (
		litre = 1e-3 // m³
		milli = 1e-3
		micro = 1e-6
		nano  = 1e-9
		pico  = 1e-12
		femto = 1e-15
	)
	conc := Dim{Amount: 1, Length: -3}
	for _, c := range []struct {
		src    string
		factor float64
		dim    Dim
	}{
		{"s", 1, Dim{Time: 1}},
		{"min", 60, Dim{Time: 1}},
		{"h", 60 * 60, Dim{Time: 1}},
		{"day", 24 * 60 * 60, Dim{Time: 1}},
		{"ms", milli, Dim{Time: 1}},
		{"mol", 1, Dim{Amount: 1}},
		{"mmol", milli, Dim{Amount: 1}},
		{"umol", micro, Dim{Amount: 1}},
		{"µmol", micro, Dim{Amount: 1}},
		{"nmol", nano, Dim{Amount: 1}},
		{"pmol", pico, Dim{Amount: 1}},
		{"M", 1 / litre, conc},
		{"mM", milli / litre, conc},
		{"uM", micro / litre, conc},
		{"μM", micro / litre, conc}, // Greek mu
		{"µM", micro / litre, conc}, // micro sign
		{"nM", nano / litre, conc},
		{"pM", pico / litre, conc},
		{"g", milli, Dim{Mass: 1}},
		{"mg", milli * milli, Dim{Mass: 1}},
		{"ug", micro * milli, Dim{Mass: 1}},
		{"ng", nano * milli, Dim{Mass: 1}},
		{"L", litre, Dim{Length: 3}},
		{"mL", milli * litre, Dim{Length: 3}},
		{"uL", micro * litre, Dim{Length: 3}},
		{"fL", femto * litre, Dim{Length: 3}},
		{"nL", nano * litre, Dim{Length: 3}},
		{"mg/L", milli * milli / litre, Dim{Mass: 1, Length: -3}},
		{"ug/mL", micro * milli / (milli * litre), Dim{Mass: 1, Length: -3}},
		{"L/h", litre / 3600, Dim{Length: 3, Time: -1}},
		{"1/(uM*s)", litre / micro, Dim{Amount: -1, Length: 3, Time: -1}},
		{"1/(nM·min)", litre / nano / 60, Dim{Amount: -1, Length: 3, Time: -1}},
		{"mg/L/h", milli * milli / litre / 3600, Dim{Mass: 1, Length: -3, Time: -1}},
		{"uM^2", (micro / litre) * (micro / litre), Dim{Amount: 2, Length: -6}},
		{"s^-1", 1, Dim{Time: -1}},
		{"m^3", 1, Dim{Length: 3}},
		{"1000*L", 1, Dim{Length: 3}},
		{"uM/nM", 1000, Dim{}},
		{"1", 1, Dim{}},
		{" ( uM ) / ( s ) ", micro / litre, Dim{Amount: 1, Length: -3, Time: -1}},
	} {
		u, err := Parse(c.src)
		if err != nil {
			t.Errorf("Parse(%q): %v", c.src, err)
			continue
		}
		if math.Abs(u.Factor-c.factor) > 1e-12*c.factor || u.Dim != c.dim {
			t.Errorf("Parse(%q) = %v·%v, want %v·%v", c.src, u.Factor, u.Dim, c.factor, c.dim)
		}
	}
}

// Conversions between units of one kind (factors from the SI definitions
// as above): 1 h = 60 min, 1 uM = 1000 nM, 1 mg/L = 1 ug/mL, 1/(uM·s) =
// 60/(uM·min) = 1e-3/(nM·s).
func TestTo(t *testing.T) {
	for _, c := range []struct {
		from, to string
		want     float64
	}{
		{"h", "min", 60}, {"day", "h", 24}, {"s", "h", 1.0 / 3600},
		{"uM", "nM", 1000}, {"M", "uM", 1e6}, {"pM", "nM", 1e-3},
		{"mg/L", "ug/mL", 1}, {"1/(uM*s)", "1/(uM*min)", 60}, {"1/(uM*s)", "1/(nM*s)", 1e-3},
		{"umol", "nmol", 1000},
	} {
		f, err := MustParse(c.from).To(MustParse(c.to))
		if err != nil || math.Abs(f-c.want) > 1e-12*c.want {
			t.Errorf("%s → %s: %v, %v; want %v", c.from, c.to, f, err, c.want)
		}
	}
	if _, err := MustParse("uM").To(MustParse("mg/L")); err == nil || !strings.Contains(err.Error(), "concentration and mass concentration") {
		t.Errorf("uM → mg/L: %v, want an error naming both kinds", err)
	}
}

// Parse → String → Parse gives the same unit, and String is stable.
func TestRoundTrip(t *testing.T) {
	for _, src := range []string{"s", "1/(uM*s)", "mg/L", "L/h", "uM^2/s", "nM", "day", "fL", "m^0.5", "1", "uM/nM", "1/(mg/L)", "umol", "kg*m^2/s^2"} {
		u := MustParse(src)
		s := u.String()
		v, err := Parse(s)
		if err != nil {
			t.Errorf("%q prints as %q, which does not parse: %v", src, s, err)
			continue
		}
		if !u.Equal(v) || v.String() != s {
			t.Errorf("%q → %q → %v (%q)", src, s, v, v.String())
		}
	}
	if got := MustParse("1/(uM*s)").String(); got != "1000*m^3/(mol*s)" {
		t.Errorf("1/(uM*s) prints as %q, want 1000*m^3/(mol*s)", got)
	}
}

func TestAlgebra(t *testing.T) {
	k2 := MustParse("1/(uM*s)")
	c := MustParse("uM")
	// k·[A]·[B] with k in 1/(uM·s) and concentrations in uM is uM/s.
	if r := k2.Mul(c).Mul(c); !r.Equal(MustParse("uM/s")) {
		t.Errorf("1/(uM*s)·uM·uM = %v, want uM/s", r)
	}
	// With concentrations in nM the same k is off by a factor of 1000.
	n := MustParse("nM")
	r := k2.Mul(n).Mul(n)
	if !r.SameDim(MustParse("nM/s")) || r.Equal(MustParse("nM/s")) {
		t.Errorf("1/(uM*s)·nM·nM = %v: want the dimension of nM/s but not the unit", r)
	}
	if f, _ := r.To(MustParse("nM/s")); math.Abs(f-1e-3) > 1e-15 {
		t.Errorf("1/(uM*s)·nM·nM in nM/s: %v, want 1e-3", f)
	}
	if !MustParse("uM").Div(MustParse("nM")).Dimensionless() {
		t.Error("uM/nM is not dimensionless")
	}
	if !MustParse("uM").IsConcentration() || !MustParse("mg/L").IsConcentration() || MustParse("mg").IsConcentration() {
		t.Error("IsConcentration wrong")
	}
	if !MustParse("h").IsTime() || MustParse("1/h").IsTime() {
		t.Error("IsTime wrong")
	}
	// Molecules in 1 nmol: 1e-9·N_A (N_A exact, SI 2019).
	if m, ok := MustParse("nmol").Moles(); !ok || m*Avogadro != 1e-9*6.02214076e23 {
		t.Errorf("nmol: %v moles", m)
	}
	if _, ok := MustParse("nM").Moles(); ok {
		t.Error("nM has moles")
	}
	if got := MustParse("1/(uM*s)").Kind(); got != "dimension m^3/(mol*s)" {
		t.Errorf("Kind = %q", got)
	}
}

func TestCompose(t *testing.T) {
	for _, c := range []struct {
		conc string
		a    float64
		time string
		b    float64
		want string
	}{
		{"uM", -1, "s", -1, "1/(uM·s)"},
		{"uM", 1, "s", -1, "uM/s"},
		{"uM", 0, "min", -1, "1/min"},
		{"nM", -2, "h", -1, "1/(nM^2·h)"},
		{"mg/L", -1, "h", -1, "1/((mg/L)·h)"},
		{"uM", 1, "s", 0, "uM"},
		{"uM", 0, "s", 0, "1"},
	} {
		got := Compose(c.conc, c.a, c.time, c.b)
		if got != c.want {
			t.Errorf("Compose(%s^%v, %s^%v) = %q, want %q", c.conc, c.a, c.time, c.b, got, c.want)
		}
		// What Compose writes parses, to conc^a·time^b.
		u, err := Parse(got)
		want := MustParse(c.conc).Pow(c.a).Mul(MustParse(c.time).Pow(c.b))
		if err != nil || !u.Equal(want) {
			t.Errorf("Compose's %q parses to %v, %v; want %v", got, u, err, want)
		}
	}
}

func TestParseErrors(t *testing.T) {
	for _, c := range []struct {
		src  string
		col  int
		want string
	}{
		{"", 1, "the unit is empty"},
		{"uMol", 1, `unknown unit "uMol"; did you mean "umol"?`},
		{"1/(uM*sec)", 7, `unknown unit "sec"`},
		{"uM*/s", 3, `"*" needs a unit after it`},
		{"uM/", 3, `"/" needs a unit after it`},
		{"*uM", 1, `"*" needs a unit before it`},
		{"1/(uM*s", 3, `this "(" is not closed`},
		{"uM)", 3, `this ")" has no matching "("`},
		{"uM s", 4, `expected "*", "/" or "^" before "s"`},
		{"m^", 2, `"^" needs a number after it`},
		{"m^x", 2, `"^" needs a number after it`},
		{"uM + nM", 4, `"+" cannot appear in a unit`},
		{"0*s", 1, "the factor 0 is not allowed"},
		{"()", 1, "empty parentheses"},
		{"m^1000", 3, "too large"},
	} {
		_, err := Parse(c.src)
		e, ok := err.(*Error)
		if !ok {
			t.Errorf("Parse(%q) = %v, want an *Error", c.src, err)
			continue
		}
		if e.Col != c.col || !strings.Contains(e.Msg, c.want) {
			t.Errorf("Parse(%q): column %d %q, want column %d containing %q", c.src, e.Col, e.Msg, c.col, c.want)
		}
	}
}

func FuzzParse(f *testing.F) {
	for _, s := range []string{"1/(uM*s)", "mg/L/h", "L/h", "uM^2", "m^-0.5", "µM·s", "((s))", "uM s", "1e400", "1e-400*s",
		"", "(", ")", "^", "s^", "2e", ".", "..", "uM/(", strings.Repeat("(", 60) + "s" + strings.Repeat(")", 60), "s^99*s^99*s^99"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		u, err := Parse(src)
		if err != nil {
			e, ok := err.(*Error)
			if !ok || e.Col < 1 || e.Col > len([]rune(src))+1 || e.Msg == "" {
				t.Fatalf("Parse(%q): bad error %#v", src, err)
			}
			return
		}
		if !(u.Factor > 0) || math.IsInf(u.Factor, 0) {
			t.Fatalf("Parse(%q): factor %v", src, u.Factor)
		}
		s := u.String()
		v, err := Parse(s)
		if err != nil {
			// A factor near the ends of float64's range may print as a
			// number whose product with the base units overflows; only
			// ordinary sizes must round-trip.
			if u.Factor > 1e-300 && u.Factor < 1e300 {
				t.Fatalf("%q prints as %q, which does not parse: %v", src, s, err)
			}
			return
		}
		if !u.SameDim(v) || math.Abs(u.Factor-v.Factor) > 1e-9*u.Factor {
			t.Fatalf("%q → %q → %v", src, s, v)
		}
	})
}

// IsVolume accepts the volumes and nothing else (common practice: a
// volume is a length cubed).
func TestIsVolume(t *testing.T) {
	for src, want := range map[string]bool{"L": true, "mL": true, "uL": true, "nL": true, "fL": true, "m^3": true, "uM": false, "mol": false, "L/s": false, "1": false} {
		if got := MustParse(src).IsVolume(); got != want {
			t.Errorf("%s: IsVolume = %v, want %v", src, got, want)
		}
	}
}
