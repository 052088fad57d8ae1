package ui

import (
	"os"
	"path/filepath"
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// riskTestHost is a minimal Host: it applies commands with an undo stack and
// re-evaluates, as the editor window does.
type riskTestHost struct {
	win    fyne.Window
	p      *engine.Project
	r      *engine.Result
	undo   []engine.Command
	panel  Panel
	errors []error
}

func (h *riskTestHost) Window() fyne.Window         { return h.win }
func (h *riskTestHost) Project() *engine.Project    { return h.p }
func (h *riskTestHost) Result() *engine.Result      { return h.r }
func (h *riskTestHost) SelectedNode() *engine.Node  { return nil }
func (h *riskTestHost) SelectNode(*engine.Node)     {}
func (h *riskTestHost) ShowError(_ string, e error) { h.errors = append(h.errors, e) }
func (h *riskTestHost) Apply(c engine.Command) error {
	inv, err := c.Apply(h.p)
	if err != nil {
		return err
	}
	h.undo = append(h.undo, inv)
	h.r = engine.Evaluate(h.p)
	if h.panel != nil {
		h.panel.Update(h.r)
	}
	return nil
}

func riskTestProject() *engine.Project {
	// Invented: a fixed-price job against a job whose cost depends on ground conditions.
	leaf := func(id, v string) *engine.Node { return &engine.Node{ID: id, Kind: engine.End, Payoff: v} }
	return &engine.Project{Title: "Pick a job", Objective: engine.Maximize, Currency: "EUR",
		Root: &engine.Node{ID: "root", Kind: engine.Decision, Name: "Which job", Branches: []*engine.Branch{
			{Label: "Fixed price", To: leaf("f", "40000")},
			{Label: "Cost plus", To: &engine.Node{ID: "c", Kind: engine.Chance, Branches: []*engine.Branch{
				{Label: "Good ground", Probability: "0.6", To: leaf("g", "120000")},
				{Label: "Bad ground", Probability: "rest", To: leaf("b", "-50000")},
			}}},
		}}}
}

func waitFor(t *testing.T, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(5 * time.Second)
	for time.Now().Before(deadline) {
		var ok bool
		fyne.DoAndWait(func() { ok = cond() })
		if ok {
			return
		}
		time.Sleep(10 * time.Millisecond)
	}
	t.Fatal("timed out waiting for the risk panel")
}

func TestRiskPanelShowsTableAndSetsAttitude(t *testing.T) {
	a := test.NewApp()
	defer a.Quit()
	h := &riskTestHost{win: test.NewWindow(nil), p: riskTestProject()}
	h.r = engine.Evaluate(h.p)
	rp := newRiskPanel(h)
	rp.background = func(f func()) { f() }
	h.panel = rp
	h.win.SetContent(rp.Content())
	h.win.Resize(fyne.NewSize(900, 900))
	assert.Equal(t, "Risk profiles", rp.Title())

	rp.Update(h.r)
	waitFor(t, func() bool { return rp.last != nil })
	// EV: fixed 40,000; cost plus 0.6 × 120,000 − 0.4 × 50,000 = 52,000.
	require.Len(t, rp.cells, 3)
	assert.Equal(t, []string{"Cost plus", "52,000 EUR"}, rp.cells[2][:2])
	assert.NotNil(t, rp.chart.Image)
	assert.Contains(t, rp.dominance.Text, "No alternative dominates another")

	// A bad R is reported beside the field and changes nothing.
	rp.attitude.SetSelected(attitudeExponential)
	test.Type(rp.rEntry, "0")
	rp.applyAttitude()
	assert.Contains(t, rp.rError.Text, "R cannot be 0")
	assert.Equal(t, engine.RiskAttitude{}, h.p.Risk)

	// A good R becomes the project's attitude through an undoable edit; at
	// R = 50,000 the cost-plus job's CE is −50,000 ln(0.6 e^(−2.4) + 0.4 e^(1)) < 40,000.
	rp.rEntry.SetText("50000")
	rp.applyAttitude()
	assert.Empty(t, rp.rError.Text)
	assert.Equal(t, engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "50000"}, h.p.Risk)
	require.Len(t, h.undo, 1)
	waitFor(t, func() bool { return rp.last != nil && rp.last.RiskOn })
	header := rp.cells[0]
	assert.Contains(t, header, "Certainty equivalent")
	last := len(header) - 1
	assert.Equal(t, "yes", rp.cells[1][last], "fixed price best at R")
	assert.Equal(t, "yes", rp.cells[2][last-1], "cost plus best risk-neutral")

	_, err := h.undo[0].Apply(h.p)
	require.NoError(t, err)
	assert.Equal(t, engine.RiskAttitude{}, h.p.Risk)
	assert.Empty(t, h.errors)

	// Exports: the chart by extension, the table as CSV with exact decimals.
	dir := t.TempDir()
	require.NoError(t, writeProfileChart(rp.last, true, filepath.Join(dir, "p.svg")))
	svg, err := os.ReadFile(filepath.Join(dir, "p.svg"))
	require.NoError(t, err)
	assert.Contains(t, string(svg), "Payoff (EUR)")
	assert.Error(t, writeProfileChart(rp.last, true, filepath.Join(dir, "p.bmp")))
	require.NoError(t, writeStrategyTable(rp.last, filepath.Join(dir, "t.csv")))
	data, err := os.ReadFile(filepath.Join(dir, "t.csv"))
	require.NoError(t, err)
	assert.Contains(t, string(data), "Cost plus,52000,")
}

func TestToleranceHelperSuggests(t *testing.T) {
	a := test.NewApp()
	defer a.Quit()
	var used string
	h := newToleranceHelper("EUR", 0, func(s string) { used = s })
	test.Type(h.gambleX, "200,000")
	assert.Contains(t, h.gambleOut.Text, "R ≈ 200,000 EUR")
	test.Type(h.income, "-5")
	assert.Contains(t, h.companyOut.Text, "net income: must be more than 0")
	h.income.SetText("1000000")
	require.Len(t, h.suggestions.Objects, 2)
	test.Tap(h.suggestions.Objects[1].(*widget.Button))
	assert.Equal(t, "1200000", used)
}
