package calibrate

import (
	"math"
	"strings"
	"testing"
)

const goodSpec = `{
  "format": "kinetarium.fit/1",
  "model": "protease-inhibitor.json",
  "experiments": [
    {"name": "no_inhibitor", "data": "run1.csv", "initial": {"I": 0}},
    {"name": "with_inhibitor", "data": "run2.csv", "initial": {"I": 0.05}, "parameters": {"kcat": 12}}
  ],
  "estimate": [
    {"target": "kon", "lower": 0.1, "upper": 1000, "start": 10, "scale": "log"},
    {"target": "init:S", "lower": 1, "upper": 50, "per_experiment": true}
  ],
  "noise": {"model": "sd_column"},
  "starts": 20, "seed": 1
}`

func TestReadSpec(t *testing.T) {
	s, err := ReadSpec([]byte(goodSpec), "fit.json")
	if err != nil {
		t.Fatal(err)
	}
	if s.Model != "protease-inhibitor.json" || len(s.Experiments) != 2 || s.Experiments[1].Parameters["kcat"] != 12 ||
		s.Experiments[0].Initial["I"] != 0 || len(s.Estimate) != 2 || !s.Estimate[0].Log || s.Estimate[0].Start != 10 ||
		!math.IsNaN(s.Estimate[1].Start) || !s.Estimate[1].PerExp || s.Starts != 20 || s.Seed != 1 || s.Noise.Model != NoiseSD {
		t.Errorf("spec read as %+v", s)
	}
}

// TestReadSpecErrors checks that each malformed specification gives a
// message with its line, column, path and what is expected.
func TestReadSpecErrors(t *testing.T) {
	for _, c := range []struct{ edit, want string }{
		{`"format": "kinetarium.fit/1",`, `format: missing; expected "format": "kinetarium.fit/1"`},
		{`"starts": 20`, `fit.json:13:13: starts: is 0; expected a whole number from 1 to 10000`},
		{`"lower": 0.1,`, "estimate[0].lower: missing; every estimate needs bounds"},
		{`"upper": 50`, `"upper": 0.5`},
		{`"scale": "log"`, `"scale": "logarithmic"`},
		{`"model": "sd_column"`, `"model": "poisson"`},
		{`"seed": 1`, `"seed": 1, "colour": 2`},
		{`"name": "with_inhibitor",`, `"name": "no_inhibitor",`},
		{`"start": 10,`, `"start": 1e9,`},
		{`{"target": "init:S", "lower": 1,`, `{"target": "init:S", "lower": -1,`},
		{`"I": 0.05`, `"I": "lots"`},
		{`]`, ``},
	} {
		src := goodSpec
		var want string
		switch c.edit {
		case `"format": "kinetarium.fit/1",`:
			src, want = strings.Replace(src, c.edit, "", 1), c.want
		case `"starts": 20`:
			src, want = strings.Replace(src, c.edit, `"starts": 0`, 1), c.want
		case `"lower": 0.1,`:
			src, want = strings.Replace(src, c.edit, "", 1), c.want
		default:
			src = strings.Replace(src, c.edit, c.want, 1)
			want = map[string]string{
				`"upper": 0.5`:                      "estimate[1].lower: lower bound 1 must be below upper bound 0.5",
				`"scale": "logarithmic"`:            `estimate[0].scale: is "logarithmic"; expected "log" or "linear"`,
				`"model": "poisson"`:                `noise.model: is "poisson"`,
				`"seed": 1, "colour": 2`:            `colour: unknown key "colour"`,
				`"name": "no_inhibitor",`:           `experiments[1].name: experiment "no_inhibitor" is listed twice`,
				`"start": 1e9,`:                     "estimate[0].start: start 1e+09 lies outside the bounds [0.1, 1000]",
				`{"target": "init:S", "lower": -1,`: "estimate[1].lower: S initial = -1: an initial concentration must be ≥ 0",
				`"I": "lots"`:                       "experiments[1].initial.I: expected a number",
				``:                                  "not valid JSON",
			}[c.want]
		}
		_, err := ReadSpec([]byte(src), "fit.json")
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s → %s: got %v, want %q", c.edit, c.want, err, want)
		}
		if err != nil && want != "not valid JSON" && !strings.Contains(err.Error(), "fit.json:") {
			t.Errorf("%s: no position in %v", c.edit, err)
		}
	}
}

// FuzzReadSpec checks that no input makes ReadSpec panic, and that an
// accepted spec has what a fit needs.
func FuzzReadSpec(f *testing.F) {
	f.Add([]byte(goodSpec))
	f.Add([]byte(`{"format":"kinetarium.fit/1","model":"m.json","experiments":[{"name":"a","data":"a.csv"}],"estimate":[{"target":"k","lower":1,"upper":2}]}`))
	f.Add([]byte(`[1, 2`))
	f.Fuzz(func(t *testing.T, b []byte) {
		s, err := ReadSpec(b, "fuzz.json")
		if err != nil {
			return
		}
		if s.Model == "" || len(s.Experiments) == 0 || len(s.Estimate) == 0 || s.Starts < 1 {
			t.Fatalf("accepted an incomplete spec: %+v", s)
		}
		for _, e := range s.Estimate {
			if !(e.Lower < e.Upper) {
				t.Fatalf("accepted bounds %g, %g", e.Lower, e.Upper)
			}
		}
	})
}
