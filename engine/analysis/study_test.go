package analysis

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

// Worked by hand with Bayes' rule on the invented launch example: a market test
// says "good" with chance 0.9 when demand is strong and 0.2 when it is weak.
// P(good) = 0.9·0.4 + 0.2·0.6 = 0.48; P(strong | good) = 0.36/0.48 = 0.75,
// P(strong | bad) = 0.04/0.52. After "good" Launch is worth 0.75·100 − 0.25·50 = 62.5;
// after "bad" Launch is worth 100·0.04/0.52 − 50·0.48/0.52 < 20, so License (20).
// With the test: 0.48·62.5 + 0.52·20 = 40.4; EVSI = 40.4 − 20 = 20.4;
// EVPI = 32 (see TestEVPIWorkedByHand), efficiency 20.4/32 = 0.6375.
func TestStudyWorkedByHand(t *testing.T) {
	p := vtLaunchProject()
	before, err := engine.Marshal(p)
	require.NoError(t, err)
	plan, err := PlanStudy(p, StudySpec{DecisionID: "d", NodeID: "m2", Results: []string{"Good", "Bad"},
		Likelihood: [][]string{{"90%", "0.2"}, {"0.1", "80%"}}, Cost: "5"}, VOIOptions{})
	require.NoError(t, err)
	assert.Equal(t, "0.48", plan.Bayes.PResult[0].String())
	assert.InDelta(t, 0.75, plan.Bayes.Posterior[0][0].InexactFloat64(), 1e-20)
	assert.InDelta(t, 0.04/0.52, plan.Bayes.Posterior[1][0].InexactFloat64(), 1e-15)
	assert.Equal(t, "20", plan.Without.String())
	assert.InDelta(t, 40.4, plan.With.InexactFloat64(), 1e-9)
	assert.InDelta(t, 20.4, plan.EVSI.InexactFloat64(), 1e-9)
	assert.InDelta(t, 15.4, plan.Net.InexactFloat64(), 1e-9)
	assert.Equal(t, "5", plan.Cost.String())
	require.True(t, plan.EVPI.Valid, plan.EVPI.Reason)
	assert.Equal(t, "32", plan.EVPI.EVPI.String())
	assert.InDelta(t, 0.6375, plan.Efficiency, 1e-9)
	after, _ := engine.Marshal(p)
	assert.Equal(t, string(before), string(after), "planning does not change the project")

	// Apply: the decision gets a real alternative, worth 40.4 − 5 = 35.4, now chosen.
	inverse, err := plan.Command.Apply(p)
	require.NoError(t, err)
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	assert.Equal(t, 2, r.Choice(p.Root))
	assert.Equal(t, "Study first", p.Root.Branches[2].Label)
	assert.Equal(t, "-5", p.Root.Branches[2].Cash, "a cost is negative cash when benefits are maximized")
	assert.InDelta(t, 35.4, r.Value().InexactFloat64(), 1e-9)
	study := p.Root.Branches[2].To
	assert.Equal(t, "0.75", study.Branches[0].To.Branches[0].To.Branches[0].Probability, "posterior written as decimal text")
	// Undo restores the file exactly; redo adds it again.
	redo, err := inverse.Apply(p)
	require.NoError(t, err)
	undone, _ := engine.Marshal(p)
	assert.Equal(t, string(before), string(undone))
	_, err = redo.Apply(p)
	require.NoError(t, err)
	assert.Len(t, p.Root.Branches, 3)
}

// A study that always tells the truth is perfect information: EVSI = EVPI exactly.
func TestPerfectStudyEqualsEVPI(t *testing.T) {
	p := vtLaunchProject()
	plan, err := PlanStudy(p, StudySpec{DecisionID: "d", NodeID: "m1", Results: []string{"Says strong", "Says weak"},
		Likelihood: [][]string{{"1", "0"}, {"0", "1"}}}, VOIOptions{})
	require.NoError(t, err)
	require.True(t, plan.EVPI.Valid)
	assert.True(t, plan.EVSI.Equal(plan.EVPI.EVPI), "EVSI %s, EVPI %s", plan.EVSI, plan.EVPI.EVPI)
	assert.InDelta(t, 1, plan.Efficiency, 1e-15)
}

func TestStudyForCostsChargesTheCost(t *testing.T) {
	p := vtLaunchProject()
	p.Objective = engine.Minimize
	for _, n := range p.Nodes() {
		if n.Kind == engine.End {
			n.Payoff = "-(" + n.Payoff + ")"
		}
	}
	plan, err := PlanStudy(p, StudySpec{DecisionID: "d", NodeID: "m1", Results: []string{"Good", "Bad"},
		Likelihood: [][]string{{"0.9", "0.2"}, {"0.1", "0.8"}}, Cost: "2 + 3"}, VOIOptions{})
	require.NoError(t, err)
	assert.InDelta(t, 20.4, plan.EVSI.InexactFloat64(), 1e-9, "the saving")
	_, err = plan.Command.Apply(p)
	require.NoError(t, err)
	assert.Equal(t, "2 + 3", p.Root.Branches[2].Cash, "a cost is positive cash when costs are minimized")
}

func TestStudyRejectsBadInput(t *testing.T) {
	tests := []struct {
		name string
		spec StudySpec
		want string
	}{
		{"column", StudySpec{DecisionID: "d", NodeID: "m1", Results: []string{"A", "B"}, Likelihood: [][]string{{"0.9", "0.2"}, {"0.2", "0.8"}}}, `when "Demand" is "Strong" the chances of the results add up to 1.1, not 1`},
		{"range", StudySpec{DecisionID: "d", NodeID: "m1", Results: []string{"A", "B"}, Likelihood: [][]string{{"1.5", "0.2"}, {"-0.5", "0.8"}}}, `P("A" | "Strong"): 1.5 is outside 0 to 1`},
		{"formula", StudySpec{DecisionID: "d", NodeID: "m1", Results: []string{"A", "B"}, Likelihood: [][]string{{"0.9 *", "0.2"}, {"0.1", "0.8"}}}, `P("A" | "Strong")`},
		{"one result", StudySpec{DecisionID: "d", NodeID: "m1", Results: []string{"A"}, Likelihood: [][]string{{"1", "1"}}}, "at least two"},
		{"not a decision", StudySpec{DecisionID: "m1", NodeID: "m1", Results: []string{"A", "B"}}, `no decision node with id "m1"`},
		{"negative cost", StudySpec{DecisionID: "d", NodeID: "m1", Results: []string{"A", "B"}, Likelihood: [][]string{{"0.9", "0.2"}, {"0.1", "0.8"}}, Cost: "-3"}, "cost: -3 is negative"},
		{"twice", StudySpec{DecisionID: "d", NodeID: "m1", Results: []string{"A", "a"}, Likelihood: [][]string{{"0.9", "0.2"}, {"0.1", "0.8"}}}, `result "a": named twice`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := PlanStudy(vtLaunchProject(), tc.spec, VOIOptions{})
			require.Error(t, err)
			assert.Contains(t, err.Error(), tc.want)
		})
	}
}

// randomColumn returns k probabilities in steps of 0.05 adding up to exactly 1.
func vtRandomColumn(rng *rand.Rand, k int) []string {
	left := 20
	out := make([]string, k)
	for i := 0; i < k-1; i++ {
		u := rng.IntN(left + 1)
		out[i] = fmt.Sprintf("%.2f", float64(u)*0.05)
		left -= u
	}
	out[k-1] = fmt.Sprintf("%.2f", float64(left)*0.05)
	return out
}

func TestEVSIBetweenZeroAndEVPIOnRandomTrees(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	tried := 0
	for trial := 0; tried < 40 && trial < 400; trial++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 16, MaxBranches: 3, UseCash: true})
		var chances []*engine.Node
		for _, n := range p.Nodes() {
			if n.Kind == engine.Chance {
				chances = append(chances, n)
			}
		}
		if len(chances) == 0 {
			continue
		}
		target := chances[rng.IntN(len(chances))]
		states := len(target.Branches)
		results := 2 + rng.IntN(2)
		like := make([][]string, results)
		for r := range like {
			like[r] = make([]string, states)
		}
		for s := 0; s < states; s++ {
			col := vtRandomColumn(rng, results)
			for r := range like {
				like[r][s] = col[r]
			}
		}
		names := []string{"R1", "R2", "R3"}[:results]
		opt := VOIOptions{AnyBranch: true}
		plan, err := PlanStudy(p, StudySpec{DecisionID: p.Root.ID, NodeID: target.ID, Results: names, Likelihood: like}, opt)
		require.NoError(t, err, "trial %d", trial)
		require.True(t, plan.EVPI.Valid, plan.EVPI.Reason)
		// Posteriors are cut to 16 decimals, so allow 1e-6 on values of up to a few thousand.
		tol := decimal.RequireFromString("0.000001")
		assert.True(t, plan.EVSI.GreaterThanOrEqual(tol.Neg()), "trial %d: EVSI %s < 0", trial, plan.EVSI)
		assert.True(t, plan.EVSI.LessThanOrEqual(plan.EVPI.EVPI.Add(tol)), "trial %d: EVSI %s > EVPI %s", trial, plan.EVSI, plan.EVPI.EVPI)

		// The same study made perfectly reliable reaches EVPI exactly.
		perfect := make([][]string, states)
		for r := range perfect {
			perfect[r] = make([]string, states)
			for s := range perfect[r] {
				perfect[r][s] = "0"
			}
			perfect[r][r] = "1"
		}
		names = nil
		for s := 0; s < states; s++ {
			names = append(names, fmt.Sprintf("Shows %d", s+1))
		}
		plan, err = PlanStudy(p, StudySpec{DecisionID: p.Root.ID, NodeID: target.ID, Results: names, Likelihood: perfect}, opt)
		require.NoError(t, err, "trial %d", trial)
		assert.True(t, plan.EVSI.Equal(plan.EVPI.EVPI), "trial %d: perfect study EVSI %s, EVPI %s", trial, plan.EVSI, plan.EVPI.EVPI)
		tried++
	}
	assert.Equal(t, 40, tried)
}
