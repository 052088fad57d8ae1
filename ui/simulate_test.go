package ui

import (
	"testing"

	"fyne.io/fyne/v2/test"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

func TestSimulationPanelRunsAndReports(t *testing.T) {
	a := test.NewApp()
	defer a.Quit()
	h := newVOITestHost()
	before, err := engine.Marshal(h.p)
	require.NoError(t, err)
	sp := newSimPanel(h)
	sp.background = func(f func()) { f() }
	h.panels = append(h.panels, sp)
	sp.iters.SetText("20000")
	sp.seed.SetText("5")
	sp.mode.SetSelected(simModeFull)
	sp.run()
	voiWaitFor(t, func() bool { return sp.last != nil })
	assert.Contains(t, sp.status.Text, "seed 5")
	assert.Contains(t, sp.summary.Text, "Payoff received — base case 20 EUR")
	assert.Equal(t, 1.0, sp.progress.Value)
	assert.NotNil(t, sp.chart.Image)
	assert.True(t, sp.exports.Visible())
	after, _ := engine.Marshal(h.p)
	assert.Equal(t, string(before), string(after), "a run does not change the project")

	sp.iters.SetText("0")
	sp.run()
	assert.Contains(t, sp.status.Text, "at least 1")
	sp.iters.SetText("100")
	sp.seed.SetText("-3")
	sp.run()
	assert.Contains(t, sp.status.Text, "Seed: give a whole number")
}

func TestSimulationPanelCancel(t *testing.T) {
	a := test.NewApp()
	defer a.Quit()
	h := newVOITestHost()
	h.p.Variables = []*engine.Variable{{Name: "k", Value: "1", Dist: &engine.Distribution{Kind: engine.DistUniform, Min: "0.5", Max: "1.5"}}}
	h.p.Root.Branches[0].To.Branches[0].To.Payoff = "300 * k"
	h.r = engine.Evaluate(h.p)
	sp := newSimPanel(h)
	started := make(chan func())
	sp.background = func(f func()) { started <- f }
	sp.iters.SetText("50000000")
	go sp.run()
	f := <-started
	voiWaitFor(t, func() bool { return sp.cancel != nil })
	sp.cancel()
	f()
	voiWaitFor(t, func() bool { return sp.cancel == nil })
	assert.Contains(t, sp.status.Text, "cancelled")
	assert.Nil(t, sp.last)
}
