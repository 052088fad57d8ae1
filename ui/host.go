// Package ui wires Fyne widgets, menus and dialogs to engine commands. It holds
// no decision maths: every number comes from engine or its analyses.
package ui

import (
	"sort"

	"fyne.io/fyne/v2"

	"github.com/ramify-app/ramify/engine"
)

// Host is what the main window offers to panels and dialogs that live in
// their own files: the current project, its evaluation and a way to edit it.
type Host interface {
	Window() fyne.Window
	Project() *engine.Project
	Result() *engine.Result
	// Apply runs an undoable edit, re-evaluates and redraws; errors are returned,
	// not shown, so the caller can put them next to its field.
	Apply(c engine.Command) error
	// SelectedNode is the node selected on the canvas, or nil.
	SelectedNode() *engine.Node
	// SelectNode selects a node on the canvas and scrolls it into view.
	SelectNode(n *engine.Node)
	// ShowError reports a failure in a dialog naming what failed.
	ShowError(title string, err error)
}

// Panel is one tab of the analysis area beside the canvas.
type Panel interface {
	Title() string
	Content() fyne.CanvasObject
	// Update is called after every change to the project; expensive panels only
	// mark themselves stale here and recompute when asked.
	Update(r *engine.Result)
}

type panelEntry struct {
	order int
	make  func(Host) Panel
}

// MenuEntry is a command an analysis adds to one of the window's menus.
type MenuEntry struct {
	Menu     string // "Analyse", "View", "File", ...
	Label    string
	Shortcut fyne.Shortcut // optional
	Order    int
	Action   func(Host)
}

var (
	panels      []panelEntry
	menuEntries []MenuEntry
)

// RegisterPanel adds an analysis panel; call it from an init function. Lower order comes first.
func RegisterPanel(order int, make func(Host) Panel) {
	panels = append(panels, panelEntry{order, make})
	sort.SliceStable(panels, func(i, j int) bool { return panels[i].order < panels[j].order })
}

// RegisterMenu adds a menu command; call it from an init function.
func RegisterMenu(e MenuEntry) {
	menuEntries = append(menuEntries, e)
	sort.SliceStable(menuEntries, func(i, j int) bool { return menuEntries[i].Order < menuEntries[j].Order })
}

// runInBackground starts long work off the event goroutine; panels take it as
// their default runner. Tests swap in an inline runner, because Fyne's test
// driver runs fyne.Do on the calling goroutine rather than on one event loop.
var runInBackground = func(f func()) { go f() }
