package analysis

import (
	"fmt"
	"math"
	"strings"

	"github.com/ramify-app/ramify/engine"
	"github.com/shopspring/decimal"
)

// A study (test, survey, pilot) reports one of a few results before a decision;
// its reliability is the likelihood table P(result | state) of the uncertainty it
// informs. Bayes' rule turns that into P(result) and the posteriors, and the
// study becomes a real alternative at the decision: a chance node over the
// results, each leading to a copy of the decision with the posterior
// probabilities written into the informed uncertainty.

// StudySpec describes a study the user is considering.
type StudySpec struct {
	DecisionID string     // the decision that gets the "study first" alternative
	NodeID     string     // a chance node the study informs (its uncertainty, by name)
	Results    []string   // result names: "Favourable", "Unfavourable"
	Likelihood [][]string // [result][state] P(result | state), formula texts ("90%")
	Cost       string     // the study's cost as a positive amount, formula text; empty is 0
	Label      string     // the new branch's label; "Study first" when empty
}

// StudyPosteriorPlaces is how many decimals the posterior probabilities written
// into the tree keep (cut, the largest taking the remainder so they add up to 1).
const StudyPosteriorPlaces = 16

// StudyPlan is what the study is worth and the edit that adds it.
type StudyPlan struct {
	Decision   *engine.Node
	Informs    string   // the uncertainty's name
	Results    []string // the study's results, as given
	States     []string // its branch labels
	Prior      []decimal.Decimal
	Bayes      *BayesResult
	Without    decimal.Decimal // value at the decision without the study
	With       decimal.Decimal // value of studying first, before its cost
	EVSI       decimal.Decimal // gain from the study before its cost (a saving for costs)
	Cost       decimal.Decimal
	Net        decimal.Decimal // EVSI − cost
	MostWorth  decimal.Decimal // the most worth paying for the study
	EVPI       EVPIFigure      // learning the uncertainty perfectly before the decision
	Efficiency float64         // EVSI / EVPI; NaN when EVPI is not available or 0
	ValueWord  string
	Command    engine.Command // adds the alternative; undoable
	result     *engine.Result
}

// Format prints a value the way the project prints values.
func (s *StudyPlan) Format(d decimal.Decimal) string { return s.result.Format(d) }

// PlanStudy applies Bayes' rule, builds the "study first" alternative and
// computes EVSI. The project is not changed; apply plan.Command to add the study.
func PlanStudy(p *engine.Project, spec StudySpec, opt VOIOptions) (*StudyPlan, error) {
	work := p.Clone()
	r := engine.Evaluate(work)
	if !r.Valid() {
		return nil, fmt.Errorf("the project has %d problem(s) to fix first; the first: %s", len(r.Problems), r.Problems[0].Msg)
	}
	d := work.FindNode(spec.DecisionID)
	if d == nil || d.Kind != engine.Decision {
		return nil, fmt.Errorf("decision: no decision node with id %q", spec.DecisionID)
	}
	target := work.FindNode(spec.NodeID)
	if target == nil || target.Kind != engine.Chance {
		return nil, fmt.Errorf("informs: no chance node with id %q", spec.NodeID)
	}
	key := UncertaintyKey(target)
	var u *Uncertainty
	for _, cand := range FindUncertainties(d) {
		if cand.Key == key {
			u = cand
		}
	}
	if u == nil {
		return nil, fmt.Errorf("informs: %q does not come after decision %q, so a study before that decision cannot inform it", engine.NodeTitle(target), engine.NodeTitle(d))
	}
	prior, reason := u.consistent(r, d)
	if reason != "" {
		return nil, fmt.Errorf("informs: %s", reason)
	}
	plan := &StudyPlan{Decision: p.FindNode(d.ID), Informs: u.Name, Prior: prior, ValueWord: r.ValueWord(), result: r}
	for i := range u.Nodes[0].Branches {
		plan.States = append(plan.States, engine.BranchTitle(u.Nodes[0], i))
	}

	// The likelihood table.
	if len(spec.Results) < 2 {
		return nil, fmt.Errorf("results: give at least two possible study results")
	}
	if len(spec.Likelihood) != len(spec.Results) {
		return nil, fmt.Errorf("likelihoods: %d rows for %d results", len(spec.Likelihood), len(spec.Results))
	}
	seen := map[string]bool{}
	like := make([][]decimal.Decimal, len(spec.Results))
	for ri, name := range spec.Results {
		name = strings.TrimSpace(name)
		if name == "" {
			return nil, fmt.Errorf("result %d: give it a name", ri+1)
		}
		if seen[strings.ToLower(name)] {
			return nil, fmt.Errorf("result %q: named twice", name)
		}
		seen[strings.ToLower(name)] = true
		plan.Results = append(plan.Results, name)
		if len(spec.Likelihood[ri]) != len(plan.States) {
			return nil, fmt.Errorf("result %q: %d likelihoods for %d states of %q", name, len(spec.Likelihood[ri]), len(plan.States), u.Name)
		}
		like[ri] = make([]decimal.Decimal, len(plan.States))
		for si, src := range spec.Likelihood[ri] {
			v, err := studyNumber(src, r.Vars)
			if err != nil {
				return nil, fmt.Errorf("P(%q | %q): %w", name, plan.States[si], err)
			}
			if v.IsNegative() || v.GreaterThan(one) {
				return nil, fmt.Errorf("P(%q | %q): %s is outside 0 to 1", name, plan.States[si], v)
			}
			like[ri][si] = v
		}
	}
	for si, state := range plan.States {
		col := decimal.Zero
		for ri := range like {
			col = col.Add(like[ri][si])
		}
		if !col.Equal(one) {
			return nil, fmt.Errorf("when %q is %q the chances of the results add up to %s, not 1", u.Name, state, col)
		}
	}
	cost := decimal.Zero
	if strings.TrimSpace(spec.Cost) != "" {
		var err error
		if cost, err = studyNumber(spec.Cost, r.Vars); err != nil {
			return nil, fmt.Errorf("cost: %w", err)
		}
		if cost.IsNegative() {
			return nil, fmt.Errorf("cost: %s is negative; enter the study's cost as a positive amount", cost)
		}
	}
	plan.Cost = cost
	b, err := Bayes(prior, like)
	if err != nil {
		return nil, err
	}
	plan.Bayes = b

	// The new alternative.
	label := strings.TrimSpace(spec.Label)
	if label == "" {
		label = "Study first"
	}
	study := &engine.Node{ID: d.ID + "-study", Kind: engine.Chance, Name: "Study result"}
	for ri, name := range spec.Results {
		if b.PResult[ri].IsZero() {
			continue // a result that cannot happen gets no branch
		}
		post := probabilityTexts(b.Posterior[ri], StudyPosteriorPlaces)
		copyD := d.Clone()
		engine.Walk(copyD, func(n *engine.Node, _ int) bool {
			if u.is(n) {
				for si, br := range n.Branches {
					br.Probability = post[si]
				}
			}
			return true
		})
		study.Branches = append(study.Branches, &engine.Branch{Label: strings.TrimSpace(name), Probability: b.PResult[ri].String(), To: copyD})
	}
	taken := map[string]bool{}
	for _, n := range work.Nodes() {
		taken[n.ID] = true
	}
	uniqueIDs(study, taken)
	branch := &engine.Branch{Label: label, Cash: studyCash(spec.Cost, cost, work.Objective), To: study}
	plan.Command = &AddBranch{NodeID: d.ID, Index: len(d.Branches), Branch: branch, What: "Add " + label}

	// Evaluate with the study in place, its cost left out.
	trial := p.Clone()
	free := &AddBranch{NodeID: d.ID, Index: len(d.Branches), Branch: &engine.Branch{Label: label, To: study}}
	if _, err := free.Apply(trial); err != nil {
		return nil, err
	}
	r2 := engine.Evaluate(trial)
	if !r2.Valid() {
		return nil, fmt.Errorf("the study alternative has a problem: %s", r2.Problems[0].Msg)
	}
	plan.Without = r.DisplayValue(d)
	plan.With = r2.DisplayValue(trial.FindNode(study.ID))
	plan.EVSI = gain(work.Objective, plan.With, plan.Without)
	plan.Net = plan.EVSI.Sub(cost)
	// For risk-neutral values and for exponential utility (whose certainty equivalent
	// moves one for one with a sure cost) the most worth paying is the EVSI itself.
	plan.MostWorth = plan.EVSI
	if plan.MostWorth.IsNegative() {
		plan.MostWorth = decimal.Zero
	}

	// EVPI of the same uncertainty, learnt just before this decision.
	sub := work.Clone()
	sub.Root = sub.FindNode(d.ID)
	rs := engine.Evaluate(sub)
	su := FindUncertainties(sub.Root)
	plan.Efficiency = math.NaN()
	for _, cand := range su {
		if cand.Key == key {
			plan.EVPI = figure(sub, rs, cand, opt)
		}
	}
	if plan.EVPI.Valid && plan.EVPI.EVPI.IsPositive() {
		plan.Efficiency = plan.EVSI.Div(plan.EVPI.EVPI).InexactFloat64()
	}
	return plan, nil
}

func studyNumber(src string, vars engine.MapEnv) (decimal.Decimal, error) {
	if strings.TrimSpace(src) == "" {
		return decimal.Zero, fmt.Errorf("missing")
	}
	f, err := engine.ParseFormula(src)
	if err != nil {
		return decimal.Zero, err
	}
	return f.Eval(vars)
}

// studyCash writes the study's cost as branch cash in the project's terms: a cost
// for a cost objective, a negative amount for a benefit objective.
func studyCash(src string, cost decimal.Decimal, obj engine.Objective) string {
	src = strings.TrimSpace(src)
	if src == "" || cost.IsZero() {
		return ""
	}
	f, err := engine.ParseFormula(src)
	constant := err == nil && f.IsConstant()
	if obj == engine.Minimize {
		return src
	}
	if constant {
		return cost.Neg().String()
	}
	return "-(" + src + ")"
}

// AddBranch inserts a branch (with the subtree below it) into a node; its inverse
// removes it again. The subtree is copied on every Apply, so undo and redo never
// share nodes with an earlier state.
type AddBranch struct {
	NodeID string
	Index  int
	Branch *engine.Branch
	What   string
}

func (c *AddBranch) Describe() string {
	if c.What == "" {
		return "Add branch"
	}
	return c.What
}

func (c *AddBranch) Apply(p *engine.Project) (engine.Command, error) {
	n := p.FindNode(c.NodeID)
	if n == nil {
		return nil, fmt.Errorf("node %q is no longer in the project", c.NodeID)
	}
	if n.Kind == engine.End {
		return nil, fmt.Errorf("%s: an end node cannot have branches", engine.Place(n, -1))
	}
	if c.Index < 0 || c.Index > len(n.Branches) {
		return nil, fmt.Errorf("%s: no place %d for a new branch", engine.Place(n, -1), c.Index+1)
	}
	ids := map[string]bool{}
	for _, m := range p.Nodes() {
		ids[m.ID] = true
	}
	to := c.Branch.To.Clone()
	var clash string
	engine.Walk(to, func(m *engine.Node, _ int) bool {
		if ids[m.ID] && clash == "" {
			clash = m.ID
		}
		return clash == ""
	})
	if clash != "" {
		return nil, fmt.Errorf("the new branch would repeat the node id %q", clash)
	}
	b := &engine.Branch{Label: c.Branch.Label, Probability: c.Branch.Probability, Cash: c.Branch.Cash, To: to}
	n.Branches = append(n.Branches, nil)
	copy(n.Branches[c.Index+1:], n.Branches[c.Index:])
	n.Branches[c.Index] = b
	return &RemoveBranch{NodeID: c.NodeID, Index: c.Index, What: c.What}, nil
}

// RemoveBranch takes a branch (and its subtree) out of a node; its inverse puts it back.
type RemoveBranch struct {
	NodeID string
	Index  int
	What   string
}

func (c *RemoveBranch) Describe() string {
	if c.What == "" {
		return "Remove branch"
	}
	return c.What
}

func (c *RemoveBranch) Apply(p *engine.Project) (engine.Command, error) {
	n := p.FindNode(c.NodeID)
	if n == nil {
		return nil, fmt.Errorf("node %q is no longer in the project", c.NodeID)
	}
	if c.Index < 0 || c.Index >= len(n.Branches) {
		return nil, fmt.Errorf("%s: it has no branch %d", engine.Place(n, -1), c.Index+1)
	}
	b := n.Branches[c.Index]
	n.Branches = append(n.Branches[:c.Index], n.Branches[c.Index+1:]...)
	return &AddBranch{NodeID: c.NodeID, Index: c.Index, Branch: b, What: c.What}, nil
}
