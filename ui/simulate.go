package ui

import (
	"context"
	"fmt"
	"image"
	"io"
	"math"
	"math/rand/v2"
	"path/filepath"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"
	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	RegisterPanel(50, func(h Host) Panel { return newSimPanel(h) })
	RegisterMenu(MenuEntry{Menu: "Analyse", Label: "Distributions…", Order: 50, Action: func(h Host) { showDistributionDialog(h) }})
}

const (
	simModeParams = "Draw the variables only"
	simModeFull   = "Also draw the chance events"
	simChartHist  = "Histogram"
	simChartCum   = "Cumulative"
	simChartConv  = "Running mean"
	simChartAlts  = "Alternatives"
	simChartW     = 680
	simChartH     = 400
)

// simPanel runs Monte Carlo simulations in the background, with progress and
// cancel, and shows the figures, the alternatives and the charts of the last run.
type simPanel struct {
	host Host

	mode      *widget.RadioGroup
	iters     *widget.Entry
	seed      *widget.Entry
	runBtn    *widget.Button
	cancelBtn *widget.Button
	progress  *widget.ProgressBar
	status    *widget.Label
	summary   *widget.Label
	alts      *fyne.Container
	chartKind *widget.RadioGroup
	chart     *canvas.Image
	exports   *fyne.Container
	content   fyne.CanvasObject

	last   *analysis.SimResult
	proj   *engine.Project // the copy the last run used (unit, decimals)
	cancel context.CancelFunc
	// background runs work off the event goroutine; tests may run it inline.
	background func(func())
}

func newSimPanel(h Host) *simPanel {
	sp := &simPanel{host: h, background: runInBackground}
	sp.mode = widget.NewRadioGroup([]string{simModeParams, simModeFull}, nil)
	sp.mode.SetSelected(simModeParams)
	sp.iters = widget.NewEntry()
	sp.iters.SetText("10000")
	sp.seed = widget.NewEntry()
	sp.seed.SetText(strconv.FormatUint(rand.Uint64()%1_000_000_000, 10))
	newSeed := widget.NewButton("New seed", func() { sp.seed.SetText(strconv.FormatUint(rand.Uint64()%1_000_000_000, 10)) })
	sp.runBtn = widget.NewButton("Run", sp.run)
	sp.runBtn.Importance = widget.HighImportance
	sp.cancelBtn = widget.NewButton("Cancel", func() {
		if sp.cancel != nil {
			sp.cancel()
		}
	})
	sp.cancelBtn.Disable()
	sp.progress = widget.NewProgressBar()
	sp.status = widget.NewLabel("Give variables a distribution (Analyse › Distributions…), then run.")
	sp.status.Wrapping = fyne.TextWrapWord
	sp.summary = widget.NewLabel("")
	sp.summary.Wrapping = fyne.TextWrapWord
	sp.alts = container.NewVBox()
	sp.chartKind = widget.NewRadioGroup([]string{simChartHist, simChartCum, simChartConv, simChartAlts}, func(string) { sp.drawChart() })
	sp.chartKind.Horizontal = true
	sp.chartKind.SetSelected(simChartHist)
	sp.chart = canvas.NewImageFromImage(nil)
	sp.chart.FillMode = canvas.ImageFillContain
	sp.chart.SetMinSize(fyne.NewSize(simChartW, simChartH))
	sp.exports = container.NewHBox(
		widget.NewButton("Save charts…", func() { sp.save("ramify-simulation.png", sp.writeCharts) }),
		widget.NewButton("Save summary CSV…", func() { sp.save("ramify-simulation-summary.csv", sp.writeCSV("summary")) }),
		widget.NewButton("Save samples CSV…", func() { sp.save("ramify-simulation-samples.csv", sp.writeCSV("samples")) }),
	)
	sp.exports.Hide()
	caution := widget.NewLabel(engine.Caution)
	caution.Wrapping = fyne.TextWrapWord
	caution.Importance = widget.LowImportance
	form := widget.NewForm(
		widget.NewFormItem("Mode", sp.mode),
		widget.NewFormItem("Iterations", sp.iters),
		widget.NewFormItem("Seed", container.NewBorder(nil, nil, nil, newSeed, sp.seed)),
	)
	sp.content = container.NewVScroll(container.NewVBox(
		form,
		container.NewHBox(sp.runBtn, sp.cancelBtn, widget.NewButton("Distributions…", func() { showDistributionDialog(h) })),
		sp.progress, sp.status, sp.summary, sp.alts, sp.chartKind, sp.chart, sp.exports, caution,
	))
	return sp
}

func (sp *simPanel) Title() string              { return "Simulation" }
func (sp *simPanel) Content() fyne.CanvasObject { return sp.content }

// Update marks the last run as out of date; a run is long, so it is never redone unasked.
func (sp *simPanel) Update(*engine.Result) {
	if sp.last != nil && sp.cancel == nil {
		sp.status.SetText("The project has changed since this run; run again to update it.")
	}
}

func (sp *simPanel) run() {
	p := sp.host.Project()
	if p == nil || sp.cancel != nil {
		return
	}
	n, err := strconv.Atoi(strings.TrimSpace(strings.ReplaceAll(sp.iters.Text, ",", "")))
	if err != nil || n <= 0 {
		sp.status.SetText(fmt.Sprintf("Iterations: give a whole number of at least 1, not %q.", sp.iters.Text))
		return
	}
	seed, err := strconv.ParseUint(strings.TrimSpace(sp.seed.Text), 10, 64)
	if err != nil {
		sp.status.SetText(fmt.Sprintf("Seed: give a whole number from 0 up, not %q.", sp.seed.Text))
		return
	}
	mode := analysis.SimParameters
	if sp.mode.Selected == simModeFull {
		mode = analysis.SimFull
	}
	work := p.Clone() // taken on the event goroutine: edits during the run do not touch it
	ctx, cancel := context.WithCancel(context.Background())
	sp.cancel = cancel
	sp.runBtn.Disable()
	sp.cancelBtn.Enable()
	sp.progress.SetValue(0)
	sp.status.SetText(fmt.Sprintf("Running %d iterations, seed %d…", n, seed))
	var lastTick atomic.Int64
	progress := func(done, total int) {
		now := time.Now().UnixMilli()
		if prev := lastTick.Load(); now-prev < 100 && done < total {
			return
		}
		lastTick.Store(now)
		fyne.Do(func() { sp.progress.SetValue(float64(done) / float64(total)) })
	}
	kind := sp.chartKind.Selected
	sp.background(func() {
		res, err := analysis.Simulate(ctx, work, analysis.SimOptions{N: n, Seed: seed, Mode: mode, Progress: progress})
		var img image.Image
		if err == nil {
			img = simChartImage(res, work, kind)
		}
		fyne.Do(func() { sp.finish(work, res, img, err) })
	})
}

func simChartImage(res *analysis.SimResult, p *engine.Project, kind string) image.Image {
	plots := res.Charts(p.Currency)
	i := map[string]int{simChartHist: 0, simChartCum: 1, simChartConv: 2, simChartAlts: 3}[kind]
	if i >= len(plots) {
		i = 0
	}
	return analysis.SimulationChartImage(plots[i], simChartW, simChartH)
}

func (sp *simPanel) finish(work *engine.Project, res *analysis.SimResult, img image.Image, err error) {
	sp.cancel = nil
	sp.runBtn.Enable()
	sp.cancelBtn.Disable()
	if err != nil {
		sp.progress.SetValue(0)
		sp.status.SetText(err.Error())
		return
	}
	sp.progress.SetValue(1)
	sp.last, sp.proj = res, work
	sp.status.SetText(fmt.Sprintf("Done: %d iterations, seed %d, %d workers. The same seed gives the same figures.", res.N, res.Seed, res.Workers))
	sp.summary.SetText(simSummaryText(work, res))
	sp.showAlternatives(work, res)
	sp.chart.Image = img
	sp.chart.Refresh()
	sp.exports.Show()
}

func simValue(p *engine.Project, x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return fmt.Sprint(x)
	}
	return engine.FormatValue(decimal.NewFromFloat(x), p.Decimals, p.Currency)
}

func simSummaryText(p *engine.Project, res *analysis.SimResult) string {
	v := res.Value
	f := func(x float64) string { return simValue(p, x) }
	var b strings.Builder
	word := strings.ToUpper(res.ValueWord[:1]) + res.ValueWord[1:]
	fmt.Fprintf(&b, "%s — base case %s\n", word, f(res.Base))
	fmt.Fprintf(&b, "Mean %s ± %s (standard error), standard deviation %s\n", f(v.Mean), f(v.SE), f(v.SD))
	fmt.Fprintf(&b, "P5 %s · P10 %s · P50 %s · P90 %s · P95 %s\n", f(v.P5), f(v.P10), f(v.P50), f(v.P90), f(v.P95))
	fmt.Fprintf(&b, "Chance of %s: %.1f %%", res.LossRule, 100*res.Loss)
	if v.PercentileSample < v.Count {
		fmt.Fprintf(&b, "\nPercentiles and charts from the first %d iterations.", v.PercentileSample)
	}
	if len(res.Varying) == 0 {
		b.WriteString("\nNo variable has a distribution: every iteration uses the base values.")
	} else {
		fmt.Fprintf(&b, "\nDrawn: %s", strings.Join(res.Varying, ", "))
	}
	if res.Invalid > 0 {
		fmt.Fprintf(&b, "\nLeft out: %d iterations in which a draw made the tree invalid (first: %s).", res.Invalid, res.InvalidExample)
	}
	return b.String()
}

func (sp *simPanel) showAlternatives(p *engine.Project, res *analysis.SimResult) {
	sp.alts.RemoveAll()
	if res.Decision == nil {
		return
	}
	sp.alts.Add(widget.NewLabelWithStyle(fmt.Sprintf("At %q", engine.NodeTitle(res.Decision)), fyne.TextAlignLeading, fyne.TextStyle{Bold: true}))
	grid := container.NewGridWithColumns(5)
	for _, h := range []string{"Alternative", "Best in", "Mean", "P5", "P95"} {
		grid.Add(widget.NewLabelWithStyle(h, fyne.TextAlignLeading, fyne.TextStyle{Bold: true}))
	}
	for _, a := range res.Alternatives {
		l := widget.NewLabel(a.Label)
		l.Truncation = fyne.TextTruncateEllipsis
		grid.Add(l)
		grid.Add(widget.NewLabel(fmt.Sprintf("%.1f %%", 100*a.PBest)))
		grid.Add(widget.NewLabel(simValue(p, a.Value.Mean)))
		grid.Add(widget.NewLabel(simValue(p, a.Value.P5)))
		grid.Add(widget.NewLabel(simValue(p, a.Value.P95)))
	}
	sp.alts.Add(grid)
}

func (sp *simPanel) drawChart() {
	if sp.last == nil || sp.chart == nil {
		return
	}
	sp.chart.Image = simChartImage(sp.last, sp.proj, sp.chartKind.Selected)
	sp.chart.Refresh()
}

func (sp *simPanel) save(name string, write func(w io.Writer, ext string) error) {
	if sp.last == nil {
		return
	}
	// Written to a temporary file and renamed, like every file Ramify writes.
	askPathAndSave(sp.host, "Cannot save", name, func(path string) error {
		ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
		return engine.WriteAtomic(path, func(w io.Writer) error { return write(w, ext) })
	})
}

func (sp *simPanel) writeCharts(w io.Writer, ext string) error {
	if ext != "png" && ext != "svg" && ext != "pdf" {
		return fmt.Errorf("charts are saved as .png, .svg or .pdf, not %q", "."+ext)
	}
	return analysis.WriteSimulationCharts(w, sp.last.Charts(sp.proj.Currency), ext)
}

func (sp *simPanel) writeCSV(table string) func(io.Writer, string) error {
	return func(w io.Writer, _ string) error { return analysis.WriteSimulationCSV(w, sp.last, table) }
}
