package ui

import (
	"fmt"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

// Editor is one main window editing one project. It implements Host.
type Editor struct {
	app fyne.App
	win fyne.Window

	project *engine.Project
	result  *engine.Result
	history engine.History
	path    string // file on disk; "" until saved
	name    string // shown in the title when there is no path (a demo, "Untitled")
	dirty   bool   // changed outside the history (restored from recovery)
	sel     Target

	view         treeView
	inspector    *inspector
	variables    *variablesTable
	problems     *problemsList
	status       *widget.Label
	side         *container.AppTabs
	analysis     *container.AppTabs
	panels       []Panel
	buttons      map[string]*widget.Button
	menu         *fyne.MainMenu
	undoItem     *fyne.MenuItem
	redoItem     *fyne.MenuItem
	recent       *fyne.MenuItem
	inplace      *widget.PopUp
	inplaceEntry *editEntry

	// writeFile saves bytes to a path; tests inject failures here.
	writeFile    func(path string, data []byte) error
	recoveryDir  string
	stopAutosave chan struct{}
}

// NewEditor builds the main window's content, menus and shortcuts into win and
// opens p (path is "" for a project not on disk; name then titles the window).
func NewEditor(a fyne.App, win fyne.Window, p *engine.Project, path, name string) *Editor {
	e := &Editor{app: a, win: win, buttons: map[string]*widget.Button{},
		writeFile: func(path string, data []byte) error { return engine.WriteFileAtomic(path, data, true) }}
	e.recoveryDir = defaultRecoveryDir(a)
	e.view = newTreeView()
	e.view.SetOnSelect(func(t Target) { e.setSelection(t) })
	e.view.SetOnActivate(func(t Target) {
		e.setSelection(t)
		if t.Field == "value" { // a rolled-back value is computed, not typed: explain it
			ShowExplain(e, t.Node)
			return
		}
		e.editInPlace(t)
	})
	e.inspector = newInspector(e)
	e.variables = newVariablesTable(e)
	e.problems = newProblemsList(e)
	e.status = widget.NewLabel("")
	e.status.Truncation = fyne.TextTruncateEllipsis

	e.side = container.NewAppTabs(
		container.NewTabItem("Selection", container.NewVScroll(e.inspector.content)),
		container.NewTabItem("Variables", e.variables.content),
		container.NewTabItem("Problems", e.problems.content),
	)
	centre := container.NewHSplit(e.view.Object(), e.side)
	centre.Offset = 0.62
	main := fyne.CanvasObject(centre)
	for _, pe := range panels {
		panel := pe.make(e)
		e.panels = append(e.panels, panel)
	}
	if len(e.panels) > 0 {
		e.analysis = container.NewAppTabs()
		for _, panel := range e.panels {
			// A scroll around each panel lets the split give the tree most of the height.
			e.analysis.Append(container.NewTabItem(panel.Title(), container.NewScroll(panel.Content())))
		}
		split := container.NewVSplit(centre, e.analysis)
		split.Offset = 0.66
		main = split
	}
	win.SetContent(container.NewBorder(e.toolbar(), e.status, nil, nil, main))
	e.buildMenus()
	e.addShortcuts()
	win.SetCloseIntercept(func() { e.confirmDiscard("closing", func() { e.removeRecovery(); win.Close() }) })
	win.SetOnDropped(func(_ fyne.Position, uris []fyne.URI) {
		if len(uris) > 0 && uris[0].Scheme() == "file" {
			path := uris[0].Path()
			e.confirmDiscard("opening another project", func() { _ = e.OpenPath(path) })
		}
	})
	e.initViewOptions()
	e.setProject(p, path, name)
	return e
}

// ---- Host ----

func (e *Editor) Window() fyne.Window        { return e.win }
func (e *Editor) Project() *engine.Project   { return e.project }
func (e *Editor) Result() *engine.Result     { return e.result }
func (e *Editor) SelectedNode() *engine.Node { return e.selectedNode() }
func (e *Editor) SelectNode(n *engine.Node) {
	e.setSelection(Target{Node: n, Branch: -1, Field: "node"})
}
func (e *Editor) ShowError(title string, err error) { showError(e.win, title, err) }

// Apply runs an undoable edit, re-evaluates and redraws.
func (e *Editor) Apply(c engine.Command) error {
	if err := e.history.Do(e.project, c, e.sel); err != nil {
		return err
	}
	e.refresh()
	return nil
}

// Selection is the current target; StatusText the status line (both for tests and panels).
func (e *Editor) Selection() Target  { return e.sel }
func (e *Editor) StatusText() string { return e.status.Text }
func (e *Editor) Dirty() bool        { return e.dirty || e.history.Dirty() }
func (e *Editor) Path() string       { return e.path }

func showError(w fyne.Window, title string, err error) {
	d := dialog.NewError(fmt.Errorf("%s: %w", title, err), w)
	d.Show()
}

// setProject replaces the open project and forgets the undo history.
func (e *Editor) setProject(p *engine.Project, path, name string) {
	e.project, e.path, e.name = p, path, name
	e.history.Clear()
	e.dirty = false
	e.sel = Target{Node: p.Root, Branch: -1, Field: "node"}
	e.variables.rebuild()
	e.refresh()
	e.view.ZoomFit()
}

// refresh re-evaluates the project and updates every part of the window.
func (e *Editor) refresh() {
	e.result = engine.Evaluate(e.project)
	if e.sel.Node == nil || !e.result.Contains(e.sel.Node) ||
		(e.sel.Branch >= len(e.sel.Node.Branches)) {
		e.sel = Target{Node: e.project.Root, Branch: -1, Field: "node"}
	}
	e.view.SetData(e.project, e.result)
	e.view.Select(e.sel)
	e.inspector.show()
	e.variables.update()
	e.problems.update()
	e.updateStatus()
	e.updateTitle()
	e.updateUndoMenu()
	for _, panel := range e.panels {
		panel.Update(e.result)
	}
}

func (e *Editor) updateStatus() {
	r := e.result
	var b strings.Builder
	if e.project.Root != nil {
		word := r.ValueWord()
		fmt.Fprintf(&b, "%s%s: %s", strings.ToUpper(word[:1]), word[1:], r.Format(r.Value()))
	}
	obj := e.project.Objective
	if obj == "" {
		obj = engine.Maximize
	}
	fmt.Fprintf(&b, "  ·  %s", obj)
	switch n := len(r.Problems); n {
	case 0:
		b.WriteString("  ·  valid")
	case 1:
		b.WriteString("  ·  1 problem")
	default:
		fmt.Fprintf(&b, "  ·  %d problems", n)
	}
	e.status.SetText(b.String())
}

func (e *Editor) title() string {
	t := e.name
	if e.path != "" {
		t = filepath.Base(e.path)
	}
	if t == "" {
		t = "Untitled"
	}
	if e.Dirty() {
		t += " *"
	}
	return t + " — Ramify"
}

func (e *Editor) updateTitle() { e.win.SetTitle(e.title()) }

// ---- selection ----

func (e *Editor) setSelection(t Target) {
	if t.Node == nil {
		return
	}
	if t.Field == "" {
		t.Field = "node"
	}
	e.sel = t
	e.view.Select(t) // pans the least distance that shows it; the zoom stays
	e.inspector.show()
}

// selectedNode is the node the selection is about: for a branch, the node it leads to.
func (e *Editor) selectedNode() *engine.Node {
	t := e.sel
	if t.Node == nil {
		return nil
	}
	if t.Branch >= 0 && t.Branch < len(t.Node.Branches) {
		return t.Node.Branches[t.Branch].To
	}
	return t.Node
}

func (e *Editor) toolbar() fyne.CanvasObject {
	add := func(key, tip string, icon fyne.Resource, f func()) fyne.CanvasObject {
		b := widget.NewButtonWithIcon(tip, icon, f)
		b.Importance = widget.LowImportance
		e.buttons[key] = b
		return b
	}
	return container.NewHBox(
		add("undo", "Undo", theme.ContentUndoIcon(), e.undo),
		add("redo", "Redo", theme.ContentRedoIcon(), e.redo),
		widget.NewSeparator(),
		add("branch", "Add branch", theme.ContentAddIcon(), e.addBranch),
		add("sibling", "Add sibling", theme.ListIcon(), e.addSibling),
		add("decision", "Decision", theme.ViewFullScreenIcon(), func() { e.changeKind(engine.Decision) }),
		add("chance", "Chance", theme.RadioButtonIcon(), func() { e.changeKind(engine.Chance) }),
		add("end", "End", theme.MediaStopIcon(), func() { e.changeKind(engine.End) }),
		add("delete", "Delete", theme.DeleteIcon(), e.deleteSubtree),
		widget.NewSeparator(),
		add("fit", "Fit", theme.ZoomFitIcon(), func() { e.view.ZoomFit() }),
	)
}

// Button returns a toolbar button by key (for tests).
func (e *Editor) Button(key string) *widget.Button { return e.buttons[key] }
