package ui

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/assets"
	"github.com/ramify-app/ramify/engine"
)

func shortcut(key fyne.KeyName, mod fyne.KeyModifier) fyne.Shortcut {
	return &desktop.CustomShortcut{KeyName: key, Modifier: mod}
}

const (
	ctrl      = fyne.KeyModifierShortcutDefault
	ctrlShift = fyne.KeyModifierShortcutDefault | fyne.KeyModifierShift
	alt       = fyne.KeyModifierAlt
)

// keyBindings are the window's shortcuts; each is also shown in the menus.
func (e *Editor) keyBindings() []struct {
	sc fyne.Shortcut
	f  func()
} {
	return []struct {
		sc fyne.Shortcut
		f  func()
	}{
		{shortcut(fyne.KeyN, ctrl), e.fileNew},
		{shortcut(fyne.KeyO, ctrl), e.fileOpen},
		{shortcut(fyne.KeyS, ctrl), func() { e.fileSave(nil) }},
		{shortcut(fyne.KeyS, ctrlShift), func() { e.fileSaveAs(nil) }},
		{shortcut(fyne.KeyZ, ctrl), e.undo},
		{shortcut(fyne.KeyZ, ctrlShift), e.redo},
		{shortcut(fyne.KeyY, ctrl), e.redo},
		{shortcut(fyne.KeyC, ctrl), func() { e.copySubtree() }},
		{shortcut(fyne.KeyX, ctrl), e.cutSubtree},
		{shortcut(fyne.KeyV, ctrl), e.pasteSubtree},
		{shortcut(fyne.KeyD, ctrl), e.duplicateSubtree},
		{shortcut(fyne.KeyB, ctrl), e.addBranch},
		{shortcut(fyne.KeyB, ctrlShift), e.addSibling},
		{shortcut(fyne.Key1, ctrl), func() { e.changeKind(engine.Decision) }},
		{shortcut(fyne.Key2, ctrl), func() { e.changeKind(engine.Chance) }},
		{shortcut(fyne.Key3, ctrl), func() { e.changeKind(engine.End) }},
		{shortcut(fyne.KeyUp, alt), func() { e.moveBranch(-1) }},
		{shortcut(fyne.KeyDown, alt), func() { e.moveBranch(1) }},
		{shortcut(fyne.KeyLeft, alt), func() { e.setCollapsed(true) }},
		{shortcut(fyne.KeyRight, alt), func() { e.setCollapsed(false) }},
		{shortcut(fyne.KeyEqual, ctrl), func() { e.view.ZoomIn() }},
		{shortcut(fyne.KeyMinus, ctrl), func() { e.view.ZoomOut() }},
		{shortcut(fyne.Key0, ctrl), func() { e.view.ZoomFit() }},
		{shortcut(fyne.KeyComma, ctrl), e.projectSettings},
		{shortcut(fyne.KeyPlus, ctrl), func() { e.view.ZoomIn() }},
	}
}

func (e *Editor) addShortcuts() {
	c := e.win.Canvas()
	for _, kb := range e.keyBindings() {
		f := kb.f
		c.AddShortcut(kb.sc, func(fyne.Shortcut) { f() })
	}
	// Plain keys reach the window when no entry has focus.
	c.SetOnTypedKey(func(k *fyne.KeyEvent) { e.typedKey(k.Name) })
	// The standard editing shortcuts are canvas shortcuts, not menu shortcuts:
	// the window's menu would take them before a focused entry, and Ctrl+C in a
	// field must copy text. They reach the tree when no entry has focus.
	c.AddShortcut(&fyne.ShortcutUndo{}, func(fyne.Shortcut) { e.undo() })
	c.AddShortcut(&fyne.ShortcutRedo{}, func(fyne.Shortcut) { e.redo() })
	c.AddShortcut(&fyne.ShortcutCopy{}, func(fyne.Shortcut) { e.copySubtree() })
	c.AddShortcut(&fyne.ShortcutCut{}, func(fyne.Shortcut) { e.cutSubtree() })
	c.AddShortcut(&fyne.ShortcutPaste{}, func(fyne.Shortcut) { e.pasteSubtree() })
}

func (e *Editor) typedKey(k fyne.KeyName) {
	switch k {
	case fyne.KeyLeft, fyne.KeyRight, fyne.KeyUp, fyne.KeyDown:
		e.moveSelection(k)
	case fyne.KeyReturn, fyne.KeyEnter, fyne.KeyF2:
		e.editInPlace(e.sel)
	case fyne.KeyDelete:
		e.deleteSubtree()
	case fyne.KeyInsert:
		e.addBranch()
	case fyne.KeyEscape:
		e.closeInPlace()
	default:
		// Keys without a modifier (F5 for the presentation) never reach Fyne's shortcuts.
		HandlePlainKey(e, k)
	}
}

func (e *Editor) item(label string, sc fyne.Shortcut, f func()) *fyne.MenuItem {
	it := fyne.NewMenuItem(label, f)
	it.Shortcut = sc
	return it
}

func (e *Editor) buildMenus() {
	kb := e.keyBindings()
	sc := func(i int) fyne.Shortcut { return kb[i].sc }

	var demos []*fyne.MenuItem
	for _, d := range assets.Demos() {
		d := d
		demos = append(demos, fyne.NewMenuItem(DemoTitle(d.Name), func() { e.fileNewDemo(d) }))
	}
	newDemo := fyne.NewMenuItem("New from demo", nil)
	newDemo.ChildMenu = fyne.NewMenu("", demos...)
	e.recent = fyne.NewMenuItem("Open recent", nil)
	e.recent.ChildMenu = fyne.NewMenu("")
	e.updateRecentMenu()

	file := fyne.NewMenu("File",
		e.item("New", sc(0), e.fileNew),
		newDemo,
		e.item("Open…", sc(1), e.fileOpen),
		e.recent,
		fyne.NewMenuItemSeparator(),
		e.item("Save", sc(2), func() { e.fileSave(nil) }),
		e.item("Save as…", sc(3), func() { e.fileSaveAs(nil) }),
		fyne.NewMenuItemSeparator(),
		e.item("Project settings…", sc(23), e.projectSettings),
	)
	e.undoItem = e.item("Undo", nil, e.undo)
	e.redoItem = e.item("Redo", nil, e.redo)
	edit := fyne.NewMenu("Edit",
		e.undoItem, e.redoItem,
		fyne.NewMenuItemSeparator(),
		e.item("Cut subtree", nil, e.cutSubtree),
		e.item("Copy subtree", nil, func() { e.copySubtree() }),
		e.item("Paste subtree", nil, e.pasteSubtree),
		e.item("Duplicate subtree", sc(10), e.duplicateSubtree),
		e.item("Delete subtree", nil, e.deleteSubtree),
		fyne.NewMenuItemSeparator(),
		e.item("Edit value (F2)", nil, func() { e.editInPlace(e.sel) }),
	)
	tree := fyne.NewMenu("Tree",
		e.item("Add branch", sc(11), e.addBranch),
		e.item("Add sibling", sc(12), e.addSibling),
		fyne.NewMenuItemSeparator(),
		e.item("Make decision", sc(13), func() { e.changeKind(engine.Decision) }),
		e.item("Make chance", sc(14), func() { e.changeKind(engine.Chance) }),
		e.item("Make end", sc(15), func() { e.changeKind(engine.End) }),
		fyne.NewMenuItemSeparator(),
		e.item("Move up", sc(16), func() { e.moveBranch(-1) }),
		e.item("Move down", sc(17), func() { e.moveBranch(1) }),
		e.item("Collapse", sc(18), func() { e.setCollapsed(true) }),
		e.item("Expand", sc(19), func() { e.setCollapsed(false) }),
	)
	view := fyne.NewMenu("View",
		e.item("Zoom in", sc(20), func() { e.view.ZoomIn() }),
		e.item("Zoom out", sc(21), func() { e.view.ZoomOut() }),
		e.item("Fit to window", sc(22), func() { e.view.ZoomFit() }),
	)
	help := fyne.NewMenu("Help", fyne.NewMenuItem("Keyboard shortcuts", e.showKeys))
	menus := []*fyne.Menu{file, edit, tree, view}
	for _, me := range menuEntries {
		me := me
		var target *fyne.Menu
		for _, m := range append(menus, help) {
			if m.Label == me.Menu {
				target = m
			}
		}
		if target == nil {
			target = fyne.NewMenu(me.Menu)
			menus = append(menus, target)
		}
		target.Items = append(target.Items, e.item(me.Label, me.Shortcut, func() { me.Action(e) }))
		if me.Shortcut != nil {
			e.win.Canvas().AddShortcut(me.Shortcut, func(fyne.Shortcut) { me.Action(e) })
		}
	}
	menus = append(menus, help) // Help stays last; entries registered for "Help" join it
	e.menu = fyne.NewMainMenu(menus...)
	e.win.SetMainMenu(e.menu)
}

func (e *Editor) updateUndoMenu() {
	if e.undoItem == nil {
		return
	}
	e.undoItem.Label, e.undoItem.Disabled = "Undo", !e.history.CanUndo()
	if e.history.CanUndo() {
		e.undoItem.Label = "Undo " + e.history.UndoName()
	}
	e.redoItem.Label, e.redoItem.Disabled = "Redo", !e.history.CanRedo()
	if e.history.CanRedo() {
		e.redoItem.Label = "Redo " + e.history.RedoName()
	}
	e.menu.Refresh()
}

// keyHelp lists the editor's keys in plain words ("Ctrl" is Cmd on macOS).
var keyHelp = [][2]string{
	{"Arrow keys", "Move the selection: left to the parent, right to a child, up and down among siblings"},
	{"Enter or F2", "Edit the selected value in place (Enter applies, Escape cancels)"},
	{"Ctrl+B / Insert", "Add branch"},
	{"Ctrl+Shift+B", "Add sibling"},
	{"Ctrl+1 / 2 / 3", "Make decision / chance / end"},
	{"Delete", "Delete subtree"},
	{"Alt+Up / Alt+Down", "Move up / down among siblings"},
	{"Alt+Left / Alt+Right", "Collapse / expand"},
	{"Ctrl+C / X / V", "Copy / cut / paste a subtree (as project-format JSON, also between windows)"},
	{"Ctrl+D", "Duplicate subtree"},
	{"Ctrl+Z", "Undo"},
	{"Ctrl+Shift+Z or Ctrl+Y", "Redo"},
	{"Ctrl+N / O / S / Shift+S", "New / Open / Save / Save as"},
	{"Ctrl+, ", "Project settings"},
	{"Ctrl+= / - / 0", "Zoom in / out / fit"},
}

func (e *Editor) showKeys() {
	var b strings.Builder
	for _, k := range keyHelp {
		fmt.Fprintf(&b, "**%s** — %s\n\n", k[0], k[1])
	}
	text := widget.NewRichTextFromMarkdown(b.String())
	text.Wrapping = fyne.TextWrapWord
	d := dialog.NewCustom("Keyboard shortcuts", "Close", container.NewVScroll(text), e.win)
	d.Resize(fyne.NewSize(620, 560))
	d.Show()
}
