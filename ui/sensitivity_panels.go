package ui

import (
	"context"
	"fmt"
	"io"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"
	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

// ---- One input ----

type sweepPanel struct {
	h        Host
	input    *widget.Select
	from, to *widget.Entry
	steps    *widget.Entry
	decision *widget.Select
	run      *widget.Button
	status   *widget.Label
	found    *widget.Label
	chart    *chartBox
	table    *textTable
	choices  []inputChoice
	decIDs   []string
	result   *analysis.SweepResult
	content  fyne.CanvasObject
	running  latestRun
	// background runs work off the event goroutine; tests run it inline, as the
	// Fyne test driver's fyne.Do runs on the calling goroutine.
	background func(func())
}

func newSweepPanel(h Host) *sweepPanel {
	sp := &sweepPanel{h: h, chart: newChartBox(), table: newTextTable(), background: runInBackground}
	sp.input = widget.NewSelect(nil, nil)
	sp.input.PlaceHolder = "Input to vary"
	sp.from, sp.to = widget.NewEntry(), widget.NewEntry()
	sp.from.SetPlaceHolder("own low")
	sp.to.SetPlaceHolder("own high")
	sp.steps = widget.NewEntry()
	sp.steps.SetText(strconv.Itoa(analysis.DefaultSteps))
	sp.decision = widget.NewSelect(nil, nil)
	sp.run = widget.NewButton("Run", sp.Run)
	sp.status = widget.NewLabel("Choose an input and press Run.")
	sp.status.Wrapping = fyne.TextWrapWord
	sp.found = widget.NewLabel("")
	sp.found.Wrapping = fyne.TextWrapWord
	form := container.New(&formRow{}, widget.NewLabel("Input"), sp.input, widget.NewLabel("From"), sp.from,
		widget.NewLabel("To"), sp.to, widget.NewLabel("Steps"), sp.steps, widget.NewLabel("At decision"), sp.decision)
	buttons := container.NewHBox(sp.run,
		widget.NewButton("Save chart…", func() { saveChartDialog(h, "Save chart", sp.chart.plot, "one-input.png") }),
		widget.NewButton("Save table as CSV…", func() { saveCSVDialog(h, "Save table", sp.csv(), "one-input.csv") }))
	top := container.NewVBox(form, buttons, sp.status)
	sp.content = container.NewBorder(top, caution(), nil, nil,
		resultsArea(sp.chart, sp.found, sp.table))
	sp.refreshChoices()
	return sp
}

func (sp *sweepPanel) Title() string              { return "One input" }
func (sp *sweepPanel) Content() fyne.CanvasObject { return sp.content }

func (sp *sweepPanel) Update(*engine.Result) {
	sp.refreshChoices()
	if sp.result != nil {
		sp.status.SetText("The project has changed; press Run to update the figures.")
	}
}

func (sp *sweepPanel) refreshChoices() {
	p := sp.h.Project()
	sp.choices = inputChoices(p, true)
	refreshInputSelect(sp.input, sp.choices)
	sp.decIDs = refreshDecisionSelect(sp.decision, p)
}

// Run starts the sweep on a clone, off the event goroutine.
func (sp *sweepPanel) Run() {
	in, ok := findChoice(sp.choices, sp.input.Selected)
	if !ok {
		sp.status.SetText("Choose an input to vary first.")
		return
	}
	rng, err := typedRange(sp.from.Text, sp.to.Text, sp.h.Result())
	if err != nil {
		sp.status.SetText(err.Error())
		return
	}
	steps, err := strconv.Atoi(strings.TrimSpace(sp.steps.Text))
	if err != nil || steps < 1 {
		sp.status.SetText(fmt.Sprintf("Steps: %q is not a whole number of at least 1.", sp.steps.Text))
		return
	}
	opts := analysis.SweepOptions{Range: rng, Steps: steps}
	opts.Decision = selectedID(sp.decision, sp.decIDs)
	clone := sp.h.Project().Clone()
	sp.status.SetText("Working…")
	sp.running.start(sp.background, func(ctx context.Context) func() {
		r := engine.Evaluate(clone)
		res, err := analysis.Sweep(ctx, clone, r, in, opts)
		return sensHandBack(err, res.Chart, sp.chart, sp.status, func() { sp.show(res) })
	})
}

func (sp *sweepPanel) show(res *analysis.SweepResult) {
	sp.result = res
	msg := fmt.Sprintf("%s from %s to %s (base %s).", res.InputName, res.Setting.Low, res.Setting.High, res.Setting.Base)
	if res.Setting.Rule != "" {
		msg += " Other branches: " + res.Setting.Rule + "."
	}
	sp.status.SetText(msg)
	var lines []string
	if len(res.BreakEvens) == 0 {
		lines = append(lines, fmt.Sprintf("No break-even: %q is best across the whole range.", res.Alternatives[res.Best[0]]))
	} else {
		lines = append(lines, "Break-evens (confirmed with the exact engine):")
		for _, b := range res.BreakEvens {
			lines = append(lines, fmt.Sprintf("• %s = %s: %q → %q (%s)", res.InputName, b.At.Round(12).String(),
				res.Alternatives[b.From], res.Alternatives[b.To], b.Method()))
		}
	}
	sp.found.SetText(strings.Join(lines, "\n"))
	head := append([]string{res.InputName}, res.Alternatives...)
	rows := [][]string{append(head, "best")}
	for k, x := range res.X {
		row := []string{x.Round(8).String()}
		for _, v := range res.Values[k] {
			row = append(row, engine.FormatNumber(decimal.NewFromFloat(v), res.Decimals))
		}
		rows = append(rows, append(row, res.Alternatives[res.Best[k]]))
	}
	sp.table.set(rows)
}

func (sp *sweepPanel) csv() func(io.Writer) error {
	if sp.result == nil {
		return nil
	}
	return sp.result.WriteCSV
}

// ---- Tornado ----

type tornadoPanel struct {
	h       Host
	run     *widget.Button
	status  *widget.Label
	skipped *widget.Label
	chart   *chartBox
	table   *textTable
	result  *analysis.TornadoResult
	content fyne.CanvasObject
	running latestRun
	// background runs work off the event goroutine (inline in tests).
	background func(func())
}

func newTornadoPanel(h Host) *tornadoPanel {
	tp := &tornadoPanel{h: h, chart: newChartBox(), table: newTextTable(), background: runInBackground}
	tp.run = widget.NewButton("Run", tp.Run)
	tp.status = widget.NewLabel("Every variable with a low and a high gets a bar. Press Run.")
	tp.status.Wrapping = fyne.TextWrapWord
	tp.skipped = widget.NewLabel("")
	tp.skipped.Wrapping = fyne.TextWrapWord
	buttons := container.NewHBox(tp.run,
		widget.NewButton("Save chart…", func() { saveChartDialog(h, "Save chart", tp.chart.plot, "tornado.png") }),
		widget.NewButton("Save table as CSV…", func() {
			var write func(io.Writer) error
			if tp.result != nil {
				write = tp.result.WriteCSV
			}
			saveCSVDialog(h, "Save table", write, "tornado.csv")
		}))
	tp.content = container.NewBorder(container.NewVBox(buttons, tp.status), caution(), nil, nil,
		resultsArea(tp.chart, tp.skipped, tp.table))
	return tp
}

func (tp *tornadoPanel) Title() string              { return "Tornado" }
func (tp *tornadoPanel) Content() fyne.CanvasObject { return tp.content }

func (tp *tornadoPanel) Update(*engine.Result) {
	if tp.result != nil {
		tp.status.SetText("The project has changed; press Run to update the figures.")
	}
}

func (tp *tornadoPanel) Run() {
	clone := tp.h.Project().Clone()
	tp.status.SetText("Working…")
	tp.running.start(tp.background, func(ctx context.Context) func() {
		r := engine.Evaluate(clone)
		res, err := analysis.Tornado(ctx, clone, r)
		if err == nil && len(res.Bars) == 0 {
			err = fmt.Errorf("no variable has both a low and a high; give ranges in the Variables table")
		}
		return sensHandBack(err, res.Chart, tp.chart, tp.status, func() { tp.show(res) })
	})
}

func (tp *tornadoPanel) show(t *analysis.TornadoResult) {
	tp.result = t
	f := func(d decimal.Decimal) string { return engine.FormatValue(d, t.Decimals, t.Unit) }
	msg := fmt.Sprintf("Root %s at base: %s.", t.ValueWord, f(t.Base))
	if t.Decision != nil {
		msg += fmt.Sprintf(" Recommended at %q: %q. Bars marked * change it.", engine.NodeTitle(t.Decision), t.Alternatives[t.BaseChoice])
	}
	tp.status.SetText(msg)
	tp.skipped.SetText(strings.Join(t.Skipped, "\n"))
	rows := [][]string{{"variable", "low", "high", "at low", "at high", "swing", "flips"}}
	for _, b := range t.Bars {
		flip := ""
		if b.Flips {
			flip = "yes"
		}
		rows = append(rows, []string{b.Variable, b.Low.String(), b.High.String(), f(b.AtLow), f(b.AtHigh), f(b.Swing), flip})
	}
	tp.table.set(rows)
}

// ---- Two inputs ----

type regionsPanel struct {
	h          Host
	x, y       *widget.Select
	xFrom, xTo *widget.Entry
	yFrom, yTo *widget.Entry
	steps      *widget.Entry
	decision   *widget.Select
	run        *widget.Button
	cancel     *widget.Button
	progress   *widget.ProgressBar
	status     *widget.Label
	chart      *chartBox
	table      *textTable
	choices    []inputChoice
	decIDs     []string
	result     *analysis.RegionMap
	content    fyne.CanvasObject
	running    latestRun
	// background runs work off the event goroutine (inline in tests).
	background func(func())
}

func newRegionsPanel(h Host) *regionsPanel {
	rp := &regionsPanel{h: h, chart: newChartBox(), table: newTextTable(), background: runInBackground}
	rp.x, rp.y = widget.NewSelect(nil, nil), widget.NewSelect(nil, nil)
	rp.x.PlaceHolder, rp.y.PlaceHolder = "Across", "Up"
	rp.xFrom, rp.xTo, rp.yFrom, rp.yTo = widget.NewEntry(), widget.NewEntry(), widget.NewEntry(), widget.NewEntry()
	for _, e := range []*widget.Entry{rp.xFrom, rp.yFrom} {
		e.SetPlaceHolder("own low")
	}
	for _, e := range []*widget.Entry{rp.xTo, rp.yTo} {
		e.SetPlaceHolder("own high")
	}
	rp.steps = widget.NewEntry()
	rp.steps.SetText(strconv.Itoa(analysis.DefaultGrid))
	rp.decision = widget.NewSelect(nil, nil)
	rp.run = widget.NewButton("Run", rp.Run)
	rp.cancel = widget.NewButton("Cancel", rp.Cancel)
	rp.cancel.Disable()
	rp.progress = widget.NewProgressBar()
	rp.status = widget.NewLabel("Choose two inputs and press Run.")
	rp.status.Wrapping = fyne.TextWrapWord
	form := container.New(&formRow{},
		widget.NewLabel("Across"), rp.x, widget.NewLabel("From"), rp.xFrom, widget.NewLabel("To"), rp.xTo,
		widget.NewLabel("Up"), rp.y, widget.NewLabel("From"), rp.yFrom, widget.NewLabel("To"), rp.yTo,
		widget.NewLabel("Points per side"), rp.steps, widget.NewLabel("At decision"), rp.decision)
	buttons := container.NewHBox(rp.run, rp.cancel,
		widget.NewButton("Save chart…", func() { saveChartDialog(h, "Save chart", rp.chart.plot, "two-inputs.png") }),
		widget.NewButton("Save grid as CSV…", func() {
			var write func(io.Writer) error
			if rp.result != nil {
				write = rp.result.WriteCSV
			}
			saveCSVDialog(h, "Save grid", write, "two-inputs.csv")
		}))
	top := container.NewVBox(form, container.NewBorder(nil, nil, buttons, nil, rp.progress), rp.status)
	rp.content = container.NewBorder(top, caution(), nil, nil, resultsArea(rp.chart, widget.NewLabel(""), rp.table))
	rp.refreshChoices()
	return rp
}

func (rp *regionsPanel) Title() string              { return "Two inputs" }
func (rp *regionsPanel) Content() fyne.CanvasObject { return rp.content }

func (rp *regionsPanel) Update(*engine.Result) {
	rp.refreshChoices()
	if rp.result != nil {
		rp.status.SetText("The project has changed; press Run to update the map.")
	}
}

func (rp *regionsPanel) refreshChoices() {
	p := rp.h.Project()
	rp.choices = inputChoices(p, true)
	for _, s := range []*widget.Select{rp.x, rp.y} {
		refreshInputSelect(s, rp.choices)
	}
	rp.decIDs = refreshDecisionSelect(rp.decision, p)
}

// Cancel stops a running map.
func (rp *regionsPanel) Cancel() {
	rp.running.stop()
	rp.cancel.Disable()
	rp.run.Enable()
	rp.status.SetText("Cancelled.")
}

func (rp *regionsPanel) Run() {
	x, okX := findChoice(rp.choices, rp.x.Selected)
	y, okY := findChoice(rp.choices, rp.y.Selected)
	if !okX || !okY {
		rp.status.SetText("Choose both inputs first.")
		return
	}
	xr, err := typedRange(rp.xFrom.Text, rp.xTo.Text, rp.h.Result())
	if err != nil {
		rp.status.SetText("Across: " + err.Error())
		return
	}
	yr, err := typedRange(rp.yFrom.Text, rp.yTo.Text, rp.h.Result())
	if err != nil {
		rp.status.SetText("Up: " + err.Error())
		return
	}
	steps, err := strconv.Atoi(strings.TrimSpace(rp.steps.Text))
	if err != nil || steps < 2 {
		rp.status.SetText(fmt.Sprintf("Points per side: %q is not a whole number of at least 2.", rp.steps.Text))
		return
	}
	opts := analysis.RegionOptions{XRange: xr, YRange: yr, Steps: steps}
	opts.Decision = selectedID(rp.decision, rp.decIDs)
	clone := rp.h.Project().Clone()
	rp.progress.SetValue(0)
	rp.run.Disable()
	rp.cancel.Enable()
	rp.status.SetText("Working…")
	rp.running.start(rp.background, func(ctx context.Context) func() {
		opts.Progress = func(done, total int) {
			fyne.Do(func() {
				if ctx.Err() == nil {
					rp.progress.SetValue(float64(done) / float64(total))
				}
			})
		}
		r := engine.Evaluate(clone)
		res, err := analysis.Regions(ctx, clone, r, x, y, opts)
		show := sensHandBack(err, res.Chart, rp.chart, rp.status, func() { rp.show(res) })
		return func() {
			rp.run.Enable()
			rp.cancel.Disable()
			show()
		}
	})
}

func (rp *regionsPanel) show(rm *analysis.RegionMap) {
	rp.result = rm
	rp.progress.SetValue(1)
	rp.status.SetText(fmt.Sprintf("%d × %d grid. Base case (%s = %s, %s = %s): %q.", len(rm.Xs), len(rm.Ys),
		rm.XName, rm.X.Base, rm.YName, rm.Y.Base, rm.Alternatives[rm.BaseBest]))
	rows := [][]string{{"alternative", "cells", "share"}}
	total := len(rm.Xs) * len(rm.Ys)
	for i, c := range rm.Shares() {
		rows = append(rows, []string{rm.Alternatives[i], strconv.Itoa(c), fmt.Sprintf("%.1f%%", 100*float64(c)/float64(total))})
	}
	rp.table.set(rows)
}

// refreshInputSelect refills an input select from choices, keeping its
// selection while that input still exists.
func refreshInputSelect(s *widget.Select, choices []inputChoice) {
	keep := s.Selected
	s.Options = choiceLabels(choices)
	if _, ok := findChoice(choices, keep); !ok {
		s.ClearSelected()
	}
	s.Refresh()
}

// refreshDecisionSelect refills a decision select from p, keeping the chosen
// place in the list (else the first), and returns the decisions' ids in order.
func refreshDecisionSelect(s *widget.Select, p *engine.Project) []string {
	labels, ids := decisionChoices(p)
	keep := s.SelectedIndex()
	s.Options = labels
	if keep < 0 || keep >= len(ids) {
		keep = 0
	}
	if len(ids) > 0 {
		s.SetSelectedIndex(keep)
	}
	s.Refresh()
	return ids
}

// selectedID is the id of the decision chosen in s, or "" (the root) for none.
func selectedID(s *widget.Select, ids []string) string {
	if i := s.SelectedIndex(); i >= 0 && i < len(ids) {
		return ids[i]
	}
	return ""
}

// formRow lays out label/field pairs in rows of up to three pairs, fields stretched.
type formRow struct{}

func (f *formRow) MinSize(objects []fyne.CanvasObject) fyne.Size {
	rows := (len(objects)/2 + 2) / 3
	h := float32(0)
	for i := 0; i < len(objects); i += 2 {
		if s := objects[i+1].MinSize().Height; s > h {
			h = s
		}
	}
	return fyne.NewSize(600, float32(rows)*(h+4))
}

func (f *formRow) Layout(objects []fyne.CanvasObject, size fyne.Size) {
	pairs := len(objects) / 2
	if pairs == 0 {
		return
	}
	perRow := 3
	rows := (pairs + perRow - 1) / perRow
	rowH := size.Height / float32(rows)
	cellW := size.Width / float32(perRow)
	for k := 0; k < pairs; k++ {
		label, field := objects[2*k], objects[2*k+1]
		r, c := k/perRow, k%perRow
		x, y := float32(c)*cellW, float32(r)*rowH
		lw := label.MinSize().Width
		if lw > cellW*0.45 {
			lw = cellW * 0.45
		}
		label.Move(fyne.NewPos(x, y))
		label.Resize(fyne.NewSize(lw, rowH-4))
		field.Move(fyne.NewPos(x+lw+4, y))
		field.Resize(fyne.NewSize(cellW-lw-12, rowH-4))
	}
}
