package ui

import (
	"fyne.io/fyne/v2"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/engine"
)

// canvasView adapts the canvas package's tree widget to the window.
type canvasView struct {
	v *canvas.View
}

func newCanvasView() treeView { return &canvasView{v: canvas.NewView()} }

func toCanvas(t Target) canvas.Target {
	field := t.Field
	switch field {
	case engine.FieldName, engine.FieldNote, "":
		field = canvas.FieldNode
	}
	return canvas.Target{Node: t.Node, Branch: t.Branch, Field: field}
}

func fromCanvas(t canvas.Target) Target {
	return Target{Node: t.Node, Branch: t.Branch, Field: t.Field}
}

func (c *canvasView) Object() fyne.CanvasObject                   { return c.v }
func (c *canvasView) SetData(p *engine.Project, r *engine.Result) { c.v.SetData(p, r) }

// Select highlights t; when SetData has kept the same selection there is
// nothing to do, which saves a second redraw after every edit.
func (c *canvasView) Select(t Target) {
	if ct := toCanvas(t); c.v.Selected() != ct {
		c.v.Select(ct)
	}
}

func (c *canvasView) ZoomIn()                  { c.v.ZoomIn() }
func (c *canvasView) ZoomOut()                 { c.v.ZoomOut() }
func (c *canvasView) ZoomFit()                 { c.v.ZoomFit() }
func (c *canvasView) FocusNode(n *engine.Node) { c.v.FocusNode(n) }

// The view takes the keyboard focus when tapped; the window gives it back to
// the canvas so arrows, Enter, F2, Delete and the editing shortcuts reach the
// editor's key handlers (the view itself only zooms, and the window has those keys too).
func (c *canvasView) releaseFocus() {
	if cv := fyne.CurrentApp().Driver().CanvasForObject(c.v); cv != nil && cv.Focused() == fyne.Focusable(c.v) {
		cv.Unfocus()
	}
}

func (c *canvasView) SetOnSelect(f func(Target)) {
	c.v.OnSelect = func(t canvas.Target) {
		c.releaseFocus()
		if !t.IsZero() {
			f(fromCanvas(t))
		}
	}
}

func (c *canvasView) SetOnActivate(f func(Target)) {
	c.v.OnActivate = func(t canvas.Target) {
		c.releaseFocus()
		if !t.IsZero() {
			f(fromCanvas(t))
		}
	}
}

func (c *canvasView) FieldPosition(t Target) (fyne.Position, fyne.Size, bool) {
	ct := toCanvas(t)
	pos, size, ok := c.v.ScreenRect(ct)
	if !ok {
		return pos, size, false
	}
	// ScreenRect is the whole box of the node (with its branch texts); find the
	// field's own hit region inside it so the entry covers just that text.
	const step = 3
	var lo, hi fyne.Position
	found := false
	for y := pos.Y; y <= pos.Y+size.Height; y += step {
		for x := pos.X; x <= pos.X+size.Width; x += step {
			if got, _ := c.v.TargetAt(fyne.NewPos(x, y)); got == ct {
				if !found {
					lo, hi, found = fyne.NewPos(x, y), fyne.NewPos(x, y), true
				}
				lo = fyne.NewPos(min(lo.X, x), min(lo.Y, y))
				hi = fyne.NewPos(max(hi.X, x), max(hi.Y, y))
			}
		}
	}
	if found {
		pos, size = lo.Subtract(fyne.NewPos(step, step)), fyne.NewSize(hi.X-lo.X+2*step, hi.Y-lo.Y+2*step)
	}
	abs := fyne.CurrentApp().Driver().AbsolutePositionForObject(c.v)
	return abs.Add(pos), size, true
}
