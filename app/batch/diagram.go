package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"strings"

	"kinetarium/app/diagram"
	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/plotting"
	pd "kinetarium/plotting/diagram"
)

func init() { register("diagram", runDiagram) }

// runDiagram is the diagram subcommand.
func runDiagram(args []string, stdout, stderr io.Writer) int {
	err := drawDiagram(args, stdout)
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(stdout, usageText)
		return exitOK
	}
	return exitStatus("diagram", err, stderr)
}

// drawDiagram lays out and draws a model's diagram.
func drawDiagram(args []string, stdout io.Writer) error {
	fs := flag.NewFlagSet("diagram", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	out := fs.String("out", "", "")
	style := fs.String("style", "", "")
	method := fs.String("layout", "auto", "")
	at := fs.String("at", "", "")
	store := fs.Bool("store", false, "")
	var model string
	if len(args) > 0 && !strings.HasPrefix(args[0], "-") {
		model, args = args[0], args[1:]
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return err
		}
		return badInput(fmt.Errorf("%v; see batch help", err))
	}
	if model == "" || fs.NArg() > 0 {
		return badInput(errors.New("expected one model file: batch diagram MODEL.json --out FILE.svg"))
	}
	if *out == "" && !*store {
		return badInput(errors.New("--out FILE.png, .svg or .pdf is missing (or give --store to save the layout only)"))
	}
	if *out != "" && !contains(plotting.Formats, strings.ToLower(filepath.Ext(*out))) {
		return badInput(fmt.Errorf("--out %s: expected a file name ending in .png, .svg or .pdf", *out))
	}
	if *out != "" {
		if err := checkOutFile("--out", *out); err != nil {
			return err
		}
	}
	var s pd.Settings
	switch *method {
	case "auto":
	case "layered":
		s.Method = pd.Layered
	case "force":
		s.Method = pd.Force
	default:
		return badInput(fmt.Errorf("--layout %q: expected auto, layered or force", *method))
	}
	m, err := network.Load(model)
	if err != nil {
		return badInput(err)
	}
	st := pd.StyleNamed(m.Layout.Style)
	switch *style {
	case "":
	case "plain":
		st = pd.Plain
	case "sbgn":
		st = pd.SBGN
	default:
		return badInput(fmt.Errorf("--style %q: expected plain or sbgn", *style))
	}
	net, _ := network.Check(m)
	d := diagram.Build(net)
	stats := pd.Layout(d, s)
	fmt.Fprintf(stdout, "%s\n", diagram.Summary(stats, d))
	o := pd.Options{Style: st, Title: m.Title}
	prov, err := run.NewProvenance("diagram", m, m.Simulation, nil)
	if err != nil {
		return err
	}
	if *at != "" {
		var t float64
		if _, err := fmt.Sscan(*at, &t); err != nil {
			return badInput(fmt.Errorf("--at %q: expected a time such as 12.5", *at))
		}
		ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
		defer stop()
		oc, err := run.Run(ctx, m, nil)
		if oc == nil {
			return err
		}
		r, rerr := diagram.NewReplay(m, oc)
		if rerr != nil {
			return rerr
		}
		if t0, t1 := r.Span(); t < t0 || t > t1 {
			return badInput(fmt.Errorf("--at %v is outside the run, which covers %v to %v", t, t0, t1))
		}
		r.Frame(d, t)
		o.Caption = r.Caption(t)
		prov.What = "diagram at t = " + *at
	}
	if *out != "" {
		if err := diagram.Save(*out, d, o, prov.Metadata("")); err != nil {
			return err
		}
	}
	if *store {
		diagram.Store(&m.Layout, d)
		if err := m.Save(model); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "positions saved in %s\n", model)
	}
	return nil
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}
