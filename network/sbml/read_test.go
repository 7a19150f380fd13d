package sbml

import (
	"bytes"
	"context"
	"errors"
	"io"
	"math"
	"strings"
	"testing"

	"kinetarium/network"
	"kinetarium/solve"
)

// doc wraps model content in an SBML Level 3 Version 2 document.
func doc(content string) string {
	return `<?xml version="1.0" encoding="UTF-8"?>
<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" level="3" version="2">
<model id="m">
` + content + `
</model>
</sbml>
`
}

const mml = `xmlns="http://www.w3.org/1998/Math/MathML"`

// twoCompartments: X (amount 10, read as a concentration) in A of size 2
// moves to Y (only substance units, read as an amount) in B of size 5 by
// the kinetic law k·X·A = k·n_X, then Y leaves by k2·Y = k2·n_Y.
const twoCompartments = `
<listOfCompartments>
  <compartment id="A" spatialDimensions="3" size="2" constant="true"/>
  <compartment id="B" spatialDimensions="3" size="5" constant="true"/>
</listOfCompartments>
<listOfSpecies>
  <species id="X" compartment="A" initialAmount="10" hasOnlySubstanceUnits="false" boundaryCondition="false" constant="false"/>
  <species id="Y" compartment="B" initialAmount="0" hasOnlySubstanceUnits="true" boundaryCondition="false" constant="false"/>
</listOfSpecies>
<listOfParameters>
  <parameter id="k" value="0.7" constant="true"/>
  <parameter id="k2" value="0.2" constant="true"/>
</listOfParameters>
<listOfReactions>
  <reaction id="move" reversible="false">
    <listOfReactants><speciesReference species="X" stoichiometry="1" constant="true"/></listOfReactants>
    <listOfProducts><speciesReference species="Y" stoichiometry="2" constant="true"/></listOfProducts>
    <kineticLaw><math ` + mml + `><apply><times/><ci>k</ci><ci>X</ci><ci>A</ci></apply></math></kineticLaw>
  </reaction>
  <reaction id="leave" reversible="false">
    <listOfReactants><speciesReference species="Y" stoichiometry="1" constant="true"/></listOfReactants>
    <kineticLaw><math ` + mml + `><apply><times/><ci>k2</ci><ci>Y</ci></apply></math></kineticLaw>
  </reaction>
</listOfReactions>`

// TestAmountsAcrossCompartments: the imported model's amounts (species
// concentration × compartment size) follow SBML's semantics, where a
// kinetic law is an amount per time: n_X = 10·e^(−kt) and, with two Y made
// per X, n_Y = 20·k/(k2 − k)·(e^(−kt) − e^(−k2·t)) (first-order kinetics,
// common practice).
func TestAmountsAcrossCompartments(t *testing.T) {
	imp, err := Parse([]byte(doc(twoCompartments)), "two.xml")
	if err != nil {
		t.Fatal(err)
	}
	m := imp.Model
	if got := m.Reactions[0].Rate.Expression; got != "k*X" {
		t.Errorf("the law k·X·A in A (size 2) should read k*X per volume of A; got %q", got)
	}
	if got := m.Reactions[1].Rate.Expression; got != "k2*Y" {
		t.Errorf("the law k2·Y with Y an amount should read k2*Y (Y*5/5); got %q", got)
	}
	sys, err := network.Compile(m)
	if err != nil {
		t.Fatal(err)
	}
	times := []float64{0.5, 2, 6}
	res, err := solve.Solve(context.Background(), sys, 0, 6, sys.Initial(), solve.Settings{RTol: 1e-11, ATol: 1e-14, Times: times})
	if err != nil {
		t.Fatal(err)
	}
	k, k2 := 0.7, 0.2
	for i, tt := range times {
		nx := 10 * math.Exp(-k*tt)
		ny := 20 * k / (k2 - k) * (math.Exp(-k*tt) - math.Exp(-k2*tt))
		gx := imp.Symbols["X"].Amount(res.Y[i][0], imp.Symbols["X"].Volume)
		gy := imp.Symbols["Y"].Amount(res.Y[i][1], imp.Symbols["Y"].Volume)
		if math.Abs(gx-nx) > 1e-8*nx || math.Abs(gy-ny) > 1e-8*ny {
			t.Errorf("t=%v: amounts X %.12g, Y %.12g; want %.12g, %.12g", tt, gx, gy, nx, ny)
		}
	}
}

// TestImportRules: function definitions inlined, assignment and rate
// rules, initial assignments evaluated, local parameters renamed, and an
// event on time.
func TestImportRules(t *testing.T) {
	src := doc(`
<listOfFunctionDefinitions>
  <functionDefinition id="hill"><math ` + mml + `><lambda><bvar><ci>x</ci></bvar><bvar><ci>n</ci></bvar>
    <apply><divide/><apply><power/><ci>x</ci><ci>n</ci></apply><apply><plus/><cn>1</cn><apply><power/><ci>x</ci><ci>n</ci></apply></apply></apply>
  </lambda></math></functionDefinition>
</listOfFunctionDefinitions>
<listOfCompartments><compartment id="c" spatialDimensions="3" size="1" constant="true"/></listOfCompartments>
<listOfSpecies>
  <species id="S" compartment="c" initialConcentration="1" hasOnlySubstanceUnits="false" boundaryCondition="false" constant="false"/>
  <species id="P" compartment="c" initialConcentration="0" hasOnlySubstanceUnits="false" boundaryCondition="false" constant="false"/>
</listOfSpecies>
<listOfParameters>
  <parameter id="t" value="2" constant="true"/>
  <parameter id="total" constant="false"/>
  <parameter id="drift" value="0" constant="false"/>
  <parameter id="v0" constant="true"/>
</listOfParameters>
<listOfInitialAssignments>
  <initialAssignment symbol="v0"><math ` + mml + `><apply><times/><ci>t</ci><cn>3</cn></apply></math></initialAssignment>
</listOfInitialAssignments>
<listOfRules>
  <assignmentRule variable="total"><math ` + mml + `><apply><plus/><ci>S</ci><ci>P</ci></apply></math></assignmentRule>
  <rateRule variable="drift"><math ` + mml + `><cn>0.5</cn></math></rateRule>
</listOfRules>
<listOfReactions>
  <reaction id="R" reversible="false">
    <listOfReactants><speciesReference species="S" stoichiometry="1" constant="true"/></listOfReactants>
    <listOfProducts><speciesReference species="P" stoichiometry="1" constant="true"/></listOfProducts>
    <kineticLaw><math ` + mml + `><apply><times/><ci>kf</ci><ci>v0</ci><apply><ci>hill</ci><ci>S</ci><cn>2</cn></apply></apply></math>
      <listOfLocalParameters><localParameter id="kf" value="0.1"/></listOfLocalParameters>
    </kineticLaw>
  </reaction>
</listOfReactions>
<listOfEvents>
  <event id="E" useValuesFromTriggerTime="true">
    <trigger initialValue="true" persistent="true"><math ` + mml + `><apply><geq/><csymbol encoding="text" definitionURL="http://www.sbml.org/sbml/symbols/time">time</csymbol><cn>4</cn></apply></math></trigger>
    <listOfEventAssignments><eventAssignment variable="S"><math ` + mml + `><cn>1</cn></math></eventAssignment></listOfEventAssignments>
  </event>
  <event id="F" useValuesFromTriggerTime="true">
    <trigger initialValue="false" persistent="true"><math ` + mml + `><apply><and/><apply><lt/><ci>P</ci><cn>1</cn></apply><apply><gt/><ci>S</ci><cn>0.5</cn></apply></apply></math></trigger>
    <listOfEventAssignments><eventAssignment variable="drift"><math ` + mml + `><cn>-1</cn></math></eventAssignment></listOfEventAssignments>
  </event>
</listOfEvents>`)
	imp, err := Parse([]byte(src), "rules.xml")
	if err != nil {
		t.Fatal(err)
	}
	m := imp.Model
	var b strings.Builder
	m.Write(&b)
	file := b.String()
	for _, want := range []string{
		`"name": "t_2"`,                          // t is time in the model's formulas
		`"name": "v0",` + "\n      \"value\": 6", // 2·3, evaluated
		`"name": "R_kf"`,                         // local parameter renamed
		`"expression": "S + P"`,                  // assignment rule
		`"name": "drift",` + "\n      \"expression\": \"0.5\"",
		`R_kf*v0*(S^2/(1 + S^2))`, // function inlined
		`"at": 4`,                 // time ≥ 4 became a timed event
		`"at": 0`,                 // F holds at the start with initialValue false: it fires then
		`"when": "ifle(1, P, 0, ifle(S, 0.5, 0, 1)) > 0.5"`,
	} {
		if !strings.Contains(file, want) {
			t.Errorf("the imported model lacks %s:\n%s", want, file)
		}
	}
	if !strings.Contains(imp.Problems.Warnings().Error(), `renamed "t_2"`) {
		t.Errorf("the renaming is not listed: %v", imp.Problems)
	}
}

// TestImportProblems: bad input gives a message with its line and column
// and what is wrong, never a panic; what the model cannot represent is
// refused with the element and its id named.
func TestImportProblems(t *testing.T) {
	sp := `<listOfCompartments><compartment id="c" spatialDimensions="3" size="1" constant="true"/></listOfCompartments>
<listOfSpecies><species id="S" compartment="c" initialConcentration="1" hasOnlySubstanceUnits="false" boundaryCondition="false" constant="false"/></listOfSpecies>
`
	cases := []struct {
		name, src, want string
		line            int
	}{
		{"malformed", "<sbml level=\"3\" version=\"2\">\n<model>\n</sbml>", "not well-formed XML", 3},
		{"not sbml", "<html/>", "expected <sbml>", 1},
		{"level", `<sbml xmlns="x" level="1" version="2"><model/></sbml>`, "Level 1 Version 2 is not supported", 1},
		{"missing attribute", doc(`<listOfCompartments><compartment id="c" size="1"/></listOfCompartments>`), `compartment "c": the required attribute constant is missing`, 4},
		{"duplicate id", doc(sp + `<listOfParameters><parameter id="S" value="1" constant="true"/></listOfParameters>`), `parameter "S": the id "S" is already used by the species on line 5`, 6},
		{"unknown species", doc(sp + `<listOfReactions><reaction id="R" reversible="false"><listOfReactants><speciesReference species="Q" stoichiometry="1" constant="true"/></listOfReactants></reaction></listOfReactions>`),
			`reaction "R": species="Q" is not a species of the model`, 6},
		{"unknown MathML", doc(sp + `<listOfRules><rateRule variable="S"><math ` + mml + `><apply><frobnicate/><cn>1</cn></apply></math></rateRule></listOfRules>`),
			"the MathML operator <frobnicate/> is not supported", 6},
		{"algebraic rule", doc(sp + `<listOfRules><algebraicRule><math ` + mml + `><ci>S</ci></math></algebraicRule></listOfRules>`), "algebraic rules are not supported", 6},
		{"delay", doc(sp + `<listOfEvents><event id="E" useValuesFromTriggerTime="true"><trigger initialValue="true" persistent="true"><math ` + mml + `><true/></math></trigger><delay><math ` + mml + `><cn>1</cn></math></delay></event></listOfEvents>`),
			`event "E": events with a delay are not supported`, 6},
		{"priority", doc(sp + `<listOfEvents><event id="E" useValuesFromTriggerTime="true"><trigger initialValue="true" persistent="true"><math ` + mml + `><true/></math></trigger><priority><math ` + mml + `><cn>1</cn></math></priority></event></listOfEvents>`),
			`event "E": event priorities are not supported`, 6},
		{"package", `<sbml xmlns="http://www.sbml.org/sbml/level3/version1/core" xmlns:comp="http://www.sbml.org/sbml/level3/version1/comp/version1" level="3" version="1" comp:required="true"><model/></sbml>`,
			`the SBML package "comp"`, 1},
		{"undefined value", doc(sp + `<listOfParameters><parameter id="p" constant="true"/></listOfParameters><listOfRules><rateRule variable="S"><math ` + mml + `><ci>p</ci></math></rateRule></listOfRules>`),
			`parameter "p": no value is given`, 6},
		{"repeated list", doc(sp + `<listOfRules><rateRule variable="S"><math ` + mml + `><cn>1</cn></math></rateRule></listOfRules>
<listOfRules><algebraicRule><math ` + mml + `><ci>S</ci></math></algebraicRule></listOfRules>`),
			"<listOfRules> appears a second time (first on line 6)", 7},
		{"delay symbol", doc(sp + `<listOfRules><rateRule variable="S"><math ` + mml + `><apply><csymbol encoding="text" definitionURL="http://www.sbml.org/sbml/symbols/delay">delay</csymbol><ci>S</ci><cn>1</cn></apply></math></rateRule></listOfRules>`),
			"the function delay is not supported", 6},
	}
	for _, c := range cases {
		_, err := Parse([]byte(c.src), c.name+".xml")
		var l network.ErrorList
		if !errors.As(err, &l) || len(l) == 0 {
			t.Errorf("%s: error %v, want a list of problems", c.name, err)
			continue
		}
		found := false
		for _, p := range l {
			if strings.Contains(p.String(), c.want) && p.Line == c.line && p.Pos.File == c.name+".xml" {
				found = true
			}
		}
		if !found {
			t.Errorf("%s: no problem on line %d containing %q; got %v", c.name, c.line, c.want, err)
		}
	}
}

// TestFormulaTooLarge: logic that doubles at each level (xor repeats both
// branches) is refused once written out too large, quickly, rather than
// exhausting memory.
func TestFormulaTooLarge(t *testing.T) {
	x := `<apply><gt/><ci>p</ci><cn>1</cn></apply>`
	for range 40 {
		x = `<apply><xor/>` + x + `<apply><lt/><ci>p</ci><cn>2</cn></apply></apply>`
	}
	src := doc(`<listOfParameters><parameter id="p" value="1.5" constant="false"/></listOfParameters>
<listOfRules><rateRule variable="p"><math ` + mml + `><piecewise><piece><cn>1</cn>` + x + `</piece><otherwise><cn>0</cn></otherwise></piecewise></math></rateRule></listOfRules>`)
	_, err := Parse([]byte(src), "xor.xml")
	if err == nil || !strings.Contains(err.Error(), "more than 200000 terms") {
		t.Errorf("40 nested xor give %v", err)
	}
}

// TestReadTooLarge: a file over MaxSize is refused with a message, not
// read into memory whole.
func TestReadTooLarge(t *testing.T) {
	r := io.MultiReader(strings.NewReader("<sbml>"), io.LimitReader(zeros{}, 100<<20))
	_, err := Read(r, "big.xml")
	if err == nil || !strings.Contains(err.Error(), "big.xml") || !strings.Contains(err.Error(), "larger than 64 MiB") {
		t.Errorf("a 100 MB file gives %v", err)
	}
}

// A document saved as UTF-16 is named as such (README, Limits), and one
// with a UTF-8 byte-order mark is read.
func TestReadEncodings(t *testing.T) {
	src := `<?xml version="1.0" encoding="UTF-16"?>` + "\n" + doc("")
	var u16 []byte
	u16 = append(u16, 0xFF, 0xFE)
	for _, r := range src {
		u16 = append(u16, byte(r), 0) // ASCII only
	}
	if _, err := Read(bytes.NewReader(u16), "u16.xml"); err == nil || !strings.Contains(err.Error(), "u16.xml: the file is UTF-16 text") {
		t.Errorf("UTF-16: %v; want it named", err)
	}
	if _, err := Read(strings.NewReader("\xef\xbb\xbf"+doc("")), "bom.xml"); err != nil {
		t.Errorf("byte-order mark: %v", err)
	}
}

type zeros struct{}

func (zeros) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = ' '
	}
	return len(p), nil
}
