package ui

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/assets"
	"github.com/ramify-app/ramify/engine"
)

// TestFirstMarketDemo checks the demo's value by hand arithmetic on the
// values written in its variables (closed form, independent of the engine):
// revenue = subscribers × share × price × 24 months × 0.7 kept.
func TestFirstMarketDemo(t *testing.T) {
	d, ok := assets.DemoByName("first-market-launch")
	require.True(t, ok)
	p, err := engine.Parse(d.Data, d.Name)
	require.NoError(t, err)
	rev := func(subs, share, price float64) float64 { return subs * share * price * 24 * 0.7 }
	ev := func(ps [3]float64, vals [3]float64) float64 { return ps[0]*vals[0] + ps[1]*vals[1] + ps[2]*vals[2] }
	portugal := ev([3]float64{0.3, 0.45, 0.25}, [3]float64{rev(2500, 1, 7.5), rev(2500, 0.5, 7.5), rev(2500, 0.15, 7.5)}) - 120000
	vietnam := ev([3]float64{0.25, 0.4, 0.35}, [3]float64{rev(9000, 1, 3), rev(9000, 0.5, 3), rev(9000, 0.15, 3)}) - 90000
	kenyaWeak := max(rev(7000, 0.15, 2.5), 80000-25000, 30000)
	kenya := ev([3]float64{0.2, 0.35, 0.45}, [3]float64{rev(7000, 1, 2.5), rev(7000, 0.5, 2.5), kenyaWeak}) - 60000
	licence := 60000.0 * 2
	want := max(portugal, vietnam, kenya, licence)
	require.Greater(t, len(p.Root.Branches), 2, "three or more alternatives")

	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	assert.InDelta(t, want, r.Value().InexactFloat64(), 1e-6)
	assert.Equal(t, 1, r.Choice(p.Root), "Vietnam is recommended")
	assert.InDelta(t, licence, r.BranchValue(p.Root, 3).InexactFloat64(), 1e-9)
	kenyaNode := p.Root.Branches[2].To
	assert.Equal(t, 1, r.Choice(kenyaNode.Branches[2].To), "after a weak start in Kenya: the sponsored free tier")
}

// Every demo opens in the editor valid, with the engine's value on the status line.
func TestDemosOpenValid(t *testing.T) {
	for _, d := range assets.Demos() {
		t.Run(d.Name, func(t *testing.T) {
			p, err := engine.Parse(d.Data, d.Name)
			require.NoError(t, err)
			assert.NotEmpty(t, p.Notes, "a demo explains its scenario")
			e := newTestEditor(t, p)
			r := engine.Evaluate(p.Clone())
			require.True(t, r.Valid(), "%v", r.Problems)
			assert.Contains(t, e.StatusText(), r.Format(r.Value()))
			assert.Contains(t, e.StatusText(), "valid")
		})
	}
}
