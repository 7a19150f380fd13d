package main

// Analyse ▸ Sensitivity over time…: the scaled sensitivity ∂ln y/∂ln p of
// one species (or assignment) to each parameter along the run, from the
// forward sensitivities of app/calibrate (the code path of the batch
// command's simulate --sensitivities), as a heat map of time across and
// parameters up.

import (
	"context"
	"fmt"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
	"gonum.org/v1/plot"

	"kinetarium/app/calibrate"
	"kinetarium/app/run"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/plotting"
)

// sensOutcome is one computation of the window.
type sensOutcome struct {
	res     *calibrate.Result
	targets []string
	base    []float64
}

// timeSensWindow shows the scaled sensitivities of a chosen output over
// time.
type timeSensWindow struct {
	win      fyne.Window
	model    *network.Model
	output   *widget.Select
	ctl      *runControls
	fig      *studyFigure
	out      *sensOutcome
	targets  []string
	afterRun func() // called when a run has ended and its results are shown
}

func (w *mainWindow) openTimeSensitivity() {
	m, name, ok := w.studyModel()
	if !ok {
		return
	}
	s, err := newTimeSensWindow(w.app, m, name)
	if err != nil {
		w.showError(err)
		return
	}
	s.win.Show()
	s.start()
}

func newTimeSensWindow(a fyne.App, m *network.Model, name string) (*timeSensWindow, error) {
	names := calibrate.MeasurableNames(m)
	if len(names) == 0 || len(m.Parameters) == 0 {
		return nil, fmt.Errorf("sensitivities over time need a species and a parameter; the model has %d and %d", len(m.Species), len(m.Parameters))
	}
	s := &timeSensWindow{win: a.NewWindow("Sensitivity over time — " + name), model: m}
	for _, p := range m.Parameters {
		s.targets = append(s.targets, p.Name)
	}
	s.output = widget.NewSelect(names, func(string) { s.draw() })
	s.output.SetSelected(names[0])
	s.ctl = newRunControls(s.start)
	s.fig = newStudyFigure("Press Run to compute the sensitivities.")
	intro := widget.NewLabel("Each cell is the scaled sensitivity ∂ln y/∂ln p: the per cent change of the chosen quantity y at that time " +
		"for a one per cent change of the parameter p. Near 0 the parameter hardly matters then; ±1 means proportional.")
	intro.Wrapping = fyne.TextWrapWord
	exportTable := widget.NewButtonWithIcon("Table…", theme.DocumentSaveIcon(), s.exportTable)
	exportFig := widget.NewButtonWithIcon("Figure…", theme.DocumentSaveIcon(), s.exportFigure)
	top := container.NewVBox(intro, widget.NewForm(widget.NewFormItem("Quantity", s.output)), s.ctl.content)
	bar := container.NewHBox(widget.NewLabel("Export:"), exportTable, exportFig)
	s.win.SetContent(container.NewBorder(top, bar, nil, nil, s.fig))
	s.win.Resize(fyne.NewSize(980, 700))
	return s, nil
}

// start computes every output's sensitivities to every parameter, off
// the UI goroutine.
func (s *timeSensWindow) start() {
	m := s.model
	targets := s.targets
	runAsync(s.ctl, func(ctx context.Context, progress func(float64)) (*sensOutcome, error) {
		ev, err := calibrate.NewEvaluator(m, calibrate.Options{Targets: targets})
		if err != nil {
			return nil, err
		}
		res, err := ev.Solve(ctx, nil, true)
		if err != nil {
			return nil, err
		}
		progress(1)
		return &sensOutcome{res: res, targets: targets, base: ev.Base()}, nil
	}, func(o *sensOutcome, err error) {
		if s.afterRun != nil {
			defer s.afterRun()
		}
		if err != nil {
			s.ctl.status.SetText("The sensitivities could not be computed: " + plainError(err))
			return
		}
		s.out = o
		s.ctl.status.SetText(fmt.Sprintf("Sensitivities of %d quantities to %d parameters at %d times.", len(o.res.Names), len(o.targets), len(o.res.T)))
		s.draw()
	})
}

// figure draws the heat map of the chosen output.
func (s *timeSensWindow) figure() (*plot.Plot, error) {
	if s.out == nil {
		return nil, fmt.Errorf("nothing computed yet")
	}
	k := -1
	for i, n := range s.out.res.Names {
		if n == s.output.Selected {
			k = i
		}
	}
	if k < 0 {
		return nil, fmt.Errorf("no quantity %q", s.output.Selected)
	}
	z := calibrate.ScaledGrid(s.out.res, k, s.out.base)
	logX := s.model.Simulation.WithDefaults().Output.Spacing == "log"
	p, err := plotting.SensitivityMap(s.out.res.T, s.out.targets, z, plotting.Options{Title: "Scaled sensitivity of " + s.output.Selected,
		XLabel: "time", XUnit: s.model.Units.Time, YLabel: "parameter", LogX: logX}, "∂ln "+s.output.Selected+"/∂ln p")
	if err != nil {
		return nil, err
	}
	return p, nil
}

func (s *timeSensWindow) draw() {
	if s.out == nil {
		return
	}
	p, err := s.figure()
	if err != nil {
		s.fig.set(nil, "The figure cannot be drawn: "+err.Error())
		return
	}
	s.fig.set(p, "")
}

func (s *timeSensWindow) provenance() (*run.Provenance, error) {
	return run.NewProvenance("sensitivities", s.model, s.model.Simulation, nil)
}

// exportTable writes the batch command's sensitivity table (every output,
// parameter and time).
func (s *timeSensWindow) exportTable() {
	s.ctl.exportTable(s.win, s.out != nil, "sensitivities.csv", func(path string) error {
		prov, err := s.provenance()
		if err != nil {
			return err
		}
		if err := atomicfile.WriteCSV(path, calibrate.SensitivityRows(s.out.res, s.out.targets, s.out.base)); err != nil {
			return err
		}
		return run.SaveProvenance(path, prov)
	})
}

func (s *timeSensWindow) exportFigure() {
	if s.out == nil {
		s.ctl.status.SetText("Nothing to export yet: press Run first.")
		return
	}
	exportPlot(s.win, "sensitivity-"+fileName(s.output.Selected), s.provenance, s.figure,
		func(path string) { s.ctl.status.SetText("Figure saved to " + path) })
}
