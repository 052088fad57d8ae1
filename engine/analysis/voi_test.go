package analysis

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

func vtEnd(id, payoff string) *engine.Node {
	return &engine.Node{ID: id, Kind: engine.End, Payoff: payoff}
}

func vtChance(id, name string, branches ...*engine.Branch) *engine.Node {
	return &engine.Node{ID: id, Kind: engine.Chance, Name: name, Branches: branches}
}

func vtDecision(id, name string, branches ...*engine.Branch) *engine.Node {
	return &engine.Node{ID: id, Kind: engine.Decision, Name: name, Branches: branches}
}

func vtBr(label, prob string, to *engine.Node) *engine.Branch {
	return &engine.Branch{Label: label, Probability: prob, To: to}
}

// launchProject is an invented example: a product launch that pays 100 when
// demand is strong (40 %) and loses 50 when it is weak, against a licence deal
// paying 20 whatever happens.
func vtLaunchProject() *engine.Project {
	return &engine.Project{Objective: engine.Maximize, Root: vtDecision("d", "Launch plan",
		vtBr("Launch", "", vtChance("m1", "Demand", vtBr("Strong", "0.4", vtEnd("e1", "100")), vtBr("Weak", "0.6", vtEnd("e2", "-50")))),
		vtBr("License", "", vtChance("m2", "demand", vtBr("strong", "0.4", vtEnd("e3", "20")), vtBr("weak", "rest", vtEnd("e4", "20")))),
	)}
}

func vtFigureNamed(t *testing.T, rep *VOIReport, name string) EVPIFigure {
	t.Helper()
	for _, f := range rep.Nodes {
		if f.Name == name {
			return f
		}
	}
	require.Failf(t, "no figure", "no EVPI figure for %q", name)
	return EVPIFigure{}
}

// Worked by hand from the definition: without information Launch is worth
// 0.4·100 − 0.6·50 = 10 < 20, so License (20). Knowing demand first:
// 0.4·max(100, 20) + 0.6·max(−50, 20) = 52. EVPI = 32.
func TestEVPIWorkedByHand(t *testing.T) {
	p := vtLaunchProject()
	rep, err := EVPI(p, VOIOptions{})
	require.NoError(t, err)
	assert.Equal(t, "20", rep.Without.String())
	f := vtFigureNamed(t, rep, "Demand")
	require.True(t, f.Valid, f.Reason)
	assert.Equal(t, []string{"m1", "m2"}, f.NodeIDs, "same name ignoring case is the same uncertainty")
	assert.Equal(t, "52", f.With.String())
	assert.Equal(t, "32", f.EVPI.String())
	require.True(t, rep.Whole.Valid, rep.Whole.Reason)
	assert.Equal(t, "32", rep.Whole.EVPI.String())
	assert.Equal(t, "20", engine.Evaluate(p).Value().String(), "the project is unchanged")
}

// The same problem as costs: costs are the negated payoffs, so the saving from
// knowing first is again 32 (expected cost −52 against −20).
func TestEVPIForCostsIsASaving(t *testing.T) {
	p := vtLaunchProject()
	p.Objective = engine.Minimize
	for _, n := range p.Nodes() {
		if n.Kind == engine.End {
			n.Payoff = "-(" + n.Payoff + ")"
		}
	}
	rep, err := EVPI(p, VOIOptions{})
	require.NoError(t, err)
	assert.Equal(t, "-20", rep.Without.String())
	assert.Equal(t, "32", vtFigureNamed(t, rep, "Demand").EVPI.String())
}

func TestEVPISaysWhyNotValid(t *testing.T) {
	tests := []struct {
		name   string
		edit   func(p *engine.Project)
		opt    VOIOptions
		reason string
	}{
		{"only some branches", func(p *engine.Project) {
			p.Root.Branches[1].To = vtEnd("e3", "20")
		}, VOIOptions{}, `"Demand" lies after decision "Launch plan" only on some branches (not on "License")`},
		{"probabilities depend on the choice", func(p *engine.Project) {
			p.Root.Branches[1].To.Branches[0].Probability = "0.5"
		}, VOIOptions{}, `the probabilities of "Demand" differ between node "m1" (0.4, 0.6) and node "m2" (0.5, 0.5)`},
		{"different forms", func(p *engine.Project) {
			p.Root.Branches[1].To.Branches[1].Label = "middling"
		}, VOIOptions{}, `"Demand" appears in different forms`},
		{"twice on a path", func(p *engine.Project) {
			p.Root.Branches[0].To.Branches[0].To = vtChance("m3", "Demand", vtBr("Strong", "0.4", vtEnd("e5", "1")), vtBr("Weak", "0.6", vtEnd("e6", "2")))
		}, VOIOptions{AnyBranch: true}, `"Demand" appears twice on one path`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := vtLaunchProject()
			tc.edit(p)
			rep, err := EVPI(p, tc.opt)
			require.NoError(t, err)
			f := vtFigureNamed(t, rep, "Demand")
			assert.False(t, f.Valid)
			assert.Contains(t, f.Reason, tc.reason)
			assert.False(t, rep.Whole.Valid)
			assert.Contains(t, rep.Whole.Reason, `not every uncertainty can be learnt first: "Demand"`)
		})
	}
	// With any-branch allowed, an uncertainty on one alternative only has a value:
	// 0.4·max(100, 20) + 0.6·max(−50, 20) = 52 again.
	p := vtLaunchProject()
	p.Root.Branches[1].To = vtEnd("e3", "20")
	rep, err := EVPI(p, VOIOptions{AnyBranch: true})
	require.NoError(t, err)
	f := vtFigureNamed(t, rep, "Demand")
	require.True(t, f.Valid, f.Reason)
	assert.Equal(t, "32", f.EVPI.String())
}

func TestEVPIRejectsInvalidProject(t *testing.T) {
	p := vtLaunchProject()
	p.Root.Branches[0].To.Branches[0].Probability = "0.3"
	_, err := EVPI(p, VOIOptions{})
	require.Error(t, err)
	assert.Contains(t, err.Error(), `node "m1"`)
}

// scenarioValue rolls back a tree in float64 with some chance nodes forced to one
// branch; it is an independent, recursive check of the restructuring.
func vtScenarioValue(r *engine.Result, n *engine.Node, forced map[*engine.Node]int) float64 {
	maximize := r.Project.Objective != engine.Minimize
	branch := func(i int) float64 {
		return r.Cash(n, i).InexactFloat64() + vtScenarioValue(r, n.Branches[i].To, forced)
	}
	switch n.Kind {
	case engine.End:
		return r.Payoff(n).InexactFloat64()
	case engine.Chance:
		if k, ok := forced[n]; ok {
			return branch(k)
		}
		v := 0.0
		for i := range n.Branches {
			v += r.Probability(n, i).InexactFloat64() * branch(i)
		}
		return v
	}
	best := branch(0)
	for i := 1; i < len(n.Branches); i++ {
		if v := branch(i); (maximize && v > best) || (!maximize && v < best) {
			best = v
		}
	}
	return best
}

// perfectValue enumerates every joint outcome of the given chance nodes
// (scenario enumeration, the definition of EVPI) and returns Σ P(s)·value(s).
func vtPerfectValue(r *engine.Result, nodes []*engine.Node) float64 {
	forced := map[*engine.Node]int{}
	var rec func(i int, p float64) float64
	rec = func(i int, p float64) float64 {
		if i == len(nodes) {
			return p * vtScenarioValue(r, r.Project.Root, forced)
		}
		sum := 0.0
		for k := range nodes[i].Branches {
			q := r.Probability(nodes[i], k).InexactFloat64()
			if q == 0 {
				continue
			}
			forced[nodes[i]] = k
			sum += rec(i+1, p*q)
		}
		delete(forced, nodes[i])
		return sum
	}
	return rec(0, 1)
}

func TestEVPIOnRandomTreesAgainstScenarioEnumeration(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 17))
	checked := 0
	for trial := 0; trial < 60; trial++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 18, MaxBranches: 3, UseCash: true, UseRest: trial%2 == 0, UseVars: trial%3 == 0})
		r := engine.Evaluate(p.Clone())
		require.True(t, r.Valid(), "trial %d", trial)
		rep, err := EVPI(p, VOIOptions{AnyBranch: true})
		require.NoError(t, err, "trial %d", trial)
		without := rep.Without.InexactFloat64()
		sign := 1.0
		if p.Objective == engine.Minimize {
			sign = -1
		}
		var chanceNodes []*engine.Node
		for _, n := range r.Nodes {
			if n.Kind == engine.Chance {
				chanceNodes = append(chanceNodes, n)
			}
		}
		for i, f := range rep.Nodes {
			require.True(t, f.Valid, "trial %d: %s", trial, f.Reason)
			assert.False(t, f.EVPI.IsNegative(), "trial %d: EVPI of %s is %s", trial, f.Name, f.EVPI)
			want := sign * (vtPerfectValue(r, chanceNodes[i:i+1]) - without)
			assert.InDelta(t, want, f.EVPI.InexactFloat64(), 1e-6, "trial %d node %s", trial, f.Name)
			assert.True(t, rep.Whole.EVPI.GreaterThanOrEqual(f.EVPI), "learning everything is worth at least learning one thing")
		}
		require.True(t, rep.Whole.Valid, rep.Whole.Reason)
		assert.False(t, rep.Whole.EVPI.IsNegative())
		want := sign * (vtPerfectValue(r, chanceNodes) - without)
		assert.InDelta(t, want, rep.Whole.EVPI.InexactFloat64(), 1e-6, "trial %d whole", trial)
		checked++
	}
	assert.Equal(t, 60, checked)
}

func TestEVPINeverNegativeWithRiskAttitude(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for trial := 0; trial < 30; trial++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 15, MaxBranches: 3, UseCash: true})
		p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: fmt.Sprint(300 + rng.IntN(2000))}
		rep, err := EVPI(p, VOIOptions{AnyBranch: true})
		require.NoError(t, err)
		for _, f := range append(rep.Nodes, rep.Whole) {
			require.True(t, f.Valid, f.Reason)
			assert.False(t, f.EVPI.IsNegative(), "trial %d %s: %s", trial, f.Name, f.EVPI)
		}
	}
}

func TestEVPIOnTheDemo(t *testing.T) {
	p, err := engine.Load("../../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	rep, err := EVPI(p, VOIOptions{})
	require.NoError(t, err)
	for _, f := range rep.Nodes {
		assert.False(t, f.Valid, "every uncertainty of the demo lies on one alternative only")
		assert.Contains(t, f.Reason, "only on some branches")
	}
	rep, err = EVPI(p, VOIOptions{AnyBranch: true})
	require.NoError(t, err)
	r := engine.Evaluate(p.Clone())
	var chanceNodes []*engine.Node
	for _, n := range r.Nodes {
		if n.Kind == engine.Chance {
			chanceNodes = append(chanceNodes, n)
		}
	}
	require.True(t, rep.Whole.Valid, rep.Whole.Reason)
	want := rep.Without.InexactFloat64() - vtPerfectValue(r, chanceNodes)
	assert.InDelta(t, want, rep.Whole.EVPI.InexactFloat64(), 1e-6)
	assert.True(t, rep.Whole.EVPI.GreaterThan(decimal.Zero))
	assert.False(t, math.IsNaN(want))
}
