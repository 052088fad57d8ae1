package ui

import (
	"fmt"
	"math"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

// studyForm guides the user through a study (test, survey, pilot) before a
// decision: which uncertainty it informs, its possible results, how reliable it
// is (P(result | state)) and what it costs. Preview shows the figures; Add puts a
// real, editable "study first" alternative into the tree as one undoable edit.
type studyForm struct {
	host        Host
	decision    *widget.Select
	decisionIDs map[string]string
	informs     *widget.Select
	informsIDs  map[string]string
	count       *widget.Select
	names       []*widget.Entry
	like        [][]*widget.Entry
	grid        *fyne.Container
	cost        *widget.Entry
	label       *widget.Entry
	anyBranch   *widget.Check
	output      *widget.Label
	content     fyne.CanvasObject
	states      []string
}

func newStudyForm(h Host) *studyForm {
	f := &studyForm{host: h, decisionIDs: map[string]string{}, informsIDs: map[string]string{}}
	f.grid = container.NewVBox()
	f.output = widget.NewLabel("")
	f.output.Wrapping = fyne.TextWrapWord
	f.informs = widget.NewSelect(nil, func(string) { f.rebuildGrid() })
	f.count = widget.NewSelect([]string{"2", "3", "4", "5"}, func(string) { f.rebuildGrid() })
	f.cost = widget.NewEntry()
	f.cost.SetPlaceHolder("the study's cost, e.g. 5000 (a formula may use variables)")
	f.label = widget.NewEntry()
	f.label.SetText("Study first")
	f.anyBranch = widget.NewCheck("Count an uncertainty on only some alternatives as happening whatever is chosen (for EVPI)", nil)
	var decisions []string
	var preferred string
	p := h.Project()
	if p != nil {
		sel := h.SelectedNode()
		for _, n := range p.Nodes() {
			if n.Kind != engine.Decision {
				continue
			}
			label := fmt.Sprintf("%s (%s)", engine.NodeTitle(n), n.ID)
			f.decisionIDs[label] = n.ID
			decisions = append(decisions, label)
			if sel == n || preferred == "" {
				preferred = label
			}
		}
	}
	f.decision = widget.NewSelect(decisions, func(string) { f.rebuildInforms() })
	preview := widget.NewButton("Preview", f.preview)
	add := widget.NewButton("Add to the tree", f.add)
	add.Importance = widget.HighImportance
	intro := widget.NewLabel("A study reports one of a few results before the decision. Enter how likely each result is in each state: P(result | state). Each state's column must add up to 1.")
	intro.Wrapping = fyne.TextWrapWord
	form := widget.NewForm(
		widget.NewFormItem("Before decision", f.decision),
		widget.NewFormItem("It informs", f.informs),
		widget.NewFormItem("Possible results", f.count),
		widget.NewFormItem("Cost", f.cost),
		widget.NewFormItem("Alternative's label", f.label),
	)
	f.content = container.NewVScroll(container.NewVBox(intro, form, f.grid, f.anyBranch,
		container.NewHBox(preview, add), f.output))
	f.count.SetSelected("2")
	if preferred != "" {
		f.decision.SetSelected(preferred)
	} else {
		f.output.SetText("The project has no decision node for a study to come before.")
	}
	return f
}

func (f *studyForm) decisionNode() *engine.Node {
	p := f.host.Project()
	if p == nil {
		return nil
	}
	return p.FindNode(f.decisionIDs[f.decision.Selected])
}

func (f *studyForm) rebuildInforms() {
	d := f.decisionNode()
	f.informsIDs = map[string]string{}
	var options []string
	if d != nil {
		for _, u := range analysis.FindUncertainties(d) {
			ids := make([]string, len(u.Nodes))
			for i, n := range u.Nodes {
				ids[i] = n.ID
			}
			label := fmt.Sprintf("%s (%s)", u.Name, strings.Join(ids, ", "))
			f.informsIDs[label] = u.Nodes[0].ID
			options = append(options, label)
		}
	}
	f.informs.Options = options
	f.informs.ClearSelected()
	if len(options) > 0 {
		f.informs.SetSelected(options[0])
	} else {
		f.output.SetText("No chance node comes after this decision, so there is nothing for a study to inform.")
		f.rebuildGrid()
	}
}

func (f *studyForm) rebuildGrid() {
	if f.grid == nil || f.count == nil {
		return
	}
	f.states = nil
	if p := f.host.Project(); p != nil {
		if n := p.FindNode(f.informsIDs[f.informs.Selected]); n != nil {
			for i := range n.Branches {
				f.states = append(f.states, engine.BranchTitle(n, i))
			}
		}
	}
	results := 2
	fmt.Sscan(f.count.Selected, &results)
	defaults := []string{"Favourable", "Unfavourable", "Unclear", "Result 4", "Result 5"}
	oldNames, oldLike := f.names, f.like
	f.names = make([]*widget.Entry, results)
	f.like = make([][]*widget.Entry, results)
	grid := container.NewGridWithColumns(1 + len(f.states))
	grid.Add(widget.NewLabelWithStyle("Result", fyne.TextAlignLeading, fyne.TextStyle{Bold: true}))
	for _, s := range f.states {
		l := widget.NewLabelWithStyle("if "+s, fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
		l.Truncation = fyne.TextTruncateEllipsis
		grid.Add(l)
	}
	for r := 0; r < results; r++ {
		e := widget.NewEntry()
		e.SetText(defaults[r])
		if r < len(oldNames) {
			e.SetText(oldNames[r].Text)
		}
		f.names[r] = e
		grid.Add(e)
		f.like[r] = make([]*widget.Entry, len(f.states))
		for s := range f.states {
			c := widget.NewEntry()
			c.SetPlaceHolder("P")
			if r < len(oldLike) && s < len(oldLike[r]) {
				c.SetText(oldLike[r][s].Text)
			}
			f.like[r][s] = c
			grid.Add(c)
		}
	}
	f.grid.RemoveAll()
	f.grid.Add(grid)
}

func (f *studyForm) spec() analysis.StudySpec {
	s := analysis.StudySpec{DecisionID: f.decisionIDs[f.decision.Selected], NodeID: f.informsIDs[f.informs.Selected],
		Cost: strings.TrimSpace(f.cost.Text), Label: strings.TrimSpace(f.label.Text)}
	for r, e := range f.names {
		s.Results = append(s.Results, strings.TrimSpace(e.Text))
		var row []string
		for _, c := range f.like[r] {
			row = append(row, strings.TrimSpace(c.Text))
		}
		s.Likelihood = append(s.Likelihood, row)
	}
	return s
}

func (f *studyForm) plan() (*analysis.StudyPlan, error) {
	p := f.host.Project()
	if p == nil {
		return nil, fmt.Errorf("no project is open")
	}
	return analysis.PlanStudy(p, f.spec(), analysis.VOIOptions{AnyBranch: f.anyBranch.Checked})
}

func (f *studyForm) preview() {
	plan, err := f.plan()
	if err != nil {
		f.output.SetText(err.Error())
		return
	}
	f.output.SetText(studyText(plan))
}

func (f *studyForm) add() {
	plan, err := f.plan()
	if err != nil {
		f.output.SetText(err.Error())
		return
	}
	if err := f.host.Apply(plan.Command); err != nil {
		f.output.SetText(err.Error())
		return
	}
	f.output.SetText(fmt.Sprintf("Added %q at %q; Undo takes it out again. Edit it like any other branch.\n\n%s",
		plan.Command.Describe(), engine.NodeTitle(plan.Decision), studyText(plan)))
}

func studyText(plan *analysis.StudyPlan) string {
	var b strings.Builder
	for ri, name := range plan.Results {
		fmt.Fprintf(&b, "P(%s) = %s", name, engine.FormatProbability(plan.Bayes.PResult[ri]))
		if row := plan.Bayes.Posterior[ri]; row != nil {
			var parts []string
			for si, v := range row {
				parts = append(parts, fmt.Sprintf("%s %s", plan.States[si], engine.FormatProbability(v)))
			}
			fmt.Fprintf(&b, "; after it: %s", strings.Join(parts, ", "))
		} else {
			b.WriteString("; it cannot happen, so it gets no branch")
		}
		b.WriteString("\n")
	}
	fmt.Fprintf(&b, "Value with the study before its cost: %s (without it: %s)\n", plan.Format(plan.With), plan.Format(plan.Without))
	fmt.Fprintf(&b, "EVSI (expected value of sample information): %s\n", plan.Format(plan.EVSI))
	fmt.Fprintf(&b, "Cost %s, net value after cost %s\n", plan.Format(plan.Cost), plan.Format(plan.Net))
	fmt.Fprintf(&b, "Most worth paying for this study: %s\n", plan.Format(plan.MostWorth))
	switch {
	case !math.IsNaN(plan.Efficiency):
		fmt.Fprintf(&b, "Efficiency EVSI / EVPI: %.1f %% (EVPI %s)", 100*plan.Efficiency, plan.Format(plan.EVPI.EVPI))
	case plan.EVPI.Valid:
		fmt.Fprintf(&b, "EVPI is %s, so no study can be worth anything here.", plan.Format(plan.EVPI.EVPI))
	default:
		fmt.Fprintf(&b, "Efficiency: no figure, %s", plan.EVPI.Reason)
	}
	return b.String()
}

func showStudyDialog(h Host) {
	if h.Project() == nil {
		return
	}
	f := newStudyForm(h)
	d := dialog.NewCustom("Study first", "Close", f.content, h.Window())
	d.Resize(fyne.NewSize(720, 620))
	d.Show()
}
