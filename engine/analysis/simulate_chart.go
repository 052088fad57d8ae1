package analysis

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"io"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/ramify-app/ramify/engine"
)

// Simulation charts keep their own plot style (simPlot: no print-style fonts,
// a grid); files and screen images are drawn with the shared helpers in chart.go.

var (
	simInk  = color.RGBA{0x1f, 0x4e, 0x79, 0xff} // dark blue lines
	simFill = color.RGBA{0x9d, 0xc3, 0xe6, 0xff} // light blue bars
	simMark = color.RGBA{0xb0, 0x3a, 0x2e, 0xff} // red reference lines
)

func simPlot(title, x, y string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = x
	p.Y.Label.Text = y
	p.BackgroundColor = color.White
	p.Add(plotter.NewGrid())
	return p
}

func simVLine(p *plot.Plot, x, y0, y1 float64) {
	l, err := plotter.NewLine(plotter.XYs{{X: x, Y: y0}, {X: x, Y: y1}})
	if err != nil {
		return
	}
	l.Color = simMark
	l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	p.Add(l)
}

// Charts returns the histogram, the cumulative chart and the running mean of a
// run, with the project's unit on the value axes.
func (s *SimResult) Charts(unit string) []*plot.Plot {
	word := strings.ToUpper(s.ValueWord[:1]) + s.ValueWord[1:]

	hist := simPlot(fmt.Sprintf("%s: %d iterations, seed %d", word, s.Value.Count, s.Seed), UnitLabel(word, unit), "Share of iterations")
	total := 0
	for _, c := range s.Histogram.Counts {
		total += c
	}
	var bins []plotter.HistogramBin
	top := 0.0
	for i, c := range s.Histogram.Counts {
		lo := s.Histogram.Lo + float64(i)*s.Histogram.Width
		w := float64(c) / float64(max(total, 1))
		top = math.Max(top, w)
		bins = append(bins, plotter.HistogramBin{Min: lo, Max: lo + s.Histogram.Width, Weight: w})
	}
	if len(bins) > 0 {
		h := &plotter.Histogram{Bins: bins, Width: s.Histogram.Width, FillColor: simFill}
		h.LineStyle = draw.LineStyle{Color: simInk, Width: vg.Points(0.5)}
		hist.Add(h)
		simVLine(hist, s.Value.Mean, 0, top)
		// Half a bin of room at each end, so the outer bars are not cut by the frame.
		hist.X.Min = s.Histogram.Lo - s.Histogram.Width/2
		hist.X.Max = s.Histogram.Lo + float64(len(bins))*s.Histogram.Width + s.Histogram.Width/2
	}

	cum := simPlot("Cumulative: chance of this much or less", UnitLabel(word, unit), "Cumulative probability")
	sorted := sortedFinite(s.Samples)
	if n := len(sorted); n > 0 {
		step := max(1, n/1000)
		var pts plotter.XYs
		for i := 0; i < n; i += step {
			pts = append(pts, plotter.XY{X: sorted[i], Y: float64(i+1) / float64(n)})
		}
		pts = append(pts, plotter.XY{X: sorted[n-1], Y: 1})
		if l, err := plotter.NewLine(pts); err == nil {
			l.Color, l.Width = simInk, vg.Points(1.5)
			cum.Add(l)
		}
		cum.Y.Min, cum.Y.Max = 0, 1
		for _, q := range []float64{s.Value.P5, s.Value.P50, s.Value.P95} {
			simVLine(cum, q, 0, 1)
		}
	}

	conv := simPlot("Running mean", "Iterations", UnitLabel("Mean "+s.ValueWord, unit))
	var pts plotter.XYs
	for _, c := range s.Convergence {
		pts = append(pts, plotter.XY{X: float64(c.Iteration), Y: c.Mean})
	}
	if len(pts) > 0 {
		if l, err := plotter.NewLine(pts); err == nil {
			l.Color, l.Width = simInk, vg.Points(1.5)
			conv.Add(l)
		}
		// Band of ±2 standard errors around the final mean.
		last := pts[len(pts)-1]
		for _, d := range []float64{-2, 2} {
			y := s.Value.Mean + d*s.Value.SE
			if l, err := plotter.NewLine(plotter.XYs{{X: pts[0].X, Y: y}, {X: last.X, Y: y}}); err == nil {
				l.Color = simMark
				l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
				conv.Add(l)
			}
		}
	}
	plots := []*plot.Plot{hist, cum, conv}
	if len(s.Alternatives) > 1 && s.Decision != nil {
		plots = append(plots, s.alternativesChart(unit))
	}
	return plots
}

var simSeries = []color.RGBA{
	{0x1f, 0x4e, 0x79, 0xff}, {0xc5, 0x5a, 0x11, 0xff}, {0x38, 0x76, 0x1d, 0xff},
	{0x7f, 0x3f, 0x98, 0xff}, {0x8c, 0x6d, 0x1f, 0xff}, {0x44, 0x44, 0x44, 0xff},
}

// altWord names the alternatives' values: rolled back at the decision in both modes.
func (s *SimResult) altWord() string {
	if s.Objective == engine.Minimize {
		return "Expected cost"
	}
	return "Expected value"
}

// alternativesChart draws each alternative's value at the first decision as a
// cumulative curve: the further left (benefits) or right (costs), the worse.
func (s *SimResult) alternativesChart(unit string) *plot.Plot {
	p := simPlot(fmt.Sprintf("Alternatives at %q: value per iteration", engine.NodeTitle(s.Decision)), UnitLabel(s.altWord(), unit), "Cumulative probability")
	for i, a := range s.Alternatives {
		sorted := sortedFinite(a.Samples)
		n := len(sorted)
		if n == 0 {
			continue
		}
		step := max(1, n/500)
		var pts plotter.XYs
		for k := 0; k < n; k += step {
			pts = append(pts, plotter.XY{X: sorted[k], Y: float64(k+1) / float64(n)})
		}
		pts = append(pts, plotter.XY{X: sorted[n-1], Y: 1})
		l, err := plotter.NewLine(pts)
		if err != nil {
			continue
		}
		l.Color, l.Width = simSeries[i%len(simSeries)], vg.Points(1.5)
		if i >= len(simSeries) {
			l.Dashes = []vg.Length{vg.Points(5), vg.Points(2)}
		}
		p.Add(l)
		p.Legend.Add(fmt.Sprintf("%s (best in %.0f %%)", a.Label, 100*a.PBest), l)
	}
	// A cumulative curve is high on the right, so the bottom right is free.
	p.Legend.Top, p.Legend.Left = false, false
	p.Legend.TextStyle.Font.Size = vg.Points(9)
	p.Legend.YOffs = vg.Points(6)
	p.Y.Min, p.Y.Max = 0, 1
	return p
}

func simDraw(plots []*plot.Plot, c draw.Canvas) {
	rows := make([][]*plot.Plot, len(plots))
	for i, p := range plots {
		rows[i] = []*plot.Plot{p}
	}
	tiles := draw.Tiles{Rows: len(plots), Cols: 1, PadY: vg.Centimeter, PadTop: vg.Points(6), PadBottom: vg.Points(6), PadLeft: vg.Points(6), PadRight: vg.Points(10)}
	canvases := plot.Align(rows, tiles, c)
	for i, p := range plots {
		p.Draw(canvases[i][0])
	}
}

// SimulationChartFormat is the chart format named by a path's extension; it
// is ChartFormat, under the name the simulation callers know.
func SimulationChartFormat(path string) (string, error) { return ChartFormat(path) }

// WriteSimulationCharts draws the plots one above the other in the format.
func WriteSimulationCharts(w io.Writer, plots []*plot.Plot, format string) error {
	if !slices.Contains(ChartFormats, format) {
		return fmt.Errorf("chart format %q is unknown (use png, svg or pdf)", format)
	}
	height := vg.Length(len(plots)) * 9 * vg.Centimeter
	return writeFigure(w, format, ChartWidth, height, func(c draw.Canvas) { simDraw(plots, c) })
}

// SaveSimulationCharts writes the plots to path (.png, .svg or .pdf)
// atomically. They are drawn to memory first, so a drawing failure never
// starts a file.
func SaveSimulationCharts(plots []*plot.Plot, path string) error {
	format, err := ChartFormat(path)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := WriteSimulationCharts(&buf, plots, format); err != nil {
		return err
	}
	return engine.WriteAtomic(path, func(w io.Writer) error { _, err := w.Write(buf.Bytes()); return err })
}

// SimulationChartImage renders one plot as an image for the window.
func SimulationChartImage(p *plot.Plot, widthPx, heightPx int) image.Image {
	return screenImage(widthPx, heightPx, p.Draw)
}
