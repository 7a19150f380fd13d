package sbml

import (
	"testing"

	"kinetarium/network"
)

// FuzzRead feeds the SBML reader arbitrary documents: it must never
// panic, every problem must carry a line, and a model it returns must
// check without errors.
func FuzzRead(f *testing.F) {
	f.Add([]byte(doc(twoCompartments)))
	f.Add([]byte(doc(`<listOfUnitDefinitions><unitDefinition id="u"><listOfUnits><unit kind="litre" exponent="1" scale="-6" multiplier="1"/></listOfUnits></unitDefinition></listOfUnitDefinitions>
<listOfCompartments><compartment id="A" size="2" units="u" constant="true"/><compartment id="B" size="1" units="litre" constant="true"/></listOfCompartments>`)))
	f.Add([]byte(doc(`<listOfParameters><parameter id="p" value="1" constant="false"/></listOfParameters>
<listOfRules><rateRule variable="p"><math ` + mml + `><piecewise><piece><cn>1</cn><apply><lt/><ci>p</ci><cn>2</cn></apply></piece><otherwise><cn>0</cn></otherwise></piecewise></math></rateRule></listOfRules>`)))
	f.Add([]byte("<sbml level=\"3\" version=\"2\"><model><listOfSpecies><species/></listOfSpecies></model></sbml>"))
	for _, name := range []string{"two-compartment-drug.json", "substrate-feeding.json"} {
		m := loadExampleF(f, name)
		if data, err := Encode(m); err == nil {
			f.Add(data)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		imp, err := Parse(data, "fuzz.xml")
		if err != nil {
			if imp == nil || len(imp.Problems.Errors()) == 0 {
				t.Fatalf("an error without problems listed: %v", err)
			}
			for _, p := range imp.Problems {
				if p.Line == 0 {
					t.Fatalf("a problem without a line: %v", p)
				}
			}
			return
		}
		if _, l := network.Check(imp.Model); l.HasErrors() {
			t.Fatalf("an imported model with errors: %v", l)
		}
	})
}

// FuzzMathML feeds the MathML reader arbitrary <math> content inside a
// rate rule: no panic, and an expression it accepts prints to text that
// the model's expression parser reads.
func FuzzMathML(f *testing.F) {
	for _, s := range []string{
		`<apply><plus/><ci>p</ci><cn type="e-notation">1<sep/>3</cn></apply>`,
		`<piecewise><piece><ci>p</ci><apply><and/><apply><gt/><ci>p</ci><cn>1</cn></apply><true/></apply></piece><otherwise><pi/></otherwise></piecewise>`,
		`<apply><root/><degree><cn>3</cn></degree><apply><log/><logbase><cn>2</cn></logbase><ci>p</ci></apply></apply>`,
		`<apply><arccoth/><apply><quotient/><ci>p</ci><cn type="rational">1<sep/>3</cn></apply></apply>`,
		`<apply><ci>f</ci><ci>p</ci></apply>`,
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, math string) {
		src := doc(`<listOfFunctionDefinitions><functionDefinition id="f"><math ` + mml + `><lambda><bvar><ci>x</ci></bvar><apply><times/><ci>x</ci><cn>2</cn></apply></lambda></math></functionDefinition></listOfFunctionDefinitions>
<listOfParameters><parameter id="p" value="1.5" constant="false"/></listOfParameters>
<listOfRules><rateRule variable="p"><math ` + mml + `>` + math + `</math></rateRule></listOfRules>`)
		imp, err := Parse([]byte(src), "fuzz.xml")
		if err != nil {
			return
		}
		if len(imp.Model.Rates) != 1 {
			t.Fatalf("rates %v", imp.Model.Rates)
		}
	})
}

func loadExampleF(f *testing.F, name string) *network.Model {
	m, err := readExample(name)
	if err != nil {
		f.Fatal(err)
	}
	return m
}
