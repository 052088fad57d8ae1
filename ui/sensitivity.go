package ui

import (
	"fmt"
	"image"
	"io"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	fcanvas "fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"
	"github.com/shopspring/decimal"
	"gonum.org/v1/plot"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

// Sensitivity analysis in the window: three panels ("One input", "Tornado",
// "Two inputs") and a View menu toggle for the break-even notes on the canvas.
// All maths lives in engine/analysis; these files only collect inputs, run the
// work off the event goroutine on a clone, and show charts and tables.

func init() {
	RegisterPanel(40, func(h Host) Panel { return newSweepPanel(h) })
	RegisterPanel(41, func(h Host) Panel { return newTornadoPanel(h) })
	RegisterPanel(42, func(h Host) Panel { return newRegionsPanel(h) })
	RegisterMenu(MenuEntry{Menu: "View", Label: "Show break-even notes", Order: 40, Action: toggleBreakEvenNotes})
}

// ViewOptionsHost is implemented by a host whose canvas takes view options. It is
// kept out of Host so windows without it still build; the notes toggle needs it.
type ViewOptionsHost interface {
	ViewOptions() canvas.Options
	SetViewOptions(canvas.Options)
}

// notesState remembers, per host, whether notes are on and the notes computed
// for the last result, so they are recomputed once per edit and not per draw.
type notesState struct {
	on     bool
	result *engine.Result
	notes  map[*engine.Node][]string
}

var breakEvenNotes = map[Host]*notesState{}

func toggleBreakEvenNotes(h Host) {
	vh, ok := h.(ViewOptionsHost)
	if !ok {
		h.ShowError("Show break-even notes", fmt.Errorf("this window's canvas does not take view options yet"))
		return
	}
	st := breakEvenNotes[h]
	if st == nil {
		st = &notesState{}
		breakEvenNotes[h] = st
	}
	st.on = !st.on
	opts := vh.ViewOptions()
	if st.on {
		opts.NoteFunc = noteFunc(h, st)
	} else {
		opts.NoteFunc = nil
	}
	vh.SetViewOptions(opts)
}

// noteFunc gives the canvas the break-even note of branch i of n, computing the
// notes again whenever the host's result has changed (after each edit).
func noteFunc(h Host, st *notesState) func(n *engine.Node, branch int) []string {
	return func(n *engine.Node, branch int) []string {
		if n == nil || branch < 0 || branch >= len(n.Branches) {
			return nil
		}
		if r := h.Result(); r != st.result {
			st.result = r
			st.notes = analysis.BreakEvenNotes(h.Project(), r)
		}
		return st.notes[n.Branches[branch].To]
	}
}

// inputChoice is one entry of an input picker.
type inputChoice struct {
	label string
	in    analysis.Input
}

// inputChoices lists the variables, then each chance branch's probability, each
// branch cash that is set and each end payoff, with readable labels.
func inputChoices(p *engine.Project, withFields bool) []inputChoice {
	var out []inputChoice
	if p == nil {
		return out
	}
	for _, v := range p.Variables {
		label := v.Name
		if strings.TrimSpace(v.Low) != "" && strings.TrimSpace(v.High) != "" {
			label += fmt.Sprintf("  (%s to %s)", v.Low, v.High)
		}
		out = append(out, inputChoice{label, analysis.VariableInput(v.Name)})
	}
	if !withFields {
		return out
	}
	const most = 2000
	engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
		if n.Kind == engine.End && strings.TrimSpace(n.Payoff) != "" && len(out) < most {
			out = append(out, inputChoice{fmt.Sprintf("%s: payoff (type a range)", engine.NodeTitle(n)),
				analysis.FieldInput(n.ID, -1, analysis.FieldPayoff)})
		}
		for i, b := range n.Branches {
			if len(out) >= most {
				return false
			}
			if n.Kind == engine.Chance {
				out = append(out, inputChoice{fmt.Sprintf("%s › %s: probability", engine.NodeTitle(n), engine.BranchTitle(n, i)),
					analysis.FieldInput(n.ID, i, analysis.FieldProbability)})
			}
			if strings.TrimSpace(b.Cash) != "" {
				out = append(out, inputChoice{fmt.Sprintf("%s › %s: cash (type a range)", engine.NodeTitle(n), engine.BranchTitle(n, i)),
					analysis.FieldInput(n.ID, i, analysis.FieldCash)})
			}
		}
		return true
	})
	// Nodes may share a name: make every label unique with the node's id.
	count := map[string]int{}
	for _, c := range out {
		count[c.label]++
	}
	for i, c := range out {
		if count[c.label] > 1 && !c.in.IsVariable() {
			out[i].label = fmt.Sprintf("%s [node %s]", c.label, c.in.NodeID)
		}
	}
	return out
}

func choiceLabels(cs []inputChoice) []string {
	out := make([]string, len(cs))
	for i, c := range cs {
		out[i] = c.label
	}
	return out
}

func findChoice(cs []inputChoice, label string) (analysis.Input, bool) {
	for _, c := range cs {
		if c.label == label {
			return c.in, true
		}
	}
	return analysis.Input{}, false
}

// decisionChoices lists the decision nodes, root first, as "title (id)".
func decisionChoices(p *engine.Project) ([]string, []string) {
	var labels, ids []string
	if p == nil {
		return labels, ids
	}
	engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
		if n.Kind == engine.Decision {
			labels = append(labels, fmt.Sprintf("%s (%s)", engine.NodeTitle(n), n.ID))
			ids = append(ids, n.ID)
		}
		return true
	})
	return labels, ids
}

// typedRange reads a range from two entries; both empty means the input's own range.
func typedRange(from, to string, r *engine.Result) (*analysis.Range, error) {
	from, to = strings.TrimSpace(from), strings.TrimSpace(to)
	if from == "" && to == "" {
		return nil, nil
	}
	if from == "" || to == "" {
		return nil, fmt.Errorf("give both ends of the range, or neither to use the input's own")
	}
	var ends [2]decimal.Decimal
	for i, src := range []string{from, to} {
		f, err := engine.ParseFormula(src)
		if err == nil {
			var env engine.MapEnv
			if r != nil {
				env = r.Vars
			}
			ends[i], err = f.Eval(env)
		}
		if err != nil {
			return nil, fmt.Errorf("%s %q: %w", []string{"from", "to"}[i], src, err)
		}
	}
	return &analysis.Range{Low: ends[0], High: ends[1]}, nil
}

// chartBox shows a rendered chart and keeps the plot for export.
type chartBox struct {
	img  *fcanvas.Image
	plot *plot.Plot
}

// Chart pictures are rendered at this size and scaled to fit the panel.
const chartPxW, chartPxH = 700, 450

func newChartBox() *chartBox {
	img := fcanvas.NewImageFromImage(image.NewRGBA(image.Rect(0, 0, 1, 1)))
	img.FillMode = fcanvas.ImageFillContain
	img.SetMinSize(fyne.NewSize(420, 270))
	return &chartBox{img: img}
}

func (c *chartBox) show(p *plot.Plot, img image.Image) {
	c.plot = p
	c.img.Image = img
	c.img.Refresh()
}

// saveChartDialog asks for a file name and writes the chart by its extension.
func saveChartDialog(h Host, title string, p *plot.Plot, name string) {
	if p == nil {
		h.ShowError(title, fmt.Errorf("nothing to save yet; run the analysis first"))
		return
	}
	askPathAndSave(h, title, name, func(path string) error { return analysis.SaveSensitivityChart(p, path) })
}

// saveCSVDialog asks for a file name and writes a table as CSV.
func saveCSVDialog(h Host, title string, write func(io.Writer) error, name string) {
	if write == nil {
		h.ShowError(title, fmt.Errorf("nothing to save yet; run the analysis first"))
		return
	}
	askPathAndSave(h, title, name, func(path string) error {
		if !strings.EqualFold(filepath.Ext(path), ".csv") {
			path += ".csv"
		}
		return engine.WriteAtomic(path, write)
	})
}

// textTable is a read-only table with a header row.
type textTable struct {
	rows  [][]string
	table *widget.Table
}

func newTextTable() *textTable {
	t := &textTable{}
	t.table = widget.NewTable(
		func() (int, int) {
			if len(t.rows) == 0 {
				return 0, 0
			}
			return len(t.rows), len(t.rows[0])
		},
		func() fyne.CanvasObject { return widget.NewLabel("") },
		func(id widget.TableCellID, o fyne.CanvasObject) {
			l := o.(*widget.Label)
			if id.Row < len(t.rows) && id.Col < len(t.rows[id.Row]) {
				l.SetText(t.rows[id.Row][id.Col])
				l.TextStyle.Bold = id.Row == 0
			}
		})
	return t
}

func (t *textTable) set(rows [][]string) {
	t.rows = rows
	// Columns as wide as their longest text (header and the first rows), within limits.
	if len(rows) > 0 {
		for c := range rows[0] {
			longest := 0
			for r := 0; r < len(rows) && r < 50; r++ {
				if c < len(rows[r]) && len([]rune(rows[r][c])) > longest {
					longest = len([]rune(rows[r][c]))
				}
			}
			w := float32(longest)*7.5 + 24
			w = max(60, min(w, 300))
			t.table.SetColumnWidth(c, w)
		}
	}
	t.table.Refresh()
}

// resultsArea lays out a chart beside its notes and table.
func resultsArea(chart *chartBox, notes fyne.CanvasObject, table *textTable) fyne.CanvasObject {
	right := container.NewBorder(notes, nil, nil, nil, table.table)
	split := container.NewHSplit(chart.img, right)
	split.Offset = 0.58
	return split
}

// caution is the decision-aid caution shown under each panel.
func caution() *widget.Label {
	l := widget.NewLabel(engine.Caution)
	l.Wrapping = fyne.TextWrapWord
	l.Importance = widget.LowImportance
	return l
}
