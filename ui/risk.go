package ui

import (
	"context"
	"encoding/csv"
	"fmt"
	"image"
	"image/color"
	"io"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/storage"
	"fyne.io/fyne/v2/widget"
	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	RegisterPanel(30, func(h Host) Panel { return newRiskPanel(h) })
	RegisterMenu(MenuEntry{Menu: "Analyse", Label: "Choose risk tolerance…", Order: 30, Action: func(h Host) {
		p := h.Project()
		if p == nil {
			return
		}
		showToleranceHelper(h.Window(), p.Currency, p.Decimals, func(text string) {
			if err := h.Apply(analysis.SetRisk{Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: text}}); err != nil {
				h.ShowError("Cannot set the risk tolerance", err)
			}
		})
	}})
}

const (
	attitudeNeutral     = "Risk-neutral (expected value)"
	attitudeExponential = "Exponential utility, risk tolerance R"
	chartBars           = "Probability bars"
	chartCumulative     = "Cumulative (step curves)"
	rootChoice          = "The root"
	chartW, chartH      = 720, 432 // pixels; the chart is drawn at this size
)

// riskPanel shows risk profiles, the strategy table and dominance at a decision,
// and sets the project's attitude to risk through an undoable edit.
type riskPanel struct {
	host Host

	nodeSelect  *widget.Select
	nodeIDs     map[string]string // select label -> node id
	chartKind   *widget.RadioGroup
	strategies  *widget.Check
	lossEntry   *widget.Entry
	attitude    *widget.RadioGroup
	rEntry      *widget.Entry
	rError      *widget.Label
	busy        *widget.ProgressBarInfinite
	status      *widget.Label
	attitudeTxt *widget.Label
	chart       *canvas.Image
	table       *widget.Table
	dominance   *widget.Label
	stratNote   *widget.Label
	tableSpace  *canvas.Rectangle // sets the table's height; the width follows the panel
	body        *fyne.Container
	content     fyne.CanvasObject

	cells   [][]string // header row first
	last    *analysis.Analysis
	running latestRun
	ready   bool // callbacks fired while the widgets are being built are ignored
	// background runs the analysis off the event goroutine; tests run it inline
	// because the Fyne test driver's fyne.Do does not hand back to one goroutine.
	background func(func())
}

func newRiskPanel(h Host) *riskPanel {
	rp := &riskPanel{host: h, nodeIDs: map[string]string{}, background: runInBackground}
	rp.nodeSelect = widget.NewSelect(nil, func(string) { rp.refresh() })
	rp.chartKind = widget.NewRadioGroup([]string{chartBars, chartCumulative}, func(string) { rp.refresh() })
	rp.chartKind.Horizontal = true
	rp.chartKind.SetSelected(chartCumulative)
	rp.strategies = widget.NewCheck("List every pure strategy", func(bool) { rp.refresh() })
	rp.lossEntry = widget.NewEntry()
	rp.lossEntry.OnSubmitted = func(string) { rp.refresh() }
	rp.attitude = widget.NewRadioGroup([]string{attitudeNeutral, attitudeExponential}, func(s string) {
		if rp.rEntry == nil {
			return
		}
		if s == attitudeNeutral {
			rp.rEntry.Disable()
		} else {
			rp.rEntry.Enable()
		}
	})
	rp.rEntry = widget.NewEntry()
	rp.rEntry.SetPlaceHolder("R, e.g. 250000 or a formula")
	rp.rEntry.OnSubmitted = func(string) { rp.applyAttitude() }
	rp.rError = widget.NewLabel("")
	rp.rError.Wrapping = fyne.TextWrapWord
	rp.rError.Importance = widget.DangerImportance
	rp.busy = widget.NewProgressBarInfinite()
	rp.busy.Hide()
	rp.status = widget.NewLabel("")
	rp.status.Wrapping = fyne.TextWrapWord
	rp.attitudeTxt = widget.NewLabel("")
	rp.attitudeTxt.Wrapping = fyne.TextWrapWord
	rp.chart = canvas.NewImageFromImage(nil)
	rp.chart.FillMode = canvas.ImageFillContain
	rp.chart.SetMinSize(fyne.NewSize(chartW/2, chartH/2)) // drawn at full size, scaled to fit
	rp.table = widget.NewTable(rp.tableSize, func() fyne.CanvasObject {
		l := widget.NewLabel("")
		l.Truncation = fyne.TextTruncateEllipsis
		return l
	}, rp.updateCell)
	rp.table.StickyRowCount = 1
	rp.dominance = widget.NewLabel("")
	rp.dominance.Wrapping = fyne.TextWrapWord
	rp.stratNote = widget.NewLabel("")
	rp.stratNote.Wrapping = fyne.TextWrapWord
	caution := widget.NewLabel(engine.Caution)
	caution.Wrapping = fyne.TextWrapWord
	caution.Importance = widget.LowImportance

	useSelected := widget.NewButton("Use selected node", func() {
		n := rp.host.SelectedNode()
		if n == nil || n.Kind != engine.Decision {
			rp.status.SetText("Select a decision node on the canvas first.")
			return
		}
		for label, id := range rp.nodeIDs {
			if id == n.ID {
				rp.nodeSelect.SetSelected(label)
			}
		}
	})
	helper := widget.NewButton("Help me choose R…", func() {
		p := rp.host.Project()
		if p == nil {
			return
		}
		showToleranceHelper(rp.host.Window(), p.Currency, p.Decimals, func(text string) {
			rp.attitude.SetSelected(attitudeExponential)
			rp.rEntry.SetText(text)
			rp.applyAttitude() // undoable like any other edit
		})
	})
	setAttitude := widget.NewButton("Set attitude", rp.applyAttitude)
	exportChart := widget.NewButton("Export chart…", rp.exportChart)
	exportTable := widget.NewButton("Export table (CSV)…", rp.exportTable)

	rp.attitude.Horizontal = true
	bold := func(text string) *widget.Label {
		return widget.NewLabelWithStyle(text, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	}
	controls := container.NewVBox(
		container.NewBorder(nil, nil, widget.NewLabel("Compare alternatives at"), useSelected, rp.nodeSelect),
		container.NewHBox(rp.chartKind, rp.strategies),
		container.NewBorder(nil, nil, widget.NewLabel("Loss threshold"), nil, rp.lossEntry),
		bold("Attitude to risk"),
		rp.attitude,
		container.NewBorder(nil, nil, widget.NewLabel("R"), container.NewHBox(helper, setAttitude), rp.rEntry),
		rp.rError,
	)
	rp.tableSpace = canvas.NewRectangle(color.Transparent)
	rp.tableSpace.SetMinSize(fyne.NewSize(400, 120))
	tableBox := container.NewStack(rp.tableSpace, rp.table)
	// Controls, table and sentences scroll on the left; the chart keeps the right.
	rp.body = container.NewVBox(
		controls, rp.busy, rp.status, rp.attitudeTxt,
		bold("Strategy table"), tableBox, rp.stratNote,
		bold("Dominance"), rp.dominance, caution,
	)
	chartSide := container.NewBorder(nil, container.NewHBox(exportChart, exportTable), nil, nil, rp.chart)
	split := container.NewHSplit(container.NewVScroll(rp.body), chartSide)
	split.Offset = 0.55
	rp.content = split
	rp.syncFromProject()
	rp.ready = true
	return rp
}

func (rp *riskPanel) Title() string { return "Risk profiles" }

func (rp *riskPanel) Content() fyne.CanvasObject { return rp.content }

// Update follows every edit: controls catch up with the project and the
// profiles are recomputed in the background.
func (rp *riskPanel) Update(r *engine.Result) {
	rp.syncFromProject()
	rp.refresh()
}

// syncFromProject refills the node list and shows the project's attitude.
func (rp *riskPanel) syncFromProject() {
	p := rp.host.Project()
	if p == nil {
		return
	}
	options := []string{rootChoice}
	rp.nodeIDs = map[string]string{rootChoice: ""}
	for _, n := range p.Nodes() {
		if n.Kind != engine.Decision || n == p.Root {
			continue
		}
		label := fmt.Sprintf("%s (%s)", engine.NodeTitle(n), n.ID)
		options = append(options, label)
		rp.nodeIDs[label] = n.ID
	}
	selected := rp.nodeSelect.Selected
	rp.nodeSelect.Options = options
	if _, ok := rp.nodeIDs[selected]; !ok {
		selected = rootChoice
	}
	rp.nodeSelect.Selected = selected
	rp.nodeSelect.Refresh()
	if p.Objective == engine.Minimize {
		rp.lossEntry.SetPlaceHolder("a cost above this counts as a loss (empty: not shown)")
	} else {
		rp.lossEntry.SetPlaceHolder("a payoff below this counts as a loss (empty: 0)")
	}
	if p.Risk.Mode == engine.RiskExponential {
		rp.attitude.SetSelected(attitudeExponential)
		rp.rEntry.SetText(p.Risk.Tolerance)
	} else {
		rp.attitude.SetSelected(attitudeNeutral)
	}
}

func (rp *riskPanel) options() (analysis.Options, error) {
	opt := analysis.Options{NodeID: rp.nodeIDs[rp.nodeSelect.Selected], Strategies: rp.strategies.Checked}
	if t := strings.TrimSpace(strings.ReplaceAll(rp.lossEntry.Text, ",", "")); t != "" {
		d, err := decimal.NewFromString(t)
		if err != nil {
			return opt, fmt.Errorf("loss threshold: %q is not a number", rp.lossEntry.Text)
		}
		opt.LossThreshold = &d
	}
	return opt, nil
}

// refresh recomputes the analysis on a clone in the background; a newer
// refresh cancels the older one's hand-back.
func (rp *riskPanel) refresh() {
	p := rp.host.Project()
	if p == nil || !rp.ready {
		return
	}
	opt, err := rp.options()
	if err != nil {
		rp.status.SetText(err.Error())
		return
	}
	clone := p.Clone()
	cumulative := rp.chartKind.Selected == chartCumulative
	rp.busy.Show()
	rp.running.start(rp.background, func(context.Context) func() {
		a, err := analysis.Analyse(clone, opt)
		var img image.Image
		if err == nil {
			plt, cerr := a.ProfileChart(cumulative, nil)
			if cerr == nil {
				img = analysis.ChartImage(plt, chartW, chartH)
			}
		}
		return func() {
			rp.busy.Hide()
			rp.show(a, img, err)
		}
	})
}

func (rp *riskPanel) show(a *analysis.Analysis, img image.Image, err error) {
	defer func() { rp.last = a }() // last, so a reader of rp.last sees a finished panel
	if err != nil {
		rp.status.SetText(err.Error())
		rp.cells = nil
		rp.table.Refresh()
		rp.chart.Image = nil
		rp.chart.Refresh()
		rp.dominance.SetText("")
		rp.attitudeTxt.SetText("")
		rp.body.Refresh()
		return
	}
	rp.status.SetText("")
	rp.attitudeTxt.SetText(a.AttitudeSentence())
	rp.chart.Image = img
	rp.chart.Refresh()
	rp.cells = append([][]string{a.TableHeader()}, a.TableCells()...)
	if len(a.Strategies) > 0 {
		rp.cells = append(rp.cells, []string{fmt.Sprintf("— %d pure strategies —", len(a.Strategies))})
		for _, s := range a.Strategies {
			row := []string{s.Name, a.Format(s.Stats.EV)}
			if a.RiskOn {
				row = append(row, a.Format(s.Stats.CE))
			}
			rp.cells = append(rp.cells, append(row, a.Format(s.Stats.SD), a.Format(s.Stats.Min), a.Format(s.Stats.Max)))
		}
	}
	rp.sizeColumns()
	rp.table.Refresh()
	rp.tableSpace.SetMinSize(fyne.NewSize(400, float32(min(40+38*len(rp.cells), 420))))
	rp.stratNote.SetText(a.StrategyNote)
	rp.dominance.SetText(strings.Join(analysis.DominanceSummary(a.Profiles, a.Dominance), "\n"))
	rp.body.Refresh() // wrapped labels changed height
}

func (rp *riskPanel) tableSize() (int, int) {
	cols := 0
	for _, r := range rp.cells {
		cols = max(cols, len(r))
	}
	return len(rp.cells), cols
}

func (rp *riskPanel) updateCell(id widget.TableCellID, o fyne.CanvasObject) {
	l := o.(*widget.Label)
	text := ""
	if id.Row < len(rp.cells) && id.Col < len(rp.cells[id.Row]) {
		text = rp.cells[id.Row][id.Col]
	}
	l.TextStyle = fyne.TextStyle{Bold: id.Row == 0}
	l.SetText(text)
}

func (rp *riskPanel) sizeColumns() {
	_, cols := rp.tableSize()
	for c := 0; c < cols; c++ {
		w := float32(40)
		for _, r := range rp.cells {
			if c < len(r) {
				w = max(w, fyne.MeasureText(r[c], 14, fyne.TextStyle{Bold: true}).Width+24)
			}
		}
		rp.table.SetColumnWidth(c, min(w, 380))
	}
}

// applyAttitude sets the project's attitude through an undoable edit; a bad R
// is shown beside the field and changes nothing.
func (rp *riskPanel) applyAttitude() {
	risk := engine.RiskAttitude{}
	if rp.attitude.Selected == attitudeExponential {
		risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: strings.TrimSpace(rp.rEntry.Text)}
	}
	if err := rp.host.Apply(analysis.SetRisk{Risk: risk}); err != nil {
		rp.rError.SetText(err.Error())
		return
	}
	rp.rError.SetText("")
}

func (rp *riskPanel) saveDialog(name string, exts []string, write func(path string) error) {
	d := dialog.NewFileSave(func(w fyne.URIWriteCloser, err error) {
		if err != nil || w == nil {
			return
		}
		path := w.URI().Path()
		w.Close()
		if err := write(path); err != nil {
			rp.host.ShowError("Export failed", err)
		}
	}, rp.host.Window())
	d.SetFileName(name)
	d.SetFilter(storage.NewExtensionFileFilter(exts))
	d.Show()
}

func (rp *riskPanel) exportChart() {
	a := rp.last
	if a == nil {
		rp.status.SetText("Nothing to export yet: the profiles are not computed.")
		return
	}
	cumulative := rp.chartKind.Selected == chartCumulative
	rp.saveDialog("risk-profile.png", []string{".png", ".svg", ".pdf"}, func(path string) error {
		return writeProfileChart(a, cumulative, path)
	})
}

// writeProfileChart saves the chart in the format the path's extension names.
func writeProfileChart(a *analysis.Analysis, cumulative bool, path string) error {
	plt, err := a.ProfileChart(cumulative, nil)
	if err != nil {
		return err
	}
	return analysis.SaveChart(plt, path, 0, 0)
}

func (rp *riskPanel) exportTable() {
	a := rp.last
	if a == nil {
		rp.status.SetText("Nothing to export yet: the profiles are not computed.")
		return
	}
	rp.saveDialog("strategy-table.csv", []string{".csv"}, func(path string) error {
		return writeStrategyTable(a, path)
	})
}

// writeStrategyTable saves the strategy table as CSV with exact decimals, atomically.
func writeStrategyTable(a *analysis.Analysis, path string) error {
	return engine.WriteAtomic(path, func(w io.Writer) error { return writeCSV(w, a.CSVRows()) })
}

func writeCSV(w io.Writer, rows [][]string) error {
	cw := csv.NewWriter(w)
	if err := cw.WriteAll(rows); err != nil {
		return err
	}
	cw.Flush()
	return cw.Error()
}
