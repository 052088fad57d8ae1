package ui

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/canvas/report"
	"github.com/ramify-app/ramify/engine"
)

// presentHost is a Host over a loaded project, for the dialogs and the presentation.
type presentHost struct {
	win      fyne.Window
	p        *engine.Project
	r        *engine.Result
	selected *engine.Node
	errs     []error
}

func (h *presentHost) Window() fyne.Window               { return h.win }
func (h *presentHost) Project() *engine.Project          { return h.p }
func (h *presentHost) Result() *engine.Result            { return h.r }
func (h *presentHost) Apply(engine.Command) error        { return nil }
func (h *presentHost) SelectedNode() *engine.Node        { return h.selected }
func (h *presentHost) SelectNode(n *engine.Node)         { h.selected = n }
func (h *presentHost) ShowError(title string, err error) { h.errs = append(h.errs, err) }

func newPresentHost(t *testing.T) *presentHost {
	t.Helper()
	test.NewTempApp(t)
	p, err := engine.Load(filepath.Join("..", "assets", "demos", "chiller-cover.ramify.json"))
	require.NoError(t, err)
	w := test.NewWindow(widget.NewLabel("editor"))
	w.Resize(fyne.NewSize(1000, 700))
	t.Cleanup(w.Close)
	return &presentHost{win: w, p: p, r: engine.Evaluate(p)}
}

func press(w fyne.Window, k fyne.KeyName) { w.Canvas().OnTypedKey()(&fyne.KeyEvent{Name: k}) }

// sceneTexts builds the scene the view draws with its current options.
func sceneTexts(h *presentHost, o canvas.Options) string {
	s := canvas.Build(h.p, h.r, nil, o, canvas.Rect{})
	var b strings.Builder
	for _, pr := range s.Prims {
		if pr.Kind == canvas.PrimText {
			b.WriteString(pr.Text + "\n")
		}
	}
	return b.String()
}

func TestPresentationSteps(t *testing.T) {
	h := newPresentHost(t)
	editorContent := h.win.Content()
	h.win.SetMainMenu(fyne.NewMainMenu(fyne.NewMenu("File")))
	ps := startPresentation(h)
	require.NotNil(t, ps)
	assert.True(t, h.win.FullScreen())
	assert.Nil(t, h.win.MainMenu(), "editing chrome is hidden")
	// The demo's deepest node is 3 branches from the root: 4 column steps,
	// then the recommendation.
	require.Equal(t, 3, presentDepth(h.p))
	root := h.r.Format(h.r.Value())
	for step := 0; step <= 3; step++ {
		o := ps.view.Options()
		assert.Equal(t, step, o.RevealColumns, "step %d", step)
		texts := sceneTexts(h, o)
		if step < 3 {
			assert.NotContains(t, texts, root, "the root value appears only when the roll-back reaches it")
		} else {
			assert.Contains(t, texts, root)
		}
		assert.NotContains(t, texts, "recommended")
		th := o.Theme
		assert.Equal(t, th.Style(canvas.RoleBranch), th.Style(canvas.RoleBranchPolicy), "the path is not lit before the last step")
		assert.Equal(t, th.Style(canvas.RoleBranch), th.Style(canvas.RoleBranchRejected))
		press(h.win, fyne.KeyRight)
	}
	assert.Contains(t, sceneTexts(h, ps.view.Options()), "recommended", "the last step marks the recommended choices")
	lit := ps.view.Options().Theme
	assert.NotEqual(t, lit.Style(canvas.RoleBranch), lit.Style(canvas.RoleBranchPolicy), "the recommended path lights up")
	assert.Greater(t, lit.LabelSize, canvas.LightTheme().LabelSize, "presentation type is larger")
	assert.Contains(t, ps.caption.Text, root)
	press(h.win, fyne.KeyRight) // past the end: stays
	assert.Equal(t, 4, ps.step)
	press(h.win, fyne.KeyLeft)
	assert.NotContains(t, sceneTexts(h, ps.view.Options()), "recommended")

	press(h.win, fyne.KeyH)
	assert.True(t, ps.view.Options().HideWorkingNumbers)
	assert.NotContains(t, sceneTexts(h, ps.view.Options()), "57,000", "branch cash is a working number")
	press(h.win, fyne.KeyH)
	assert.False(t, ps.view.Options().HideWorkingNumbers)

	// Zoom into a subtree and back.
	ps.opts.Selected = canvas.Target{Node: h.p.FindNode("delivery"), Branch: -1}
	fit := ps.view.Zoom()
	press(h.win, fyne.KeyZ)
	assert.Greater(t, ps.view.Zoom(), fit)
	press(h.win, fyne.KeyX)
	assert.InDelta(t, fit, ps.view.Zoom(), 1e-9)

	press(h.win, fyne.KeyEscape)
	assert.False(t, h.win.FullScreen())
	assert.Same(t, editorContent, h.win.Content())
	assert.NotNil(t, h.win.MainMenu())
}

func TestPresentationNeedsAValidProject(t *testing.T) {
	h := newPresentHost(t)
	h.p.Root.Branches[0].Cash = "rent_week *"
	h.r = engine.Evaluate(h.p)
	assert.Nil(t, startPresentation(h))
	require.Len(t, h.errs, 1)
	assert.Contains(t, h.errs[0].Error(), "problems")
	assert.False(t, h.win.FullScreen())
}

func TestHandlePlainKey(t *testing.T) {
	h := newPresentHost(t)
	assert.False(t, HandlePlainKey(h, fyne.KeyF6))
	assert.True(t, HandlePlainKey(h, fyne.KeyF5))
	assert.True(t, h.win.FullScreen())
	press(h.win, fyne.KeyEscape)
	assert.False(t, h.win.FullScreen())
}

// Each term of the explain dialog selects its branch's node when clicked.
func TestExplainTermsSelectTheirBranch(t *testing.T) {
	h := newPresentHost(t)
	e, err := engine.ExplainID(h.r, "delivery")
	require.NoError(t, err)
	content := explainContent(h, e)
	var buttons []*widget.Button
	var walk func(o fyne.CanvasObject)
	walk = func(o fyne.CanvasObject) {
		switch x := o.(type) {
		case *widget.Button:
			buttons = append(buttons, x)
		case *container.Scroll:
			walk(x.Content)
		case *fyne.Container:
			for _, c := range x.Objects {
				walk(c)
			}
		}
	}
	walk(content)
	require.Len(t, buttons, len(e.Terms)+1) // one per term, and Copy
	want := []string{"rent-on-time", "late-response"}
	for i, id := range want {
		assert.Contains(t, buttons[i].Text, e.Terms[i].Text)
		test.Tap(buttons[i])
		require.NotNil(t, h.selected)
		assert.Equal(t, id, h.selected.ID)
	}
	// An end's payoff term selects the end itself.
	end, err := engine.ExplainID(h.r, "extend")
	require.NoError(t, err)
	assert.Equal(t, "extend", explainTarget(h.p, end.Terms[len(end.Terms)-1]).ID)
}

func TestWriteCSVTable(t *testing.T) {
	h := newPresentHost(t)
	dir := t.TempDir()
	for _, table := range engine.CSVTables {
		t.Run(table, func(t *testing.T) {
			path := filepath.Join(dir, table+".csv")
			require.NoError(t, writeCSVTable(h, path, table))
			f, err := os.Open(path)
			require.NoError(t, err)
			defer f.Close()
			rows, err := csv.NewReader(f).ReadAll()
			require.NoError(t, err)
			var want strings.Builder
			require.NoError(t, engine.WriteCSV(&want, h.r, table))
			back, err := csv.NewReader(strings.NewReader(want.String())).ReadAll()
			require.NoError(t, err)
			assert.Equal(t, back, rows)
		})
	}
	assert.Equal(t, "Cooling cover while the main chiller is replaced.pdf", suggestedName(h.p, ".pdf"))
}

func TestReportSnapshotIsACopy(t *testing.T) {
	h := newPresentHost(t)
	p, r, err := reportSnapshot(h)
	require.NoError(t, err)
	assert.NotSame(t, h.p, p)
	assert.True(t, r.Value().Equal(h.r.Value()))
}

// The report is written on its own goroutine from a snapshot; the file appears
// and reads as a PDF.
func TestReportInBackground(t *testing.T) {
	h := newPresentHost(t)
	path := filepath.Join(t.TempDir(), "report.pdf")
	writeReportInBackground(h, path, report.Options{Tree: ReportTree})
	require.Eventually(t, func() bool {
		data, err := os.ReadFile(path)
		return err == nil && bytes.HasPrefix(data, []byte("%PDF")) && bytes.Contains(data, []byte("%%EOF"))
	}, 20*time.Second, 50*time.Millisecond)
	assert.Empty(t, h.errs)
}
