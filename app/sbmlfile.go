package main

// File ▸ Import SBML… and Export SBML…: models exchanged through SBML.

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/network/sbml"
)

// importSBMLDialog asks for an SBML file and imports it.
func (w *mainWindow) importSBMLDialog() {
	askOpen(w.win, []string{".xml", ".sbml"}, w.lastDir(), w.showError, w.importSBML)
}

// importSBML reads path off the UI thread; the model opens as a new model
// that is not saved yet, and the import's messages are shown in a dialog.
func (w *mainWindow) importSBML(path string) {
	w.setStatus("Importing "+filepath.Base(path)+"…", false)
	go func() {
		var imp *sbml.Import
		f, err := os.Open(path)
		if err == nil {
			imp, err = sbml.Read(f, filepath.Base(path))
			f.Close()
		}
		fyne.Do(func() {
			var l network.ErrorList
			switch {
			case errors.As(err, &l):
				w.showMessages("SBML import", fmt.Sprintf("%s cannot be imported. Each problem below names the element and its place in the file:", filepath.Base(path)), l)
				w.setStatus("Import failed: "+filepath.Base(path), false)
				return
			case err != nil:
				w.showError(err)
				return
			}
			w.exampleOf = ""
			w.setModel(imp.Model, "")
			w.doc.MarkModified()
			w.updateTitle()
			if ws := imp.Problems.Warnings(); len(ws) > 0 {
				w.showMessages("SBML import", fmt.Sprintf("%s was imported as a new model, not saved yet. Notes on the import:", filepath.Base(path)), ws)
			}
			w.setStatus("Imported "+filepath.Base(path)+" as a new model; save it to keep it.", false)
			w.simulate()
		})
	}()
}

// showMessages shows a list of problems in a dialog.
func (w *mainWindow) showMessages(title, intro string, l network.ErrorList) {
	lines := make([]string, len(l))
	for i, p := range l {
		lines[i] = "• " + p.String()
	}
	text := widget.NewLabel(strings.Join(lines, "\n"))
	text.Wrapping = fyne.TextWrapWord
	head := widget.NewLabel(intro)
	head.Wrapping = fyne.TextWrapWord
	d := dialog.NewCustom(title, "Close", container.NewBorder(head, nil, nil, nil, container.NewVScroll(text)), w.win)
	d.Resize(fyne.NewSize(760, 420))
	d.Show()
}

// exportSBML writes the model as SBML Level 3 Version 2.
func (w *mainWindow) exportSBML() {
	data, err := sbml.Encode(w.doc.Model())
	if err != nil {
		var l network.ErrorList
		if errors.As(err, &l) {
			w.showMessages("SBML export", "The model cannot be exported while it has mistakes:", l)
			return
		}
		w.showError(err)
		return
	}
	name := "model.xml"
	if w.doc.Path != "" {
		name = strings.TrimSuffix(filepath.Base(w.doc.Path), filepath.Ext(w.doc.Path)) + ".xml"
	} else if w.exampleOf != "" {
		name = strings.TrimSuffix(w.exampleOf, ".json") + ".xml"
	}
	w.saveFileDialog(name, ".xml", func(path string) {
		if err := atomicfile.Write(path, data); err != nil {
			w.showError(err)
			return
		}
		w.setStatus("Exported as SBML Level 3 Version 2 to "+path, false)
	})
}
