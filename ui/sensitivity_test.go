package ui

import (
	"path/filepath"
	"sync"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

// sensHost is a minimal Host for the sensitivity panels.
type sensHost struct {
	mu   sync.Mutex
	win  fyne.Window
	p    *engine.Project
	r    *engine.Result
	errs []error
}

func (h *sensHost) Window() fyne.Window          { return h.win }
func (h *sensHost) Project() *engine.Project     { return h.p }
func (h *sensHost) Result() *engine.Result       { return h.r }
func (h *sensHost) Apply(c engine.Command) error { return nil }
func (h *sensHost) SelectedNode() *engine.Node   { return nil }
func (h *sensHost) SelectNode(*engine.Node)      {}
func (h *sensHost) ShowError(title string, e error) {
	h.mu.Lock()
	h.errs = append(h.errs, e)
	h.mu.Unlock()
}

// viewHost also takes canvas view options.
type viewHost struct {
	sensHost
	opts canvas.Options
}

func (h *viewHost) ViewOptions() canvas.Options     { return h.opts }
func (h *viewHost) SetViewOptions(o canvas.Options) { h.opts = o }

func demoHost(t *testing.T) *sensHost {
	test.NewTempApp(t)
	p, err := engine.Load("../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	r := engine.Evaluate(p)
	require.True(t, r.Valid())
	return &sensHost{win: test.NewTempWindow(t, nil), p: p, r: r}
}

func selectInput(t *testing.T, cs []inputChoice, in analysis.Input) string {
	for _, c := range cs {
		if c.in == in {
			return c.label
		}
	}
	t.Fatalf("no choice for %v", in)
	return ""
}

func TestSensitivityPanelsAndMenuAreRegistered(t *testing.T) {
	h := demoHost(t)
	var titles []string
	for _, pe := range panels {
		titles = append(titles, pe.make(h).Title())
	}
	assert.Subset(t, titles, []string{"One input", "Tornado", "Two inputs"})
	found := false
	for _, m := range menuEntries {
		found = found || (m.Menu == "View" && m.Label == "Show break-even notes")
	}
	assert.True(t, found)
}

func TestOneInputPanelFindsTheBreakEven(t *testing.T) {
	h := demoHost(t)
	sp := newSweepPanel(h)
	sp.background = func(f func()) { f() }
	sp.input.SetSelected(selectInput(t, sp.choices, analysis.VariableInput("p_holds")))
	sp.from.SetText("0")
	sp.to.SetText("1")
	sp.steps.SetText("20")
	sp.Run()
	require.NotNil(t, sp.chart.plot, sp.status.Text)
	// Keep the old chiller: 240,000 + (1 − p)·176,000 equals renting's 312,200
	// at p = 1 − 72,200/176,000 (hand-derived from the demo's figures).
	assert.Contains(t, sp.found.Text, "0.589772727273")
	assert.Len(t, sp.table.rows, 22)
	path := filepath.Join(t.TempDir(), "one.svg")
	require.NoError(t, analysis.SaveSensitivityChart(sp.chart.plot, path))

	// Bad input shows a message naming the place and runs nothing.
	sp.input.SetSelected(selectInput(t, sp.choices, analysis.VariableInput("rent_week")))
	sp.from.SetText("9000")
	sp.to.SetText("")
	sp.Run()
	assert.Contains(t, sp.status.Text, "give both ends")
}

func TestTornadoPanelShowsEveryVariable(t *testing.T) {
	h := demoHost(t)
	tp := newTornadoPanel(h)
	tp.background = func(f func()) { f() }
	tp.Run()
	require.NotNil(t, tp.chart.plot, tp.status.Text)
	assert.Len(t, tp.table.rows, 1+len(h.p.Variables))
	assert.Equal(t, "install_cost", tp.table.rows[1][0])
	tp.Update(h.r)
	assert.Contains(t, tp.status.Text, "press Run")
}

func TestTwoInputsPanelMapsAndCancels(t *testing.T) {
	h := demoHost(t)
	rp := newRegionsPanel(h)
	rp.background = func(f func()) { f() }
	rp.x.SetSelected(selectInput(t, rp.choices, analysis.VariableInput("p_holds")))
	rp.y.SetSelected(selectInput(t, rp.choices, analysis.VariableInput("rent_week")))
	rp.steps.SetText("25")
	rp.Run()
	require.NotNil(t, rp.chart.plot, rp.status.Text)
	assert.Len(t, rp.table.rows, 4)
	assert.Contains(t, rp.status.Text, "Rent a temporary chiller")
	assert.Equal(t, 1.0, rp.progress.Value)

	// A large map in the background, cancelled at once.
	rp.background = func(f func()) { go f() }
	rp.steps.SetText("2000")
	rp.Run()
	assert.True(t, rp.run.Disabled())
	rp.Cancel()
	assert.False(t, rp.run.Disabled())
	assert.Equal(t, "Cancelled.", rp.status.Text)
}

func TestBreakEvenNotesToggle(t *testing.T) {
	base := demoHost(t)
	h := &viewHost{sensHost: sensHost{win: base.win, p: base.p, r: base.r}, opts: canvas.DefaultOptions()}
	toggleBreakEvenNotes(h)
	require.NotNil(t, h.opts.NoteFunc)
	delivery := h.p.FindNode("delivery")
	assert.Equal(t, []string{"choice flips at 0.53"}, h.opts.NoteFunc(delivery, 0))
	assert.Empty(t, h.opts.NoteFunc(h.p.Root, 0), "a decision's branches carry no note")
	toggleBreakEvenNotes(h)
	assert.Nil(t, h.opts.NoteFunc)

	// A host without view options reports why nothing happened.
	toggleBreakEvenNotes(base)
	require.Len(t, base.errs, 1)
	assert.Contains(t, base.errs[0].Error(), "view options")
}
