package analysis

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat"

	"github.com/ramify-app/ramify/engine"
)

func dec(s string) decimal.Decimal { return decimal.RequireFromString(s) }

func dist(pairs ...string) Distribution {
	var outs []Outcome
	for i := 0; i+1 < len(pairs); i += 2 {
		outs = append(outs, Outcome{Value: dec(pairs[i]), Probability: dec(pairs[i+1])})
	}
	return NewDistribution(outs)
}

func TestDistributionMergesAndAccumulates(t *testing.T) {
	d := dist("100", "0.2", "-50", "0.3", "100.0", "0.1", "7", "0", "20", "0.4")
	require.Len(t, d.Outcomes, 3, "equal payoffs merged, impossible ones dropped")
	assert.Equal(t, []string{"-50", "20", "100"}, []string{d.Outcomes[0].Value.String(), d.Outcomes[1].Value.String(), d.Outcomes[2].Value.String()})
	assert.True(t, dec("0.3").Equal(d.Outcomes[2].Probability))
	assert.True(t, dec("1").Equal(d.Total()))
	assert.True(t, dec("0.7").Equal(d.CDF(dec("99.99"))))
	assert.True(t, dec("0").Equal(d.CDF(dec("-51"))))
}

func TestStatisticsAgainstGonum(t *testing.T) {
	// Mean and population SD against gonum's weighted stat.PopMeanStdDev, and
	// quantiles against stat.Quantile with stat.Empirical, which is the lower
	// quantile used here (Hyndman & Fan 1996, definition 1).
	tests := []struct {
		name  string
		pairs []string
	}{
		{"three", []string{"-1000", "0.25", "0", "0.5", "2500", "0.25"}},
		{"skewed", []string{"10", "0.05", "20", "0.05", "30", "0.3", "40", "0.35", "90", "0.25"}},
		{"single", []string{"42.5", "1"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			d := dist(tc.pairs...)
			var xs, ws []float64
			for _, o := range d.Outcomes {
				xs = append(xs, o.Value.InexactFloat64())
				ws = append(ws, o.Probability.InexactFloat64())
			}
			s := d.Statistics(LossRule{}, 0)
			mean, sd := stat.PopMeanStdDev(xs, ws)
			assert.InDelta(t, mean, s.EV.InexactFloat64(), 1e-9)
			assert.InDelta(t, sd, s.SD.InexactFloat64(), 1e-6)
			for q, got := range map[float64]decimal.Decimal{0.1: s.P10, 0.5: s.P50, 0.9: s.P90} {
				assert.Equal(t, stat.Quantile(q, stat.Empirical, xs, ws), got.InexactFloat64(), "P%g", q*100)
			}
			assert.Equal(t, xs[0], s.Min.InexactFloat64())
			assert.Equal(t, xs[len(xs)-1], s.Max.InexactFloat64())
			assert.False(t, s.HasCE)
		})
	}
}

func TestLossRule(t *testing.T) {
	d := dist("-200", "0.1", "0", "0.2", "150", "0.3", "400", "0.4")
	tests := []struct {
		name string
		rule LossRule
		want string
		ok   bool
	}{
		{"payoff below 0", LossRule{}, "0.1", true},
		{"payoff below 150", LossRule{Threshold: dec("150"), HasThreshold: true}, "0.3", true},
		{"cost above 150", LossRule{Minimize: true, Threshold: dec("150"), HasThreshold: true}, "0.4", true},
		{"cost without threshold", LossRule{Minimize: true}, "0", false},
	}
	for _, tc := range tests {
		got, ok := d.Loss(tc.rule)
		assert.Equal(t, tc.ok, ok, tc.name)
		assert.True(t, dec(tc.want).Equal(got), "%s: %s", tc.name, got)
	}
}

func TestDominanceHandBuilt(t *testing.T) {
	// Definitions: Hadar & Russell 1969, "Rules for Ordering Uncertain
	// Prospects", American Economic Review; cases built by hand.
	tests := []struct {
		name          string
		a, b          Distribution
		minimize      bool
		first, second bool // a over b
		firstBA       bool // b over a at first order
		secondBA      bool
	}{
		{"more chance of the high payoff", dist("0", "0.5", "100", "0.5"), dist("0", "0.6", "100", "0.4"), false, true, true, false, false},
		{"same as costs: less is better", dist("0", "0.5", "100", "0.5"), dist("0", "0.6", "100", "0.4"), true, false, false, true, true},
		{"sure 50 over a 0/100 coin", dist("50", "1"), dist("0", "0.5", "100", "0.5"), false, false, true, false, false},
		{"sure cost 50 over a 0/100 cost coin", dist("50", "1"), dist("0", "0.5", "100", "0.5"), true, false, true, false, false},
		{"neither: higher EV, more spread", dist("0", "0.5", "100", "0.5"), dist("40", "1"), false, false, false, false, false},
		{"shifted up", dist("10", "0.3", "60", "0.7"), dist("0", "0.3", "50", "0.7"), false, true, true, false, false},
		{"identical", dist("1", "0.5", "2", "0.5"), dist("2", "0.5", "1", "0.5"), false, false, false, false, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			assert.Equal(t, tc.first, FirstOrder(tc.a, tc.b, tc.minimize), "a over b, first order")
			assert.Equal(t, tc.second, SecondOrder(tc.a, tc.b, tc.minimize), "a over b, second order")
			assert.Equal(t, tc.firstBA, FirstOrder(tc.b, tc.a, tc.minimize), "b over a, first order")
			assert.Equal(t, tc.secondBA, SecondOrder(tc.b, tc.a, tc.minimize), "b over a, second order")
			if tc.first {
				// First order implies second order and a better mean (Levy 1992).
				ea, eb := tc.a.Mean(), tc.b.Mean()
				if tc.minimize {
					assert.True(t, ea.LessThan(eb))
				} else {
					assert.True(t, ea.GreaterThan(eb))
				}
			}
		})
	}
}

func TestDominanceSentences(t *testing.T) {
	profiles := []*Profile{
		{Name: "Option B", Dist: dist("0", "0.5", "100", "0.5")},
		{Name: "Option C", Dist: dist("0", "0.6", "100", "0.4")},
		{Name: "Option D", Dist: dist("0", "0.5", "100", "0.5")},
	}
	findings := FindDominance(profiles, false)
	require.Len(t, findings, 2)
	assert.Contains(t, findings[0].Sentence, `"Option B" dominates "Option C" at first order: at every level its chance of doing at least that well is as high or higher`)
	summary := DominanceSummary(profiles, findings)
	assert.Contains(t, summary, `"Option B" and "Option D" have the same risk profile.`)

	none := DominanceSummary(profiles[:1], nil)
	assert.Empty(t, none)
	two := []*Profile{{Name: "X", Dist: dist("0", "0.5", "100", "0.5")}, {Name: "Y", Dist: dist("40", "1")}}
	assert.Equal(t, []string{"No alternative dominates another at first or second order: the choice depends on the attitude to risk."},
		DominanceSummary(two, FindDominance(two, false)))
}

// pathsProfile is an independent oracle for one alternative: it uses the
// engine's path table (probability and payoff of every end reached from the
// root) instead of tracing, for trees whose root is the decision.
func pathsProfile(r *engine.Result, root *engine.Node, branch int) Distribution {
	child := root.Branches[branch].To
	var outs []Outcome
	for _, row := range r.Paths() {
		// Follow the end up to the root: it must come through branch and follow
		// the result's choices at every decision below.
		n, ok := row.End, true
		for n != child && n != nil {
			parent, bi := r.ParentOf(n)
			if parent == nil {
				ok = false
				break
			}
			if parent.Kind == engine.Decision && r.Choice(parent) != bi {
				ok = false
			}
			n = parent
		}
		if ok && n == child {
			outs = append(outs, Outcome{Value: row.Payoff, Probability: row.Probability})
		}
	}
	return NewDistribution(outs)
}

func TestProfilesOnRandomTrees(t *testing.T) {
	// For every alternative at the root: probabilities sum to 1; the mean is the
	// engine's rolled-back value of that branch; the profile equals the one read
	// from the engine's path table; and under exponential utility the profile's
	// CE equals the engine's rolled-back CE (exponential utility makes the CE of
	// a compound gamble that of its flattened form: Pratt 1964, constant risk
	// aversion).
	rng := rand.New(rand.NewPCG(7, 11))
	for trial := 0; trial < 60; trial++ {
		objective := engine.Maximize
		if trial%2 == 1 {
			objective = engine.Minimize
		}
		p := randomTree(rng, 20+rng.IntN(120), objective, true)
		if trial%3 == 0 {
			p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "800"}
		}
		a, err := Analyse(p, Options{})
		require.NoError(t, err, "trial %d", trial)
		root := a.Result.Project.Root
		for k, pr := range a.Profiles {
			require.True(t, decimal.NewFromInt(1).Equal(pr.Dist.Total()), "trial %d alt %d total %s", trial, k, pr.Dist.Total())
			want := a.Result.ValueOf(root.Branches[k].To).Add(a.Result.Cash(root, k))
			assert.True(t, want.Equal(pr.Stats.EV), "trial %d alt %d: mean %s, roll-back %s", trial, k, pr.Stats.EV, want)
			oracle := pathsProfile(a.Result, root, k)
			assert.True(t, Same(oracle, pr.Dist), "trial %d alt %d: profile differs from the path table", trial, k)
			if a.RiskOn {
				engineCE := a.Result.BranchValue(root, k).InexactFloat64()
				assert.InDelta(t, engineCE, pr.Stats.CE.InexactFloat64(), 1e-6*math.Max(1, math.Abs(engineCE)), "trial %d alt %d", trial, k)
			}
		}
	}
}

func TestRiskNeutralRecommendationIsEVRollBack(t *testing.T) {
	// The alternative with the best profile mean (computed by tracing paths)
	// is the one the engine's EV roll-back chooses, and the best pure strategy
	// found by enumeration has the roll-back's value (Bellman's principle of
	// optimality).
	rng := rand.New(rand.NewPCG(3, 5))
	for trial := 0; trial < 60; trial++ {
		objective := engine.Maximize
		if trial%2 == 1 {
			objective = engine.Minimize
		}
		p := randomTree(rng, 15+rng.IntN(60), objective, true)
		p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "300"} // overridden below
		a, err := Analyse(p, Options{Risk: &engine.RiskAttitude{}, Strategies: true, Limit: 5000})
		require.NoError(t, err)
		require.False(t, a.RiskOn)
		best := 0
		for k, pr := range a.Profiles {
			if objective.Better(pr.Stats.EV.InexactFloat64(), a.Profiles[best].Stats.EV.InexactFloat64()) {
				best = k
			}
		}
		root := a.Neutral.Project.Root
		choice := a.Neutral.Choice(root)
		assert.True(t, a.Profiles[best].Stats.EV.Equal(a.Profiles[choice].Stats.EV), "trial %d: best mean at %d, roll-back chose %d", trial, best, choice)
		assert.True(t, a.Rows[choice].BestNeutral)
		if a.StrategyNote != "" {
			continue
		}
		require.NotEmpty(t, a.Strategies)
		bestS := a.Strategies[0].Stats.EV
		for _, s := range a.Strategies {
			require.True(t, decimal.NewFromInt(1).Equal(s.Dist.Total()))
			if objective.Better(s.Stats.EV.InexactFloat64(), bestS.InexactFloat64()) {
				bestS = s.Stats.EV
			}
		}
		assert.True(t, a.Neutral.ValueOf(root).Equal(bestS), "trial %d: best strategy %s, roll-back %s", trial, bestS, a.Neutral.ValueOf(root))
	}
}

func TestStrategyCount(t *testing.T) {
	// Root decision: A leads to a chance node with two decisions of 2 and 3
	// branches (2 × 3 = 6 strategies), B to an end (1): 7 in all.
	d2 := node("d2", engine.Decision, branch("x", "", "", end("e1", "1")), branch("y", "", "", end("e2", "2")))
	d3 := node("d3", engine.Decision, branch("u", "", "", end("e3", "3")), branch("v", "", "", end("e4", "4")), branch("w", "", "", end("e5", "5")))
	c := node("c", engine.Chance, branch("hi", "0.5", "", d2), branch("lo", "rest", "", d3))
	root := node("root", engine.Decision, branch("A", "", "", c), branch("B", "", "", end("e6", "6")))
	n, over := CountStrategies(root, 100)
	assert.Equal(t, uint64(7), n)
	assert.False(t, over)
	_, over = CountStrategies(root, 6)
	assert.True(t, over)

	p := &engine.Project{Root: root}
	a, err := Analyse(p, Options{Strategies: true})
	require.NoError(t, err)
	require.Len(t, a.Strategies, 7)
	assert.Equal(t, `A; at "d2": x; at "d3": u`, a.Strategies[0].Name)
	// The best strategy: B pays 6 for sure; A's best is 0.5×2 + 0.5×5 = 3.5.
	assert.Equal(t, "B", a.Strategies[6].Name)
	assert.True(t, dec("3.5").Equal(a.Profiles[0].Stats.EV))
}

func TestStrategyExplosionStopsAtLimit(t *testing.T) {
	// 64 chance branches each leading to a two-way decision: 2^64 strategies,
	// more than a uint64 holds. Counting must saturate, not overflow or hang.
	var bs []*engine.Branch
	for i := 0; i < 64; i++ {
		d := node("d"+string(rune('A'+i%26))+string(rune('a'+i/26)), engine.Decision,
			branch("go", "", "", end("g"+string(rune('A'+i%26))+string(rune('a'+i/26)), "1")),
			branch("stop", "", "", end("s"+string(rune('A'+i%26))+string(rune('a'+i/26)), "0")))
		prob := "0.015625" // 1/64
		bs = append(bs, branch("case", prob, "", d))
	}
	c := node("c", engine.Chance, bs...)
	root := node("root", engine.Decision, branch("play", "", "", c), branch("pass", "", "", end("pass", "0")))
	n, over := CountStrategies(root, DefaultStrategyLimit)
	assert.True(t, over)
	assert.Equal(t, uint64(DefaultStrategyLimit+1), n)

	a, err := Analyse(&engine.Project{Root: root}, Options{Strategies: true})
	require.NoError(t, err)
	assert.Empty(t, a.Strategies)
	assert.Contains(t, a.StrategyNote, "more than 200 pure strategies")
	assert.Len(t, a.Profiles, 2, "falls back to the alternatives")
	assert.True(t, dec("1").Equal(a.Profiles[0].Stats.EV))
}

func TestAnalyseBadInput(t *testing.T) {
	ok := func() *engine.Project {
		return &engine.Project{Root: node("root", engine.Decision, branch("a", "", "", end("e1", "10")), branch("b", "", "", end("e2", "5")))}
	}
	tests := []struct {
		name string
		p    *engine.Project
		opt  Options
		err  string
	}{
		{"R zero", ok(), Options{Risk: &engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "0"}}, "R cannot be 0"},
		{"R not a number", ok(), Options{Risk: &engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "ten thousand"}}, "risk tolerance"},
		{"unknown node", ok(), Options{NodeID: "nope"}, `no node with id "nope"`},
		{"broken tree", &engine.Project{Root: node("root", engine.Chance, branch("a", "0.4", "", end("e", "1")))}, Options{}, `node "root" probability`},
		{"no tree", &engine.Project{}, Options{}, "no tree"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Analyse(tc.p, tc.opt)
			assert.ErrorContains(t, err, tc.err)
		})
	}
}

func TestAnalyseAtInnerNodeAndChanceNode(t *testing.T) {
	// Profiles at an inner decision are measured from that decision: cash paid
	// before it is left out (as the engine's value at the node leaves it out).
	inner := node("inner", engine.Decision, branch("safe", "", "-10", end("s", "100")), branch("risky", "", "", node("c2", engine.Chance,
		branch("win", "0.5", "", end("w", "300")), branch("lose", "rest", "", end("l", "-100")))))
	root := node("root", engine.Chance, branch("on", "0.5", "-1000", inner), branch("off", "rest", "", end("off", "0")))
	p := &engine.Project{Root: root}
	a, err := Analyse(p, Options{NodeID: "inner"})
	require.NoError(t, err)
	require.Len(t, a.Profiles, 2)
	assert.True(t, dec("90").Equal(a.Profiles[0].Stats.EV))
	assert.True(t, dec("100").Equal(a.Profiles[1].Stats.EV))
	assert.True(t, dec("0.5").Equal(a.Profiles[1].Stats.PLoss))

	// A chance root gives one profile: the whole project under the recommended choices.
	b, err := Analyse(p, Options{})
	require.NoError(t, err)
	require.Len(t, b.Profiles, 1)
	assert.True(t, b.Result.ValueOf(b.Result.Project.Root).Equal(b.Profiles[0].Stats.EV))
	// "on" pays −1000 and then −700 or −1100 (both losses); "off" pays 0, not a loss.
	assert.True(t, dec("0.5").Equal(b.Profiles[0].Stats.PLoss))
}

func TestStrategyTableOutputs(t *testing.T) {
	p := &engine.Project{Objective: engine.Minimize, Currency: "EUR",
		Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "100"},
		Root: node("root", engine.Decision,
			branch("steady", "", "", end("s", "60")),
			branch("gamble", "", "", node("c", engine.Chance, branch("low", "0.5", "", end("l", "0")), branch("high", "rest", "", end("h", "100")))))}
	th := dec("80")
	a, err := Analyse(p, Options{LossThreshold: &th})
	require.NoError(t, err)
	// Expected cost: steady 60 < gamble 50? No: gamble 50 is cheaper on average,
	// but at R = 100 its CE cost is 100 ln((1 + e)/2) ≈ 62.0 (closed form), dearer than 60.
	assert.True(t, a.Rows[1].BestNeutral)
	assert.True(t, a.Rows[0].BestAtR)
	assert.InDelta(t, 100*math.Log((1+math.E)/2), a.Rows[1].Stats.CE.InexactFloat64(), 1e-9)

	var buf bytes.Buffer
	require.NoError(t, engine.WriteCSV(&buf, a.Result, "strategies"))
	rows, err := csv.NewReader(&buf).ReadAll()
	require.NoError(t, err)
	require.Len(t, rows, 3)
	assert.Equal(t, "expected_cost", rows[0][1])
	assert.Equal(t, []string{"gamble", "50"}, rows[2][:2])
	assert.Equal(t, "100", rows[2][3])

	doc := a.JSON()
	data, err := json.Marshal(doc)
	require.NoError(t, err)
	var back ProfileDoc
	require.NoError(t, json.Unmarshal(data, &back))
	require.Len(t, back.Alternatives, 2)
	assert.Equal(t, "0.5", back.Alternatives[1].PLoss)
	assert.Equal(t, []OutcomeDoc{{"0", "0.5", "0.5"}, {"100", "0.5", "1"}}, back.Alternatives[1].Outcomes)
	assert.Equal(t, engine.Caution, back.Caution)
	assert.Contains(t, a.TableHeader(), "P(cost > 80)")

	for _, cumulative := range []bool{false, true} {
		chart, err := a.ProfileChart(cumulative, nil)
		require.NoError(t, err)
		path := filepath.Join(t.TempDir(), "profile.svg")
		require.NoError(t, SaveChart(chart, path, 0, 0))
		svg, err := os.ReadFile(path)
		require.NoError(t, err)
		assert.Contains(t, string(svg), "Cost (EUR)")
		assert.Contains(t, string(svg), "gamble")
	}
}

func BenchmarkProfile1000Nodes(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	p := randomTree(rng, 840, engine.Maximize, true) // about 1,000 nodes (reported)
	p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "2000"}
	for b.Loop() {
		if _, err := Analyse(p, Options{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(p.Nodes())), "nodes")
}

// expectedMin is E[min(X, t)], computed straight from the outcomes.
func expectedMin(d Distribution, t decimal.Decimal) decimal.Decimal {
	sum := decimal.Zero
	for _, o := range d.Outcomes {
		sum = sum.Add(o.Probability.Mul(decimal.Min(o.Value, t)))
	}
	return sum
}

func TestDominanceAgreesWithUtilityCharacterisation(t *testing.T) {
	// Expected-utility characterisations (Levy 1992, "Stochastic Dominance and
	// Expected Utility: Survey and Analysis", Management Science):
	// A ≥ B at first order iff E[1(A > t)] ≥ E[1(B > t)] for every t;
	// at second order iff E[min(A, t)] ≥ E[min(B, t)] for every t (the
	// increasing concave utilities min(x, t) span the class).
	// Checked on random small profiles, every t on the joint support.
	rng := rand.New(rand.NewPCG(21, 8))
	randomDist := func() Distribution {
		k := 1 + rng.IntN(4)
		var outs []Outcome
		left := 20
		for i := 0; i < k; i++ {
			w := left
			if i < k-1 {
				w = rng.IntN(left + 1)
			}
			left -= w
			outs = append(outs, Outcome{Value: decimal.NewFromInt(int64(rng.IntN(7) * 10)), Probability: decimal.NewFromInt(int64(w)).Div(decimal.NewFromInt(20))})
		}
		return NewDistribution(outs)
	}
	found := map[int]int{}
	for trial := 0; trial < 3000; trial++ {
		a, b := randomDist(), randomDist()
		xs := support(a, b)
		fsd, ssd, strict1, strict2 := true, true, false, false
		for _, x := range xs {
			pa, pb := decimal.NewFromInt(1).Sub(a.CDF(x)), decimal.NewFromInt(1).Sub(b.CDF(x))
			if pa.LessThan(pb) {
				fsd = false
			}
			if pa.GreaterThan(pb) {
				strict1 = true
			}
			ma, mb := expectedMin(a, x), expectedMin(b, x)
			if ma.LessThan(mb) {
				ssd = false
			}
			if ma.GreaterThan(mb) {
				strict2 = true
			}
		}
		// Beyond the largest outcome E[min(X, t)] is the mean.
		if a.Mean().GreaterThan(b.Mean()) {
			strict2 = true
		}
		require.Equal(t, fsd && strict1, FirstOrder(a, b, false), "trial %d: %v vs %v", trial, a.Outcomes, b.Outcomes)
		require.Equal(t, ssd && strict2, SecondOrder(a, b, false), "trial %d: %v vs %v", trial, a.Outcomes, b.Outcomes)
		// Costs: B's negation against A's.
		require.Equal(t, FirstOrder(a, b, false), FirstOrder(negate(a), negate(b), true))
		require.Equal(t, SecondOrder(a, b, false), SecondOrder(negate(a), negate(b), true))
		if FirstOrder(a, b, false) {
			found[1]++
			require.True(t, SecondOrder(a, b, false), "first order implies second order")
		} else if SecondOrder(a, b, false) {
			found[2]++
		}
	}
	assert.Greater(t, found[1], 50, "the random cases include first-order dominance")
	assert.Greater(t, found[2], 50, "and second-order dominance without first")
}

func negate(d Distribution) Distribution {
	var outs []Outcome
	for _, o := range d.Outcomes {
		outs = append(outs, Outcome{Value: o.Value.Neg(), Probability: o.Probability})
	}
	return NewDistribution(outs)
}
