package plotting

import (
	"math"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// This file holds what makes drawing lines on a raster canvas cheap: lines
// thinned to what the pixel grid can show, and dashes cut here and stroked
// in short batches. Vector canvases (SVG, PDF) never take these paths.

// rasterDPI returns the resolution of c when it draws into pixels. It
// looks through the draw.Canvas wrappers that plot.Plot adds around the
// canvas it was given.
func rasterDPI(c vg.Canvas) (dpi float64, ok bool) {
	for {
		switch v := c.(type) {
		case *vgimg.Canvas:
			return v.DPI(), true
		case *screenCanvas:
			return v.DPI(), true
		case draw.Canvas:
			c = v.Canvas
		case *draw.Canvas:
			c = v.Canvas
		default:
			return 0, false
		}
	}
}

// decimateColumns thins the polyline pts in place for drawing on a grid of
// columns col wide (x measured from the canvas origin, where a pixel
// boundary lies) and returns the shortened slice. Each run of consecutive
// vertices in one column is replaced by its first vertex, its lowest and
// highest vertices (in their original order) and its last vertex. This is
// the M4 aggregation of Jugel, Jerzak, Hackenbroich & Markl (2014, "M4: a
// visualization-oriented time series data aggregation", PVLDB 7(10)): the
// thinned line crosses every column over the same vertical extent and
// enters and leaves it at the same points, so at that resolution it draws
// the same pixels. Runs of four or fewer vertices are kept whole.
func decimateColumns(pts []vg.Point, col vg.Length) []vg.Point {
	if len(pts) <= 4 || !(col > 0) {
		return pts
	}
	column := func(x vg.Length) float64 { return math.Floor(float64(x / col)) }
	out := pts[:0]
	for i := 0; i < len(pts); {
		c := column(pts[i].X)
		j := i + 1
		lo, hi := i, i
		for j < len(pts) && column(pts[j].X) == c {
			if pts[j].Y < pts[lo].Y {
				lo = j
			}
			if pts[j].Y > pts[hi].Y {
				hi = j
			}
			j++
		}
		// pts[i:j] is one run. out never overtakes i, and the vertices
		// kept are read before any is written.
		if j-i <= 4 {
			out = append(out, pts[i:j]...)
		} else {
			idx := [4]int{i, min(lo, hi), max(lo, hi), j - 1}
			keep := [4]vg.Point{pts[idx[0]], pts[idx[1]], pts[idx[2]], pts[idx[3]]}
			for m := range idx {
				if m == 0 || idx[m] != idx[m-1] {
					out = append(out, keep[m])
				}
			}
		}
		i = j
	}
	return out
}

// dasher cuts polylines into the dashes of a pattern, reusing its buffers.
// It follows the rules of the rasteriser behind vgimg: the pattern starts
// afresh, at offset offs, on each polyline, and a dash that runs over a
// vertex keeps the vertex.
type dasher struct {
	pts    []vg.Point // vertices of all dashes, one after another
	starts []int      // dash k is pts[starts[k]:starts[k+1]]
}

// dash cuts lines by the on-off pattern (lengths alternate on, off, ...; an
// odd-length pattern is repeated once) starting offs into the pattern.
func (d *dasher) dash(lines [][]vg.Point, pattern []vg.Length, offs vg.Length) {
	d.pts, d.starts = d.pts[:0], d.starts[:0]
	var buf [2]vg.Length
	if len(pattern) == 1 {
		buf = [2]vg.Length{pattern[0], pattern[0]}
		pattern = buf[:]
	}
	var period vg.Length
	for _, l := range pattern {
		period += l
	}
	if len(pattern) == 0 || !(period > 0) {
		// No usable pattern: the lines are drawn whole.
		for _, l := range lines {
			if len(l) >= 2 {
				d.starts = append(d.starts, len(d.pts))
				d.pts = append(d.pts, l...)
			}
		}
		d.starts = append(d.starts, len(d.pts))
		return
	}
	for _, line := range lines {
		if len(line) < 2 {
			continue
		}
		k, done := 0, vg.Length(0) // pattern entry, length of it used
		if offs != 0 {
			o := vg.Length(math.Mod(float64(offs), float64(period)))
			if o < 0 {
				o += period
			}
			for i, l := range pattern {
				o -= l
				if o < 0 {
					k, done = i, l+o
					break
				}
			}
		}
		prev := line[0]
		start := len(d.pts)
		d.pts = append(d.pts, prev)
		for i := 1; i < len(line); {
			next := line[i]
			dist := vg.Length(math.Hypot(float64(next.X-prev.X), float64(next.Y-prev.Y)))
			if left := pattern[k] - done; dist > left {
				t := left / dist
				cut := vg.Point{X: prev.X + t*(next.X-prev.X), Y: prev.Y + t*(next.Y-prev.Y)}
				d.pts = append(d.pts, cut)
				if k%2 == 0 {
					d.starts = append(d.starts, start) // a dash ends
				} else {
					d.pts = d.pts[:start] // a gap ends: drop it
				}
				start = len(d.pts)
				d.pts = append(d.pts, cut)
				done, prev = 0, cut
				k = (k + 1) % len(pattern)
			} else {
				d.pts = append(d.pts, next)
				done += dist
				prev = next
				i++
			}
		}
		if k%2 == 0 {
			d.starts = append(d.starts, start)
		} else {
			d.pts = d.pts[:start]
		}
	}
	d.starts = append(d.starts, len(d.pts))
}

// dashes returns the number of dashes cut by the last call of dash.
func (d *dasher) dashes() int { return max(len(d.starts)-1, 0) }

// piece returns dash k.
func (d *dasher) piece(k int) []vg.Point { return d.pts[d.starts[k]:d.starts[k+1]] }

// batchWidth bounds the horizontal extent of the dashes stroked together.
// The rasteriser behind vgimg keeps the cells of each pixel row in a list
// that it searches from the left for every new cell, so one stroke of many
// dashes across the plot costs time that grows with the square of its
// width; short batches avoid that. Dashes do not join each other, so
// stroking them in batches draws the same pixels.
const batchWidth = 48 // points

// strokeDashed strokes the lines with the dashed style sty on a raster
// canvas, cutting the dashes here and stroking them in batches.
func strokeDashed(dc draw.Canvas, sty draw.LineStyle, lines [][]vg.Point, d *dasher, path *vg.Path) {
	d.dash(lines, sty.Dashes, sty.DashOffs)
	sty.Dashes, sty.DashOffs = nil, 0
	dc.SetLineStyle(sty)
	p := (*path)[:0]
	var x0, x1 vg.Length
	for k := range d.dashes() {
		dash := d.piece(k)
		lo, hi := dash[0].X, dash[0].X
		for _, q := range dash[1:] {
			lo, hi = min(lo, q.X), max(hi, q.X)
		}
		if len(p) > 0 && (max(x1, hi)-min(x0, lo) > batchWidth) {
			dc.Stroke(p)
			p = p[:0]
		}
		if len(p) == 0 {
			x0, x1 = lo, hi
		}
		x0, x1 = min(x0, lo), max(x1, hi)
		p.Move(dash[0])
		for _, q := range dash[1:] {
			p.Line(q)
		}
	}
	if len(p) > 0 {
		dc.Stroke(p)
	}
	*path = p
}
