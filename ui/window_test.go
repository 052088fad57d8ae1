package ui

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"
	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

func newTestEditor(t *testing.T, p *engine.Project) *Editor {
	t.Helper()
	// The editor's tests do not run the analysis panels other files register:
	// some compute in goroutines, and the test driver runs fyne.Do on the
	// calling goroutine instead of the event loop.
	if !keepPanels {
		saved := panels
		panels = nil
		t.Cleanup(func() { panels = saved })
	}
	a := test.NewTempApp(t)
	w := test.NewWindow(nil)
	w.Resize(fyne.NewSize(1200, 800))
	t.Cleanup(w.Close)
	e := NewEditor(a, w, p, "", "Untitled")
	e.recoveryDir = t.TempDir()
	return e
}

// typeInto replaces an entry's text by typing, then presses Enter.
func typeInto(en *commitEntry, text string) {
	en.SetText("")
	en.editing = false
	test.Type(en, text)
	en.TypedKey(&fyne.KeyEvent{Name: fyne.KeyReturn})
}

func marshalString(t *testing.T, p *engine.Project) string {
	t.Helper()
	data, err := engine.Marshal(p)
	require.NoError(t, err)
	return string(data)
}

// tapOn taps the tree view where a target is drawn, as a person would: it
// looks for a point whose hit region is that target, then taps there.
func tapOn(t *testing.T, e *Editor, target Target) {
	t.Helper()
	v := e.view.(*canvasView).v
	test.TapAt(v, pointOf(t, e, target))
	require.Equal(t, target.Node, e.Selection().Node, "the tap selects the place")
	require.Equal(t, target.Branch, e.Selection().Branch)
}

// pointOf finds a point of the view whose hit region is the target.
func pointOf(t *testing.T, e *Editor, target Target) fyne.Position {
	t.Helper()
	v := e.view.(*canvasView).v
	e.win.Canvas().Capture() // lays the window out and draws it: the hit regions come from drawing
	want := toCanvas(target)
	size := v.Size()
	for y := float32(1); y < size.Height; y += 2 {
		for x := float32(1); x < size.Width; x += 2 {
			if got, _ := v.TargetAt(fyne.NewPos(x, y)); got == want {
				return fyne.NewPos(x, y)
			}
		}
	}
	t.Fatalf("%v is not drawn in the view", want)
	return fyne.Position{}
}

// tapNode selects node n by tapping the label of the branch leading to it
// (or the root's shape).
func tapNode(t *testing.T, e *Editor, n *engine.Node) {
	t.Helper()
	if parent, i := e.Project().Parent(n); parent != nil {
		tapOn(t, e, Target{Node: parent, Branch: i, Field: engine.FieldLabel})
	} else {
		tapOn(t, e, Target{Node: n, Branch: -1, Field: "node"})
	}
	require.Equal(t, n, e.selectedNode())
}

// buildLaunchTree builds, by taps and typing, a three-level tree:
// a decision between "Launch" (a chance node: Success 100 with probability
// 0.3, Failure -20) and "Hold" (10).
func buildLaunchTree(t *testing.T, e *Editor) {
	t.Helper()
	root := e.Project().Root
	require.Equal(t, engine.Decision, root.Kind)
	require.Len(t, root.Branches, 2)
	in := e.inspector

	typeInto(in.Field(engine.FieldName).entry, "Launch or hold")
	launch := root.Branches[0].To
	tapNode(t, e, launch)
	typeInto(in.Field(engine.FieldLabel).entry, "Launch")
	test.Tap(e.Button("chance"))
	require.Equal(t, engine.Chance, launch.Kind)
	require.Len(t, launch.Branches, 2)

	tapNode(t, e, launch.Branches[0].To)
	typeInto(in.Field(engine.FieldLabel).entry, "Success")
	typeInto(in.Field(engine.FieldProbability).entry, "0.3")
	typeInto(in.Field(engine.FieldPayoff).entry, "100")
	test.Tap(e.Button("sibling")) // a third outcome, then removed again
	require.Len(t, launch.Branches, 3)
	test.Tap(e.Button("delete"))
	require.Len(t, launch.Branches, 2)

	tapNode(t, e, launch.Branches[1].To)
	typeInto(in.Field(engine.FieldLabel).entry, "Failure")
	typeInto(in.Field(engine.FieldPayoff).entry, "-20")

	tapNode(t, e, root.Branches[1].To)
	typeInto(in.Field(engine.FieldLabel).entry, "Hold")
	typeInto(in.Field(engine.FieldPayoff).entry, "10")
}

func TestBuildTreeByTapsAndTyping(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)

	// Independent check: max(0.3×100 + 0.7×(−20), 10) = max(16, 10) = 16 (closed form).
	want := decimal.NewFromInt(16)
	r := engine.Evaluate(e.Project().Clone())
	require.True(t, r.Valid(), "%v", r.Problems)
	assert.True(t, want.Equal(r.Value()), "engine value %s", r.Value())
	assert.Contains(t, e.StatusText(), r.Format(want))
	assert.Contains(t, e.StatusText(), "Expected value")
	assert.Contains(t, e.StatusText(), "valid")
	assert.Equal(t, "Launch", e.Project().Root.Branches[0].Label)
	assert.Equal(t, "Launch or hold", e.Project().Root.Name)
	assert.True(t, e.Dirty())
	assert.Contains(t, e.win.Title(), "*")
}

func TestUndoRedoThroughToolbar(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	start := marshalString(t, e.Project())
	buildLaunchTree(t, e)
	built := marshalString(t, e.Project())
	status := e.StatusText()

	steps := 0
	for e.history.CanUndo() {
		test.Tap(e.Button("undo"))
		steps++
	}
	assert.Equal(t, start, marshalString(t, e.Project()))
	assert.False(t, e.Dirty())
	assert.Equal(t, e.Project().Root, e.Selection().Node, "undo back to the start selects the root again")
	for i := 0; i < steps; i++ {
		test.Tap(e.Button("redo"))
	}
	assert.Equal(t, built, marshalString(t, e.Project()))
	assert.Equal(t, status, e.StatusText())

	// Undo restores the selection from before the edit.
	hold := e.Project().Root.Branches[1].To
	e.SelectNode(hold)
	test.Tap(e.Button("delete"))
	assert.Equal(t, e.Project().Root, e.selectedNode())
	test.Tap(e.Button("undo"))
	assert.Equal(t, hold, e.selectedNode())
	// Ctrl+Y and Ctrl+Shift+Z redo, Ctrl+Z undoes.
	e.win.Canvas().(fyne.Canvas).Focus(nil)
	sc := e.keyBindings()
	sc[6].f() // Ctrl+Y
	assert.Len(t, e.Project().Root.Branches, 1)
	sc[4].f() // Ctrl+Z
	assert.Len(t, e.Project().Root.Branches, 2)
	sc[5].f() // Ctrl+Shift+Z
	assert.Len(t, e.Project().Root.Branches, 1)
}

func TestInvalidEntryKeepsOldValue(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	before := marshalString(t, e.Project())
	status := e.StatusText()
	hold := e.Project().Root.Branches[1].To
	e.SelectNode(hold)
	f := e.inspector.Field(engine.FieldPayoff)
	typeInto(f.entry, "10 * (3")

	_, parseErr := engine.ParseFormula("10 * (3")
	require.Error(t, parseErr)
	assert.Contains(t, f.Error(), parseErr.Error(), "the parse error is shown next to the field")
	assert.Equal(t, "10", hold.Payoff, "the old value is kept")
	assert.Equal(t, before, marshalString(t, e.Project()))
	assert.Equal(t, status, e.StatusText())
	assert.Equal(t, "10 * (3", f.entry.Text, "the typed text stays for correction")

	typeInto(f.entry, "12")
	assert.Empty(t, f.Error())
	assert.Equal(t, "12", hold.Payoff)
}

func TestInPlaceEditing(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	launch := e.Project().Root.Branches[0].To
	target := Target{Node: launch, Branch: 0, Field: engine.FieldProbability}
	e.view.(*canvasView).v.DoubleTapped(&fyne.PointEvent{Position: pointOf(t, e, target)})
	en := e.inPlaceEntry()
	require.NotNil(t, en, "a double tap on the probability opens an entry")
	assert.Equal(t, "0.3", en.Text)
	en.TypedKey(&fyne.KeyEvent{Name: fyne.KeyEscape})
	require.Nil(t, e.inPlaceEntry())
	assert.Equal(t, target, e.Selection())

	e.typedKey(fyne.KeyF2)
	en = e.inPlaceEntry()
	require.NotNil(t, en, "F2 opens an entry")
	assert.Equal(t, "0.3", en.Text)

	en.SetText("0.4")
	en.TypedKey(&fyne.KeyEvent{Name: fyne.KeyEscape})
	assert.Nil(t, e.inPlaceEntry(), "Escape closes")
	assert.Equal(t, "0.3", launch.Branches[0].Probability, "Escape cancels")

	e.typedKey(fyne.KeyReturn)
	en = e.inPlaceEntry()
	require.NotNil(t, en, "Enter opens an entry")
	en.SetText("1.5 +")
	en.TypedKey(&fyne.KeyEvent{Name: fyne.KeyReturn})
	assert.NotNil(t, e.inPlaceEntry(), "an invalid formula keeps the entry open")
	assert.Equal(t, "0.3", launch.Branches[0].Probability)
	en.SetText("0.4")
	en.TypedKey(&fyne.KeyEvent{Name: fyne.KeyReturn})
	assert.Nil(t, e.inPlaceEntry())
	assert.Equal(t, "0.4", launch.Branches[0].Probability)
	// 0.4×100 + 0.6×(−20) = 28 (closed form)
	assert.Contains(t, e.StatusText(), e.Result().Format(decimal.NewFromInt(28)))
}

func TestKeyboardNavigationAndStructure(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	root := e.Project().Root
	launch := root.Branches[0].To
	e.SelectNode(root)
	e.typedKey(fyne.KeyRight) // to the chosen branch: Launch (16 > 10)
	assert.Equal(t, launch, e.selectedNode())
	e.typedKey(fyne.KeyDown)
	assert.Equal(t, root.Branches[1].To, e.selectedNode())
	e.typedKey(fyne.KeyUp)
	e.typedKey(fyne.KeyRight)
	assert.Equal(t, launch.Branches[0].To, e.selectedNode())
	e.typedKey(fyne.KeyLeft)
	assert.Equal(t, launch, e.selectedNode())

	kb := e.keyBindings()
	kb[17].f() // Alt+Down: move Launch below Hold
	assert.Equal(t, "Hold", root.Branches[0].Label)
	kb[16].f() // Alt+Up
	assert.Equal(t, "Launch", root.Branches[0].Label)
	kb[18].f() // collapse
	assert.True(t, launch.Collapsed)
	kb[19].f()
	assert.False(t, launch.Collapsed)
	e.typedKey(fyne.KeyInsert) // add branch to the chance node
	assert.Len(t, launch.Branches, 3)
	assert.Equal(t, "0", launch.Branches[2].Probability, "a new outcome starts at 0 beside a rest branch")
	e.typedKey(fyne.KeyDelete)
	assert.Len(t, launch.Branches, 2)
	kb[15].f() // Ctrl+3: make end
	assert.Equal(t, engine.End, e.selectedNode().Kind)
	kb[14].f() // Ctrl+2: make chance again (two fresh outcomes)
	assert.Equal(t, engine.Chance, e.selectedNode().Kind)
}

func TestClipboardBetweenWindows(t *testing.T) {
	a := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, a)
	a.Project().Variables = append(a.Project().Variables, &engine.Variable{Name: "gain", Value: "100"})
	launch := a.Project().Root.Branches[0].To
	launch.Branches[0].To.Payoff = "gain"
	a.refresh()
	a.SelectNode(launch)
	require.True(t, a.copySubtree())

	// A second window of the same app reads the same clipboard.
	w2 := test.NewWindow(nil)
	defer w2.Close()
	b := NewEditor(a.app, w2, EmptyProject(), "", "Second")
	b.recoveryDir = t.TempDir()
	b.SelectNode(b.Project().Root)
	b.pasteSubtree()
	root := b.Project().Root
	require.Len(t, root.Branches, 3)
	pasted := root.Branches[2].To
	assert.Equal(t, engine.Chance, pasted.Kind)
	assert.NotNil(t, b.Project().Variable("gain"), "variables used by the subtree come along")
	assert.True(t, a.Result().ValueOf(launch).Equal(b.Result().ValueOf(pasted)))

	// Paste onto an end node replaces it; duplicate adds a copy; cut removes.
	b.SelectNode(root.Branches[0].To)
	b.pasteSubtree()
	assert.Equal(t, engine.Chance, root.Branches[0].To.Kind)
	b.SelectNode(pasted)
	b.duplicateSubtree()
	require.Len(t, root.Branches, 4)
	assert.Equal(t, pasted.Name, root.Branches[3].To.Name)
	b.cutSubtree()
	assert.Len(t, root.Branches, 3)
	assert.NotEmpty(t, a.app.Clipboard().Content())
}

func TestVariablesTable(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	test.Tap(e.Button("add variable"))
	require.Len(t, e.Project().Variables, 1)
	name := e.Project().Variables[0].Name
	typeInto(e.variables.entries[0][engine.VarValue], "150")
	e.SelectNode(e.Project().Root.Branches[0].To.Branches[0].To)
	typeInto(e.inspector.Field(engine.FieldPayoff).entry, name+" - 50")
	// 0.3×100 − 0.7×20 = 16 again (closed form)
	assert.Contains(t, e.StatusText(), e.Result().Format(decimal.NewFromInt(16)))

	typeInto(e.variables.entries[0]["name"], "gain")
	assert.Equal(t, "gain - 50", e.Project().Root.Branches[0].To.Branches[0].To.Payoff, "rename updates every formula")

	test.Tap(e.variables.rows.Objects[1].(*fyne.Container).Objects[5].(*widget.Button)) // remove
	assert.Len(t, e.Project().Variables, 1, "a variable in use is not removed")
	assert.Contains(t, e.variables.Error(), `node "`)
	assert.Contains(t, e.variables.Error(), "payoff")

	typeInto(e.variables.entries[0][engine.VarValue], "oops(")
	assert.Equal(t, "150", e.Project().Variables[0].Value)
	assert.NotEmpty(t, e.variables.Error())
}

func TestProblemsListSelectsPlace(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	launch := e.Project().Root.Branches[0].To
	require.NoError(t, e.Apply(&engine.SetBranchField{Node: launch, Branch: 1, Field: engine.FieldProbability, Value: "0.5"}))
	require.False(t, e.Result().Valid())
	assert.Contains(t, e.StatusText(), "1 problem")
	e.SelectNode(e.Project().Root)
	e.problems.list.Select(0)
	assert.Equal(t, launch, e.Selection().Node)
}

func TestSaveLoadRoundTrip(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	path := filepath.Join(t.TempDir(), "launch.ramify.json")
	require.NoError(t, e.SaveTo(path))
	assert.False(t, e.Dirty())
	assert.NotContains(t, e.win.Title(), "*")

	data, err := os.ReadFile(path)
	require.NoError(t, err)
	assert.Equal(t, marshalString(t, e.Project()), string(data))

	e2 := newTestEditor(t, EmptyProject())
	require.NoError(t, e2.OpenPath(path))
	assert.Equal(t, string(data), marshalString(t, e2.Project()))
	assert.Equal(t, e.StatusText(), e2.StatusText())
	assert.Equal(t, path, e2.Recent()[0])

	// A second save keeps the first as .bak.
	require.NoError(t, e.Apply(&engine.SetNodeField{Node: e.Project().Root, Field: engine.FieldName, Value: "Renamed"}))
	require.NoError(t, e.SaveTo(path))
	bak, err := os.ReadFile(path + ".bak")
	require.NoError(t, err)
	assert.Equal(t, string(data), string(bak))
}

func TestOpenRefusesBrokenAndNewerFiles(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	before := marshalString(t, e.Project())
	dir := t.TempDir()
	files := map[string]string{
		"newer.json":  `{"format": "ramify", "version": 99, "root": {"kind": "end"}}`,
		"broken.json": `{"format": "ramify", "version": 1, "root": {"kind": "end"`,
	}
	for name, text := range files {
		path := filepath.Join(dir, name)
		require.NoError(t, os.WriteFile(path, []byte(text), 0o644))
		err := e.OpenPath(path)
		require.Error(t, err, name)
		_, loadErr := engine.Load(path)
		assert.Equal(t, loadErr.Error(), err.Error(), "the loader's message is shown")
		assert.Equal(t, before, marshalString(t, e.Project()), "the open project is kept")
		got, _ := os.ReadFile(path)
		assert.Equal(t, text, string(got), "the refused file is not touched")
	}
}

// Fault test: a failing save reports the failure, keeps the project dirty and
// leaves the file on disk byte-identical. Tests run as root, where a read-only
// folder does not stop writes, so the failures are a path below a plain file
// and an injected writer error half-way through the data.
func TestFailedSaveKeepsOriginal(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	dir := t.TempDir()
	path := filepath.Join(dir, "launch.ramify.json")
	require.NoError(t, e.SaveTo(path))
	original, err := os.ReadFile(path)
	require.NoError(t, err)
	require.NoError(t, e.Apply(&engine.SetNodeField{Node: e.Project().Root, Field: engine.FieldName, Value: "Changed"}))

	err = e.SaveTo(filepath.Join(path, "below-a-file.ramify.json"))
	require.Error(t, err)
	assert.True(t, e.Dirty())
	assert.Equal(t, path, e.Path(), "a failed save does not move the project to the new path")

	e.writeFile = func(p string, data []byte) error {
		return engine.WriteAtomic(p, func(w io.Writer) error {
			if _, err := w.Write(data[:len(data)/2]); err != nil {
				return err
			}
			return errors.New("no space left on device")
		})
	}
	err = e.SaveTo(path)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "no space left on device")
	assert.True(t, e.Dirty())
	got, err := os.ReadFile(path)
	require.NoError(t, err)
	assert.Equal(t, original, got, "the original file is byte-identical")
	entries, err := os.ReadDir(dir)
	require.NoError(t, err)
	for _, en := range entries {
		assert.False(t, strings.Contains(en.Name(), ".tmp"), "temporary file left behind: %s", en.Name())
	}
}

func TestAutosaveAndRecovery(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	require.NoError(t, e.Autosave())
	_, err := os.Stat(e.RecoveryPath())
	assert.True(t, os.IsNotExist(err), "nothing to recover while clean")

	buildLaunchTree(t, e)
	require.NoError(t, e.Autosave())
	data, err := os.ReadFile(e.RecoveryPath())
	require.NoError(t, err)
	assert.Equal(t, marshalString(t, e.Project()), string(data))

	// The next start finds it and restores it as unsaved work.
	e2 := newTestEditor(t, EmptyProject())
	e2.recoveryDir = e.recoveryDir
	p, err := engine.Load(e2.RecoveryPath())
	require.NoError(t, err)
	e2.RestoreRecovery(p, "")
	assert.True(t, e2.Dirty())
	assert.Equal(t, e.StatusText(), e2.StatusText())

	// Saving removes the recovery file.
	require.NoError(t, e.SaveTo(filepath.Join(t.TempDir(), "saved.ramify.json")))
	_, err = os.Stat(e.RecoveryPath())
	assert.True(t, os.IsNotExist(err))
}

var keepPanels bool

type countingPanel struct{ updates int }

func (c *countingPanel) Title() string              { return "Counting" }
func (c *countingPanel) Content() fyne.CanvasObject { return widget.NewLabel("counting") }
func (c *countingPanel) Update(*engine.Result)      { c.updates++ }

func TestPanelsAndMenusFromRegistry(t *testing.T) {
	cp := &countingPanel{}
	saved, savedMenus := panels, menuEntries
	t.Cleanup(func() { panels, menuEntries = saved, savedMenus })
	panels = nil
	keepPanels = true
	t.Cleanup(func() { keepPanels = false })
	RegisterPanel(1000, func(Host) Panel { return cp })
	ran := false
	RegisterMenu(MenuEntry{Menu: "Analyse", Label: "Count", Action: func(h Host) { ran = h.Project() != nil }})
	e := newTestEditor(t, EmptyProject())
	before := cp.updates
	test.Tap(e.Button("branch"))
	assert.Greater(t, cp.updates, before, "panels are updated after each change")

	var found *fyne.MenuItem
	for _, m := range e.menu.Items {
		if m.Label == "Analyse" {
			for _, it := range m.Items {
				if it.Label == "Count" {
					found = it
				}
			}
		}
	}
	require.NotNil(t, found)
	found.Action()
	assert.True(t, ran)
}

// findButton looks through the window's overlays (dialogs) for a button.
func findButton(e *Editor, text string) *widget.Button {
	var found *widget.Button
	var walk func(o fyne.CanvasObject)
	walk = func(o fyne.CanvasObject) {
		if found != nil || o == nil {
			return
		}
		if b, ok := o.(*widget.Button); ok && b.Text == text {
			found = b
			return
		}
		switch w := o.(type) {
		case *fyne.Container:
			for _, c := range w.Objects {
				walk(c)
			}
		case fyne.Widget:
			for _, c := range test.WidgetRenderer(w).Objects() {
				walk(c)
			}
		}
	}
	for _, o := range e.win.Canvas().Overlays().List() {
		walk(o)
	}
	return found
}

func TestUnsavedChangesPrompt(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	// Clean: New replaces the project at once.
	first := e.Project()
	e.fileNew()
	assert.NotSame(t, first, e.Project())

	buildLaunchTree(t, e)
	built := e.Project()
	e.fileNew()
	require.NotNil(t, findButton(e, "Don't save"), "a dirty project asks before New")
	assert.Same(t, built, e.Project(), "nothing is replaced while the question is open")
	test.Tap(findButton(e, "Cancel"))
	assert.Same(t, built, e.Project())

	e.fileNew()
	test.Tap(findButton(e, "Don't save"))
	assert.NotSame(t, built, e.Project())
	assert.False(t, e.Dirty())
}

func TestRecoveryOfferedOnStart(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	require.NoError(t, e.Autosave())

	e2 := newTestEditor(t, EmptyProject())
	e2.recoveryDir = e.recoveryDir
	e2.OfferRecovery()
	yes := findButton(e2, "Yes")
	require.NotNil(t, yes, "the next start offers to restore")
	test.Tap(yes)
	assert.Equal(t, marshalString(t, e.Project()), marshalString(t, e2.Project()))
	assert.True(t, e2.Dirty(), "restored work is unsaved")
}

// findEntry looks through the window's dialogs for an entry showing text.
func findEntry(e *Editor, text string) *widget.Entry {
	var found *widget.Entry
	var walk func(o fyne.CanvasObject)
	walk = func(o fyne.CanvasObject) {
		if found != nil || o == nil {
			return
		}
		if en, ok := o.(*widget.Entry); ok && en.Text == text {
			found = en
			return
		}
		switch w := o.(type) {
		case *fyne.Container:
			for _, c := range w.Objects {
				walk(c)
			}
		case fyne.Widget:
			for _, c := range test.WidgetRenderer(w).Objects() {
				walk(c)
			}
		}
	}
	for _, o := range e.win.Canvas().Overlays().List() {
		walk(o)
	}
	return found
}

func TestSaveAsDialog(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	dir := t.TempDir()
	first := filepath.Join(dir, "first.ramify.json")
	require.NoError(t, e.SaveTo(first))
	require.NoError(t, e.Apply(&engine.SetNodeField{Node: e.Project().Root, Field: engine.FieldName, Value: "Second"}))

	saved := false
	e.fileSaveAs(func(ok bool) { saved = ok })
	folder, file := findEntry(e, dir), findEntry(e, "first.ramify.json")
	require.NotNil(t, folder, "the folder of the current file is offered")
	require.NotNil(t, file)
	file.SetText("second")
	test.Tap(findButton(e, "Save"))
	assert.True(t, saved)
	second := filepath.Join(dir, "second.ramify.json")
	assert.Equal(t, second, e.Path(), "the .ramify.json ending is added")
	data, err := os.ReadFile(second)
	require.NoError(t, err)
	assert.Equal(t, marshalString(t, e.Project()), string(data))
	assert.False(t, e.Dirty())

	// Saving as an existing file asks first.
	e.fileSaveAs(func(ok bool) { saved = ok })
	findEntry(e, "second.ramify.json").SetText("first.ramify.json")
	test.Tap(findButton(e, "Save"))
	require.NotNil(t, findButton(e, "No"), "replacing a file asks")
	test.Tap(findButton(e, "No"))
	assert.False(t, saved)
	assert.Equal(t, second, e.Path())
}

func TestPendingTextCommittedBeforeOtherEdits(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	root := e.Project().Root
	name := e.inspector.Field(engine.FieldName).entry
	e.win.Canvas().Focus(name)
	name.SetText("")
	test.Type(name, "Typed, not entered")
	test.Tap(e.Button("branch"))
	assert.Equal(t, "Typed, not entered", root.Name, "the typed name is applied first")
	assert.Len(t, root.Branches, 3)
	test.Tap(e.Button("undo"))
	assert.Len(t, root.Branches, 2)
	assert.Equal(t, "Typed, not entered", root.Name, "undo takes back one edit at a time")
}

// TestRandomEditingSession drives the editor's own commands in random order
// (as keys and buttons would) and checks that nothing panics, the selection
// always points into the tree, and undoing everything restores the file bytes.
func TestRandomEditingSession(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	start := marshalString(t, e.Project())
	e.app.Clipboard().SetContent("")
	actions := []func(){
		e.addBranch, e.addSibling, e.deleteSubtree, e.duplicateSubtree, e.pasteSubtree,
		func() { e.copySubtree() }, e.cutSubtree,
		func() { e.changeKind(engine.Decision) }, func() { e.changeKind(engine.Chance) }, func() { e.changeKind(engine.End) },
		func() { e.moveBranch(-1) }, func() { e.moveBranch(1) }, func() { e.setCollapsed(true) }, func() { e.setCollapsed(false) },
		func() { e.typedKey(fyne.KeyLeft) }, func() { e.typedKey(fyne.KeyRight) }, func() { e.typedKey(fyne.KeyUp) }, func() { e.typedKey(fyne.KeyDown) },
		e.undo, e.redo,
	}
	seed := uint64(42)
	next := func(n int) int { // a small LCG: reproducible without extra imports
		seed = seed*6364136223846793005 + 1442695040888963407
		return int((seed >> 33) % uint64(n))
	}
	for i := 0; i < 400; i++ {
		actions[next(len(actions))]()
		// Error dialogs from refused edits pile up as overlays; clear them.
		for e.win.Canvas().Overlays().Top() != nil {
			e.win.Canvas().Overlays().Remove(e.win.Canvas().Overlays().Top())
		}
		require.True(t, e.Result().Contains(e.Selection().Node), "step %d: the selection is in the tree", i)
		if e.Selection().Branch >= 0 {
			require.Less(t, e.Selection().Branch, len(e.Selection().Node.Branches))
		}
		_, err := engine.Parse([]byte(marshalString(t, e.Project())), "session")
		require.NoError(t, err, "step %d: the project still loads", i)
	}
	for e.history.CanUndo() {
		e.undo()
	}
	assert.Equal(t, start, marshalString(t, e.Project()))
}

func TestProjectSettingsDialog(t *testing.T) {
	e := newTestEditor(t, EmptyProject())
	buildLaunchTree(t, e)
	e.projectSettings()
	title := findEntry(e, "Untitled decision")
	require.NotNil(t, title)
	title.SetText("Launch review")
	test.Tap(findButton(e, "Apply"))
	assert.Equal(t, "Launch review", e.Project().Title)
	assert.Contains(t, e.StatusText(), "maximize")

	e.projectSettings()
	findEntry(e, "0").SetText("two")
	test.Tap(findButton(e, "Apply"))
	assert.Equal(t, 0, e.Project().Decimals, "a bad number is refused")
	for e.win.Canvas().Overlays().Top() != nil {
		e.win.Canvas().Overlays().Remove(e.win.Canvas().Overlays().Top())
	}
	test.Tap(e.Button("undo"))
	assert.Equal(t, "Untitled decision", e.Project().Title, "settings are one undoable change")
}
