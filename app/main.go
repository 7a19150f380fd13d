// Command app is the Kinetarium desktop program: it edits a reaction
// network in tables, simulates it and plots the time courses.
//
// Usage:
//
//	app [--model FILE] [--data FILE] [--tab TAB] [--view VIEW] [--plan FILE] [--screenshot OUT.png]
//
// Without --model it opens the default example; an SBML file (.xml or
// .sbml) is imported as by File ▸ Import SBML…. --data loads measurements
// as Data ▸ Load measurements… does. --view diagram shows the network's
// diagram instead of the time course; --view fit opens the Fit to
// measurements window (with the fit plan --plan, if given) and --view
// sensitivity the Sensitivity over time window; with --screenshot these
// run and the picture is of their window. With --screenshot it opens
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
	view := flag.String("view", "", "`view` to show first: \"time course\" (default), diagram, fit or sensitivity")
	data := flag.String("data", "", "measurements `file` (CSV or TSV) to show over the curves")
	plan := flag.String("plan", "", "fit plan `file` (kinetarium.fit/1) for --view fit")
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
	if *data != "" && !w.loadMeasurements(*data) && *shot != "" {
		fmt.Fprintf(os.Stderr, "app: %s cannot be read:\n%s\n", *data, w.lastDataProblems)
		os.Exit(1)
	}
	if *tab != "" {
		w.ed.SelectTab(*tab)
	}
	switch strings.ToLower(*view) {
	case "", "time course", "timecourse", "plot":
	case "diagram":
		w.showView(viewDiagram)
	case "fit":
		if err := w.startFitView(*plan, *shot != ""); err != nil {
			fmt.Fprintln(os.Stderr, "app:", err)
			os.Exit(1)
		}
	case "sensitivity":
		if err := w.startSensitivityView(*shot != ""); err != nil {
			fmt.Fprintln(os.Stderr, "app:", err)
			os.Exit(1)
		}
	default:
		fmt.Fprintf(os.Stderr, "app: unknown view %q; expected \"time course\", diagram, fit or sensitivity\n", *view)
		os.Exit(2)
	}
	w.offerRecovery(recs)
	w.win.Resize(fyne.NewSize(1280, 800))
	w.win.ShowAndRun()
	os.Exit(w.exitCode)
}
