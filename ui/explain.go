package ui

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

func init() {
	RegisterMenu(MenuEntry{Menu: "View", Label: "Explain value", Order: 50,
		Shortcut: &desktop.CustomShortcut{KeyName: fyne.KeyE, Modifier: fyne.KeyModifierShortcutDefault | fyne.KeyModifierShift},
		Action:   func(h Host) { ShowExplain(h, h.SelectedNode()) }})
}

// ShowExplain opens the arithmetic behind n's value (the root's when n is nil).
// The window calls it when a value on the tree is double-clicked.
func ShowExplain(h Host, n *engine.Node) {
	p, r := h.Project(), h.Result()
	if p == nil || r == nil || p.Root == nil {
		return
	}
	if n == nil {
		n = p.Root
	}
	e, err := engine.Explain(r, n)
	if err != nil {
		h.ShowError("Explain value", err)
		return
	}
	d := dialog.NewCustom("Explain value", "Close", explainContent(h, e), h.Window())
	d.Resize(fyne.NewSize(880, 480))
	d.Show()
}

// explainTarget is the node a term's link selects: the node its branch leads
// to, or the end node itself for an end payoff.
func explainTarget(p *engine.Project, t engine.ExplainTerm) *engine.Node {
	n := p.FindNode(t.Node)
	if n == nil || t.Branch < 0 || t.Branch >= len(n.Branches) {
		return n
	}
	return n.Branches[t.Branch].To
}

// explainContent lays the explanation out: the headline, one link per term
// (clicking selects its branch on the tree), then the full arithmetic.
func explainContent(h Host, e *engine.Explanation) fyne.CanvasObject {
	p := h.Project()
	head := widget.NewLabelWithStyle(e.Lines[0], fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	head.Wrapping = fyne.TextWrapWord
	terms := container.NewVBox()
	for _, t := range e.Terms {
		text := t.Label + ":  " + t.Text
		if t.Chosen {
			text += "   ← chosen"
		}
		t := t
		link := widget.NewButton(text, func() {
			if n := explainTarget(p, t); n != nil {
				h.SelectNode(n)
			}
		})
		link.Alignment = widget.ButtonAlignLeading
		link.Importance = widget.LowImportance
		terms.Add(link)
	}
	lines := container.NewVBox()
	for _, line := range e.Lines {
		l := widget.NewLabelWithStyle(line, fyne.TextAlignLeading, fyne.TextStyle{Monospace: true})
		lines.Add(l)
	}
	copyText := widget.NewButton("Copy the arithmetic", func() {
		fyne.CurrentApp().Clipboard().SetContent(e.Text())
	})
	body := container.NewVBox(head, widget.NewLabel("Terms (click one to select its branch):"), terms,
		widget.NewSeparator(), lines)
	return container.NewBorder(nil, container.NewHBox(copyText), nil, nil, container.NewScroll(body))
}
