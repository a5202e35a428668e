// Package chart draws thrustmap's data as charts with gonum.org/v1/plot:
// a rating against OAT at several altitudes, a lever's calibration and
// command, and a sweep recording with the rests and notches found in it.
//
// Every value on a chart comes through the library's public API (Target,
// CommandAtTLA, the calibration's TLA map, the sweep analysis), so a chart
// shows what a plugin would compute. Every chart carries the safety note
// Footer under its plots.
//
// The core package thrustmap does not import this one: plotting stays out of
// a plugin's dependencies.
package chart

import (
	"bytes"
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/thrustmap/thrustmap/thrustmap/atomicfile"
)

// Footer is the safety note drawn under every chart.
const Footer = "Simulation only. Not certified; never use it to set thrust on a real aircraft."

// DefaultDPI is the resolution of PNG output when a Chart's DPI is zero.
const DefaultDPI = 96

// Limits on a chart's size, so a typo cannot ask for a gigapixel image.
const (
	MaxSide   = 100 * vg.Inch // the longest side
	MaxDPI    = 1200
	maxPixels = 64 << 20
)

// Chart is a finished chart: its panels stacked top to bottom, each with its
// legend drawn to its right, and Footer under them.
type Chart struct {
	Panels []Panel
	Width  vg.Length // the whole chart, footer included
	Height vg.Length
	DPI    int // dots per inch of PNG output; 0 means DefaultDPI
}

// Panel is one plot of a chart and the legend drawn beside it (no entries:
// no legend).
type Panel struct {
	Plot   *plot.Plot
	Legend plot.Legend
}

// Formats lists the output formats Render takes: the file extensions
// WriteFile understands, without the dot.
var Formats = []string{"svg", "png"}

// FormatOf returns the output format for a file name from its extension
// (any case), or an error naming the file.
func FormatOf(path string) (string, error) {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	for _, f := range Formats {
		if ext == f {
			return f, nil
		}
	}
	return "", fmt.Errorf("chart file %s: unknown extension %q (want .svg or .png)", path, filepath.Ext(path))
}

// Render draws the chart in format ("svg" or "png") to w.
func (c *Chart) Render(w io.Writer, format string) error {
	if err := c.check(); err != nil {
		return err
	}
	var cv interface {
		vg.CanvasSizer
		io.WriterTo
	}
	switch strings.ToLower(format) {
	case "svg":
		cv = vgsvg.New(c.Width, c.Height)
	case "png":
		dpi := c.dpi()
		img := vgimg.NewWith(vgimg.UseWH(c.Width, c.Height), vgimg.UseDPI(dpi))
		cv = vgimg.PngCanvas{Canvas: img}
	default:
		return fmt.Errorf("chart format %q: want svg or png", format)
	}
	c.Draw(draw.New(cv))
	_, err := cv.WriteTo(w)
	return err
}

// WriteFile renders the chart in the format its extension names (.svg or
// .png) and writes it to path atomically: a reader sees the old file or the
// new one, never a part.
func (c *Chart) WriteFile(path string) error {
	format, err := FormatOf(path)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := c.Render(&buf, format); err != nil {
		return fmt.Errorf("chart file %s: %w", path, err)
	}
	return atomicfile.WriteFile(path, buf.Bytes(), 0o644, false)
}

func (c *Chart) dpi() int {
	if c.DPI == 0 {
		return DefaultDPI
	}
	return c.DPI
}

// check reports why the chart cannot be drawn, or nil.
func (c *Chart) check() error {
	if len(c.Panels) == 0 {
		return fmt.Errorf("chart has no panels")
	}
	for i, p := range c.Panels {
		if p.Plot == nil {
			return fmt.Errorf("chart panel %d has no plot", i)
		}
	}
	for _, s := range []struct {
		name string
		v    vg.Length
	}{{"width", c.Width}, {"height", c.Height}} {
		if math.IsNaN(float64(s.v)) || s.v < vg.Inch || s.v > MaxSide {
			return fmt.Errorf("chart %s %.4gin: want 1in to %gin", s.name, s.v/vg.Inch, float64(MaxSide/vg.Inch))
		}
	}
	dpi := c.dpi()
	if dpi < 1 || dpi > MaxDPI {
		return fmt.Errorf("chart DPI %d: want 1 to %d", dpi, MaxDPI)
	}
	if px := float64(c.Width/vg.Inch) * float64(c.Height/vg.Inch) * float64(dpi) * float64(dpi); px > maxPixels {
		return fmt.Errorf("chart of %.4gin × %.4gin at %d DPI is %.0f megapixels: want at most %d", c.Width/vg.Inch, c.Height/vg.Inch, dpi, px/1e6, maxPixels>>20)
	}
	return nil
}

// Draw draws the chart on dc: a white background, Footer along the bottom,
// the panels above it with their data areas aligned, and each panel's
// legend to its right.
func (c *Chart) Draw(dc draw.Canvas) {
	dc.SetColor(color.White)
	dc.Fill(rectPath(dc.Rectangle))

	// The footer, shrunk to fit the width when the chart is narrow.
	pad := vg.Points(6)
	sty := textStyle(9)
	sty.XAlign, sty.YAlign = draw.XCenter, draw.YCenter
	if avail := dc.Max.X - dc.Min.X - 2*pad; sty.Width(Footer) > avail && avail > 0 {
		sty.Font.Size *= avail / sty.Width(Footer)
	}
	footerH := sty.Height(Footer) + 2*pad
	dc.FillText(sty, vg.Point{X: (dc.Min.X + dc.Max.X) / 2, Y: dc.Min.Y + footerH/2}, Footer)
	area := draw.Crop(dc, 0, 0, footerH, 0)

	// A strip on the right for the widest legend.
	var legendW vg.Length
	for i := range c.Panels {
		r := c.Panels[i].Legend.Rectangle(area)
		legendW = max(legendW, r.Max.X-r.Min.X)
	}
	if legendW > 0 {
		legendW += 2 * pad
	}
	plots := make([][]*plot.Plot, len(c.Panels))
	for i, p := range c.Panels {
		plots[i] = []*plot.Plot{p.Plot}
	}
	tiles := draw.Tiles{Rows: len(c.Panels), Cols: 1, PadY: 3 * pad, PadTop: pad, PadLeft: pad, PadRight: pad + legendW}
	canvases := plot.Align(plots, tiles, area)
	for i, p := range c.Panels {
		tile := canvases[i][0]
		p.Plot.Draw(tile)
		if legendW > 0 {
			lc := draw.Canvas{Canvas: dc.Canvas, Rectangle: vg.Rectangle{
				Min: vg.Point{X: area.Max.X - legendW + pad, Y: tile.Min.Y},
				Max: vg.Point{X: area.Max.X - pad, Y: tile.Max.Y - pad},
			}}
			leg := p.Legend
			leg.Top, leg.Left = true, true
			leg.Draw(lc)
		}
	}
}

func rectPath(r vg.Rectangle) vg.Path {
	var p vg.Path
	p.Move(r.Min)
	p.Line(vg.Point{X: r.Max.X, Y: r.Min.Y})
	p.Line(r.Max)
	p.Line(vg.Point{X: r.Min.X, Y: r.Max.Y})
	p.Close()
	return p
}

// newChart returns a chart of the given size in inches.
func newChart(wIn, hIn float64, panels ...Panel) *Chart {
	return &Chart{Panels: panels, Width: vg.Length(wIn) * vg.Inch, Height: vg.Length(hIn) * vg.Inch}
}

// newPlot returns a plot with the chart's title and axis labels.
func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font.Size = 11
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	p.X.Label.TextStyle.Font.Size = 10
	p.Y.Label.TextStyle.Font.Size = 10
	p.X.Tick.Marker = niceTicks{}
	p.Y.Tick.Marker = niceTicks{}
	p.Add(plotter.NewGrid())
	return p
}

// niceTicks marks about eight round values, steps of 1, 2 or 5 times a
// power of ten, labelled with no more decimals than the step needs, with
// minor ticks between them.
type niceTicks struct{}

// Ticks returns the ticks from lo to hi.
func (niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !finite(lo) || !finite(hi) || !(hi > lo) {
		return nil
	}
	raw := (hi - lo) / 8
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step, parts := 10*mag, 5
	for _, m := range []struct {
		f     float64
		parts int
	}{{1, 5}, {2, 4}, {5, 5}} {
		if m.f*mag >= raw {
			step, parts = m.f*mag, m.parts
			break
		}
	}
	minor := step / float64(parts)
	prec := max(0, -int(math.Floor(math.Log10(step)+1e-9)))
	first := math.Ceil(lo/minor - 1e-9)
	var ticks []plot.Tick
	for i := 0.0; i < 200; i++ {
		v := (first + i) * minor
		if v > hi+minor*1e-9 {
			break
		}
		t := plot.Tick{Value: v}
		if q := v / step; math.Abs(q-math.Round(q)) < 1e-6 {
			if math.Abs(v) < minor*1e-6 {
				v = 0 // no "-0"
			}
			t.Label = strconv.FormatFloat(v, 'f', prec, 64)
		}
		ticks = append(ticks, t)
	}
	return ticks
}

// newLegend returns an empty legend in the chart's text style.
func newLegend() plot.Legend {
	l := plot.NewLegend()
	l.TextStyle.Font.Size = 9
	l.ThumbnailWidth = vg.Points(18)
	l.Padding = vg.Points(2.5)
	return l
}

// textStyle is the chart's text at size points.
func textStyle(size float64) text.Style {
	return text.Style{
		Color:   color.Black,
		Font:    font.From(plot.DefaultFont, vg.Points(size)),
		Handler: plot.DefaultTextHandler,
	}
}

// palette holds the series colours, chosen for contrast on white.
var palette = []color.Color{
	rgb(0x1f, 0x4e, 0x9c), // blue
	rgb(0xc2, 0x41, 0x1b), // brick
	rgb(0x2e, 0x8b, 0x3e), // green
	rgb(0x7b, 0x3f, 0xa0), // violet
	rgb(0xb8, 0x8a, 0x00), // ochre
	rgb(0x10, 0x8f, 0x96), // teal
	rgb(0x8c, 0x4a, 0x2f), // brown
	rgb(0xd1, 0x3f, 0x8a), // pink
	rgb(0x4a, 0x4a, 0x4a), // grey
	rgb(0x5b, 0x84, 0xd6), // light blue
}

// seriesColor returns the colour of series i.
func seriesColor(i int) color.Color { return palette[i%len(palette)] }

func rgb(r, g, b uint8) color.RGBA { return color.RGBA{R: r, G: g, B: b, A: 0xff} }

// tint is c at alpha a (0–255), for shaded areas.
func tint(c color.RGBA, a uint8) color.NRGBA {
	return color.NRGBA{R: c.R, G: c.G, B: c.B, A: a}
}

// dashes is the dash pattern of clamped or out-of-range stretches.
var dashes = []vg.Length{vg.Points(5), vg.Points(3)}

// line returns a line through xys in colour c and width w points.
func line(xys plotter.XYs, c color.Color, w float64) (*plotter.Line, error) {
	l, err := plotter.NewLine(xys)
	if err != nil {
		return nil, err
	}
	l.Color = c
	l.Width = vg.Points(w)
	return l, nil
}

// band returns a filled rectangle from x0 to x1 and y0 to y1 with no outline.
func band(x0, x1, y0, y1 float64, fill color.Color) (*plotter.Polygon, error) {
	pg, err := plotter.NewPolygon(plotter.XYs{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}})
	if err != nil {
		return nil, err
	}
	pg.Color = fill
	pg.LineStyle.Width = 0
	return pg, nil
}

// labels returns text labels at the points, size points, rotated by rot
// radians, aligned by xa and ya.
func labels(xys plotter.XYs, names []string, size, rot float64, xa text.XAlignment, ya text.YAlignment) (*plotter.Labels, error) {
	l, err := plotter.NewLabels(plotter.XYLabels{XYs: xys, Labels: names})
	if err != nil {
		return nil, err
	}
	for i := range l.TextStyle {
		s := textStyle(size)
		s.Rotation, s.XAlign, s.YAlign = rot, xa, ya
		l.TextStyle[i] = s
	}
	return l, nil
}

// finite reports whether x is a number.
func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
