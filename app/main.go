// Command app is the Kinetarium desktop program: it edits a reaction
// network in tables, simulates it and plots the time courses.
//
// Usage:
//
//	app [--model FILE] [--tab TAB] [--view diagram] [--screenshot OUT.png]
//
// Without --model it opens the default example; an SBML file (.xml or
// .sbml) is imported as by File ▸ Import SBML…. --view diagram shows the
// network's diagram instead of the time course. With --screenshot it opens
// the window, runs the model, waits until the plot (or diagram) is drawn, saves a
// picture of the window to OUT.png and exits (status 1 with a message on
// failure, after at most a minute).
package main

import (
	"flag"
	"fmt"
	"os"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/app"

	"kinetarium/assets"
)

// appID identifies the program's preferences (recent files).
const appID = "org.kinetarium.desktop"

func main() {
	model := flag.String("model", "", "model `file` to open, or an SBML file (.xml, .sbml) to import (default: the default example)")
	tab := flag.String("tab", "", "editor `tab` to show first: Reactions, Species, Parameters, Assignments, Events, Compartments or \"Run settings\"")
	shot := flag.String("screenshot", "", "save a picture of the window to `file` (PNG) once the plot is drawn, then exit")
	view := flag.String("view", "", "`view` to show first: \"time course\" (default) or diagram")
	flag.Parse()
	if flag.NArg() > 0 && *model == "" {
		*model = flag.Arg(0)
	}

	a := app.NewWithID(appID)
	a.Settings().SetTheme(newTheme())
	a.SetIcon(fyne.NewStaticResource("kinetarium.svg", assets.Icon))
	w := newMainWindow(a, *shot != "")
	if *shot != "" {
		w.screenshot(*shot)
	}
	// Look for unsaved work of earlier sessions before opening anything,
	// and offer it once the window shows.
	var recs []recovery
	if *shot == "" {
		recs = w.findRecoveries()
	}
	if err := w.openStart(*model); err != nil {
		if *shot != "" {
			fmt.Fprintln(os.Stderr, "app:", err)
			os.Exit(1)
		}
		w.showError(err)
	}
	if *tab != "" {
		w.ed.SelectTab(*tab)
	}
	switch strings.ToLower(*view) {
	case "", "time course", "timecourse", "plot":
	case "diagram":
		w.showView(viewDiagram)
	default:
		fmt.Fprintf(os.Stderr, "app: unknown view %q; expected \"time course\" or diagram\n", *view)
		os.Exit(2)
	}
	w.offerRecovery(recs)
	w.win.Resize(fyne.NewSize(1280, 800))
	w.win.ShowAndRun()
	os.Exit(w.exitCode)
}
