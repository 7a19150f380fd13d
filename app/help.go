package main

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"
)

// caution is shown in the About box and at the end of the guide.
const caution = "Simulation results are research aids, not clinical or dosing advice. " +
	"Decisions about treatment or dosing rest with qualified professionals and local regulations."

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
* **Custom expression** — any formula of species, parameters and time.
  For a reversible reaction it is the net rate.

Each rate field takes a number (0.5, 1e-3) or the name of a parameter.

## Expressions

Operators ` + "`+ - * / ^`" + ` and parentheses; numbers such as 2, 0.5, 1e-3;
functions ` + "`exp`, `log` (natural), `log10`, `sqrt`, `abs`, `min(a, b)`, `max(a, b)`, `pow(a, b)`" + `;
` + "`t`" + ` is time. Example: ` + "`Vmax*S^n/(K^n + S^n)`" + `.

## Compartments

A species' concentration is per volume of its own compartment. A reaction's
rate is per volume of the compartment of its first reactant (of its first
product when it has no reactants); a species in another compartment changes
by that rate times the ratio of the two volumes. With no compartments, every
species lives in one compartment of volume 1.

## Exploring

* **Sliders** (the panel under the plot): add a slider for a parameter, an
  initial concentration or a volume and drag it; the model re-runs as you
  move. Nothing in the model changes until you press Write into model.
* **Run ▸ Sweep…** runs the model for a range of values of one quantity (or a
  grid of two) and plots the curves and readouts against the value.
* **Run ▸ Population…** draws many individuals from the distributions you
  give and shows the median with 25–75 % and 5–95 % bands. Failed samples are
  listed with their values and the reason.
* Readouts are read off the output grid with straight lines between points:
  value at a time, maximum and minimum (and when), final value, area under
  the curve (trapezoids), and the first time a level is crossed.

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
