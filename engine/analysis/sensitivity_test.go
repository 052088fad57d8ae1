package analysis

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

func sensEnd(id, payoff string) *engine.Node {
	return &engine.Node{ID: id, Kind: engine.End, Payoff: payoff}
}

// linearPair builds a decision between two gambles whose values are a + b·p and
// c + d·p in the variable p: each alternative pays its "p" end with probability p
// and its other end otherwise, so its value is other + (pEnd − other)·p.
func linearPair(obj engine.Objective, a, b, c, dd int64) *engine.Project {
	gamble := func(id string, base, slope int64) *engine.Node {
		return &engine.Node{ID: id, Kind: engine.Chance, Branches: []*engine.Branch{
			{Label: "yes", Probability: "p", To: sensEnd(id+"-yes", fmt.Sprint(base+slope))},
			{Label: "no", Probability: "rest", To: sensEnd(id+"-no", fmt.Sprint(base))},
		}}
	}
	return &engine.Project{Objective: obj, Currency: "EUR",
		Variables: []*engine.Variable{{Name: "p", Value: "0.5", Low: "0", High: "1"}},
		Root: &engine.Node{ID: "root", Kind: engine.Decision, Branches: []*engine.Branch{
			{Label: "A", To: gamble("A", a, b)},
			{Label: "B", To: gamble("B", c, dd)},
		}}}
}

func sensEvaluated(t *testing.T, p *engine.Project) *engine.Result {
	t.Helper()
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	return r
}

func TestLinearBreakEvenEqualsClosedForm(t *testing.T) {
	// For two alternatives with values a + b·p and c + d·p the threshold is
	// p* = (c − a)/(b − d) (common practice: equate the two lines).
	tests := []struct {
		name       string
		obj        engine.Objective
		a, b, c, d int64
		steps      int
	}{
		{"benefits, a third", engine.Maximize, 100, 300, 200, 0, 50},
		{"benefits, crossing slopes", engine.Maximize, -50, 120, 30, -45, 7},
		{"costs", engine.Minimize, 900, -400, 700, 100, 50},
		{"coarse grid", engine.Maximize, 10, 90, 40, 3, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := linearPair(tc.obj, tc.a, tc.b, tc.c, tc.d)
			r := sensEvaluated(t, p)
			sw, err := Sweep(context.Background(), p, r, VariableInput("p"), SweepOptions{Steps: tc.steps})
			require.NoError(t, err)
			require.Len(t, sw.BreakEvens, 1)
			be := sw.BreakEvens[0]
			want := engine.Divide(decimal.NewFromInt(tc.c-tc.a), decimal.NewFromInt(tc.b-tc.d))
			assert.True(t, be.Exact, "linear values must be solved exactly")
			assert.True(t, be.At.Sub(want).Abs().LessThan(sdec("1e-25")), "break-even %s, closed form %s", be.At, want)
			// The sweep's winner changes exactly there.
			for k, x := range sw.X {
				switch {
				case x.LessThan(be.At):
					assert.Equal(t, be.From, sw.Best[k], "below the break-even at %s", x)
				case x.GreaterThan(be.At):
					assert.Equal(t, be.To, sw.Best[k], "above the break-even at %s", x)
				}
			}
			assert.NotEqual(t, be.From, be.To)
		})
	}
}

func TestBreakEvenOnATreeFieldUsesTheRestRule(t *testing.T) {
	// A sure 180 against a gamble paying 400 with probability q, else 100:
	// 100 + 300q = 180 at q = 80/300 (closed form, common practice).
	p := &engine.Project{Objective: engine.Maximize, Root: &engine.Node{ID: "root", Kind: engine.Decision, Branches: []*engine.Branch{
		{Label: "sure", To: sensEnd("s", "180")},
		{Label: "gamble", To: &engine.Node{ID: "g", Kind: engine.Chance, Branches: []*engine.Branch{
			{Label: "win", Probability: "0.5", To: sensEnd("w", "400")},
			{Label: "lose", Probability: "rest", To: sensEnd("l", "100")},
		}}},
	}}}
	r := sensEvaluated(t, p)
	sw, err := Sweep(context.Background(), p, r, FieldInput("g", 0, FieldProbability), SweepOptions{})
	require.NoError(t, err)
	assert.Equal(t, RuleRest, sw.Setting.Rule)
	require.Len(t, sw.BreakEvens, 1)
	want := engine.Divide(sdec("80"), sdec("300"))
	assert.True(t, sw.BreakEvens[0].At.Sub(want).Abs().LessThan(sdec("1e-25")), "got %s want %s", sw.BreakEvens[0].At, want)
	assert.Equal(t, 0, sw.BreakEvens[0].From)
	assert.Equal(t, 1, sw.BreakEvens[0].To)
	assert.Equal(t, "0.5", p.Root.Branches[1].To.Branches[0].Probability, "the project is not changed")
}

func TestNonlinearBreakEvenIsBisectedAndConfirmed(t *testing.T) {
	// Under U(x) = 1 − exp(−x/R), a gamble paying X with probability p (else 0)
	// has CE = −R ln(p·e^(−X/R) + 1 − p); it equals a sure S at
	// p* = (1 − e^(−S/R)) / (1 − e^(−X/R)) (closed form of the exponential
	// utility's certainty equivalent; common practice).
	const X, S, R = 1000.0, 400.0, 500.0
	p := &engine.Project{Objective: engine.Maximize, Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "500"},
		Variables: []*engine.Variable{{Name: "p", Value: "0.5", Low: "0", High: "1"}},
		Root: &engine.Node{ID: "root", Kind: engine.Decision, Branches: []*engine.Branch{
			{Label: "sure", To: sensEnd("s", "400")},
			{Label: "gamble", To: &engine.Node{ID: "g", Kind: engine.Chance, Branches: []*engine.Branch{
				{Label: "win", Probability: "p", To: sensEnd("w", "1000")},
				{Label: "lose", Probability: "rest", To: sensEnd("l", "0")},
			}}},
		}}}
	r := sensEvaluated(t, p)
	require.True(t, r.RiskActive())
	sw, err := Sweep(context.Background(), p, r, VariableInput("p"), SweepOptions{Steps: 20})
	require.NoError(t, err)
	require.Len(t, sw.BreakEvens, 1)
	be := sw.BreakEvens[0]
	assert.False(t, be.Exact, "a certainty equivalent is not linear in p")
	want := (1 - math.Exp(-S/R)) / (1 - math.Exp(-X/R))
	assert.InDelta(t, want, be.At.InexactFloat64(), 1e-9)
	// The exact engine confirms the change on either side of the reported point.
	ex := newExact(p, sw.Setting)
	eps := be.At.Mul(sdec("1e-10"))
	below, err := ex.eval(be.At.Sub(eps))
	require.NoError(t, err)
	above, err := ex.eval(be.At.Add(eps))
	require.NoError(t, err)
	assert.Equal(t, be.From, below.Choice(ex.node("root")))
	assert.Equal(t, be.To, above.Choice(ex.node("root")))
}

func TestVaryingOneProbabilityKeepsADistribution(t *testing.T) {
	// Without a rest branch the others scale in proportion: at 0.6, the
	// others 0.3 and 0.5 share the remaining 0.4 as 0.15 and 0.25 (hand-derived).
	p := &engine.Project{Objective: engine.Maximize, Root: &engine.Node{ID: "root", Kind: engine.Decision, Branches: []*engine.Branch{
		{Label: "go", To: &engine.Node{ID: "c", Kind: engine.Chance, Branches: []*engine.Branch{
			{Label: "x", Probability: "0.2", To: sensEnd("x", "10")},
			{Label: "y", Probability: "0.3", To: sensEnd("y", "20")},
			{Label: "z", Probability: "0.5", To: sensEnd("z", "30")},
		}}},
		{Label: "stop", To: sensEnd("s", "0")},
	}}}
	r := sensEvaluated(t, p)
	s, err := Prepare(p, r, FieldInput("c", 0, FieldProbability), nil)
	require.NoError(t, err)
	assert.Equal(t, RuleScale, s.Rule)
	ex := newExact(p, s)
	got, err := ex.eval(sdec("0.6"))
	require.NoError(t, err)
	c := ex.node("c")
	for i, want := range []string{"0.6", "0.15", "0.25"} {
		assert.True(t, got.Probability(c, i).Equal(sdec(want)), "branch %d: %s", i, got.Probability(c, i))
	}
	// Value = 0.6·10 + 0.15·20 + 0.25·30 = 16.5
	assert.True(t, got.ValueOf(c).Equal(sdec("16.5")))
}

func TestBadInputNamesThePlaceAndLeavesTheProjectAlone(t *testing.T) {
	build := func() *engine.Project {
		return &engine.Project{Objective: engine.Maximize,
			Variables: []*engine.Variable{
				{Name: "q", Value: "0.4", Low: "0.1", High: "0.9"},
				{Name: "norange", Value: "3"},
				{Name: "upside", Value: "5", Low: "9", High: "2"},
			},
			Root: &engine.Node{ID: "root", Kind: engine.Decision, Branches: []*engine.Branch{
				{Label: "go", To: &engine.Node{ID: "c", Kind: engine.Chance, Branches: []*engine.Branch{
					{Label: "x", Probability: "q", To: sensEnd("x", "norange")},
					{Label: "y", Probability: "0.3", To: sensEnd("y", "20")},
					{Label: "z", Probability: "rest", To: sensEnd("z", "30")},
				}}},
				{Label: "stop", To: sensEnd("s", "upside")},
			}}}
	}
	rng := func(lo, hi string) *Range { return &Range{Low: sdec(lo), High: sdec(hi)} }
	tests := []struct {
		name string
		in   Input
		rng  *Range
		want string
	}{
		{"unknown variable", VariableInput("nope"), nil, `unknown variable "nope"`},
		{"no range", VariableInput("norange"), nil, `variable "norange" has no low/high range`},
		{"low above high", VariableInput("upside"), nil, `variable "upside": low 9 is above high 2`},
		{"typed range reversed", VariableInput("q"), rng("0.8", "0.2"), "low 0.8 is above high 0.2"},
		{"unknown node", FieldInput("zz", 0, FieldCash), rng("0", "1"), `unknown node "zz"`},
		{"branch out of range", FieldInput("c", 5, FieldProbability), nil, `node "c" has 3 branch(es), not 6`},
		{"probability of a decision", FieldInput("root", 0, FieldProbability), nil, `node "root" branch "go" probability: only chance branches`},
		{"payoff of a chance node", FieldInput("c", -1, FieldPayoff), rng("0", "1"), `node "c" is a chance node`},
		{"cash needs a range", FieldInput("root", 1, FieldCash), nil, `node "root" branch "stop" cash: give a range`},
		{"probability range outside 0..1", FieldInput("c", 1, FieldProbability), rng("0", "1.5"), "leaves 0 to 1"},
		{"rest would go negative", FieldInput("c", 1, FieldProbability), rng("0", "0.9"), `the rest branch "z" would be negative`},
		{"variable pushes a probability out", VariableInput("q"), rng("0", "0.8"), `node "c" branch "z" probability`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p := build()
			before, err := engine.Marshal(p)
			require.NoError(t, err)
			r := sensEvaluated(t, p)
			_, err = Sweep(context.Background(), p, r, tc.in, SweepOptions{Range: tc.rng})
			require.Error(t, err)
			assert.Contains(t, err.Error(), tc.want)
			after, err := engine.Marshal(p)
			require.NoError(t, err)
			assert.Equal(t, string(before), string(after), "the project must not change")
		})
	}
}

func TestParseInput(t *testing.T) {
	tests := []struct {
		text string
		want Input
		err  string
	}{
		{"rent_week", VariableInput("rent_week"), ""},
		{"delivery:1:probability", FieldInput("delivery", 0, FieldProbability), ""},
		{"plan:3:cash", FieldInput("plan", 2, FieldCash), ""},
		{"premium:payoff", FieldInput("premium", -1, FieldPayoff), ""},
		{"delivery:Late:probability", Input{NodeID: "delivery", Branch: -1, Label: "Late", Field: FieldProbability}, ""},
		{"delivery:0:probability", Input{}, "count from 1"},
		{"delivery:1:colour", Input{}, "give probability or cash"},
		{"a:b:c:d", Input{}, "give a variable name"},
	}
	for _, tc := range tests {
		got, err := ParseInput(tc.text)
		if tc.err != "" {
			assert.ErrorContains(t, err, tc.err, tc.text)
			continue
		}
		require.NoError(t, err, tc.text)
		assert.Equal(t, tc.want, got, tc.text)
	}
}

// withVariables returns a random valid tree of about n nodes with k variables
// (each with a low and a high) used in end payoffs and branch cash.
func withVariables(seed uint64, n, k int) *engine.Project {
	rng := rand.New(rand.NewPCG(seed, 7))
	p := enginetest.RandomProject(rng, enginetest.Options{Nodes: n, MaxBranches: 3, UseCash: true, UseRest: true})
	for len(p.Nodes()) < n*9/10 { // the generator can stop early when every branch ends; draw again
		p = enginetest.RandomProject(rng, enginetest.Options{Nodes: n, MaxBranches: 3, UseCash: true, UseRest: true})
	}
	for i := 0; i < k; i++ {
		base := 50 + rng.IntN(400)
		p.Variables = append(p.Variables, &engine.Variable{Name: fmt.Sprintf("v%d", i+1), Value: fmt.Sprint(base),
			Low: fmt.Sprint(base - 600 - rng.IntN(300)), High: fmt.Sprint(base + 600 + rng.IntN(300))})
	}
	i := 0
	for _, node := range p.Nodes() {
		if node.Kind == engine.End && k > 0 {
			node.Payoff = fmt.Sprintf("%s + %d * v%d", node.Payoff, []int{1, -2, 3, -1, 2, -3}[rng.IntN(6)], 1+rng.IntN(k))
			i++
		}
	}
	return p
}

func TestSweepBreakEvensOnRandomTreesAreConfirmedExactly(t *testing.T) {
	found := 0
	for seed := uint64(1); seed <= 24; seed++ {
		p := withVariables(seed, 60, 4)
		names := []string{"v1", "v2"}
		if seed > 12 { // the shared generator's variables: a feeds max() and b, q is a probability
			p = enginetest.RandomProject(rand.New(rand.NewPCG(seed, 3)), enginetest.Options{Nodes: 60, UseVars: true, UseCash: true})
			names = []string{"a", "q"}
		}
		r := sensEvaluated(t, p)
		for _, name := range names {
			sw, err := Sweep(context.Background(), p, r, VariableInput(name), SweepOptions{Steps: 30})
			require.NoError(t, err, "seed %d", seed)
			ex := newExact(p, sw.Setting)
			root := ex.node(p.Root.ID)
			for _, be := range sw.BreakEvens {
				eps := decimal.Max(be.At.Abs(), sdec("1")).Mul(sdec("1e-9"))
				below, err := ex.eval(be.At.Sub(eps))
				require.NoError(t, err)
				above, err := ex.eval(be.At.Add(eps))
				require.NoError(t, err)
				assert.Equal(t, be.From, below.Choice(root), "seed %d %s at %s", seed, name, be.At)
				assert.Equal(t, be.To, above.Choice(root), "seed %d %s at %s", seed, name, be.At)
			}
			found += len(sw.BreakEvens)
			// Between break-evens the sweep's winner does not change.
			changes := 0
			for k := 1; k < len(sw.Best); k++ {
				if sw.Best[k] != sw.Best[k-1] {
					changes++
				}
			}
			assert.LessOrEqual(t, changes, len(sw.BreakEvens), "seed %d %s", seed, name)
		}
	}
	assert.GreaterOrEqual(t, found, 5, "the random trees must exercise some break-evens")
}

func TestTornadoEndPointsEqualFullEvaluations(t *testing.T) {
	demo, err := engine.Load("../../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	risky := withVariables(4, 200, 8)
	risky.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "3000"}
	riskyTolerance := withVariables(5, 200, 8)
	riskyTolerance.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "v2 * 10"}
	chained := withVariables(6, 200, 8)
	chained.Variables[3].Value = "v1 / 2 + 40" // v1 reaches v4's uses too
	projects := map[string]*engine.Project{"demo": demo, "random": withVariables(3, 200, 8), "risk attitude": risky,
		"tolerance from a variable": riskyTolerance, "variable feeding a variable": chained}
	for name, p := range projects {
		t.Run(name, func(t *testing.T) {
			r := sensEvaluated(t, p)
			tor, err := Tornado(context.Background(), p, r)
			require.NoError(t, err)
			require.NotEmpty(t, tor.Bars)
			for i, b := range tor.Bars {
				if i > 0 {
					assert.True(t, tor.Bars[i-1].Swing.GreaterThanOrEqual(b.Swing), "bars sorted by swing")
				}
				for _, end := range []struct {
					x    decimal.Decimal
					want decimal.Decimal
					ch   int
				}{{b.Low, b.AtLow, b.ChoiceLow}, {b.High, b.AtHigh, b.ChoiceHigh}} {
					// A full, independent evaluation of a fresh clone with the variable set.
					c := p.Clone()
					c.Variable(b.Variable).Value = end.x.String()
					cr := engine.Evaluate(c)
					require.True(t, cr.Valid())
					assert.True(t, cr.DisplayValue(c.Root).Equal(end.want), "%s at %s: %s vs %s", b.Variable, end.x, cr.DisplayValue(c.Root), end.want)
					assert.Equal(t, cr.Policy()[0].Choice, end.ch)
				}
				assert.True(t, b.Swing.Equal(b.AtHigh.Sub(b.AtLow).Abs()))
				assert.Equal(t, b.ChoiceLow != tor.BaseChoice || b.ChoiceHigh != tor.BaseChoice, b.Flips)
			}
		})
	}
}

func TestTornadoOfTheDemoMarksFlips(t *testing.T) {
	p, err := engine.Load("../../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	r := sensEvaluated(t, p)
	tor, err := Tornado(context.Background(), p, r)
	require.NoError(t, err)
	// install_cost is paid on every path, so it moves the root cost one for one
	// (swing 265000 − 220000) and can never change the choice (hand-derived).
	require.Equal(t, "install_cost", tor.Bars[0].Variable)
	assert.True(t, tor.Bars[0].Swing.Equal(sdec("45000")))
	assert.False(t, tor.Bars[0].Flips)
}

func TestTwoWayMapAgreesWithOneWaySweeps(t *testing.T) {
	for seed := uint64(1); seed <= 6; seed++ {
		p := withVariables(seed, 80, 3)
		r := sensEvaluated(t, p)
		// Ranges symmetric about base, with an odd number of points, put the base on the grid.
		const steps = 21
		around := func(name string, h int64) *Range {
			b := r.Vars[name]
			return &Range{Low: b.Sub(decimal.NewFromInt(h)), High: b.Add(decimal.NewFromInt(h))}
		}
		xr, yr := around("v1", 150), around("v2", 120)
		rm, err := Regions(context.Background(), p, r, VariableInput("v1"), VariableInput("v2"),
			RegionOptions{XRange: xr, YRange: yr, Steps: steps, Workers: 2})
		require.NoError(t, err)
		mid := steps / 2
		require.True(t, rm.Ys[mid].Equal(r.Vars["v2"]))
		row, err := Sweep(context.Background(), p, r, VariableInput("v1"), SweepOptions{Range: xr, Steps: steps - 1})
		require.NoError(t, err)
		assert.Equal(t, row.Best, rm.Best[mid], "seed %d: the row at v2's base", seed)
		col, err := Sweep(context.Background(), p, r, VariableInput("v2"), SweepOptions{Range: yr, Steps: steps - 1})
		require.NoError(t, err)
		for iy := range rm.Ys {
			assert.Equal(t, col.Best[iy], rm.Best[iy][mid], "seed %d: the column at v1's base, row %d", seed, iy)
		}
		assert.Equal(t, r.Choice(p.Root), rm.Best[mid][mid], "the base cell")
	}
}

func TestTwoWayMapCancels(t *testing.T) {
	p := withVariables(5, 400, 3)
	r := sensEvaluated(t, p)
	ctx, cancel := context.WithCancel(context.Background())
	calls := 0
	_, err := Regions(ctx, p, r, VariableInput("v1"), VariableInput("v2"), RegionOptions{Steps: 200, Workers: 2,
		Progress: func(done, total int) {
			calls++
			if done == 3 {
				cancel()
			}
		}})
	assert.ErrorIs(t, err, context.Canceled)
	assert.GreaterOrEqual(t, calls, 3)
	assert.Less(t, calls, 200)
}

func TestBreakEvenNotesMatchExactSweeps(t *testing.T) {
	p, err := engine.Load("../../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	r := sensEvaluated(t, p)
	before, err := engine.Marshal(p)
	require.NoError(t, err)
	notes := BreakEvenNotes(p, r)
	after, err := engine.Marshal(p)
	require.NoError(t, err)
	assert.Equal(t, string(before), string(after))
	for _, tc := range []struct {
		node   string
		branch int
	}{{"delivery", 0}, {"delivery", 1}, {"outage", 0}, {"outage", 1}, {"old-chiller", 0}} {
		n := p.FindNode(tc.node)
		sw, err := Sweep(context.Background(), p, r, FieldInput(tc.node, tc.branch, FieldProbability), SweepOptions{})
		require.NoError(t, err)
		child := n.Branches[tc.branch].To
		if len(sw.BreakEvens) == 0 {
			assert.Empty(t, notes[child], tc.node)
			continue
		}
		require.Len(t, sw.BreakEvens, 1, tc.node)
		want := "choice flips at " + sw.BreakEvens[0].At.StringFixed(2)
		assert.Equal(t, []string{want}, notes[child], "%s branch %d", tc.node, tc.branch)
	}
	// The late-delivery decision's own chance nodes: none below it, so no note
	// is keyed by its branches' children.
	late := p.FindNode("late-response")
	for _, b := range late.Branches {
		assert.Empty(t, notes[b.To])
	}
}

func TestBreakEvenNotesAgreeWithExactSweepsOnRandomTrees(t *testing.T) {
	checked := 0
	for seed := uint64(1); seed <= 8; seed++ {
		p := withVariables(seed, 120, 0)
		if seed%2 == 0 {
			p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "2500"}
		}
		r := sensEvaluated(t, p)
		notes := BreakEvenNotes(p, r)
		for child, ns := range notes {
			require.Len(t, ns, 1)
			parent, bi := r.ParentOf(child)
			dec := parent
			for dec.Kind != engine.Decision {
				dec, _ = r.ParentOf(dec)
			}
			// A fine exact sweep of the same probability at the same decision,
			// on the whole project, must find a break-even that prints the same.
			sw, err := Sweep(context.Background(), p, r, FieldInput(parent.ID, bi, FieldProbability), SweepOptions{Decision: dec.ID, Steps: 400})
			require.NoError(t, err)
			var found []string
			for _, be := range sw.BreakEvens {
				found = append(found, formatShare(be.At))
			}
			for _, x := range strings.Split(strings.TrimPrefix(ns[0], "choice flips at "), " and ") {
				assert.Contains(t, found, x, "seed %d node %s branch %d", seed, parent.ID, bi)
			}
			checked++
		}
	}
	assert.Greater(t, checked, 10, "the random trees must give some notes")
}

func TestFloatSettingsAgreeWithExactSettingsOnRandomTrees(t *testing.T) {
	// The float evaluator with an input overridden (variable, or a probability
	// under either rule) against the exact engine with the same input written
	// into a clone: 1e-9 relative, and the same choice at the root.
	rng := rand.New(rand.NewPCG(21, 5))
	checked := 0
	for seed := uint64(1); seed <= 20; seed++ {
		p := withVariables(seed, 80, 3)
		if seed%3 == 0 {
			p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "4000"}
		}
		r := sensEvaluated(t, p)
		inputs := []Input{VariableInput("v1"), VariableInput("v3")}
		for _, n := range p.Nodes() {
			if n.Kind == engine.Chance && len(inputs) < 8 {
				inputs = append(inputs, FieldInput(n.ID, rng.IntN(len(n.Branches)), FieldProbability))
			}
		}
		m, err := engine.CompileFast(p)
		require.NoError(t, err)
		for _, in := range inputs {
			s, err := Prepare(p, r, in, nil)
			if err != nil {
				continue // e.g. the other branches are all 0
			}
			b, err := s.bindFast(m, p)
			require.NoError(t, err)
			ex := newExact(p, s)
			for k := 0; k < 4; k++ {
				frac := decimal.NewFromFloat(rng.Float64()).Round(6)
				x := s.Low.Add(s.High.Sub(s.Low).Mul(frac))
				b.set(m, x.InexactFloat64())
				require.NoError(t, m.Roll(), "%s at %s", in, x)
				er, err := ex.eval(x)
				require.NoError(t, err)
				want := er.DisplayValue(ex.clone.Root).InexactFloat64()
				assert.InDelta(t, want, m.RootValue(), 1e-9*math.Max(1, math.Abs(want)), "seed %d %s at %s (%s)", seed, in, x, s.Rule)
				assert.Equal(t, er.Choice(ex.clone.Root), m.ChoiceOf(p.Root), "seed %d %s at %s", seed, in, x)
				checked++
			}
			m.ResetVars()
			m.ResetFields()
		}
	}
	assert.Greater(t, checked, 300)
}
