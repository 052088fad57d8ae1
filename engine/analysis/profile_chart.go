package analysis

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/ramify-app/ramify/engine"
)

// ProfileChart draws the risk profiles of the given profiles (a.Profiles when
// nil): probability bars, or with cumulative the step curves of P(payoff ≤ x),
// all overlaid with a legend. The payoff axis carries the project's unit.
func (a *Analysis) ProfileChart(cumulative bool, profiles []*Profile) (*plot.Plot, error) {
	if profiles == nil {
		profiles = a.Profiles
	}
	if len(profiles) == 0 {
		return nil, fmt.Errorf("there is no risk profile to draw")
	}
	unit := a.Result.Project.Currency
	xLabel := UnitLabel(a.ValueName(), unit)
	title := "Risk profile at " + quoteTitle(a.Node)
	yLabel := "Probability"
	if cumulative {
		title = "Cumulative risk profile at " + quoteTitle(a.Node)
		if a.Minimize {
			yLabel = "Chance the cost is at most x"
		} else {
			yLabel = "Chance the payoff is at most x"
		}
	}
	p := NewChart(title, xLabel, yLabel)
	p.X.Tick.Marker = ValueTicks{Decimals: a.decimals()}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, pr := range profiles {
		if len(pr.Dist.Outcomes) == 0 {
			continue
		}
		lo = math.Min(lo, pr.Dist.Outcomes[0].Value.InexactFloat64())
		hi = math.Max(hi, pr.Dist.Outcomes[len(pr.Dist.Outcomes)-1].Value.InexactFloat64())
	}
	if math.IsInf(lo, 0) {
		return nil, fmt.Errorf("the risk profiles have no outcomes")
	}
	pad := (hi - lo) * 0.05
	if pad == 0 {
		pad = math.Max(1, math.Abs(lo)*0.05)
	}
	p.X.Min, p.X.Max = lo-pad, hi+pad
	p.Y.Min = 0
	if cumulative {
		p.Y.Max = 1.05
		for k, pr := range profiles {
			pts := plotter.XYs{{X: lo - pad, Y: 0}}
			for i, o := range pr.Dist.Outcomes {
				pts = append(pts, plotter.XY{X: o.Value.InexactFloat64(), Y: pr.Dist.Cumulative[i].InexactFloat64()})
			}
			pts = append(pts, plotter.XY{X: hi + pad, Y: pr.Dist.Total().InexactFloat64()})
			line, err := plotter.NewLine(pts)
			if err != nil {
				return nil, err
			}
			line.StepStyle = plotter.PostStep
			line.LineStyle = SeriesStyle(k)
			p.Add(line)
			p.Legend.Add(legendName(pr.Name), line)
		}
		// Cumulative curves climb to 1 on the right, leaving the bottom right free.
		p.Legend.Left, p.Legend.Top = false, false
		p.Legend.XOffs, p.Legend.YOffs = -vg.Millimeter*2, vg.Millimeter*2
		p.Add(plotter.NewGrid())
		return p, nil
	}
	maxP := 0.0
	// Bars of several alternatives at one payoff sit side by side; elsewhere a
	// bar stands exactly on its payoff.
	seen := map[string]int{}
	for _, pr := range profiles {
		for _, o := range pr.Dist.Outcomes {
			seen[o.Value.String()]++
		}
	}
	for k, pr := range profiles {
		bars := &stemBars{index: k, count: len(profiles), fill: barFill(k), outline: SeriesStyle(k)}
		for _, o := range pr.Dist.Outcomes {
			bars.shared = append(bars.shared, seen[o.Value.String()] > 1)
		}
		for _, o := range pr.Dist.Outcomes {
			pv := o.Probability.InexactFloat64()
			bars.pts = append(bars.pts, plotter.XY{X: o.Value.InexactFloat64(), Y: pv})
			maxP = math.Max(maxP, pv)
		}
		p.Add(bars)
		p.Legend.Add(legendName(pr.Name), bars)
	}
	// Head room for the legend above the tallest bar.
	p.Y.Max = maxP * (1.2 + 0.08*float64(len(profiles)))
	p.Y.Tick.Marker = probabilityTicks{}
	if p.Y.Max <= 0 {
		p.Y.Max = 1
	}
	grid := plotter.NewGrid()
	grid.Vertical.Color = nil
	p.Add(grid)
	return p, nil
}

func quoteTitle(n *engine.Node) string { return "“" + engine.NodeTitle(n) + "”" }

func legendName(s string) string {
	const max = 48
	r := []rune(s)
	if len(r) <= max {
		return s
	}
	return string(r[:max-1]) + "…"
}

// Bar fills spread in lightness, so bars of different alternatives differ in
// a greyscale print too; each bar also has a dark outline in the series' dash.
var barFills = []color.Color{
	color.RGBA{R: 0x1f, G: 0x3a, B: 0x5f, A: 0xff}, // dark blue
	color.RGBA{R: 0xf4, G: 0xb1, B: 0x83, A: 0xff}, // light orange
	color.RGBA{R: 0x5b, G: 0x9b, B: 0x6b, A: 0xff}, // mid green
	color.White, // outline only
	color.RGBA{R: 0xa8, G: 0x8f, B: 0xc8, A: 0xff}, // light purple
	color.RGBA{R: 0x70, G: 0x70, B: 0x70, A: 0xff}, // grey
}

func barFill(k int) color.Color { return barFills[k%len(barFills)] }

// stemBars draws probability bars at arbitrary payoffs; the bars of several
// alternatives sit side by side around the payoff so none hides another.
type stemBars struct {
	pts          plotter.XYs
	shared       []bool // payoff also reached by another profile: offset the bar
	index, count int
	fill         color.Color
	outline      draw.LineStyle
}

const barWidth = 5 * vg.Millimeter

// Plot implements plot.Plotter.
func (b *stemBars) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	width := barWidth
	if b.count > 3 {
		width = barWidth * 3 / vg.Length(b.count)
	}
	offset := (vg.Length(b.index) - vg.Length(b.count-1)/2) * width
	outline := b.outline
	outline.Width = vg.Points(0.8)
	for i, pt := range b.pts {
		x := trX(pt.X)
		if b.shared[i] {
			x += offset
		}
		y0, y1 := trY(0), trY(pt.Y)
		poly := []vg.Point{{X: x - width/2, Y: y0}, {X: x - width/2, Y: y1}, {X: x + width/2, Y: y1}, {X: x + width/2, Y: y0}}
		c.FillPolygon(b.fill, c.ClipPolygonY(poly))
		closed := append(poly, poly[0])
		c.StrokeLines(outline, c.ClipLinesY(closed)...)
	}
}

// probabilityTicks label 0 … 1 in round steps and stop at 1, so no label
// suggests a probability above it (the axis runs higher to make room for the
// legend).
type probabilityTicks struct{}

// Ticks implements plot.Ticker.
func (probabilityTicks) Ticks(min, max float64) []plot.Tick {
	top := math.Min(max, 1)
	step := 0.25
	for _, s := range []float64{0.01, 0.02, 0.05, 0.1, 0.2, 0.25} {
		if top/s <= 6 {
			step = s
			break
		}
	}
	var out []plot.Tick
	for k := 0; float64(k)*step <= top+1e-9; k++ {
		v := math.Round(float64(k)*step*1000) / 1000 // 3 × 0.2 is 0.6, not 0.6000000000000001
		out = append(out, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', -1, 64)})
		if minor := v + step/2; minor <= top+1e-9 {
			out = append(out, plot.Tick{Value: minor})
		}
	}
	return out
}

// DataRange implements plot.DataRanger.
func (b *stemBars) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax, _, ymax = plotter.XYRange(b.pts)
	return xmin, xmax, 0, ymax
}

// Thumbnail implements plot.Thumbnailer for the legend.
func (b *stemBars) Thumbnail(c *draw.Canvas) {
	pts := []vg.Point{{X: c.Min.X, Y: c.Min.Y}, {X: c.Min.X, Y: c.Max.Y}, {X: c.Max.X, Y: c.Max.Y}, {X: c.Max.X, Y: c.Min.Y}}
	c.FillPolygon(b.fill, pts)
	outline := b.outline
	outline.Width = vg.Points(0.8)
	c.StrokeLines(outline, append(pts, pts[0]))
}
