package engine_test

import (
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

func end(id, payoff string) *engine.Node {
	return &engine.Node{ID: id, Kind: engine.End, Payoff: payoff}
}

func br(label, prob string, to *engine.Node) *engine.Branch {
	return &engine.Branch{Label: label, Probability: prob, To: to}
}

// settlementTree is the settlement-negotiation tree of Clemen & Reilly, Making Hard
// Decisions, ch. 4 (values in billions, from memory), with neutral labels.
func settlementTree() *engine.Project {
	court := func(id string) *engine.Node {
		return &engine.Node{ID: id, Kind: engine.Chance, Name: "Court award", Branches: []*engine.Branch{
			br("High award", "0.2", end(id+"-high", "10.3")),
			br("Middle award", "0.5", end(id+"-mid", "5")),
			br("No award", "0.3", end(id+"-none", "0")),
		}}
	}
	return &engine.Project{Objective: engine.Maximize, Root: &engine.Node{ID: "first", Kind: engine.Decision, Branches: []*engine.Branch{
		br("Accept 2", "", end("accept2", "2")),
		br("Counter with 5", "", &engine.Node{ID: "reply", Kind: engine.Chance, Branches: []*engine.Branch{
			br("They accept 5", "0.17", end("accept5", "5")),
			br("They refuse", "0.50", court("court1")),
			br("They counter with 3", "0.33", &engine.Node{ID: "second", Kind: engine.Decision, Branches: []*engine.Branch{
				br("Accept 3", "", end("accept3", "3")),
				br("Go to court", "", court("court2")),
			}}),
		}}),
	}}}
}

func TestSettlementTreeMatchesPublishedValues(t *testing.T) {
	// Clemen & Reilly, Making Hard Decisions, ch. 4: court EMV 4.56, counter-offer EMV 4.63
	// (values from memory; 4.63 is 4.6348 rounded).
	p := settlementTree()
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	assert.Equal(t, "4.56", r.ValueOf(p.FindNode("court1")).String())
	assert.Equal(t, "4.6348", r.ValueOf(p.FindNode("reply")).String())
	assert.Equal(t, "4.63", r.ValueOf(p.Root).Round(2).String())
	assert.Equal(t, 1, r.Choice(p.Root), "counter-offer is recommended")
	assert.Equal(t, 1, r.Choice(p.FindNode("second")), "go to court rather than accept 3")
}

func TestCostsAreMinimizedBenefitsMaximized(t *testing.T) {
	// Expected value = Σ probability × impact; costs choose the lowest, benefits the highest
	// (common practice in quantitative risk analysis).
	tree := func() *engine.Node {
		return &engine.Node{ID: "d", Kind: engine.Decision, Branches: []*engine.Branch{
			{Label: "Fixed", Cash: "100", To: end("f", "0")},
			{Label: "Gamble", To: &engine.Node{ID: "c", Kind: engine.Chance, Branches: []*engine.Branch{
				br("Low", "0.25", end("lo", "20")), br("High", "rest", end("hi", "140")),
			}}},
		}}
	}
	for _, tt := range []struct {
		objective engine.Objective
		choice    int
		value     string
	}{{engine.Minimize, 0, "100"}, {engine.Maximize, 1, "110"}} {
		p := &engine.Project{Objective: tt.objective, Root: tree()}
		r := engine.Evaluate(p)
		require.True(t, r.Valid())
		assert.Equal(t, tt.choice, r.Choice(p.Root), tt.objective)
		assert.Equal(t, tt.value, r.ValueOf(p.Root).String(), tt.objective)
	}
}

func TestTiesGoToTheFirstBranchAndAreReported(t *testing.T) {
	p := &engine.Project{Root: &engine.Node{ID: "d", Kind: engine.Decision, Branches: []*engine.Branch{
		br("A", "", end("a", "5")), br("B", "", end("b", "7")), br("C", "", end("c", "7.0")),
	}}}
	r := engine.Evaluate(p)
	assert.Equal(t, 1, r.Choice(p.Root))
	assert.Equal(t, []int{2}, r.Ties(p.Root))
	assert.Contains(t, strings.Join(r.Recommendation(), " "), `Tied with "C"`)
}

func TestValidationListsEveryProblemWithItsPlace(t *testing.T) {
	p := &engine.Project{
		Variables: []*engine.Variable{{Name: "a", Value: "b + 1"}, {Name: "b", Value: "a * 2"}, {Name: "c", Value: "zz"}},
		Root: &engine.Node{ID: "d", Kind: engine.Decision, Branches: []*engine.Branch{
			br("Odd", "0.5", end("e1", "1")),
			{Label: "Go", To: &engine.Node{ID: "n7", Kind: engine.Chance, Branches: []*engine.Branch{
				br("Long delay", "3*dlay", end("e2", "1")),
				br("Short", "1.2", end("e3", "1")),
				br("Other", "rest", end("e4", "1")),
				br("More", "rest", end("e5", "1")),
			}}},
			{Label: "Empty", To: &engine.Node{ID: "empty", Kind: engine.Chance}},
			{Label: "Sum", To: &engine.Node{ID: "sum", Kind: engine.Chance, Branches: []*engine.Branch{
				br("x", "0.3", end("e6", "1")), br("y", "0.3", end("e7", "1")),
			}}},
		}},
	}
	r := engine.Evaluate(p)
	var msgs []string
	for _, pr := range r.Problems {
		msgs = append(msgs, pr.Msg)
	}
	all := strings.Join(msgs, "\n")
	for _, want := range []string{
		`variables refer to each other in a cycle: a → b → a`,
		`variable "c" value: unknown name "zz" at column 1`,
		`node "d" branch "Odd" probability: a decision branch has no probability`,
		`node "n7" branch "Long delay" probability: unknown name "dlay" at column 3`,
		`node "n7" branch "Short" probability: 1.2 is outside 0 to 1`,
		`node "n7" branch "More" probability: only one branch of a node may be "rest"`,
		`node "empty": a chance node needs at least one branch`,
		`node "sum" probability: the branch probabilities add up to 0.6, not 1`,
	} {
		assert.Contains(t, all, want)
	}
	assert.True(t, r.Broken(p.Root))
	assert.False(t, r.Broken(p.FindNode("e1")))
}

// bestByEnumeration enumerates every pure strategy (one branch at every decision)
// and returns the best expected value, computed as Σ path probability × path payoff.
// It shares no code with the roll-back.
func bestByEnumeration(p *engine.Project) decimal.Decimal {
	var decisions []*engine.Node
	engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
		if n.Kind == engine.Decision {
			decisions = append(decisions, n)
		}
		return true
	})
	choice := map[*engine.Node]int{}
	var best *decimal.Decimal
	var enumerate func(k int)
	enumerate = func(k int) {
		if k == len(decisions) {
			ev := pathSum(p.Root, choice, decimal.NewFromInt(1), decimal.Zero)
			if best == nil || (p.Objective == engine.Minimize && ev.LessThan(*best)) || (p.Objective != engine.Minimize && ev.GreaterThan(*best)) {
				best = &ev
			}
			return
		}
		for i := range decisions[k].Branches {
			choice[decisions[k]] = i
			enumerate(k + 1)
		}
	}
	enumerate(0)
	return *best
}

func pathSum(n *engine.Node, choice map[*engine.Node]int, prob, cash decimal.Decimal) decimal.Decimal {
	switch n.Kind {
	case engine.End:
		payoff := decimal.Zero
		if n.Payoff != "" {
			payoff = decimal.RequireFromString(n.Payoff)
		}
		return prob.Mul(cash.Add(payoff))
	case engine.Decision:
		b := n.Branches[choice[n]]
		return pathSum(b.To, choice, prob, cash.Add(cashOf(b)))
	}
	sum := decimal.Zero
	rest := decimal.NewFromInt(1)
	for _, b := range n.Branches {
		if b.Probability != engine.RestProbability {
			rest = rest.Sub(decimal.RequireFromString(b.Probability))
		}
	}
	for _, b := range n.Branches {
		q := rest
		if b.Probability != engine.RestProbability {
			q = decimal.RequireFromString(b.Probability)
		}
		sum = sum.Add(pathSum(b.To, choice, prob.Mul(q), cash.Add(cashOf(b))))
	}
	return sum
}

func cashOf(b *engine.Branch) decimal.Decimal {
	if b.Cash == "" {
		return decimal.Zero
	}
	return decimal.RequireFromString(b.Cash)
}

func TestRollBackEqualsStrategyEnumeration(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for i := 0; i < 300; i++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 4 + rng.IntN(14), MaxBranches: 3, UseRest: i%2 == 0, UseCash: true})
		r := engine.Evaluate(p)
		require.True(t, r.Valid(), "%v", r.Problems)
		require.True(t, bestByEnumeration(p).Equal(r.ValueOf(p.Root)), "tree %d: enumeration %s, roll-back %s", i, bestByEnumeration(p), r.ValueOf(p.Root))
	}
}

func TestContributionsOnThePolicyAddUpToTheRootValue(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	for i := 0; i < 200; i++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 5 + rng.IntN(60), UseRest: true, UseCash: true, UseVars: true})
		r := engine.Evaluate(p)
		require.True(t, r.Valid(), "%v", r.Problems)
		sum := decimal.Zero
		for _, row := range r.Paths() {
			if row.Optimal {
				sum = sum.Add(row.Contribution)
			}
		}
		assert.True(t, sum.Equal(r.ValueOf(p.Root)), "tree %d: %s vs %s", i, sum, r.ValueOf(p.Root))
	}
}

func TestDeepTreeRollsBackWithoutRecursion(t *testing.T) {
	p := enginetest.Chain(100_000)
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	assert.Equal(t, "100007", r.ValueOf(p.Root).String())
}

func TestFastModelAgreesWithExactEngine(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	for i := 0; i < 200; i++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 5 + rng.IntN(200), UseRest: true, UseCash: true, UseVars: true})
		if i%3 == 0 {
			p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "800"}
		}
		r := engine.Evaluate(p)
		require.True(t, r.Valid(), "%v", r.Problems)
		m, err := engine.CompileFast(p)
		require.NoError(t, err)
		for _, n := range r.Nodes {
			want := r.DisplayValue(n).InexactFloat64()
			assert.InDelta(t, want, m.ValueOf(n), 1e-9*(1+abs(want)), "tree %d node %s", i, n.ID)
			assert.Equal(t, r.Choice(n), m.ChoiceOf(n), "tree %d node %s", i, n.ID)
		}
	}
}

func TestFastModelOverridesAndReportsBadProbabilities(t *testing.T) {
	p := &engine.Project{Variables: []*engine.Variable{{Name: "q", Value: "0.4"}, {Name: "gain", Value: "q * 100"}},
		Root: &engine.Node{ID: "c", Kind: engine.Chance, Branches: []*engine.Branch{
			br("Yes", "q", end("y", "gain")), br("No", "rest", end("n", "0")),
		}}}
	m, err := engine.CompileFast(p)
	require.NoError(t, err)
	assert.InDelta(t, 16.0, m.RootValue(), 1e-12) // 0.4 × 40
	qi, ok := m.VarIndex("q")
	require.True(t, ok)
	m.SetVar(qi, 0.5)
	require.NoError(t, m.Roll())
	assert.InDelta(t, 25.0, m.RootValue(), 1e-12) // gain follows q: 0.5 × 50
	m.SetVar(qi, 1.5)
	err = m.Roll()
	require.Error(t, err)
	assert.Contains(t, err.Error(), `node "c"`)
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

func TestRiskAttitudeCertaintyEquivalent(t *testing.T) {
	// Closed form for a two-outcome gamble (Pratt 1964, "Risk Aversion in the Small and in
	// the Large", Econometrica): CE = −R ln(p e^(−a/R) + (1−p) e^(−b/R)).
	p := &engine.Project{Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "1000"},
		Root: &engine.Node{ID: "d", Kind: engine.Decision, Branches: []*engine.Branch{
			br("Gamble", "", &engine.Node{ID: "g", Kind: engine.Chance, Branches: []*engine.Branch{
				br("Win", "0.5", end("w", "2000")), br("Lose", "0.5", end("l", "-500")),
			}}),
			br("Sure", "", end("s", "600")),
		}}}
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	ce, ok := r.CertaintyEquivalent(p.FindNode("g"))
	require.True(t, ok)
	want := -1000 * mathLog(0.5*mathExp(-2)+0.5*mathExp(0.5))
	assert.InDelta(t, want, ce.InexactFloat64(), 1e-6)
	assert.Equal(t, "750", r.ValueOf(p.FindNode("g")).String())
	assert.Equal(t, 1, r.Choice(p.Root), "a risk-averse decision maker takes the sure 600 over a CE of about %.0f", want)
}

// Re-evaluation reuses cached field values only while formulas and variable values are unchanged.
func TestReEvaluationFollowsEveryChange(t *testing.T) {
	p := &engine.Project{Variables: []*engine.Variable{{Name: "q", Value: "0.4"}, {Name: "gain", Value: "100"}},
		Root: &engine.Node{ID: "c", Kind: engine.Chance, Branches: []*engine.Branch{
			br("Yes", "q", end("y", "gain")), br("No", "rest", end("n", "gain / 4")),
		}}}
	steps := []struct {
		change func()
		want   string
	}{
		{func() {}, "55"}, // 0.4·100 + 0.6·25
		{func() { p.Variables[0].Value = "0.5" }, "62.5"}, // 0.5·100 + 0.5·25
		{func() { p.Variables[1].Value = "40" }, "25"},    // 0.5·40 + 0.5·10
		{func() { p.Root.Branches[0].Probability = "q / 2" }, "17.5"},
		{func() { p.Root.Branches[1].To.Payoff = "0" }, "10"},
		{func() {}, "10"},
	}
	for i, s := range steps {
		s.change()
		r := engine.Evaluate(p)
		require.True(t, r.Valid(), "%v", r.Problems)
		assert.Equal(t, s.want, r.ValueOf(p.Root).String(), "step %d", i)
	}
}

func TestDuplicateIDsAreFoundAfterEdits(t *testing.T) {
	p := settlementTree()
	require.True(t, engine.Evaluate(p).Valid())
	require.True(t, engine.Evaluate(p).Valid()) // the quick re-check path
	p.FindNode("accept3").ID = "accept2"
	r := engine.Evaluate(p)
	require.Len(t, r.Problems, 1)
	assert.Equal(t, `node "accept2" id: the id is used by another node`, r.Problems[0].Msg)
	p.FindNode("first").Branches[0].To = &engine.Node{ID: "accept2", Kind: engine.End, Payoff: "2"} // a new node, same count
	p.FindNode("second").Branches[0].To.ID = "accept3"
	r = engine.Evaluate(p)
	assert.Len(t, r.Problems, 0)
	p.FindNode("second").Branches[0].To = &engine.Node{ID: "accept2", Kind: engine.End, Payoff: "3"}
	r = engine.Evaluate(p)
	require.Len(t, r.Problems, 1)
}

// Values too large or too finely divided for the int64 fast path must fall back
// to exact decimals and still agree with the independent enumeration.
func TestRollBackFallsBackToDecimalsExactly(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 8))
	for i := 0; i < 150; i++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 4 + rng.IntN(12), MaxBranches: 3, UseCash: true})
		engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
			switch {
			case n.Kind == engine.End && rng.IntN(2) == 0:
				n.Payoff = n.Payoff + "123456789012345678901" // beyond int64
			case n.Kind == engine.Chance && len(n.Branches) == 2 && rng.IntN(2) == 0:
				n.Branches[0].Probability = "0.1234567890123456789"
				n.Branches[1].Probability = "0.8765432109876543211"
			}
			return true
		})
		r := engine.Evaluate(p)
		require.True(t, r.Valid(), "%v", r.Problems)
		want := bestByEnumeration(p)
		require.True(t, want.Equal(r.ValueOf(p.Root)), "tree %d: enumeration %s, roll-back %s", i, want, r.ValueOf(p.Root))
		sum := decimal.Zero
		for _, row := range r.Paths() {
			if row.Optimal {
				sum = sum.Add(row.Contribution)
			}
		}
		require.True(t, sum.Equal(r.ValueOf(p.Root)), "tree %d: contributions %s, root %s", i, sum, r.ValueOf(p.Root))
	}
}

func TestANodeInTwoPlacesIsAProblemNotACrash(t *testing.T) {
	shared := end("shared", "5")
	p := &engine.Project{Root: &engine.Node{ID: "d", Kind: engine.Decision, Branches: []*engine.Branch{
		br("A", "", shared), br("B", "", shared), br("C", "", end("c", "1")),
	}}}
	r := engine.Evaluate(p)
	require.False(t, r.Valid())
	assert.Contains(t, r.Problems[0].Msg, `node "shared": this node appears in two places`)
	assert.True(t, r.Broken(p.Root))
}
