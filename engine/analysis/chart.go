// Package analysis holds Ramify's analyses over an evaluated project: risk
// profiles, strategies, stochastic dominance, utility helpers and the shared
// chart helpers. It is pure Go and never imports Fyne.
package analysis

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"io"
	"path/filepath"
	"strings"

	"github.com/shopspring/decimal"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgpdf"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/ramify-app/ramify/engine"
)

// Chart sizes used when the caller has no preference: a landscape figure that
// fits a printed page's width.
const (
	ChartWidth  = 16 * vg.Centimeter
	ChartHeight = 10 * vg.Centimeter
	ChartDPI    = 144 // PNG resolution: sharp on screen and on paper
)

// ChartFormats are the file formats SaveChart writes, chosen by extension.
var ChartFormats = []string{"png", "svg", "pdf"}

// ChartFormat returns the format named by path's extension, or an error naming
// the formats that are possible.
func ChartFormat(path string) (string, error) {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	for _, f := range ChartFormats {
		if ext == f {
			return f, nil
		}
	}
	if ext == "" {
		return "", fmt.Errorf("%s: no file extension; end the name with .png, .svg or .pdf", path)
	}
	return "", fmt.Errorf("%s: cannot write .%s charts; use .png, .svg or .pdf", path, ext)
}

// NewChart makes an empty plot in the print style: black text on white, light
// grey grid, axis labels carrying the unit. Series colours come from SeriesStyle.
func NewChart(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font.Size = 13
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	p.BackgroundColor = color.White
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Color = color.Black
		a.Label.TextStyle.Color = color.Black
		a.Label.TextStyle.Font.Size = 11
		a.Tick.Label.Font.Size = 9
		a.Tick.Color = color.Black
	}
	p.Legend.TextStyle.Font.Size = 9
	p.Legend.Top = true
	return p
}

// UnitLabel joins an axis word and the project's unit: "Payoff (EUR)".
// With no unit the word stands alone.
func UnitLabel(word, unit string) string {
	if strings.TrimSpace(unit) == "" {
		return word
	}
	return fmt.Sprintf("%s (%s)", word, unit)
}

// ValueTicks labels an axis of money (or days) the way the rest of Ramify prints
// values: thousands separators and the project's decimals. Tick positions are
// gonum's defaults.
type ValueTicks struct{ Decimals int }

// Ticks implements plot.Ticker.
func (t ValueTicks) Ticks(min, max float64) []plot.Tick {
	ticks := plot.DefaultTicks{}.Ticks(min, max)
	// Use enough decimals to tell neighbouring major ticks apart.
	places := t.Decimals
	var majors []float64
	for _, tk := range ticks {
		if tk.Label != "" {
			majors = append(majors, tk.Value)
		}
	}
	for places < 6 && !distinct(majors, places) {
		places++
	}
	for i := range ticks {
		if ticks[i].Label != "" {
			ticks[i].Label = engine.FormatNumber(decimal.NewFromFloat(ticks[i].Value), places)
		}
	}
	return ticks
}

func distinct(vals []float64, places int) bool {
	seen := map[string]bool{}
	for _, v := range vals {
		s := decimal.NewFromFloat(v).StringFixed(int32(places))
		if seen[s] {
			return false
		}
		seen[s] = true
	}
	return true
}

// Greyscale-safe series styles: each series differs by dash pattern and grey
// level as well as by colour, so a chart printed in black and white still tells
// the series apart.
var (
	seriesColors = []color.Color{
		color.RGBA{R: 0x1f, G: 0x3a, B: 0x5f, A: 0xff}, // dark blue
		color.RGBA{R: 0xb3, G: 0x58, B: 0x06, A: 0xff}, // burnt orange
		color.RGBA{R: 0x2d, G: 0x6a, B: 0x3e, A: 0xff}, // green
		color.RGBA{R: 0x6a, G: 0x3d, B: 0x9a, A: 0xff}, // purple
		color.RGBA{R: 0x40, G: 0x40, B: 0x40, A: 0xff}, // dark grey
		color.RGBA{R: 0x8c, G: 0x2d, B: 0x2d, A: 0xff}, // brick
	}
	seriesDashes = [][]vg.Length{
		nil,
		{vg.Points(6), vg.Points(3)},
		{vg.Points(2), vg.Points(2)},
		{vg.Points(8), vg.Points(3), vg.Points(2), vg.Points(3)},
		{vg.Points(12), vg.Points(4)},
		{vg.Points(4), vg.Points(2), vg.Points(1), vg.Points(2), vg.Points(1), vg.Points(2)},
	}
)

// SeriesStyle is the line style of the i-th series of a chart.
func SeriesStyle(i int) draw.LineStyle {
	k := i % len(seriesColors)
	return draw.LineStyle{
		Color:  seriesColors[k],
		Width:  vg.Points(1.6 + 0.3*float64(i/len(seriesColors))),
		Dashes: seriesDashes[i%len(seriesDashes)],
	}
}

// SeriesFill is the fill colour of the i-th series (bars); the colours differ in
// lightness, so they stay apart in grey as well.
func SeriesFill(i int) color.Color {
	return seriesColors[i%len(seriesColors)]
}

// WriteChart draws p in the given format ("png", "svg" or "pdf") to w.
func WriteChart(w io.Writer, p *plot.Plot, format string, width, height vg.Length) error {
	if width <= 0 {
		width = ChartWidth
	}
	if height <= 0 {
		height = ChartHeight
	}
	return writeFigure(w, format, width, height, p.Draw)
}

// chartCanvas makes a canvas of a format ("png", "svg" or "pdf") and size, or
// nil for a format that cannot be written. PNG is drawn at ChartDPI on white.
func chartCanvas(format string, width, height vg.Length) vg.CanvasWriterTo {
	switch format {
	case "png":
		img := vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(ChartDPI), vgimg.UseBackgroundColor(color.White))
		return vgimg.PngCanvas{Canvas: img}
	case "svg":
		return vgsvg.New(width, height)
	case "pdf":
		return vgpdf.New(width, height)
	}
	return nil
}

// writeFigure draws a figure (a plot, or plots arranged on one canvas) in a
// format to w.
func writeFigure(w io.Writer, format string, width, height vg.Length, drawTo func(draw.Canvas)) error {
	c := chartCanvas(format, width, height)
	if c == nil {
		return fmt.Errorf("cannot write %q charts; use png, svg or pdf", format)
	}
	drawTo(draw.New(c))
	_, err := c.WriteTo(w)
	return err
}

// SaveChart writes p to path in the format its extension names, atomically: a
// failure leaves any earlier file intact.
func SaveChart(p *plot.Plot, path string, width, height vg.Length) error {
	return saveFigure(path, func(w io.Writer, format string) error {
		return WriteChart(w, p, format, width, height)
	})
}

// saveFigure writes a figure to path in the format its extension names,
// atomically: a failure leaves any earlier file intact.
func saveFigure(path string, write func(w io.Writer, format string) error) error {
	format, err := ChartFormat(path)
	if err != nil {
		return err
	}
	return engine.WriteAtomic(path, func(w io.Writer) error { return write(w, format) })
}

// ChartImage renders p to an image of the given pixel size, for display in a
// window. It draws at 96 dpi so fonts match the screen.
func ChartImage(p *plot.Plot, widthPx, heightPx int) image.Image {
	widthPx, heightPx = imageSize(widthPx, heightPx)
	return screenImage(widthPx, heightPx, p.Draw)
}

// imageSize is the pixel size asked for, or 640 × 400 when either side is not
// positive.
func imageSize(widthPx, heightPx int) (int, int) {
	if widthPx <= 0 || heightPx <= 0 {
		return 640, 400
	}
	return widthPx, heightPx
}

// screenImage renders a figure to an image of the given pixel size at 96 dpi,
// so fonts match the screen, on white.
func screenImage(widthPx, heightPx int, drawTo func(draw.Canvas)) image.Image {
	const dpi = 96
	w := vg.Length(widthPx) * vg.Inch / dpi
	h := vg.Length(heightPx) * vg.Inch / dpi
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(dpi), vgimg.UseBackgroundColor(color.White))
	drawTo(draw.New(c))
	return c.Image()
}

// ChartBytes renders p in a format to memory (used by exports that hand bytes on).
func ChartBytes(p *plot.Plot, format string, width, height vg.Length) ([]byte, error) {
	var buf bytes.Buffer
	if err := WriteChart(&buf, p, format, width, height); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}
