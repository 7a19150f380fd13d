package main

// The Data menu's measurements: a file of measured time courses shown over
// the curves, remembered beside the model in its companion file
// (calibrate.Companion) and read again when the model is opened.

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/calibrate"
	"kinetarium/app/run"
	"kinetarium/plotting"
)

// measurements are the measured data shown over the time course.
type measurements struct {
	data *calibrate.Data // nil when none are loaded
	path string          // the file they came from, absolute
}

// dataMenu is the Data menu: measurements and what is done with them.
func (w *mainWindow) dataMenu() *fyne.Menu {
	return fyne.NewMenu("Data",
		fyne.NewMenuItem("Load measurements…", w.loadMeasurementsDialog),
		fyne.NewMenuItem("Clear measurements", w.clearMeasurements),
		fyne.NewMenuItemSeparator(),
		fyne.NewMenuItem("Fit to measurements…", w.openFit))
}

// loadMeasurementsDialog asks for a measurements file and loads it.
func (w *mainWindow) loadMeasurementsDialog() {
	askOpen(w.win, []string{".csv", ".tsv", ".txt"}, w.lastDir(), w.showError, func(path string) { w.loadMeasurements(path) })
}

// loadMeasurements reads the measurements file at path against the model
// in the editor, shows it over the curves and remembers it beside the
// model's file. A file that cannot be read is reported in a dialog with
// every problem's line and column, and what was shown stays.
func (w *mainWindow) loadMeasurements(path string) bool {
	if abs, err := filepath.Abs(path); err == nil {
		path = abs
	}
	d, err := calibrate.LoadData(path, calibrate.MeasurableNames(w.doc.Model()))
	if err != nil {
		w.showDataProblems(path, err)
		w.setStatus("The measurements in "+filepath.Base(path)+" cannot be shown; see the message.", true)
		return false
	}
	w.meas = measurements{data: d, path: path}
	w.redraw()
	line := fmt.Sprintf("Showing %d measured %s of %s from %s.", len(d.Points), plural(len(d.Points), "value", "values"),
		strings.Join(d.Names, ", "), filepath.Base(path))
	switch {
	case w.doc.Path == "":
		line += " They will be remembered beside the model when it is saved."
	case w.pictureOnly:
		// A picture for checks leaves no file behind.
	default:
		if err := calibrate.SaveCompanion(w.doc.Path, path); err != nil {
			w.showError(fmt.Errorf("the measurements are shown, but where they come from could not be remembered beside the model: %w", err))
		} else {
			line += " Remembered in " + filepath.Base(calibrate.CompanionPath(w.doc.Path)) + "."
		}
	}
	w.setStatus(line, false)
	return true
}

// clearMeasurements stops showing the measurements and forgets them
// beside the model (the measurements file itself is left alone).
func (w *mainWindow) clearMeasurements() {
	if w.meas.data == nil {
		w.setStatus("No measurements are shown.", false)
		return
	}
	w.meas = measurements{}
	w.redraw()
	if w.doc.Path != "" {
		if err := calibrate.SaveCompanion(w.doc.Path, ""); err != nil {
			w.showError(err)
		}
	}
	w.setStatus("Measurements cleared; the file they came from is unchanged.", false)
}

// restoreMeasurements shows the measurements remembered beside the model
// file at path, if any; a companion file or measurements file that cannot
// be read is said in a dialog, and the model opens all the same.
func (w *mainWindow) restoreMeasurements(path string) {
	w.meas = measurements{}
	c, err := calibrate.LoadCompanion(path)
	if err != nil {
		w.showDataProblems(calibrate.CompanionPath(path), err)
		return
	}
	dataPath := c.MeasurementsPath(path)
	if dataPath == "" {
		return
	}
	if _, err := os.Stat(dataPath); errors.Is(err, os.ErrNotExist) {
		w.showError(fmt.Errorf("%s remembers measurements in %s, but that file is not there any more; load them again with Data ▸ Load measurements…",
			filepath.Base(calibrate.CompanionPath(path)), dataPath))
		return
	}
	d, err := calibrate.LoadData(dataPath, calibrate.MeasurableNames(w.doc.Model()))
	if err != nil {
		w.showDataProblems(dataPath, err)
		return
	}
	w.meas = measurements{data: d, path: dataPath}
}

// showDataProblems shows the problems of a measurements or companion
// file, one per line with its place.
func (w *mainWindow) showDataProblems(path string, err error) {
	var lines []string
	var de calibrate.DataErrors
	var se calibrate.SpecErrors
	switch {
	case errors.As(err, &de):
		for _, e := range de {
			lines = append(lines, "• "+e.Error())
		}
	case errors.As(err, &se):
		for _, e := range se {
			lines = append(lines, "• "+e.Error())
		}
	default:
		lines = append(lines, "• "+err.Error())
	}
	text := widget.NewLabel(strings.Join(lines, "\n"))
	text.Wrapping = fyne.TextWrapWord
	head := widget.NewLabel(filepath.Base(path) + " cannot be read. Each problem names its line and column; " +
		"a measurements file has a header with a time column, one column per measured species or assignment, and optional sd_NAME columns:")
	head.Wrapping = fyne.TextWrapWord
	w.lastDataProblems = strings.Join(lines, "\n")
	d := dialog.NewCustom("Measurements", "Close", container.NewBorder(head, nil, nil, nil, container.NewVScroll(text)), w.win)
	d.Resize(fyne.NewSize(760, 380))
	d.Show()
}

// measuredShown returns the measurements for the figure of outcome o, in
// the units o is shown in (the file holds the model's units).
func (w *mainWindow) measuredShown(o *run.Outcome) []plotting.Measured {
	if w.meas.data == nil || o == nil {
		return nil
	}
	return run.MeasuredShown(w.doc.Model(), o, measuredPoints(w.meas.data))
}

// measuredPoints returns the points of d for a figure.
func measuredPoints(d *calibrate.Data) []plotting.Measured {
	out := make([]plotting.Measured, len(d.Points))
	for i, p := range d.Points {
		out[i] = plotting.Measured{T: p.Time, Y: p.Value, SD: p.SD, Name: p.Name}
	}
	return out
}

// measuredSummary describes the measurements for the fit window: "18
// values of P at 6 times".
func measuredSummary(d *calibrate.Data) string {
	times := d.Times()
	names := append([]string(nil), d.Names...)
	sort.Strings(names)
	return fmt.Sprintf("%d %s of %s at %d %s", len(d.Points), plural(len(d.Points), "value", "values"),
		strings.Join(names, ", "), len(times), plural(len(times), "time", "times"))
}
