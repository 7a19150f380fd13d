package main

import (
	"fmt"
	"path/filepath"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/storage"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot/vg"

	"kinetarium/app/run"
	"kinetarium/plotting"
)

// figureFormats are the choices of the figure export.
var figureFormats = []string{"PNG image", "SVG drawing", "PDF document"}

func formatExt(f string) string {
	switch f {
	case "SVG drawing":
		return ".svg"
	case "PDF document":
		return ".pdf"
	}
	return ".png"
}

// exportFigure asks for the size, resolution and format of the figure,
// then for the file, and saves the figure as shown on screen.
func (w *mainWindow) exportFigure() {
	if w.current == nil {
		w.setStatus("Nothing to export yet: simulate the model first.", false)
		return
	}
	width := widget.NewEntry()
	width.SetText("16")
	height := widget.NewEntry()
	height.SetText("10")
	dpi := widget.NewEntry()
	dpi.SetText(strconv.Itoa(plotting.DefaultDPI))
	format := widget.NewSelect(figureFormats, func(f string) {
		if f == "PNG image" {
			dpi.Enable()
		} else {
			dpi.Disable()
		}
	})
	format.SetSelected(figureFormats[0])
	items := []*widget.FormItem{
		widget.NewFormItem("Format", format),
		widget.NewFormItem("Width (cm)", width),
		widget.NewFormItem("Height (cm)", height),
		widget.NewFormItem("Resolution (dpi)", dpi),
	}
	dialog.ShowForm("Export figure", "Choose file…", "Cancel", items, func(ok bool) {
		if !ok {
			return
		}
		wcm, err1 := positive(width.Text, "width")
		hcm, err2 := positive(height.Text, "height")
		d, err3 := positive(dpi.Text, "resolution")
		for _, err := range []error{err1, err2, err3} {
			if err != nil {
				w.showError(err)
				return
			}
		}
		ext := formatExt(format.Selected)
		w.saveFileDialog("figure"+ext, ext, func(path string) {
			if err := w.saveFigure(path, wcm, hcm, d); err != nil {
				w.showError(err)
				return
			}
			w.setStatus("Figure saved to "+path, false)
		})
	}, w.win)
}

// saveFigure saves the figure as shown, wcm × hcm centimetres at dpi (for
// PNG), with its provenance.
func (w *mainWindow) saveFigure(path string, wcm, hcm, dpi float64) error {
	p, err := run.Figure(w.current, w.view())
	if err != nil {
		return err
	}
	prov, err := w.provenance()
	if err != nil {
		return err
	}
	return plotting.Save(p, path, vg.Length(wcm)*vg.Centimeter, vg.Length(hcm)*vg.Centimeter, int(dpi), prov.Metadata(""))
}

// positive reads a positive number typed into the named field.
func positive(s, name string) (float64, error) {
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil || !(v > 0) || v > 1e5 {
		return 0, fmt.Errorf("the %s %q is not usable; expected a positive number", name, s)
	}
	return v, nil
}

// exportData saves the results as CSV.
func (w *mainWindow) exportData() {
	if w.current == nil {
		w.setStatus("Nothing to export yet: simulate the model first.", false)
		return
	}
	o := w.current
	w.saveFileDialog(w.dataFileName(), ".csv", func(path string) {
		if err := w.saveData(path, o); err != nil {
			w.showError(err)
			return
		}
		w.setStatus("Data saved to "+path+", its provenance to "+run.ProvenancePath(path), false)
	})
}

// saveData writes the outcome o, in the units it is shown in, as CSV to
// path with its provenance beside it.
func (w *mainWindow) saveData(path string, o *run.Outcome) error {
	prov, err := w.provenance()
	if err != nil {
		return err
	}
	return run.SaveCSV(path, o, prov)
}

// dataFileName is the name offered for the results as CSV: "results.csv",
// or, when the figure shows a run with slider values that the model does
// not have, a name that gives them, such as "results-sliders-k=2.787.csv".
func (w *mainWindow) dataFileName() string {
	if !w.tune.tuned {
		return "results.csv"
	}
	name := "results-sliders"
	for _, k := range w.tune.knobs {
		if k.Value != k.Model {
			name += "-" + strings.NewReplacer(" ", "_", ":", "", "/", "_").Replace(k.Label()) + "=" + short(k.Value)
		}
	}
	return name + ".csv"
}

// provenance describes the result shown, for its exports: the model in
// the editor and the slider values that differ from it, when the figure
// shows a run with them.
func (w *mainWindow) provenance() (*run.Provenance, error) {
	m := w.doc.Model()
	var changed []run.Change
	if w.tune.tuned {
		for _, k := range w.tune.knobs {
			if k.Value != k.Model {
				changed = append(changed, run.Change{Name: k.Ref(), Model: k.Model, Value: k.Value})
			}
		}
	}
	return run.NewProvenance("simulation", m, m.Simulation, changed)
}

// saveFileDialog asks for a file to write, adds ext when the name has no
// extension, and calls save with the path. The file itself is written by
// save (atomically), not through the dialog.
func (w *mainWindow) saveFileDialog(name, ext string, save func(path string)) {
	saveDialog(w.win, name, ext, w.lastDir(), save)
}

// saveDialog is the file dialog behind every save and export: it asks for a
// file in win (starting in dir when not nil), adds ext when the chosen name
// has no extension, and calls save with the path. The dialog only picks the
// name; save writes the file, atomically.
func saveDialog(win fyne.Window, name, ext string, dir fyne.ListableURI, save func(path string)) {
	d := dialog.NewFileSave(func(wc fyne.URIWriteCloser, err error) {
		if err != nil {
			dialog.ShowError(err, win)
			return
		}
		if wc == nil {
			return
		}
		path := wc.URI().Path()
		wc.Close()
		if filepath.Ext(path) == "" {
			path += ext
		}
		save(path)
	}, win)
	d.SetFilter(storage.NewExtensionFileFilter([]string{ext}))
	d.SetFileName(name)
	if dir != nil {
		d.SetLocation(dir)
	}
	d.Resize(fyne.NewSize(900, 600))
	d.Show()
}
