package analysis

import (
	"fmt"
	"image"
	"image/color"
	"io"
	"strings"

	"github.com/shopspring/decimal"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/ramify-app/ramify/engine"
)

// Charts of the sensitivity analyses, drawn with gonum/plot in the shared
// print style (chart.go). They are written with the legend in a band below the
// plot (drawFigure), so a legend never covers lines, bars or regions.

// sensColor is alternative i's colour, the shared series colour.
func sensColor(i int) color.RGBA {
	return color.RGBAModel.Convert(SeriesFill(i)).(color.RGBA)
}

// sensLight is a light tint of alternative i's colour, for filled regions.
func sensLight(i int) color.RGBA {
	c := sensColor(i)
	mix := func(v uint8) uint8 { return uint8((int(v) + 2*255) / 3) }
	return color.RGBA{R: mix(c.R), G: mix(c.G), B: mix(c.B), A: 0xff}
}

func sensPlot(title, x, y string) *plot.Plot {
	p := NewChart(title, x, y)
	p.Legend.Top = true
	return p
}

func (s *SweepResult) inputUnit() string {
	if !s.Setting.Input.IsVariable() && s.Setting.Input.Field != FieldProbability {
		return s.Unit
	}
	return ""
}

// Chart draws each alternative's value across the range, the break-evens
// marked with a vertical line and their value.
func (s *SweepResult) Chart() (*plot.Plot, error) {
	title := fmt.Sprintf("%s at %q as %s varies", sensCapital(s.ValueWord), engine.NodeTitle(s.Decision), s.InputName)
	p := sensPlot(title, UnitLabel(s.InputName, s.inputUnit()), UnitLabel(sensCapital(s.ValueWord), s.Unit))
	p.Y.Tick.Marker = ValueTicks{Decimals: s.Decimals}
	p.X.Tick.Marker = numberTicks{}
	lo, hi := 0.0, 0.0
	for a, name := range s.Alternatives {
		xys := make(plotter.XYs, len(s.X))
		for k, x := range s.X {
			xys[k].X, xys[k].Y = x.InexactFloat64(), s.Values[k][a]
			if (k == 0 && a == 0) || xys[k].Y < lo {
				lo = xys[k].Y
			}
			if (k == 0 && a == 0) || xys[k].Y > hi {
				hi = xys[k].Y
			}
		}
		line, err := plotter.NewLine(xys)
		if err != nil {
			return nil, err
		}
		line.LineStyle = SeriesStyle(a)
		p.Add(line)
		p.Legend.Add(name, line)
	}
	for _, b := range s.BreakEvens {
		x := b.At.InexactFloat64()
		mark, err := plotter.NewLine(plotter.XYs{{X: x, Y: lo}, {X: x, Y: hi}})
		if err != nil {
			return nil, err
		}
		mark.Color = color.Black
		mark.Width = vg.Points(0.8)
		mark.Dashes = []vg.Length{vg.Points(3), vg.Points(3)}
		p.Add(mark)
		lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: x, Y: hi}},
			Labels: []string{"break-even " + shortNumber(b.At)}})
		if err != nil {
			return nil, err
		}
		lab.TextStyle[0].Font.Size = vg.Points(8)
		lab.Offset = vg.Point{X: vg.Points(3), Y: vg.Points(-10)}
		p.Add(lab)
	}
	p.Add(plotter.NewGrid())
	return p, nil
}

func sensCapital(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// shortNumber prints an input value compactly: up to 6 significant digits,
// thousands separated.
func shortNumber(d decimal.Decimal) string {
	places := int32(0)
	if a := d.Abs(); a.LessThan(decimal.NewFromInt(1000)) {
		places = 4
		if a.LessThan(decimal.NewFromInt(1)) {
			places = 6
		}
	}
	r := d.Round(places)
	s := engine.FormatNumber(r, int(places))
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}

// Chart draws the tornado: one bar per variable from the value at its low to
// the value at its high, largest swing on top, split at the base value; each
// end is labelled with the input value; variables that change the
// recommendation are starred.
func (t *TornadoResult) Chart() (*plot.Plot, error) {
	if len(t.Bars) == 0 {
		return nil, fmt.Errorf("no variable has both a low and a high, so there is no tornado to draw")
	}
	p := sensPlot(fmt.Sprintf("Tornado diagram: %s", t.ValueWord), UnitLabel(sensCapital(t.ValueWord), t.Unit), "")
	p.X.Tick.Marker = ValueTicks{Decimals: t.Decimals}
	n := len(t.Bars)
	names := make([]string, n)
	base := t.Base.InexactFloat64()
	lowFill, highFill := sensColor(0), sensColor(1)
	var lowLegend, highLegend *plotter.Polygon
	anyFlip := false
	for i, b := range t.Bars {
		y := float64(n - 1 - i)
		name := b.Variable
		if b.Flips {
			name += " *"
			anyFlip = true
		}
		names[n-1-i] = name
		for end, v := range []decimal.Decimal{b.AtLow, b.AtHigh} {
			x := v.InexactFloat64()
			poly, err := plotter.NewPolygon(plotter.XYs{{X: base, Y: y - 0.35}, {X: x, Y: y - 0.35}, {X: x, Y: y + 0.35}, {X: base, Y: y + 0.35}})
			if err != nil {
				return nil, err
			}
			poly.LineStyle.Width = vg.Points(0.5)
			poly.LineStyle.Color = color.Black
			if end == 0 {
				poly.Color, lowLegend = lowFill, poly
			} else {
				poly.Color, highLegend = highFill, poly
			}
			p.Add(poly)
			input := b.Low
			if end == 1 {
				input = b.High
			}
			lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: x, Y: y}}, Labels: []string{shortNumber(input)}})
			if err != nil {
				return nil, err
			}
			lab.TextStyle[0].Font.Size = vg.Points(8)
			lab.TextStyle[0].YAlign = draw.YCenter
			if labelLeft(end, b.AtLow.InexactFloat64(), b.AtHigh.InexactFloat64(), base) {
				lab.TextStyle[0].XAlign = draw.XRight
				lab.Offset.X = vg.Points(-3)
			} else {
				lab.Offset.X = vg.Points(3)
			}
			p.Add(lab)
		}
	}
	baseLine, err := plotter.NewLine(plotter.XYs{{X: base, Y: -0.6}, {X: base, Y: float64(n) - 0.4}})
	if err != nil {
		return nil, err
	}
	baseLine.Color = color.Black
	baseLine.Width = vg.Points(1.2)
	p.Add(baseLine)
	if lowLegend != nil {
		p.Legend.Add("variable at its low", lowLegend)
		p.Legend.Add("variable at its high", highLegend)
	}
	p.Legend.Add("base "+engine.FormatValue(t.Base, t.Decimals, t.Unit), baseLine)
	if anyFlip {
		p.X.Label.Text += "   (* the range changes the recommendation)"
	}
	p.NominalY(names...)
	p.Y.Tick.Label.Font.Size = vg.Points(9)
	// Room for the end labels.
	span := p.X.Max - p.X.Min
	p.X.Min -= span * 0.12
	p.X.Max += span * 0.12
	return p, nil
}

// Chart draws the two-way map: each cell coloured by its best alternative, the
// break-even boundary in black, the base case as a ring.
func (rm *RegionMap) Chart() (*plot.Plot, error) {
	title := fmt.Sprintf("Best alternative at %q", engine.NodeTitle(rm.Decision))
	p := sensPlot(title, rm.XName, rm.YName)
	p.X.Tick.Marker, p.Y.Tick.Marker = numberTicks{}, numberTicks{}
	xs := make([]float64, len(rm.Xs))
	ys := make([]float64, len(rm.Ys))
	for i := range xs {
		xs[i] = rm.Xs[i].InexactFloat64()
	}
	for i := range ys {
		ys[i] = rm.Ys[i].InexactFloat64()
	}
	edge := func(v []float64, i int) (float64, float64) {
		lo, hi := v[i], v[i]
		if i > 0 {
			lo = (v[i-1] + v[i]) / 2
		}
		if i < len(v)-1 {
			hi = (v[i] + v[i+1]) / 2
		}
		return lo, hi
	}
	legend := make([]*plotter.Polygon, len(rm.Alternatives))
	for iy := range rm.Best {
		y0, y1 := edge(ys, iy)
		for ix := 0; ix < len(xs); {
			w := rm.Best[iy][ix]
			end := ix
			for end+1 < len(xs) && rm.Best[iy][end+1] == w {
				end++
			}
			x0, _ := edge(xs, ix)
			_, x1 := edge(xs, end)
			poly, err := plotter.NewPolygon(plotter.XYs{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}})
			if err != nil {
				return nil, err
			}
			poly.Color = sensLight(w)
			poly.LineStyle = draw.LineStyle{Color: sensLight(w), Width: vg.Points(0.4)} // no seams between rows
			p.Add(poly)
			legend[w] = poly
			ix = end + 1
		}
	}
	for _, seg := range rm.Boundary() {
		l, err := plotter.NewLine(plotter.XYs{{X: seg[0], Y: seg[1]}, {X: seg[2], Y: seg[3]}})
		if err != nil {
			return nil, err
		}
		l.Color = color.Black
		l.Width = vg.Points(1.4)
		p.Add(l)
	}
	base, err := plotter.NewScatter(plotter.XYs{{X: rm.X.Base.InexactFloat64(), Y: rm.Y.Base.InexactFloat64()}})
	if err != nil {
		return nil, err
	}
	base.GlyphStyle = draw.GlyphStyle{Color: color.Black, Radius: vg.Points(4), Shape: draw.RingGlyph{}}
	p.Add(base)
	for i, name := range rm.Alternatives {
		if legend[i] != nil {
			p.Legend.Add(name, legend[i])
		}
	}
	p.Legend.Add("base case", base)
	p.Legend.Add("break-even boundary", sensBoundaryThumb{})
	return p, nil
}

type sensBoundaryThumb struct{}

func (sensBoundaryThumb) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(draw.LineStyle{Color: color.Black, Width: vg.Points(1.4)}, c.Min.X, y, c.Max.X, y)
}

// Sensitivity charts are a little taller than the default: the legend sits below.
const sensChartHeight = ChartHeight + 1*vg.Centimeter

// SaveSensitivityChart writes p to path as PNG, SVG or PDF, chosen by the
// extension, atomically (a failure leaves an earlier file intact).
func SaveSensitivityChart(p *plot.Plot, path string) error {
	return saveFigure(path, func(w io.Writer, format string) error { return WriteSensitivityChart(w, p, format) })
}

// WriteSensitivityChart draws p in a format ("png", "svg", "pdf") to w, with
// the legend below the plot.
func WriteSensitivityChart(w io.Writer, p *plot.Plot, format string) error {
	return writeFigure(w, format, ChartWidth, sensChartHeight, func(c draw.Canvas) { drawFigure(p, c) })
}

// SensitivityChartImage renders p for display at the given pixel size, with
// the legend below the plot.
func SensitivityChartImage(p *plot.Plot, widthPx, heightPx int) image.Image {
	widthPx, heightPx = imageSize(widthPx, heightPx)
	return screenImage(widthPx, heightPx, func(c draw.Canvas) { drawFigure(p, c) })
}

// drawFigure draws the plot with its legend in a band below it, so the legend
// never covers lines, bars or regions.
func drawFigure(p *plot.Plot, c draw.Canvas) {
	leg := p.Legend
	r := leg.Rectangle(c)
	h := r.Max.Y - r.Min.Y
	if h <= 0 {
		p.Draw(c)
		return
	}
	p.Legend = plot.NewLegend()
	defer func() { p.Legend = leg }()
	pad := vg.Points(6)
	p.Draw(draw.Crop(c, 0, 0, h+2*pad, 0))
	leg.Top, leg.Left = false, true
	leg.XOffs, leg.YOffs = pad, pad
	leg.Padding = vg.Points(2)
	leg.Draw(c)
}

// numberTicks labels an input axis with compact numbers (thousands separated).
type numberTicks struct{}

func (numberTicks) Ticks(min, max float64) []plot.Tick {
	ticks := plot.DefaultTicks{}.Ticks(min, max)
	for i := range ticks {
		if ticks[i].Label != "" {
			ticks[i].Label = shortNumber(decimal.NewFromFloat(ticks[i].Value))
		}
	}
	return ticks
}

// labelLeft says whether a tornado end label goes left of its bar end: beside
// the bar's outer end, and for an end at the base value on the side away from
// the other end (both at base: low left, high right).
func labelLeft(end int, low, high, base float64) bool {
	this, other := low, high
	if end == 1 {
		this, other = high, low
	}
	switch {
	case this < base:
		return true
	case this > base:
		return false
	case other > base:
		return true
	case other < base:
		return false
	}
	return end == 0
}
