package ui

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	RegisterPanel(40, func(h Host) Panel { return newVOIPanel(h) })
	RegisterMenu(MenuEntry{Menu: "Analyse", Label: "Study first…", Order: 40, Action: func(h Host) { showStudyDialog(h) }})
}

// voiPanel shows what learning each uncertainty before the first decision is
// worth (EVPI), or plainly why it cannot be learnt first.
type voiPanel struct {
	host      Host
	anyBranch *widget.Check
	compute   *widget.Button
	status    *widget.Label
	headline  *widget.Label
	rows      *fyne.Container
	content   fyne.CanvasObject
	running   bool
	stale     bool
	// background runs work off the event goroutine; tests may run it inline.
	background func(func())
}

func newVOIPanel(h Host) *voiPanel {
	vp := &voiPanel{host: h, background: func(f func()) { go f() }}
	vp.anyBranch = widget.NewCheck("Count an uncertainty found on only some alternatives as happening whatever is chosen", func(bool) { vp.refresh() })
	vp.compute = widget.NewButton("Compute", vp.refresh)
	vp.status = widget.NewLabel("")
	vp.status.Wrapping = fyne.TextWrapWord
	vp.headline = widget.NewLabel("")
	vp.headline.Wrapping = fyne.TextWrapWord
	vp.rows = container.NewVBox()
	intro := widget.NewLabel("Expected value of perfect information (EVPI): what knowing an outcome before the first decision is worth — the most a perfect forecast could be worth paying for.")
	intro.Wrapping = fyne.TextWrapWord
	caution := widget.NewLabel(engine.Caution)
	caution.Wrapping = fyne.TextWrapWord
	caution.Importance = widget.LowImportance
	study := widget.NewButton("Study first…", func() { showStudyDialog(h) })
	vp.content = container.NewVScroll(container.NewVBox(intro, vp.anyBranch,
		container.NewHBox(vp.compute, study), vp.status, vp.headline, vp.rows, caution))
	vp.stale = true
	return vp
}

func (vp *voiPanel) Title() string              { return "Value of information" }
func (vp *voiPanel) Content() fyne.CanvasObject { return vp.content }

// Update marks the figures out of date; Compute (or the option) recomputes them.
func (vp *voiPanel) Update(*engine.Result) {
	vp.stale = true
	if vp.headline.Text != "" {
		vp.status.SetText("The project has changed; press Compute to update the figures.")
	}
}

func (vp *voiPanel) refresh() {
	p := vp.host.Project()
	if p == nil || vp.running {
		return
	}
	if r := vp.host.Result(); r != nil && !r.Valid() {
		vp.status.SetText(fmt.Sprintf("Fix the project's %d problem(s) first.", len(r.Problems)))
		return
	}
	work := p.Clone()
	opt := analysis.VOIOptions{AnyBranch: vp.anyBranch.Checked}
	vp.running = true
	vp.compute.Disable()
	vp.status.SetText("Computing…")
	vp.background(func() {
		rep, err := analysis.EVPI(work, opt)
		fyne.Do(func() { vp.show(rep, err) })
	})
}

func (vp *voiPanel) show(rep *analysis.VOIReport, err error) {
	vp.running = false
	vp.stale = false
	vp.compute.Enable()
	vp.rows.RemoveAll()
	if err != nil {
		vp.status.SetText(err.Error())
		vp.headline.SetText("")
		return
	}
	vp.status.SetText("")
	gain := "gain"
	if rep.Objective == engine.Minimize {
		gain = "saving"
	}
	text := fmt.Sprintf("%s as it stands: %s.", voiCapital(rep.ValueWord), rep.Format(rep.Without))
	if rep.Whole.Valid {
		text += fmt.Sprintf("\nKnowing everything before the first decision: EVPI %s (%s), value then %s.", rep.Format(rep.Whole.EVPI), gain, rep.Format(rep.Whole.With))
	} else {
		text += "\nKnowing everything first: no figure — " + rep.Whole.Reason
	}
	vp.headline.SetText(text)
	for _, f := range rep.Nodes {
		title := widget.NewLabelWithStyle(fmt.Sprintf("%s (%s)", f.Name, strings.Join(f.NodeIDs, ", ")), fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
		var body *widget.Label
		if f.Valid {
			body = widget.NewLabel(fmt.Sprintf("EVPI %s — knowing it first, the value would be %s.", rep.Format(f.EVPI), rep.Format(f.With)))
		} else {
			body = widget.NewLabel("No figure: " + f.Reason)
		}
		body.Wrapping = fyne.TextWrapWord
		vp.rows.Add(title)
		vp.rows.Add(body)
	}
}

func voiCapital(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}
