package ui

import (
	"fyne.io/fyne/v2"

	"github.com/ramify-app/ramify/engine"
)

// Target is a place in the tree: a node (Branch -1) or one of its branches,
// and which field there ("node", "label", "probability", "cash", "payoff", "value").
type Target struct {
	Node   *engine.Node
	Branch int
	Field  string
}

// treeView is what the window needs from the tree drawing.
type treeView interface {
	Object() fyne.CanvasObject
	SetData(p *engine.Project, r *engine.Result)
	Select(t Target)
	SetOnSelect(func(Target))
	SetOnActivate(func(Target))
	ZoomIn()
	ZoomOut()
	ZoomFit()
	FocusNode(n *engine.Node)
	// FieldPosition is where a target is drawn, in the window canvas's
	// coordinates, so the in-place entry can cover it; ok false when hidden.
	FieldPosition(t Target) (pos fyne.Position, size fyne.Size, ok bool)
}

// newTreeView makes the window's tree drawing; replaced in tests when needed.
var newTreeView = func() treeView { return newCanvasView() }
