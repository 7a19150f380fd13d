package main

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/run"
)

// caution is shown in the About box and at the end of the guide.
const caution = run.Caution

// guide is the short guide to writing models, in Markdown.
const guide = `## Equations

Write each reaction in chemical notation, one per row:

* ` + "`A + 2 B -> C`" + ` — one A and two B make one C (irreversible).
* ` + "`E + S <=> ES`" + ` — reversible binding; ` + "`⇌`" + ` works too.
* ` + "`-> X`" + ` — X is made from nothing (a source, e.g. constant synthesis).
* ` + "`X ->`" + ` — X is removed (degradation or outflow).

A coefficient may be written with or without a space (` + "`2 B`" + ` or ` + "`2B`" + `).
Names start with a letter or _ and contain letters, digits and _.
If an equation names species that are not declared yet, the form offers
to declare them in one click.

## Rate laws

* **Mass action** — rate = k · product of the reactants (each to the power of
  its coefficient). A reversible reaction also has a reverse constant:
  ` + "`rate = k·[reactants] − k_reverse·[products]`" + `.
* **Michaelis–Menten** — for one substrate S: ` + "`rate = Vmax·S/(Km + S)`" + `, or with
  an explicit enzyme E: ` + "`rate = kcat·E·S/(Km + S)`" + `.
* **Reversible Michaelis–Menten** — for ` + "`S <=> P`" + `:
  ` + "`(Vf·S/Kms − Vr·P/Kmp)/(1 + S/Kms + P/Kmp)`" + `; give Keq instead of Vr to
  tie them by the Haldane relationship ` + "`Keq = Vf·Kmp/(Vr·Kms)`" + `.
* **Michaelis–Menten with an inhibitor** I (competitive, uncompetitive,
  noncompetitive, mixed) — Ki, and αKi for mixed; I is read, not consumed.
* **Hill activation / repression** — ` + "`Vmax·(X/K)^n/(1 + (X/K)^n)`" + ` and
  ` + "`Vmax/(1 + (X/K)^n)`" + `; X is the regulator species (for activation,
  the substrate when none is named).
* **Two substrates** ` + "`A + B -> …`" + ` — random order (Ka, Kb, α) or ordered
  (Kia, Km of A, Km of B), forward rate only.
* **Saturable transport** — ` + "`Vmax·S/(Km + S)`" + ` from one compartment to another.
* **Custom expression** — any formula of species, parameters and time.
  For a reversible reaction it is the net rate.

Each rate field takes a number (0.5, 1e-3) or the name of a parameter.

## Units

Give the time and concentration units in Run settings and a unit to each
parameter (` + "`1/s`, `uM`, `1/(uM*s)`, `mg/L/h`, `1`" + ` for a pure number). Each
reaction's rate must then come out in concentration per time; the form
shows the unit each field needs ("Rate constant in 1/(uM·s) for a
second-order step") and the messages name any field or part of a formula
whose unit does not fit, with the factor when only the scale is off.
Assignments are checked against their unit, and events too: both sides
of a "when" alike, "add" an amount (concentration × volume), "set" the
unit of what it sets. Units are checked, never used to convert numbers in
the calculation — except volumes, which are compared in one unit.

To see results in other units, choose them under Units of results in Run
settings (Time in: h; Concentration in: nM). The plot, the
pointer readout, Data… (headers such as "time (h)", "P (nM)") and
Figure… follow; the model's own numbers do not change. An assignment is
converted only when its unit is a concentration; the others stay as
computed, and About the last run says so. Sweeps and populations follow the
same units in their figures and tables; the values you type there (from,
to, times and levels of readouts) stay in the model's units. So do the
analyses: steady states (fluxes in concentration per time, eigenvalues per
time), continuation (the knob keeps its own unit) and screening effects;
variance-based indices and control coefficients are pure numbers. The
Stochastic window shows times in the display unit and counts in molecules.
An assignment without a unit of its own converts in the unit its formula
comes out in.

## Expressions

Operators ` + "`+ - * / ^`" + ` and parentheses; numbers such as 2, 0.5, 1e-3;
functions ` + "`exp`, `log` (natural), `log10`, `sqrt`, `abs`, `min(a, b)`, `max(a, b)`, `pow(a, b)`, `sin`, `cos`, `tan`, `asin`, `acos`, `atan`, `sinh`, `cosh`, `tanh`, `asinh`, `acosh`, `atanh`, `floor`, `ceil`, `factorial`" + `,
and the switch ` + "`ifle(a, b, x, y)`" + ` (x when a ≤ b, otherwise y);
` + "`t`" + ` is time. Example: ` + "`Vmax*S^n/(K^n + S^n)`" + `.

## Assignments

An assignment names a quantity computed from species, parameters and time,
such as ` + "`E_total = E + ES`" + `. It is plotted and exported beside the species,
can be read out in sweeps and populations, and can be used in custom rate
expressions.

## Events: doses, infusions, switches

An event changes the run while it goes. Its timing is a time (with
"Repeat every" and "Times" for a schedule of doses), a condition such as
` + "`S < 2`" + ` that fires each time it turns true (once, if you tick "Only the first
time"; a condition already true at the start waits until it has been
false), or an interval for an infusion. Its actions are lines of
` + "`NAME = VALUE`" + `: **Add** raises a species by an amount (divided by its
compartment's volume), **Set** gives a species or a parameter a new value
(an expression, read just before the event), **Infuse** feeds a species at a
rate while the infusion runs. Doses show as sharp jumps; small ticks on the
time axis mark when events fired (point at one for its name). Dose amounts,
times and intervals can be put on sliders and varied in sweeps and
populations.

**Dosing simulations are research aids, not clinical or dosing advice.** Doses and
schedules for people or animals are decided by qualified professionals
under local rules.

## Compartments

A species' concentration is per volume of its own compartment. A reaction's
rate is per volume of the compartment of its first reactant (of its first
product when it has no reactants); a species in another compartment changes
by that rate times the ratio of the two volumes. With no compartments, every
species lives in one compartment of volume 1. A volume may carry a unit
(L, mL, uL, nL, fL); volumes in different units are compared in one, so
30000 mL and 30 L are the same.

## Exploring

* **Sliders** (the panel under the plot): add a slider for a parameter, an
  initial concentration or a volume and drag it; the model re-runs as you
  move. Nothing in the model changes until you press Write into model.
* **Run ▸ Sweep…** runs the model for a range of values of one quantity (or a
  grid of two) and plots the curves and readouts against the value.
* **Run ▸ Population…** draws many individuals from the distributions you
  give and shows the median with 25–75 % and 5–95 % bands. Failed samples are
  listed with their values and the reason.
* **Run ▸ Stochastic…** runs the model many times in molecule counts, for
  small numbers of molecules where cells differ: the mean, the 25–75 % and
  5–95 % bands, the ODE solution and 10 single runs, and the counts at a
  chosen time. Counts are concentration × volume × molecules per amount
  (Avogadro's number for M, mM, µM, nM, pM with volumes in litres; else
  the window asks). Mass-action reactions are exact; Michaelis–Menten and
  expression laws are an approximation (rate × volume × molecules per
  amount). The same seed gives the same runs.
* **Cancel** in these windows keeps what was done: the status line says the
  results are partial, and every table and figure exported from them says
  "partial": true in its provenance. Populations keep their samples in a
  temporary file, so large ones do not fill the memory.
* Readouts are read off the output grid with straight lines between points:
  value at a time, maximum and minimum (and when), final value, area under
  the curve (trapezoids), and the first time a level is crossed.

## SBML

**File ▸ Import SBML…** opens a model written in SBML, the open standard
(Level 3, or Level 2 Version 4), as a new model that is not saved yet; a
dialog lists what the import changed (renamed names, units not converted)
or, when the model uses what Kinetarium cannot represent (delays, algebraic
rules, event priorities, other SBML packages), each such element with its
place in the file. An SBML kinetic law is an amount per time: it is divided
by the size of the first reactant's compartment. Parameters and species
with an SBML rate rule are listed under the model file's ` + "`rates`" + `.
**File ▸ Export SBML…** writes the model as SBML Level 3 Version 2.

## The diagram

The Diagram tab beside Time course draws the mechanism: species as boxes,
each reaction as a dot (a ring when reversible) joined by lines from its
reactants and arrows to its products, numbers on the lines for
coefficients other than 1, ∅ for synthesis and degradation, and
compartments as regions. Dashed lines show **modifiers**, species a rate
reads but a reaction does not change: ending in a dot for an enzyme or a
species that raises the rate, in a bar for one that lowers it. Choose the
SBGN style for the standard's glyphs instead.

Drag a node to move it (Undo moves it back; the place is saved with the
model), drag the background to pan, scroll to zoom, type in Find to jump to
a name. Clicking a node selects its row; point at a reaction to read its
rate formula. After a run, Replay the last run colours species by
concentration (dark low, light high, log scale) and makes lines as thick as
the reaction's rate at the slider's time; Play runs through it.

## Analysing

* **Analyse ▸ Steady state** finds where the model settles from its initial
  state (conserved totals kept, held species held, events left out) and
  says whether it is stable: stable node or focus, saddle, unstable,
  marginal, with the slowest time scale. When there is none it says why: a
  species that keeps growing, or oscillations that do not die down.
* **Analyse ▸ Control coefficients** gives, at that steady state, how each
  flux and concentration responds to each reaction's rate and to each
  parameter (scaled: a 1 % change gives a C % change).
* **Analyse ▸ Continuation…** follows the steady state as one quantity
  changes, marking folds (the state turns back: a switch) and Hopf points
  (oscillations begin); stable parts are solid, unstable parts dashed. The
  Dose–response tab fits a Hill curve (EC50 or IC50, Hill coefficient).
* **Analyse ▸ Global sensitivity…** varies uncertain quantities together
  and ranks them by the share of a readout's variance they cause
  (first-order and total indices with intervals), or screens them by their
  elementary effects.

## Measurements and fits

**Data ▸ Load measurements…** reads a CSV or TSV file with a ` + "`time`" + ` column,
one column per measured species or assignment and optional ` + "`sd_NAME`" + `
columns of standard deviations, and draws the points with their SD bars
over the curves in each species' colour. A file with mistakes is not shown:
a dialog names each problem's line and column. The file's place is kept in
` + "`MODEL.beside.json`" + ` next to the model (never in the model), and the points
come back when the model is opened. **Data ▸ Clear measurements** forgets
them. **Data ▸ Fit to measurements…** estimates the quantities you tick,
within their bounds, from one or more experiments, with standard errors,
95 % intervals and, when asked, profile intervals; it says in words when the
data do not determine a quantity. **Write estimates into model** is one
edit that Undo takes back. **Analyse ▸ Sensitivity over time…** shows how
strongly each parameter moves a chosen quantity along the run (the scaled
sensitivity ∂ln y/∂ln p).

**Fitted values are research aids, not clinical or dosing advice.** An
interval says how well these data determine a constant under this model,
not whether the model is right.

## Caution

` + caution + `
`

// showHelp opens the guide in its own window.
func (w *mainWindow) showHelp() {
	hw := w.app.NewWindow("Writing equations and rate laws — Kinetarium")
	rt := widget.NewRichTextFromMarkdown(guide)
	rt.Wrapping = fyne.TextWrapWord
	hw.SetContent(container.NewVScroll(container.NewPadded(rt)))
	hw.Resize(fyne.NewSize(640, 720))
	hw.Show()
}

// showAbout shows what the program is, with the caution.
func (w *mainWindow) showAbout() {
	l := widget.NewLabel("Kinetarium drafts and simulates chemical and biochemical reaction networks.\n\n" + caution)
	l.Wrapping = fyne.TextWrapWord
	d := dialog.NewCustom("About Kinetarium", "Close", container.NewGridWrap(fyne.NewSize(460, 160), l), w.win)
	d.Show()
}
