package ui

import (
	"strconv"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

// problemsList shows every validation problem; choosing one selects its place.
type problemsList struct {
	e       *Editor
	list    *widget.List
	content fyne.CanvasObject
}

func newProblemsList(e *Editor) *problemsList {
	pl := &problemsList{e: e}
	pl.list = widget.NewList(
		func() int {
			if e.result == nil {
				return 0
			}
			return len(e.result.Problems)
		},
		func() fyne.CanvasObject {
			l := widget.NewLabel("")
			l.Wrapping = fyne.TextWrapWord
			return l
		},
		func(id widget.ListItemID, o fyne.CanvasObject) {
			if id < len(e.result.Problems) {
				o.(*widget.Label).SetText(e.result.Problems[id].Msg)
			}
		})
	pl.list.OnSelected = func(id widget.ListItemID) {
		pl.list.UnselectAll()
		pl.choose(id)
	}
	pl.content = pl.list
	return pl
}

// choose selects the place of problem id: its node and branch, or the
// variables table for a project-level problem.
func (pl *problemsList) choose(id int) {
	e := pl.e
	if id < 0 || id >= len(e.result.Problems) {
		return
	}
	pr := e.result.Problems[id]
	if pr.NodeID == "" {
		e.side.SelectIndex(1)
		return
	}
	n := e.project.FindNode(pr.NodeID)
	if n == nil {
		return
	}
	t := Target{Node: n, Branch: -1, Field: "node"}
	switch {
	case pr.Branch >= 0 && pr.Branch < len(n.Branches):
		t = Target{Node: n, Branch: pr.Branch, Field: pr.Field}
		if t.Field == "" {
			t.Field = engine.FieldLabel
		}
	case pr.Field == engine.FieldPayoff:
		t.Field = engine.FieldPayoff
	}
	e.setSelection(t)
	e.side.SelectIndex(0)
	e.win.Canvas().Unfocus() // the arrow keys go back to moving the selection
}

func (pl *problemsList) update() {
	pl.list.Refresh()
	if e := pl.e; e.side != nil && len(e.side.Items) > 2 {
		title := "Problems"
		if n := len(e.result.Problems); n > 0 {
			title = "Problems (" + strconv.Itoa(n) + ")"
		}
		if e.side.Items[2].Text != title {
			e.side.Items[2].Text = title
			e.side.Refresh()
		}
	}
}
