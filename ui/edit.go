package ui

import (
	"errors"
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

// The tree-building commands of the Tree and Edit menus and their keys.

// commitPending applies what is typed in a focused field before another edit,
// so a toolbar button or shortcut never throws away half-entered text.
func (e *Editor) commitPending() {
	if ce, ok := e.win.Canvas().Focused().(*commitEntry); ok {
		ce.finish()
	}
}

func (e *Editor) run(c engine.Command, err error, after func()) {
	if err == nil {
		e.commitPending()
		err = e.Apply(c)
	}
	if err != nil {
		e.ShowError(describe(c, "Edit"), err)
		return
	}
	if after != nil {
		after()
		e.view.Select(e.sel)
		e.inspector.show()
	}
}

func describe(c engine.Command, fallback string) string {
	if c == nil {
		return fallback
	}
	return c.Describe()
}

func (e *Editor) selectNode(n *engine.Node) {
	e.sel = Target{Node: n, Branch: -1, Field: "node"}
}

func (e *Editor) addBranch() {
	n := e.selectedNode()
	if n == nil {
		return
	}
	if n.Kind == engine.End { // an end node first becomes a decision with two options
		e.run(&engine.ChangeKind{Node: n, Kind: engine.Decision}, nil, func() { e.selectNode(n.Branches[0].To) })
		return
	}
	e.run(&engine.AddBranch{Node: n, At: -1}, nil, func() { e.selectNode(n.Branches[len(n.Branches)-1].To) })
}

func (e *Editor) addSibling() {
	n := e.selectedNode()
	c, err := engine.NewAddSibling(e.project, n)
	e.run(c, err, func() {
		if parent, i := e.project.Parent(n); parent != nil && i+1 < len(parent.Branches) {
			e.selectNode(parent.Branches[i+1].To)
		}
	})
}

func (e *Editor) changeKind(k engine.Kind) {
	n := e.selectedNode()
	if n == nil || n.Kind == k {
		return
	}
	e.run(&engine.ChangeKind{Node: n, Kind: k}, nil, nil)
}

func (e *Editor) deleteSubtree() {
	n := e.selectedNode()
	parent, _ := e.project.Parent(n)
	c, err := engine.NewDeleteSubtree(e.project, n)
	e.run(c, err, func() { e.selectNode(parent) })
}

func (e *Editor) moveBranch(delta int) {
	n := e.selectedNode()
	parent, i := e.project.Parent(n)
	if parent == nil {
		return
	}
	e.run(&engine.MoveBranch{Node: parent, From: i, To: i + delta}, nil, func() { e.selectNode(n) })
}

func (e *Editor) setCollapsed(collapsed bool) {
	n := e.selectedNode()
	if n == nil || n.Collapsed == collapsed || len(n.Branches) == 0 {
		return
	}
	e.run(&engine.SetCollapsed{Node: n, Collapsed: collapsed}, nil, func() { e.selectNode(n) })
}

func (e *Editor) undo() {
	e.commitPending()
	sel, ok, err := e.history.Undo(e.project, e.sel)
	e.afterReplay(sel, ok, err, "Undo")
}

func (e *Editor) redo() {
	e.commitPending()
	sel, ok, err := e.history.Redo(e.project, e.sel)
	e.afterReplay(sel, ok, err, "Redo")
}

func (e *Editor) afterReplay(sel any, ok bool, err error, what string) {
	if err != nil {
		e.ShowError(what, err)
	}
	if !ok {
		return
	}
	if t, isTarget := sel.(Target); isTarget {
		e.sel = t
	}
	e.refresh()
}

// ---- moving the selection ----

func (e *Editor) moveSelection(key fyne.KeyName) {
	n := e.selectedNode()
	if n == nil {
		return
	}
	parent, i := e.project.Parent(n)
	switch key {
	case fyne.KeyLeft:
		if parent != nil {
			e.setSelection(Target{Node: parent, Branch: -1, Field: "node"})
		}
	case fyne.KeyRight:
		if len(n.Branches) > 0 && !n.Collapsed {
			c := 0
			if ch := e.result.Choice(n); ch >= 0 {
				c = ch
			}
			e.setSelection(Target{Node: n.Branches[c].To, Branch: -1, Field: "node"})
		}
	case fyne.KeyUp:
		if parent != nil && i > 0 {
			e.setSelection(Target{Node: parent.Branches[i-1].To, Branch: -1, Field: "node"})
		}
	case fyne.KeyDown:
		if parent != nil && i+1 < len(parent.Branches) {
			e.setSelection(Target{Node: parent.Branches[i+1].To, Branch: -1, Field: "node"})
		}
	}
}

// ---- clipboard ----

func (e *Editor) clipboard() fyne.Clipboard { return e.app.Clipboard() }

func (e *Editor) copySubtree() bool {
	n := e.selectedNode()
	data, err := engine.MarshalSubtree(e.project, n)
	if err != nil {
		e.ShowError("Copy", err)
		return false
	}
	e.clipboard().SetContent(string(data))
	return true
}

func (e *Editor) cutSubtree() {
	if _, err := engine.NewDeleteSubtree(e.project, e.selectedNode()); err != nil {
		e.ShowError("Cut", err)
		return
	}
	if e.copySubtree() {
		e.deleteSubtree()
	}
}

func (e *Editor) pasteSubtree() {
	text := e.clipboard().Content()
	if text == "" {
		e.ShowError("Paste", errors.New("the clipboard is empty; copy a subtree first"))
		return
	}
	clip, err := engine.Parse([]byte(text), "clipboard")
	if err != nil {
		e.ShowError("Paste", err)
		return
	}
	target := e.selectedNode()
	c, err := engine.NewPaste(e.project, target, clip)
	e.run(c, err, func() {
		if target.Kind == engine.End { // replaced: select what took its place
			return
		}
		e.selectNode(target.Branches[len(target.Branches)-1].To)
	})
}

func (e *Editor) duplicateSubtree() {
	n := e.selectedNode()
	c, err := engine.NewDuplicate(e.project, n)
	e.run(c, err, func() {
		if parent, i := e.project.Parent(n); parent != nil {
			e.selectNode(parent.Branches[i+1].To)
		}
	})
}

// ---- fields ----

// fieldText is the current text of a target's field.
func fieldText(t Target) string {
	n := t.Node
	if t.Branch >= 0 && t.Branch < len(n.Branches) {
		b := n.Branches[t.Branch]
		switch t.Field {
		case engine.FieldProbability:
			return b.Probability
		case engine.FieldCash:
			return b.Cash
		default:
			return b.Label
		}
	}
	switch t.Field {
	case engine.FieldPayoff:
		return n.Payoff
	case engine.FieldNote:
		return n.Note
	}
	return n.Name
}

// fieldCommand makes the edit that sets a target's field to text.
func fieldCommand(t Target, text string) engine.Command {
	n := t.Node
	if t.Branch >= 0 && t.Branch < len(n.Branches) {
		field := t.Field
		if field != engine.FieldProbability && field != engine.FieldCash {
			field = engine.FieldLabel
		}
		return &engine.SetBranchField{Node: n, Branch: t.Branch, Field: field, Value: text}
	}
	field := engine.FieldName
	if t.Field == engine.FieldPayoff || t.Field == engine.FieldNote {
		field = t.Field
	}
	return &engine.SetNodeField{Node: n, Field: field, Value: text}
}

// editableTarget maps a click on a computed value to a field that can be typed:
// an end node's value is its payoff; any other value or node edits the name.
func editableTarget(t Target) Target {
	if t.Field == "value" || t.Field == "node" || t.Field == "" {
		if t.Branch < 0 && t.Node.Kind == engine.End && t.Field == "value" {
			return Target{Node: t.Node, Branch: -1, Field: engine.FieldPayoff}
		}
		if t.Branch < 0 {
			return Target{Node: t.Node, Branch: -1, Field: engine.FieldName}
		}
		return Target{Node: t.Node, Branch: t.Branch, Field: engine.FieldLabel}
	}
	return t
}

// editInPlace opens an entry over the target; Enter commits, Escape cancels.
// An invalid formula keeps the entry open with the error under it.
func (e *Editor) editInPlace(t Target) {
	if t.Node == nil {
		return
	}
	t = editableTarget(t)
	e.closeInPlace()
	entry := newEditEntry()
	entry.SetText(fieldText(t))
	errText := canvas.NewText("", theme.Color(theme.ColorNameError))
	errText.TextSize = theme.CaptionTextSize()
	caption := canvas.NewText(fieldCaption(t), theme.Color(theme.ColorNameForeground))
	caption.TextSize = theme.CaptionTextSize()
	box := container.NewVBox(caption, entry, errText)
	pop := widget.NewPopUp(box, e.win.Canvas())
	entry.onEscape = e.closeInPlace
	entry.OnSubmitted = func(text string) {
		if text == fieldText(t) {
			e.closeInPlace()
			return
		}
		if err := e.Apply(fieldCommand(t, text)); err != nil {
			errText.Text = err.Error()
			errText.Refresh()
			pop.Resize(fyne.NewSize(max(pop.Size().Width, errText.MinSize().Width+theme.Padding()*4), box.MinSize().Height+theme.Padding()*2))
			return
		}
		e.closeInPlace()
	}
	pos, size, ok := e.view.FieldPosition(t)
	if !ok {
		pos = fyne.NewPos(40, 60)
		size = fyne.NewSize(200, entry.MinSize().Height)
	}
	width := max(size.Width+40, caption.MinSize().Width+theme.Padding()*4, 260)
	// Put the entry itself (below the caption) across the middle of the field.
	pad := theme.Padding()
	y := pos.Y + size.Height/2 - entry.MinSize().Height/2 - caption.MinSize().Height - 2*pad
	pop.ShowAtPosition(fyne.NewPos(max(0, pos.X-pad), max(0, y)))
	pop.Resize(fyne.NewSize(width, box.MinSize().Height+theme.Padding()*2))
	e.inplace, e.inplaceEntry = pop, entry
	e.win.Canvas().Focus(entry)
}

// fieldCaption says what the in-place entry edits: "Probability of branch "Late"".
func fieldCaption(t Target) string {
	if t.Branch >= 0 && t.Branch < len(t.Node.Branches) {
		return fmt.Sprintf("%s of branch %q (Enter to apply, Escape to cancel)", strings.ToUpper(t.Field[:1])+t.Field[1:], engine.BranchTitle(t.Node, t.Branch))
	}
	return fmt.Sprintf("%s of node %q (Enter to apply, Escape to cancel)", strings.ToUpper(t.Field[:1])+t.Field[1:], engine.NodeTitle(t.Node))
}

func (e *Editor) closeInPlace() {
	if e.inplace != nil {
		e.inplace.Hide()
		e.inplace, e.inplaceEntry = nil, nil
		e.win.Canvas().Unfocus()
	}
}

// inPlaceEntry returns the open in-place entry, or nil (for tests).
func (e *Editor) inPlaceEntry() *editEntry { return e.inplaceEntry }

// editEntry is an Entry that reports Escape.
type editEntry struct {
	widget.Entry
	onEscape func()
}

func newEditEntry() *editEntry {
	en := &editEntry{}
	en.ExtendBaseWidget(en)
	return en
}

func (en *editEntry) TypedKey(k *fyne.KeyEvent) {
	if k.Name == fyne.KeyEscape && en.onEscape != nil {
		en.onEscape()
		return
	}
	en.Entry.TypedKey(k)
}
