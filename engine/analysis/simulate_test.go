package analysis

import (
	"context"
	"math"
	"math/rand/v2"
	"runtime"
	"strconv"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

func vtLoadDemo(t testing.TB) *engine.Project {
	t.Helper()
	p, err := engine.Load("../../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	for _, v := range p.Variables {
		v.Dist = nil // the tests choose their own spreads
	}
	return p
}

// withDistributions gives the demo's variables spreads (invented for the test).
func vtWithDistributions(p *engine.Project) *engine.Project {
	set := map[string]*engine.Distribution{
		"rent_week":     {Kind: engine.DistTriangular, Min: "7000", Mode: "9500", Max: "13000"},
		"install_cost":  {Kind: engine.DistPERT, Min: "220000", Mode: "240000", Max: "265000"},
		"outage_day":    {Kind: engine.DistLognormal, Mean: "55000", SD: "15000"},
		"p_holds":       {Kind: engine.DistUniform, Min: "0.4", Max: "0.7"},
		"expedite_fee":  {Kind: engine.DistNormal, Mean: "45000", SD: "8000"},
		"premium_extra": {Kind: engine.DistDiscrete, Values: []string{"60000", "75000", "90000"}, Probs: []string{"0.25", "0.5", "0.25"}},
	}
	for _, v := range p.Variables {
		v.Dist = set[v.Name]
	}
	return p
}

func TestParameterModeWithFixedVariablesReproducesTheBaseCase(t *testing.T) {
	p := vtLoadDemo(t)
	r := engine.Evaluate(p.Clone())
	res, err := Simulate(context.Background(), p, SimOptions{N: 10000, Seed: 1, Mode: SimParameters})
	require.NoError(t, err)
	assert.Empty(t, res.Varying)
	assert.Equal(t, 10000, res.Value.Count)
	assert.Equal(t, res.Base, res.Value.Mean, "every iteration is the base case")
	assert.Equal(t, res.Base, res.Value.P5)
	assert.Equal(t, res.Base, res.Value.P95)
	assert.Zero(t, res.Value.SD)
	assert.InDelta(t, r.Value().InexactFloat64(), res.Value.Mean, 1e-9*math.Abs(res.Value.Mean), "against the exact engine")
	require.NotNil(t, res.Decision)
	assert.Equal(t, "plan", res.Decision.ID)
	assert.Equal(t, 10000, res.Alternatives[r.Choice(r.Project.Root)].Best)
}

// Full mode draws chance events along the policy; with fixed variables its mean
// must approach the rolled-back EV (law of large numbers; 4 standard errors).
func TestFullModeConvergesToRolledBackEV(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	projects := []*engine.Project{vtLoadDemo(t)}
	for range 5 {
		projects = append(projects, enginetest.RandomProject(rng, enginetest.Options{Nodes: 40, MaxBranches: 3, UseCash: true, UseRest: true, UseVars: true}))
	}
	for i, p := range projects {
		r := engine.Evaluate(p.Clone())
		require.True(t, r.Valid())
		res, err := Simulate(context.Background(), p, SimOptions{N: 200000, Seed: uint64(i), Mode: SimFull})
		require.NoError(t, err)
		ev := r.Value().InexactFloat64()
		assert.InDelta(t, ev, res.Value.Mean, 4*res.Value.SE+1e-9, "project %d: mean %v ± %v", i, res.Value.Mean, res.Value.SE)
	}
}

func TestSameSeedSameResultOnAnyNumberOfWorkers(t *testing.T) {
	p := vtWithDistributions(vtLoadDemo(t))
	for _, mode := range []SimMode{SimParameters, SimFull} {
		one, err := Simulate(context.Background(), p, SimOptions{N: 50000, Seed: 42, Mode: mode, Workers: 1})
		require.NoError(t, err)
		four, err := Simulate(context.Background(), p, SimOptions{N: 50000, Seed: 42, Mode: mode, Workers: 4})
		require.NoError(t, err)
		one.Workers, four.Workers = 0, 0
		assert.Equal(t, one.Value, four.Value, mode)
		assert.Equal(t, one.Alternatives, four.Alternatives, mode)
		assert.Equal(t, one.Convergence, four.Convergence, mode)
		assert.Equal(t, one.Samples, four.Samples, mode)
		other, err := Simulate(context.Background(), p, SimOptions{N: 50000, Seed: 43, Mode: mode, Workers: 4})
		require.NoError(t, err)
		assert.NotEqual(t, one.Value.Mean, other.Value.Mean, "another seed draws other values")
	}
}

// In parameter mode the mean of the root value must agree with an independent
// serial estimate of the same quantity computed with the exact engine on a few
// hundred draws of the same distributions (within 4 standard errors of both).
func TestParameterModeAgainstExactEngine(t *testing.T) {
	p := vtWithDistributions(vtLoadDemo(t))
	res, err := Simulate(context.Background(), p, SimOptions{N: 100000, Seed: 3, Mode: SimParameters})
	require.NoError(t, err)
	base := engine.Evaluate(p.Clone())
	samplers, err := CompileDists(p, base.Vars)
	require.NoError(t, err)
	rng := rand.New(rand.NewPCG(77, 78))
	var m moments
	for range 400 {
		q := p.Clone()
		for k, s := range samplers {
			q.Variables[k].Value = vtFormatFloat(s.Sample(rng))
		}
		r := engine.Evaluate(q)
		require.True(t, r.Valid(), "%v", r.Problems)
		m.add(r.Value().InexactFloat64())
	}
	se := math.Hypot(m.sd()/math.Sqrt(float64(m.n)), res.Value.SE)
	assert.InDelta(t, m.mean, res.Value.Mean, 4*se)
	sumBest := 0.0
	for _, a := range res.Alternatives {
		sumBest += a.PBest
	}
	assert.InDelta(t, 1, sumBest, 1e-12)
	assert.Less(t, res.Value.P5, res.Value.P50)
	assert.Less(t, res.Value.P50, res.Value.P95)
}

func vtFormatFloat(x float64) string {
	return strconv.FormatFloat(x, 'f', -1, 64)
}

func TestInvalidIterationsAreCountedNotClipped(t *testing.T) {
	p := &engine.Project{Objective: engine.Maximize,
		Variables: []*engine.Variable{{Name: "q", Value: "0.8", Dist: &engine.Distribution{Kind: engine.DistUniform, Min: "0.5", Max: "1.2"}}},
		Root: vtDecision("d", "Go?",
			vtBr("Go", "", vtChance("c", "Works", vtBr("Yes", "q", vtEnd("y", "100")), vtBr("No", "rest", vtEnd("n", "-40")))),
			vtBr("Stay", "", vtEnd("s", "0")))}
	res, err := Simulate(context.Background(), p, SimOptions{N: 70000, Seed: 5})
	require.NoError(t, err)
	// P(q > 1) = 0.2 / 0.7 for q uniform on [0.5, 1.2].
	want := 0.2 / 0.7
	assert.InDelta(t, want, float64(res.Invalid)/70000, 4*math.Sqrt(want*(1-want)/70000))
	assert.Contains(t, res.InvalidExample, `node "c"`)
	assert.Equal(t, 70000-res.Invalid, res.Value.Count)
	assert.LessOrEqual(t, res.Value.Max, 100.0, "no clipped probability above 1 leaks into the values")
}

func TestSimulationBadInput(t *testing.T) {
	p := vtLoadDemo(t)
	before, _ := engine.Marshal(p)
	_, err := Simulate(context.Background(), p, SimOptions{N: 0})
	assert.ErrorContains(t, err, "at least 1 (got 0)")
	_, err = Simulate(context.Background(), p, SimOptions{N: 10, Mode: "wild"})
	assert.ErrorContains(t, err, `mode "wild" is unknown`)
	bad := vtLoadDemo(t)
	bad.Variables[0].Dist = &engine.Distribution{Kind: engine.DistTriangular, Min: "10", Mode: "1", Max: "20"}
	_, err = Simulate(context.Background(), bad, SimOptions{N: 10})
	assert.ErrorContains(t, err, `variable "rent_week" distribution mode: 1 is outside min 10 to max 20`)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err = Simulate(ctx, vtWithDistributions(p.Clone()), SimOptions{N: 1_000_000})
	assert.ErrorContains(t, err, "cancelled")
	after, _ := engine.Marshal(p)
	assert.Equal(t, string(before), string(after), "the project is unchanged")
}

func TestCancelMidRun(t *testing.T) {
	p := vtWithDistributions(vtLoadDemo(t))
	ctx, cancel := context.WithCancel(context.Background())
	calls := 0
	_, err := Simulate(ctx, p, SimOptions{N: 5_000_000, Seed: 1, Progress: func(done, total int) {
		calls++
		if calls == 3 {
			cancel()
		}
	}})
	assert.ErrorContains(t, err, "simulation cancelled after")
}

// Percentiles of a uniform on [0, 1000] are 1000·p (closed form).
func TestPercentilesOfAUniform(t *testing.T) {
	p := &engine.Project{Objective: engine.Maximize,
		Variables: []*engine.Variable{{Name: "x", Value: "500", Dist: &engine.Distribution{Kind: engine.DistUniform, Min: "0", Max: "1000"}}},
		Root:      vtDecision("d", "Take", vtBr("x", "", &engine.Node{ID: "e", Kind: engine.End, Payoff: "x"}))}
	res, err := Simulate(context.Background(), p, SimOptions{N: 200000, Seed: 9})
	require.NoError(t, err)
	for _, c := range []struct{ p, got float64 }{{0.05, res.Value.P5}, {0.1, res.Value.P10}, {0.5, res.Value.P50}, {0.9, res.Value.P90}, {0.95, res.Value.P95}} {
		// SE of a sample quantile: √(p(1−p)/n)/f(x) with density f = 1/1000.
		assert.InDelta(t, 1000*c.p, c.got, 4*1000*math.Sqrt(c.p*(1-c.p)/200000))
	}
	assert.InDelta(t, 500, res.Value.Mean, 4*res.Value.SE)
	assert.InDelta(t, 1000/math.Sqrt(12), res.Value.SD, 3)
	assert.InDelta(t, 0.0, res.Loss, 0)
	total := 0
	for _, c := range res.Histogram.Counts {
		total += c
	}
	assert.Equal(t, 200000, total)
}

// Memory stays flat: ten times the iterations allocate about the same (the kept
// sample is bounded by Keep; statistics stream).
func TestSimulationMemoryIsFlat(t *testing.T) {
	p := vtWithDistributions(vtLoadDemo(t))
	alloc := func(n int) uint64 {
		var before, after runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&before)
		_, err := Simulate(context.Background(), p, SimOptions{N: n, Seed: 1, Keep: 50_000, Mode: SimFull})
		require.NoError(t, err)
		runtime.ReadMemStats(&after)
		return after.TotalAlloc - before.TotalAlloc
	}
	small, large := alloc(100_000), alloc(1_000_000)
	t.Logf("allocated %d bytes for 100,000 iterations, %d for 1,000,000", small, large)
	assert.Less(t, float64(large), 1.5*float64(small)+1<<20)
}

// With drawn variables, the realised payoff's mean (full mode) and the mean of the
// rolled-back value (parameter mode) estimate the same quantity when risk-neutral:
// E[payoff] = E_vars[E[payoff | vars]] (law of total expectation).
func TestFullAndParameterModesAgreeOnTheMean(t *testing.T) {
	p := vtWithDistributions(vtLoadDemo(t))
	full, err := Simulate(context.Background(), p, SimOptions{N: 300000, Seed: 21, Mode: SimFull})
	require.NoError(t, err)
	params, err := Simulate(context.Background(), p, SimOptions{N: 300000, Seed: 22, Mode: SimParameters})
	require.NoError(t, err)
	assert.InDelta(t, params.Value.Mean, full.Value.Mean, 4*math.Hypot(full.Value.SE, params.Value.SE))
	assert.Greater(t, full.Value.SD, params.Value.SD, "drawing the events adds spread")
}
