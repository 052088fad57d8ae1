package ui

import (
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// voiTestHost is a minimal Host with an undo stack, as the editor window has.
type voiTestHost struct {
	win    fyne.Window
	p      *engine.Project
	r      *engine.Result
	undo   []engine.Command
	panels []Panel
	errors []error
}

func (h *voiTestHost) Window() fyne.Window         { return h.win }
func (h *voiTestHost) Project() *engine.Project    { return h.p }
func (h *voiTestHost) Result() *engine.Result      { return h.r }
func (h *voiTestHost) SelectedNode() *engine.Node  { return nil }
func (h *voiTestHost) SelectNode(*engine.Node)     {}
func (h *voiTestHost) ShowError(_ string, e error) { h.errors = append(h.errors, e) }
func (h *voiTestHost) Apply(c engine.Command) error {
	inv, err := c.Apply(h.p)
	if err != nil {
		return err
	}
	h.undo = append(h.undo, inv)
	h.r = engine.Evaluate(h.p)
	for _, p := range h.panels {
		p.Update(h.r)
	}
	return nil
}

func (h *voiTestHost) undoLast(t *testing.T) {
	require.NotEmpty(t, h.undo)
	_, err := h.undo[len(h.undo)-1].Apply(h.p)
	require.NoError(t, err)
	h.undo = h.undo[:len(h.undo)-1]
	h.r = engine.Evaluate(h.p)
}

// voiTestProject is invented: a new service line that earns 300 if uptake is
// good (30 %) and loses 100 otherwise, against keeping things as they are (0).
// Uptake appears on both alternatives, so it can be learnt first.
func voiTestProject() *engine.Project {
	leaf := func(id, v string) *engine.Node { return &engine.Node{ID: id, Kind: engine.End, Payoff: v} }
	uptake := func(id, good, poor string) *engine.Node {
		return &engine.Node{ID: id, Kind: engine.Chance, Name: "Uptake", Branches: []*engine.Branch{
			{Label: "Good", Probability: "0.3", To: leaf(id+"g", good)},
			{Label: "Poor", Probability: "rest", To: leaf(id+"p", poor)},
		}}
	}
	return &engine.Project{Title: "Service line", Objective: engine.Maximize, Currency: "EUR",
		Root: &engine.Node{ID: "go", Kind: engine.Decision, Name: "Open the line?", Branches: []*engine.Branch{
			{Label: "Open", To: uptake("u1", "300", "-100")},
			{Label: "Keep as is", To: uptake("u2", "0", "0")},
		}}}
}

func newVOITestHost() *voiTestHost {
	h := &voiTestHost{win: test.NewWindow(nil), p: voiTestProject()}
	h.r = engine.Evaluate(h.p)
	return h
}

func voiWaitFor(t *testing.T, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(20 * time.Second)
	for time.Now().Before(deadline) {
		var ok bool
		fyne.DoAndWait(func() { ok = cond() })
		if ok {
			return
		}
		time.Sleep(10 * time.Millisecond)
	}
	t.Fatal("timed out")
}

// By hand: Open is worth 0.3·300 − 0.7·100 = 20 > 0. Knowing uptake first:
// 0.3·300 + 0.7·0 = 90, so EVPI = 70.
func TestVOIPanelShowsEVPI(t *testing.T) {
	a := test.NewApp()
	defer a.Quit()
	h := newVOITestHost()
	vp := newVOIPanel(h)
	vp.background = func(f func()) { f() }
	vp.refresh()
	voiWaitFor(t, func() bool { return vp.headline.Text != "" })
	assert.Contains(t, vp.headline.Text, "Expected value as it stands: 20 EUR")
	assert.Contains(t, vp.headline.Text, "EVPI 70 EUR")
	require.NotEmpty(t, vp.rows.Objects)
}

// Study: P(says good | good) = 0.8, P(says good | poor) = 0.1. P(says good) = 0.24 + 0.07 = 0.31;
// after "says good" Open is worth (0.24·300 − 0.07·100)/0.31 = 65/0.31 > 0; after "says poor"
// (0.06·300 − 0.63·100)/0.69 < 0 so Keep (0). With the study: 0.31·65/0.31 = 65; EVSI = 45.
func TestStudyFormAddsAnUndoableAlternative(t *testing.T) {
	a := test.NewApp()
	defer a.Quit()
	h := newVOITestHost()
	f := newStudyForm(h)
	require.Equal(t, []string{"Good", "Poor"}, f.states)
	require.Len(t, f.like, 2)
	f.like[0][0].SetText("0.8")
	f.like[0][1].SetText("0.1")
	f.like[1][0].SetText("0.2")
	f.like[1][1].SetText("0.9")
	f.cost.SetText("10")
	f.preview()
	assert.Contains(t, f.output.Text, "P(Favourable) = 0.31")
	assert.Contains(t, f.output.Text, "EVSI (expected value of sample information): 45 EUR")
	assert.Contains(t, f.output.Text, "net value after cost 35 EUR")
	assert.Len(t, h.p.Root.Branches, 2, "preview changes nothing")

	f.add()
	require.Len(t, h.p.Root.Branches, 3)
	assert.Equal(t, "Study first", h.p.Root.Branches[2].Label)
	require.True(t, h.r.Valid(), "%v", h.r.Problems)
	assert.Equal(t, 2, h.r.Choice(h.p.Root))
	// Posteriors are written with 16 decimals, so the value is 55 to within 1e-12.
	assert.InDelta(t, 55, h.r.Value().InexactFloat64(), 1e-12)
	h.undoLast(t)
	assert.Len(t, h.p.Root.Branches, 2)

	f.like[0][0].SetText("0.9")
	f.preview()
	assert.Contains(t, f.output.Text, `when "Uptake" is "Good" the chances of the results add up to 1.1, not 1`)
}

func TestDistributionFormAppliesAndValidates(t *testing.T) {
	a := test.NewApp()
	defer a.Quit()
	h := newVOITestHost()
	h.p.Variables = []*engine.Variable{{Name: "price", Value: "300"}}
	h.r = engine.Evaluate(h.p)
	f := newDistForm(h)
	require.Equal(t, "price", f.variable.Selected)
	f.kind.SetSelected("triangular")
	assert.Len(t, f.form.Items, 4, "kind, min, mode, max")
	f.fields["min"].SetText("200")
	f.fields["mode"].SetText("400")
	f.fields["max"].SetText("350")
	f.apply()
	assert.Contains(t, f.message.Text, `variable "price" distribution mode: 400 is outside min 200 to max 350`)
	assert.Nil(t, h.p.Variables[0].Dist)
	f.fields["mode"].SetText("300")
	f.apply()
	require.NotNil(t, h.p.Variables[0].Dist)
	assert.Equal(t, engine.DistTriangular, h.p.Variables[0].Dist.Kind)
	h.undoLast(t)
	assert.Nil(t, h.p.Variables[0].Dist)
}
