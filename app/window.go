package main

import (
	"bytes"
	"errors"
	"fmt"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/run"
	"kinetarium/editor"
	"kinetarium/examples"
	"kinetarium/internal/stages"
	"kinetarium/network"
	"kinetarium/solve"
)

// mainWindow is the program's window: the model editor on the left, the
// figure on the right and the status line at the bottom.
type mainWindow struct {
	app  fyne.App
	win  fyne.Window
	doc  *editor.Document
	ed   *editor.Editor
	ctrl *run.Controller

	plot      *plotView
	diagram   *diagramPanel      // the Diagram view beside the time course
	views     *container.AppTabs // Time course, Diagram
	tune      *tunePanel         // sliders under the figure
	current   *run.Outcome       // shown
	previous  *run.Outcome       // the run before, for the overlay
	hidden    map[string]bool
	overlay   bool
	autoRerun bool
	exampleOf string // name of the example the document came from, if any
	// meas are the measurements shown over the curves (Data menu).
	meas measurements
	// lastDataProblems is the text of the last dialog about a
	// measurements file, for tests.
	lastDataProblems string

	logX, logY   *widget.Check
	fresh        bool // no run yet since the model was opened
	overlayChk   *widget.Check
	filter       *widget.Entry
	speciesList  *widget.List
	shownSpecies []int // indices into current.Names passing the filter

	status *widget.Label
	// statusProblem is set while the status line tells of a problem
	// (a run that failed or stopped, a model that cannot run), which
	// notices such as the recovery file's do not replace.
	statusProblem bool
	// blocked is set while the status line says the model cannot be
	// simulated because of its mistakes.
	blocked   bool
	runInfo   *widget.Button // details of the last run
	counts    *widget.Label
	progress  *widget.ProgressBar
	cancelBtn *widget.Button
	runBtn    *widget.Button

	rerunItem *fyne.MenuItem
	undoItem  *fyne.MenuItem
	redoItem  *fyne.MenuItem
	mainMenu  *fyne.MainMenu

	screenshotMode bool
	// recoveryFile keeps this window's unsaved work (see recovery.go).
	recoveryFile string
	exitCode     int
	onDrawn      func()
	captureSoon  func()      // in screenshot mode: capture the window shortly
	shotTarget   fyne.Window // the window captured instead of this one (--view fit)
	pictureOnly  bool        // a --screenshot run: leave no companion file behind
}

func newMainWindow(a fyne.App, screenshotMode bool) *mainWindow {
	w := &mainWindow{app: a, win: a.NewWindow("Kinetarium"), hidden: map[string]bool{}, overlay: true, autoRerun: true,
		screenshotMode: screenshotMode, recoveryFile: newRecoveryPath()}
	w.doc = editor.NewDocument(nil, "")
	w.ed = editor.New(w.doc, w.win)
	w.ctrl = &run.Controller{Deliver: fyne.Do}
	w.ctrl.OnStart = w.runStarted
	w.ctrl.OnProgress = func(_ int, f float64) { w.progress.SetValue(f) }
	w.ctrl.OnDone = w.runDone
	w.doc.OnChange(w.docChanged)
	w.build()
	w.win.SetMaster()
	w.win.SetCloseIntercept(func() { w.confirmDiscard("closing", w.quit) })
	w.startAutosave()
	return w
}

// build lays out the window.
func (w *mainWindow) build() {
	// Left: tables and messages.
	msgTitle := widget.NewLabelWithStyle("Messages", fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	w.counts = widget.NewLabel("")
	msgs := container.NewBorder(container.NewHBox(msgTitle, w.counts), nil, nil, nil, w.ed.MessageList())
	left := container.NewVSplit(w.ed.Tabs(), msgs)
	left.Offset = 0.74
	w.ed.OnMessages = func(nerr, nwarn int) {
		switch {
		case nerr == 0 && nwarn == 0:
			w.counts.SetText("none — the model is ready to run")
		default:
			w.counts.SetText(fmt.Sprintf("%d %s, %d %s", nerr, plural(nerr, "error", "errors"), nwarn, plural(nwarn, "warning", "warnings")))
		}
	}
	w.ed.OnMessages(0, 0)

	// Right: figure toolbar, figure, species list.
	w.plot = newPlotView()
	w.plot.errorText = func(s string) { w.setStatus(s, true) }
	w.plot.OnZoom = func() {}
	w.plot.OnDrawn = func() {
		if w.onDrawn != nil {
			f := w.onDrawn
			w.onDrawn = nil
			f()
		}
	}
	w.tune = newTunePanel(w)
	w.logX = widget.NewCheck("Log time", func(bool) { w.redraw() })
	w.logY = widget.NewCheck("Log concentration", func(bool) { w.redraw() })
	w.overlayChk = widget.NewCheck("Show previous run", func(on bool) { w.overlay = on; w.redraw() })
	w.overlayChk.SetChecked(true)
	fullView := widget.NewButtonWithIcon("Full view", theme.ZoomFitIcon(), func() { w.plot.view.Zoom = nil; w.redraw() })
	exportFig := widget.NewButtonWithIcon("Figure…", theme.DocumentSaveIcon(), w.exportFigure)
	exportCSV := widget.NewButtonWithIcon("Data…", theme.DocumentSaveIcon(), w.exportData)
	w.runBtn = widget.NewButtonWithIcon("Simulate", theme.MediaPlayIcon(), w.simulate)
	w.runBtn.Importance = widget.HighImportance
	bar := container.NewHBox(w.runBtn, widget.NewSeparator(), w.logX, w.logY, w.overlayChk, fullView,
		widget.NewSeparator(), widget.NewLabel("Export:"), exportFig, exportCSV)

	w.filter = widget.NewEntry()
	w.filter.SetPlaceHolder("Filter species…")
	w.filter.OnChanged = func(string) { w.refreshSpecies() }
	w.speciesList = widget.NewList(
		func() int { return len(w.shownSpecies) },
		func() fyne.CanvasObject {
			sw := newSwatch()
			return container.NewBorder(nil, nil, sw, nil, widget.NewCheck("", nil))
		},
		func(id widget.ListItemID, o fyne.CanvasObject) {
			if w.current == nil || id >= len(w.shownSpecies) {
				return
			}
			j := w.shownSpecies[id]
			name := w.current.Names[j]
			c := o.(*fyne.Container)
			c.Objects[1].(*swatch).setSlot(run.View{Slots: w.doc.Slots()}.Slot(name, j))
			chk := c.Objects[0].(*widget.Check)
			chk.OnChanged = nil
			chk.SetText(name)
			chk.SetChecked(!w.hidden[name])
			chk.OnChanged = func(on bool) { w.hidden[name] = !on; w.redraw() }
		})
	all := widget.NewButton("All", func() { w.setVisibleFiltered(true) })
	none := widget.NewButton("None", func() { w.setVisibleFiltered(false) })
	speciesTitle := widget.NewLabelWithStyle("Shown on the plot", fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	side := container.NewBorder(container.NewVBox(speciesTitle, w.filter, container.NewGridWithColumns(2, all, none)), nil, nil, nil, w.speciesList)
	plotArea := container.NewHSplit(w.plot, side)
	plotArea.Offset = 0.8
	w.diagram = newDiagramPanel(w)
	w.diagram.view.OnDrawn = func() {
		if w.onDrawn != nil && w.current != nil && w.diagram.shown {
			f := w.onDrawn
			w.onDrawn = nil
			f()
		}
	}
	w.views = container.NewAppTabs(container.NewTabItem(viewTimeCourse, plotArea), container.NewTabItem(viewDiagram, w.diagram.content))
	w.views.OnSelected = func(t *container.TabItem) {
		w.diagram.shown = t.Text == viewDiagram
		if w.diagram.shown {
			w.diagram.refresh()
		}
	}
	w.ed.OnSelect = func(section string, row int) {
		if w.diagram.shown {
			w.diagram.selectedInTable(section, row)
		}
	}
	// The bar scrolls sideways rather than keep the window wide.
	right := container.NewBorder(container.NewPadded(container.NewHScroll(bar)), w.tune.content, nil, nil, w.views)

	// Bottom: status line.
	w.status = widget.NewLabel("Ready.")
	w.status.Truncation = fyne.TextTruncateEllipsis
	w.progress = widget.NewProgressBar()
	w.progress.Hide()
	w.cancelBtn = widget.NewButtonWithIcon("Cancel", theme.CancelIcon(), func() { w.ctrl.Cancel() })
	w.cancelBtn.Hide()
	prog := container.NewGridWrap(fyne.NewSize(220, w.cancelBtn.MinSize().Height), w.progress)
	w.runInfo = widget.NewButtonWithIcon("", theme.InfoIcon(), w.showRunInfo)
	w.runInfo.Importance = widget.LowImportance
	w.runInfo.Hide()
	statusBar := container.NewBorder(widget.NewSeparator(), nil, w.runInfo, container.NewHBox(prog, w.cancelBtn), w.status)

	main := container.NewHSplit(left, right)
	main.Offset = 0.36 // the right pane is as wide as its bar in a window 1280 wide
	w.win.SetContent(container.NewBorder(nil, statusBar, nil, nil, main))
	w.buildMenus()
}

// setStatus puts text in the status line; problem says that it tells of a
// problem, which notices do not replace (see notice).
func (w *mainWindow) setStatus(text string, problem bool) {
	w.status.SetText(text)
	w.statusProblem = problem
	w.blocked = false
}

// notice puts text in the status line unless it tells of a problem.
func (w *mainWindow) notice(text string) {
	if !w.statusProblem {
		w.setStatus(text, false)
	}
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// buildMenus sets the main menu and keyboard shortcuts.
func (w *mainWindow) buildMenus() {
	ctrl := fyne.KeyModifierShortcutDefault
	newItem := fyne.NewMenuItem("New", func() { w.confirmDiscard("starting a new model", w.newModel) })
	newItem.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyN, Modifier: ctrl}
	openItem := fyne.NewMenuItem("Open…", func() { w.confirmDiscard("opening another model", w.openDialog) })
	openItem.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyO, Modifier: ctrl}
	exItem := fyne.NewMenuItem("Open example", nil)
	for _, name := range examples.Names() {
		exItem.ChildMenu = appendItem(exItem.ChildMenu, fyne.NewMenuItem(exampleTitle(name), func() {
			w.confirmDiscard("opening an example", func() { w.openExample(name) })
		}))
	}
	recentItem := fyne.NewMenuItem("Open recent", nil)
	recentItem.ChildMenu = fyne.NewMenu("")
	w.fillRecent(recentItem)
	saveItem := fyne.NewMenuItem("Save", w.save)
	saveItem.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyS, Modifier: ctrl}
	saveAsItem := fyne.NewMenuItem("Save as…", w.saveAs)
	saveAsItem.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyS, Modifier: ctrl | fyne.KeyModifierShift}
	figItem := fyne.NewMenuItem("Export figure…", w.exportFigure)
	csvItem := fyne.NewMenuItem("Export data (CSV)…", w.exportData)
	importSBMLItem := fyne.NewMenuItem("Import SBML…", func() { w.confirmDiscard("importing a model", w.importSBMLDialog) })
	exportSBMLItem := fyne.NewMenuItem("Export SBML…", w.exportSBML)
	quitItem := fyne.NewMenuItem("Quit", func() { w.confirmDiscard("quitting", w.quit) })
	quitItem.IsQuit = true
	quitItem.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyQ, Modifier: ctrl}
	file := fyne.NewMenu("File", newItem, openItem, exItem, recentItem, fyne.NewMenuItemSeparator(),
		saveItem, saveAsItem, fyne.NewMenuItemSeparator(), figItem, csvItem, fyne.NewMenuItemSeparator(),
		importSBMLItem, exportSBMLItem, fyne.NewMenuItemSeparator(), quitItem)

	// Fyne's desktop driver delivers Ctrl+Z and Ctrl+Y as its own undo
	// and redo shortcuts, never as custom ones, so the items use those.
	undoItem := fyne.NewMenuItem("Undo", func() { w.doc.Undo() })
	w.undoItem = undoItem
	undoItem.Shortcut = &fyne.ShortcutUndo{}
	redoItem := fyne.NewMenuItem("Redo", func() { w.doc.Redo() })
	w.redoItem = redoItem
	redoItem.Shortcut = &fyne.ShortcutRedo{}
	edit := fyne.NewMenu("Edit", undoItem, redoItem)

	simItem := fyne.NewMenuItem("Simulate", w.simulate)
	simItem.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyReturn, Modifier: ctrl}
	cancelItem := fyne.NewMenuItem("Cancel", func() { w.ctrl.Cancel() })
	w.rerunItem = fyne.NewMenuItem("Re-run on edit", nil)
	w.rerunItem.Checked = w.autoRerun
	w.rerunItem.Action = func() {
		w.autoRerun = !w.autoRerun
		w.rerunItem.Checked = w.autoRerun
		w.mainMenu.Refresh()
	}
	sweepItem := fyne.NewMenuItem("Sweep…", w.openSweep)
	popItem := fyne.NewMenuItem("Population…", w.openPopulation)
	stochItem := fyne.NewMenuItem("Stochastic…", w.openStochastic)
	run := fyne.NewMenu("Run", simItem, cancelItem, fyne.NewMenuItemSeparator(), w.rerunItem,
		fyne.NewMenuItemSeparator(), sweepItem, popItem, stochItem)

	help := fyne.NewMenu("Help",
		fyne.NewMenuItem("Writing equations and rate laws", w.showHelp),
		fyne.NewMenuItem("About and caution", w.showAbout))
	w.mainMenu = fyne.NewMainMenu(file, edit, run, w.dataMenu(), w.analyseMenu(), help)
	w.win.SetMainMenu(w.mainMenu)
	w.updateUndoItems()

	for _, it := range []*fyne.MenuItem{newItem, openItem, saveItem, saveAsItem, undoItem, redoItem, simItem, quitItem} {
		it := it
		w.win.Canvas().AddShortcut(it.Shortcut, func(fyne.Shortcut) { it.Action() })
	}
	// Ctrl+Shift+Z redoes as well, as is common on Linux.
	w.win.Canvas().AddShortcut(&desktop.CustomShortcut{KeyName: fyne.KeyZ, Modifier: ctrl | fyne.KeyModifierShift}, func(fyne.Shortcut) { w.doc.Redo() })
	// Enter on the numeric keypad as well.
	w.win.Canvas().AddShortcut(&desktop.CustomShortcut{KeyName: fyne.KeyEnter, Modifier: ctrl}, func(fyne.Shortcut) { w.simulate() })
}

func appendItem(m *fyne.Menu, it *fyne.MenuItem) *fyne.Menu {
	if m == nil {
		return fyne.NewMenu("", it)
	}
	m.Items = append(m.Items, it)
	return m
}

// exampleTitle turns "two-compartment-drug.json" into "Two compartment drug".
func exampleTitle(name string) string {
	s := strings.TrimSuffix(name, filepath.Ext(name))
	s = strings.ReplaceAll(s, "-", " ")
	if s == "" {
		return name
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// docChanged follows every change of the document.
func (w *mainWindow) docChanged() {
	w.updateTitle()
	w.updateUndoItems()
	if w.blocked && !w.ed.HasErrors() {
		// The status line no longer stands: the mistakes it named are fixed.
		w.setStatus("The model has no mistakes now; press Simulate to run it.", false)
	}
	if w.diagram != nil && w.diagram.shown {
		w.diagram.refresh()
	}
	if w.autoRerun && !w.ed.HasErrors() && w.current != nil {
		w.ctrl.Changed(func() *network.Model {
			if w.ed.HasErrors() {
				return nil
			}
			return w.doc.Snapshot()
		})
	}
}

// updateUndoItems names the edit that Undo and Redo would act on.
func (w *mainWindow) updateUndoItems() {
	if w.undoItem == nil {
		return
	}
	label := func(item *fyne.MenuItem, verb string, desc string, ok bool) {
		item.Label = verb
		if ok {
			item.Label = verb + " " + desc
		}
		item.Disabled = !ok
	}
	d, ok := w.doc.CanUndo()
	label(w.undoItem, "Undo", d, ok)
	d, ok = w.doc.CanRedo()
	label(w.redoItem, "Redo", d, ok)
	w.mainMenu.Refresh()
}

func (w *mainWindow) updateTitle() {
	name := "untitled"
	switch {
	case w.doc.Path != "":
		name = filepath.Base(w.doc.Path)
	case w.exampleOf != "":
		name = exampleTitle(w.exampleOf) + " (example)"
	}
	mark := ""
	if w.doc.Dirty() {
		mark = "• "
	}
	w.win.SetTitle(mark + name + " — Kinetarium")
}

// simulate starts a run of the current model.
func (w *mainWindow) simulate() {
	if w.ed.HasErrors() {
		for _, m := range w.ed.Messages() {
			if m.Severity == network.Error {
				w.setStatus("Cannot simulate yet: "+w.ed.Describe(m), true)
				w.blocked = true
				w.ed.Focus(m.Problem)
				if w.captureSoon != nil {
					w.captureSoon()
				}
				return
			}
		}
	}
	w.ctrl.Start(w.doc.Snapshot())
}

func (w *mainWindow) runStarted(int) {
	w.progress.SetValue(0)
	w.progress.Show()
	w.cancelBtn.Show()
	w.setStatus("Simulating…", false)
}

func (w *mainWindow) runDone(_ int, o *run.Outcome, err error) {
	w.progress.Hide()
	w.cancelBtn.Hide()
	if o == nil {
		w.setStatus(plainError(err), true)
		return
	}
	if w.current != nil && len(w.current.T) > 0 {
		w.previous = w.current
	}
	w.current = o
	if w.fresh {
		// The first run of a model just opened: time on the axis its
		// output grid was made for, and values that span many decades on
		// a log axis, as a modeller would read them.
		w.fresh = false
		w.logX.SetChecked(w.doc.Model().Simulation.Output.Spacing == "log")
		w.logY.SetChecked(run.SpansDecades(o, 3))
	}
	line := fmt.Sprintf("Solved in %s with %s (%d steps).", roundDuration(o.Elapsed), plainMethod(o), o.Stats.Steps)
	w.runInfo.Show()
	if err != nil {
		line = stoppedLine(o) + " " + line
	} else if len(o.Notes) > 0 {
		line += " Some columns keep their own units (see the information button)."
	}
	w.setStatus(line, err != nil)
	w.refreshSpecies()
	w.redraw()
	w.diagram.runDone()
}

// showView shows the Time course or the Diagram view.
func (w *mainWindow) showView(title string) {
	for _, item := range w.views.Items {
		if item.Text == title {
			w.views.Select(item)
		}
	}
}

// roundDuration writes d for people, to about three digits, with a space
// before the unit as the trade writes it: "454 µs", "2.6 ms", "1.23 s",
// "2 min 5 s".
func roundDuration(d time.Duration) string {
	num := func(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) }
	switch {
	case d < time.Millisecond:
		return num(float64(d.Round(time.Microsecond)/time.Microsecond)) + " µs"
	case d < time.Second:
		return num(float64(d.Round(100*time.Microsecond))/1e6) + " ms"
	case d < time.Minute:
		return num(d.Round(10*time.Millisecond).Seconds()) + " s"
	}
	d = d.Round(time.Second)
	return fmt.Sprintf("%d min %d s", d/time.Minute, d%time.Minute/time.Second)
}

// plainError writes err as one readable sentence.
func plainError(err error) string {
	if err == nil {
		return ""
	}
	var pe network.ErrorList
	if errors.As(err, &pe) {
		return "The model has mistakes; see Messages."
	}
	s := err.Error()
	if s == "" {
		return "The run failed."
	}
	if c := s[0]; 'a' <= c && c <= 'z' {
		return string(c-'a'+'A') + s[1:]
	}
	return s // a message starting with a symbol such as μ keeps it
}

// redraw draws the current outcome with the current view.
func (w *mainWindow) redraw() {
	if w.current == nil {
		return
	}
	v := run.View{LogX: w.logX.Checked, LogY: w.logY.Checked, Hidden: w.hidden, Zoom: w.plot.view.Zoom, Slots: w.doc.Slots()}
	if v.Zoom != nil && (v.LogX != w.plot.view.LogX || v.LogY != w.plot.view.LogY) {
		v.Zoom = nil // a zoom on one scale means little on the other
	}
	if w.overlay {
		v.Previous = w.previous
	}
	if ref := w.tune.reference(); ref != nil {
		v.Previous, v.PreviousLabel = ref, "pinned reference (faint, dashed)"
	}
	v.Measured = w.measuredShown(w.current)
	w.plot.Set(w.current, v)
}

// view returns the view as on screen, for exports.
func (w *mainWindow) view() run.View { return w.plot.view }

// refreshSpecies updates the species checklist for the current outcome and
// filter.
func (w *mainWindow) refreshSpecies() {
	w.shownSpecies = w.shownSpecies[:0]
	if w.current != nil {
		f := strings.ToLower(strings.TrimSpace(w.filter.Text))
		for j, n := range w.current.Names {
			if f == "" || strings.Contains(strings.ToLower(n), f) {
				w.shownSpecies = append(w.shownSpecies, j)
			}
		}
	}
	w.speciesList.Refresh()
}

func (w *mainWindow) setVisibleFiltered(on bool) {
	if w.current == nil {
		return
	}
	for _, j := range w.shownSpecies {
		w.hidden[w.current.Names[j]] = !on
	}
	w.speciesList.Refresh()
	w.redraw()
}

// confirmDiscard runs then at once when there are no unsaved changes, and
// otherwise asks first.
func (w *mainWindow) confirmDiscard(what string, then func()) {
	if !w.doc.Dirty() && w.ed.Untaken() == 0 {
		then()
		return
	}
	text := "The model has changes that are not saved."
	if !w.doc.Dirty() {
		text = "Some fields hold typed text that could not be taken (see Messages)."
	}
	d := dialog.NewConfirm("Unsaved changes",
		text+"\nDiscard them before "+what+"?", func(ok bool) {
			if ok {
				then()
			}
		}, w.win)
	d.SetConfirmText("Discard changes")
	d.SetDismissText("Keep editing")
	d.Show()
}

func (w *mainWindow) quit() {
	w.removeRecovery()
	w.app.Quit()
}

func (w *mainWindow) showError(err error) {
	dialog.ShowError(err, w.win)
}

// modelBytes returns the model file text of m.
func modelBytes(m *network.Model) ([]byte, error) {
	var b bytes.Buffer
	err := m.Write(&b)
	return b.Bytes(), err
}

// plainMethod names the method of an outcome for the status line, in words
// for people who are not numerical analysts.
func plainMethod(o *run.Outcome) string {
	stiff := false
	for _, m := range o.Stats.Methods {
		if m != solve.Explicit {
			stiff = true
		}
	}
	if stiff {
		return o.MethodSummary() + ", a method for stiff systems (fast and slow reactions together)"
	}
	return o.MethodSummary() + ", a method for systems without very fast reactions"
}

// stoppedAt says where run o stopped early: "The run stopped at t = 1 of
// 10".
func stoppedAt(o *run.Outcome) string {
	end := 0.0
	if len(o.T) > 0 {
		end = o.T[len(o.T)-1]
	}
	return fmt.Sprintf("The run stopped at t = %s of %s", short(end), short(o.TEnd))
}

// stoppedLine says for the status line that run o stopped early, short
// enough to read there; the information dialog gives the reason in full.
func stoppedLine(o *run.Outcome) string {
	return stoppedAt(o) + "; showing the part computed (the information button on the left says why)."
}

// showRunInfo shows what the last run did: the method and why it was
// chosen, and the solver's statistics.
func (w *mainWindow) showRunInfo() {
	text := runInfoText(w.current)
	if text == "" {
		return
	}
	l := widget.NewLabel(text)
	l.Wrapping = fyne.TextWrapWord
	d := dialog.NewCustom("About the last run", "Close", container.NewVScroll(l), w.win)
	d.Resize(fyne.NewSize(560, 360))
	d.Show()
}

// runInfoText is the text of About the last run: first, for a run that
// stopped early, the reason in full; then, where a user looks first, the
// method and, when it was chosen automatically, why; then the solver's
// statistics.
func runInfoText(o *run.Outcome) string {
	if o == nil {
		return ""
	}
	st := o.Stats
	text := ""
	if o.Err != nil {
		text = stoppedAt(o) + ".\nWhy: " + plainError(o.Err) + "\n\n"
	}
	text += "Method: " + o.MethodSummary()
	if st.Choice != "" {
		// Choice reads "<method>: <reason>"; the method is named already.
		why := st.Choice
		if _, after, ok := strings.Cut(why, ": "); ok {
			why = after
		}
		text += ", chosen automatically: " + why
	}
	text += fmt.Sprintf("\n\nTime taken: %s\nSteps: %d (%d redone with a smaller step)\n"+
		"Right-hand side evaluations: %d\nJacobian evaluations: %d\nMatrix factorizations: %d\n"+
		"Steps where a concentration was kept from going negative: %d",
		roundDuration(o.Elapsed), st.Steps, st.Rejected, st.RHSEvals, st.JacobianEvals, st.Factorizations, st.NonNegFixes)
	if st.FactorNonzeros > 0 {
		text += fmt.Sprintf("\nSparse linear algebra: %d entries in the matrix factors (a full species × species table would hold %d)", st.FactorNonzeros, o.Species*o.Species)
	}
	if o.Compile > 0 {
		text += fmt.Sprintf("\nOf the time taken, checking and compiling the model: %s", roundDuration(o.Compile))
	}
	if peak := stages.PeakRSS(); peak > 0 {
		text += fmt.Sprintf("\nPeak memory of the program so far: %.0f MB", stages.MB(peak))
	}
	if len(o.Notes) > 0 {
		text += "\n\nUnits: " + strings.Join(o.Notes, ".\n") + "."
	}
	return text
}
