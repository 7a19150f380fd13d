package main

import (
	"fmt"
	"math"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/diagram"
	"kinetarium/editor"
	"kinetarium/network"
	pd "kinetarium/plotting/diagram"
)

// Words of the diagram panel.
const (
	viewTimeCourse = "Time course"
	viewDiagram    = "Diagram"
	stylePlain     = "Plain"
	styleSBGN      = "SBGN"
)

// nodeKey names a node across rebuilds of the diagram.
type nodeKey struct {
	kind pd.Kind
	name string
}

// diagramPanel is the Diagram view beside the time course: the diagram
// of the model as edited, its style, search, arrangement and export, and
// the replay of the last run with a time slider.
type diagramPanel struct {
	w    *mainWindow
	view *diagramView

	style   *widget.Select
	find    *widget.Entry
	info    *widget.Label
	replayC *widget.Check
	slider  *widget.Slider
	tLabel  *widget.Label
	playBtn *widget.Button

	content fyne.CanvasObject

	d       *pd.Diagram
	version int // document version the diagram shows
	// auto holds where the layout put the nodes the model gives no place
	// to, so that they stay there after edits (and after Undo of a move).
	auto    map[nodeKey]pd.Point
	replay  *diagram.Replay
	t       float64
	playing chan struct{} // closed to stop playing
	shown   bool          // the Diagram tab is shown
}

func newDiagramPanel(w *mainWindow) *diagramPanel {
	p := &diagramPanel{w: w, view: newDiagramView(), version: -1}
	p.view.OnSelect = p.selectedInDiagram
	p.view.OnMoved = p.moved
	p.style = widget.NewSelect([]string{stylePlain, styleSBGN}, func(s string) {
		want := ""
		if s == styleSBGN {
			want = "sbgn"
		}
		if w.doc.Model().Layout.Style != want {
			w.doc.Apply("diagram style "+s, func(m *network.Model) { m.Layout.Style = want })
		}
	})
	p.find = widget.NewEntry()
	p.find.SetPlaceHolder("Find species or reaction…")
	p.find.OnChanged = func(s string) {
		if i := search(p.d, s); i >= 0 {
			p.view.Reveal(i)
		}
	}
	arrange := widget.NewButtonWithIcon("Arrange again", theme.ViewRefreshIcon(), p.arrangeAgain)
	full := widget.NewButtonWithIcon("Full view", theme.ZoomFitIcon(), p.view.FullView)
	export := widget.NewButtonWithIcon("Diagram…", theme.DocumentSaveIcon(), p.export)
	bar := container.NewBorder(nil, nil,
		container.NewHBox(widget.NewLabel("Style:"), p.style, arrange, full),
		container.NewHBox(widget.NewLabel("Export:"), export), p.find)

	p.replayC = widget.NewCheck("Replay the last run", func(bool) { p.applyFrame() })
	p.slider = widget.NewSlider(0, 1000)
	p.slider.OnChanged = func(f float64) { p.setFraction(f / 1000) }
	p.tLabel = widget.NewLabel("t = –")
	p.playBtn = widget.NewButtonWithIcon("Play", theme.MediaPlayIcon(), p.togglePlay)
	replayBar := container.NewBorder(nil, nil, container.NewHBox(p.replayC, p.playBtn), p.tLabel, p.slider)
	p.info = widget.NewLabel("")
	p.info.Truncation = fyne.TextTruncateEllipsis
	p.content = container.NewBorder(container.NewPadded(container.NewHScroll(bar)), container.NewVBox(replayBar, p.info), nil, nil, p.view)
	p.slider.SetValue(1000)
	return p
}

// refresh rebuilds the diagram when the document has changed: items
// already drawn stay where they are, new ones go near their neighbours,
// and a model without saved positions and no diagram yet is laid out
// afresh.
func (p *diagramPanel) refresh() {
	doc := p.w.doc
	if p.version == doc.Version() && p.d != nil {
		return
	}
	p.version = doc.Version()
	net := doc.Net()
	d := diagram.Build(net)
	if p.auto == nil {
		p.auto = map[nodeKey]pd.Point{}
	}
	saved := make([]bool, len(d.Nodes))
	for i := range d.Nodes {
		n := &d.Nodes[i]
		saved[i] = n.Pinned
		if pt, ok := p.auto[nodeKey{n.Kind, n.Name}]; ok && !n.Pinned {
			n.X, n.Y, n.Pinned = pt.X, pt.Y, true
		}
	}
	st := diagram.Arrange(d)
	for i, n := range d.Nodes {
		if !saved[i] {
			p.auto[nodeKey{n.Kind, n.Name}] = pd.Point{X: n.X, Y: n.Y}
		}
	}
	for i := range d.Nodes {
		d.Nodes[i].Pinned = true // drawn where they are from now on
	}
	if p.d == nil {
		p.view.fitTop = true
	}
	sel := -1
	if old := p.view.Selected(); old >= 0 && p.d != nil && old < len(p.d.Nodes) {
		sel = d.Find(p.d.Nodes[old].Kind, p.d.Nodes[old].Name)
	}
	p.d = d
	p.view.opts.Style = pd.StyleNamed(doc.Model().Layout.Style)
	if sel < 0 {
		// Follow the row selected in the tables.
		if tab, row := p.w.ed.SelectedRow(); row >= 0 {
			switch tab {
			case editor.TabSpecies:
				sel = diagram.NodeOf(doc.Model(), d, "species", row)
			case editor.TabReactions:
				sel = diagram.NodeOf(doc.Model(), d, "reactions", row)
			}
		}
	}
	if sel >= 0 {
		p.view.opts.Selected = []int{sel}
	} else {
		p.view.opts.Selected = nil
	}
	p.style.SetSelected(map[bool]string{true: styleSBGN, false: stylePlain}[p.view.opts.Style == pd.SBGN])
	p.info.SetText(diagram.Summary(st, d) + ". Drag to move a node or the view, scroll to zoom, point at a node for its formula.")
	p.replay = nil
	p.applyFrame()
	p.view.Set(d, net)
}

// runDone prepares the replay of a new run.
func (p *diagramPanel) runDone() {
	p.replay = nil
	p.replayC.SetChecked(true)
	p.applyFrame()
	p.view.redraw()
}

// ensureReplay builds the replay of the current run, or says why not.
func (p *diagramPanel) ensureReplay() bool {
	if p.replay != nil {
		return true
	}
	if p.w.current == nil {
		p.tLabel.SetText("no run yet")
		return false
	}
	r, err := diagram.NewReplay(p.w.doc.Model(), p.w.current)
	if err != nil {
		p.tLabel.SetText(plainError(err))
		return false
	}
	p.replay = r
	return true
}

// setFraction moves the replay to fraction f of the run (on a log time
// scale for a run with a log-spaced grid).
func (p *diagramPanel) setFraction(f float64) {
	if !p.ensureReplay() {
		return
	}
	t0, t1 := p.replay.Span()
	if p.w.current.LogGrid && t1 > 0 {
		lo := t1 * 1e-6
		if len(p.w.current.T) > 1 && p.w.current.T[1] > 0 {
			lo = p.w.current.T[1]
		}
		if f == 0 {
			p.t = t0
		} else {
			p.t = lo * math.Pow(t1/lo, f)
		}
	} else {
		p.t = t0 + f*(t1-t0)
	}
	p.applyFrame()
	p.view.redraw()
}

// applyFrame colours the diagram for the replay time, or clears it.
func (p *diagramPanel) applyFrame() {
	if p.d == nil {
		return
	}
	if !p.replayC.Checked || !p.ensureReplay() {
		for i := range p.d.Nodes {
			p.d.Nodes[i].Fill = nil
		}
		for k := range p.d.Edges {
			p.d.Edges[k].Width, p.d.Edges[k].Backward = 0, false
		}
		p.view.opts.Caption = ""
		if !p.replayC.Checked {
			p.tLabel.SetText("t = –")
		}
		return
	}
	if p.t == 0 && p.slider.Value == 1000 {
		_, p.t = p.replay.Span()
	}
	p.replay.Frame(p.d, p.t)
	u := ""
	if p.w.current.TimeUnit != "" {
		u = " " + p.w.current.TimeUnit
	}
	p.tLabel.SetText(fmt.Sprintf("t = %.4g%s   colour %s", p.t, u, p.replay.ColourRange()))
}

// togglePlay plays the replay from the slider's place to the end, or
// stops it.
func (p *diagramPanel) togglePlay() {
	if p.playing != nil {
		close(p.playing)
		p.playing = nil
		p.playBtn.SetIcon(theme.MediaPlayIcon())
		p.playBtn.SetText("Play")
		return
	}
	if !p.ensureReplay() {
		return
	}
	p.replayC.SetChecked(true)
	if p.slider.Value >= 1000 {
		p.slider.SetValue(0)
	}
	stop := make(chan struct{})
	p.playing = stop
	p.playBtn.SetIcon(theme.MediaPauseIcon())
	p.playBtn.SetText("Pause")
	go func() {
		tick := time.NewTicker(40 * time.Millisecond) // 25 frames a second, 10 s for the run
		defer tick.Stop()
		for {
			select {
			case <-stop:
				return
			case <-tick.C:
				done := false
				fyne.Do(func() {
					if p.playing != stop {
						done = true
						return
					}
					v := p.slider.Value + 4
					if v >= 1000 {
						v, done = 1000, true
					}
					p.slider.SetValue(v)
					if done {
						p.togglePlay()
					}
				})
				if done {
					return
				}
			}
		}
	}()
}

// selectedInDiagram selects the row of the node tapped.
func (p *diagramPanel) selectedInDiagram(i int) {
	if i < 0 || p.d == nil {
		return
	}
	row := diagram.RowOf(p.w.doc.Model(), p.d, i)
	if row < 0 {
		return
	}
	section := "reactions"
	if p.d.Nodes[i].Kind == pd.Species {
		section = "species"
	}
	p.w.ed.SelectRow(section, row)
}

// selectedInTable follows a row selected in the tables.
func (p *diagramPanel) selectedInTable(section string, row int) {
	if p.d == nil {
		return
	}
	if i := diagram.NodeOf(p.w.doc.Model(), p.d, section, row); i >= 0 && i != p.view.Selected() {
		p.view.Select(i)
	}
}

// moved stores a dragged node's place in the model's layout, as an edit
// that Undo takes back.
func (p *diagramPanel) moved(i int) {
	n := p.d.Nodes[i]
	what := "species"
	if n.Kind != pd.Species {
		what = "reaction"
	}
	p.w.doc.Apply("move "+what+" "+n.Name+" in the diagram", diagram.Move(p.d, i, n.X, n.Y))
}

// arrangeAgain forgets every saved position and lays the diagram out
// afresh, as an edit that Undo takes back.
func (p *diagramPanel) arrangeAgain() {
	p.d, p.auto = nil, nil
	p.view.opts.View = pd.View{}
	if len(p.w.doc.Model().Layout.Places) == 0 {
		p.version = -1
		p.refresh()
		return
	}
	p.w.doc.Apply("arrange the diagram again", func(m *network.Model) { m.Layout.Places = nil })
}

// export saves the diagram, as shown (style, replay frame), to a file.
func (p *diagramPanel) export() {
	if p.d == nil || len(p.d.Nodes) == 0 {
		p.w.setStatus("Nothing to export: the model has no species or reactions yet.", false)
		return
	}
	p.w.saveFileDialog("diagram.svg", ".svg", func(path string) {
		prov, err := p.w.provenance()
		if err == nil {
			prov.What = "diagram"
			o := pd.Options{Style: p.view.opts.Style, Title: p.w.doc.Model().Title}
			if p.replayC.Checked && p.replay != nil {
				o.Caption = p.replay.Caption(p.t)
				prov.What = "diagram of the run at " + p.tLabel.Text
			}
			err = diagram.Save(path, p.d, o, prov.Metadata(""))
		}
		if err != nil {
			p.w.showError(err)
			return
		}
		p.w.notice("Diagram saved to " + path + ".")
	})
}
