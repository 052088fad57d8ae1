package analysis

import (
	"fmt"
	"math/bits"
	"sort"
	"strings"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// DefaultStrategyLimit is how many pure strategies are listed before the
// analysis says there are too many and keeps to the alternatives.
const DefaultStrategyLimit = 200

// MaxStrategyLimit caps what a user may ask for, so a typo cannot exhaust memory.
const MaxStrategyLimit = 100000

// Options choose what Analyse compares.
type Options struct {
	// NodeID is the decision node whose alternatives are compared; "" means the root.
	// A chance node (or an end) gives one profile: everything below it under
	// the recommended choices.
	NodeID string
	// Risk overrides the project's attitude to risk when not nil
	// (for example --risk-tolerance on the command line).
	Risk *engine.RiskAttitude
	// Strategies lists every pure strategy at the node as well, up to Limit.
	Strategies bool
	Limit      int // 0 means DefaultStrategyLimit
	// LossThreshold: a payoff below it is a loss (default 0); with a cost
	// objective a cost above it is a loss, and without it P(loss) is left out.
	LossThreshold *decimal.Decimal
}

// Profile is the risk profile of one alternative or one pure strategy.
type Profile struct {
	Name    string
	Branch  int      // branch index at the node (-1 for the node's single profile)
	Choices []Choice // decisions fixed by a pure strategy, in tree order (nil for alternatives)
	Dist    Distribution
	Stats   Stats
}

// Choice is one decision fixed by a pure strategy.
type Choice struct {
	Node   *engine.Node
	Branch int
}

// StrategyRow is one line of the strategy table.
type StrategyRow struct {
	Name        string
	Stats       Stats
	BestNeutral bool // recommended by the risk-neutral roll-back (EV)
	BestAtR     bool // recommended by the exponential-utility roll-back at R
}

// Analysis is everything the risk-profile views show for one node.
type Analysis struct {
	Result   *engine.Result // evaluation under the attitude in force (on a clone)
	Neutral  *engine.Result // risk-neutral evaluation (on another clone)
	Node     *engine.Node   // in Result's project
	Minimize bool
	RiskOn   bool
	R        float64 // risk tolerance when RiskOn
	Loss     LossRule

	Profiles     []*Profile // one per alternative at Node
	Strategies   []*Profile // every pure strategy, when asked and within the limit
	StrategyNote string     // why strategies are missing, when asked for and not listed
	Dominance    []Dominance
	Rows         []StrategyRow
}

// Analyse computes the risk profiles, strategy table and dominance at a node.
// The project is not changed: it is cloned for each evaluation.
func Analyse(p *engine.Project, opt Options) (*Analysis, error) {
	if p == nil || p.Root == nil {
		return nil, fmt.Errorf("the project has no tree to analyse")
	}
	active := p.Clone()
	if opt.Risk != nil {
		active.Risk = *opt.Risk
	}
	ra := engine.Evaluate(active)
	if !ra.Valid() {
		return nil, problemsError(ra)
	}
	rn := ra
	if ra.RiskActive() {
		neutralP := p.Clone()
		neutralP.Risk = engine.RiskAttitude{}
		if rn = engine.Evaluate(neutralP); !rn.Valid() {
			return nil, problemsError(rn)
		}
	}
	a := &Analysis{Result: ra, Neutral: rn, Minimize: active.Objective == engine.Minimize,
		RiskOn: ra.RiskActive(), R: ra.Tolerance()}
	a.Loss = LossRule{Minimize: a.Minimize}
	if opt.LossThreshold != nil {
		a.Loss.Threshold, a.Loss.HasThreshold = *opt.LossThreshold, true
	}
	a.Node = active.Root
	if opt.NodeID != "" {
		if a.Node = active.FindNode(opt.NodeID); a.Node == nil {
			return nil, fmt.Errorf("there is no node with id %q", opt.NodeID)
		}
	}
	R := 0.0
	if a.RiskOn {
		R = a.R
	}
	policy := ResultPolicy(ra)
	if a.Node.Kind == engine.Decision {
		for i := range a.Node.Branches {
			d, err := TraceProfile(ra, a.Node, i, policy)
			if err != nil {
				return nil, err
			}
			a.Profiles = append(a.Profiles, &Profile{Name: engine.BranchTitle(a.Node, i), Branch: i, Dist: d,
				Stats: d.Statistics(a.Loss, R)})
		}
	} else {
		d, err := TraceProfile(ra, a.Node, -1, policy)
		if err != nil {
			return nil, err
		}
		a.Profiles = append(a.Profiles, &Profile{Name: "Recommended policy from " + engine.NodeTitle(a.Node),
			Branch: -1, Dist: d, Stats: d.Statistics(a.Loss, R)})
	}
	a.rows()
	a.Dominance = FindDominance(a.Profiles, a.Minimize)
	if opt.Strategies {
		limit := opt.Limit
		if limit <= 0 {
			limit = DefaultStrategyLimit
		}
		if limit > MaxStrategyLimit {
			limit = MaxStrategyLimit
		}
		strategies, note, err := EnumerateStrategies(ra, a.Node, limit)
		if err != nil {
			return nil, err
		}
		a.StrategyNote = note
		for _, s := range strategies {
			s.Stats = s.Dist.Statistics(a.Loss, R)
		}
		a.Strategies = strategies
	}
	return a, nil
}

func problemsError(r *engine.Result) error {
	r.SortProblems()
	msg := r.Problems[0].Msg
	if n := len(r.Problems); n > 1 {
		msg += fmt.Sprintf(" (and %d more problem(s))", n-1)
	}
	return fmt.Errorf("the project cannot be analysed yet: %s", msg)
}

// rows builds the strategy table and marks the recommended alternatives under
// each attitude (ties all marked).
func (a *Analysis) rows() {
	mark := func(r *engine.Result) map[int]bool {
		n := r.Project.FindNode(a.Node.ID)
		out := map[int]bool{}
		if n == nil || n.Kind != engine.Decision {
			return out
		}
		if c := r.Choice(n); c >= 0 {
			out[c] = true
			for _, t := range r.Ties(n) {
				out[t] = true
			}
		}
		return out
	}
	neutral := mark(a.Neutral)
	var atR map[int]bool
	if a.RiskOn {
		atR = mark(a.Result)
	}
	for _, p := range a.Profiles {
		row := StrategyRow{Name: p.Name, Stats: p.Stats}
		if p.Branch < 0 {
			row.BestNeutral, row.BestAtR = true, a.RiskOn
		} else {
			row.BestNeutral, row.BestAtR = neutral[p.Branch], atR[p.Branch]
		}
		a.Rows = append(a.Rows, row)
	}
}

// CountStrategies counts the pure strategies at n: a strategy fixes one branch
// at every decision it can reach, so a decision adds its branches' counts and a
// chance node multiplies them. Counting saturates at limit+1, so a tree with
// astronomically many strategies is counted in one pass without overflow.
// The bool reports whether the count exceeds limit.
func CountStrategies(n *engine.Node, limit int) (uint64, bool) {
	capAt := uint64(limit) + 1
	var order []*engine.Node
	engine.Walk(n, func(m *engine.Node, _ int) bool { order = append(order, m); return true })
	count := make(map[*engine.Node]uint64, len(order))
	for i := len(order) - 1; i >= 0; i-- {
		m := order[i]
		var c uint64
		switch m.Kind {
		case engine.Decision:
			for _, b := range m.Branches {
				c = satAdd(c, count[b.To], capAt)
			}
		case engine.Chance:
			c = 1
			for _, b := range m.Branches {
				c = satMul(c, count[b.To], capAt)
			}
		default:
			c = 1
		}
		count[m] = c
	}
	total := count[n]
	return total, total > uint64(limit)
}

func satAdd(a, b, capAt uint64) uint64 {
	s, carry := bits.Add64(a, b, 0)
	if carry != 0 || s > capAt {
		return capAt
	}
	return s
}

func satMul(a, b, capAt uint64) uint64 {
	hi, lo := bits.Mul64(a, b)
	if hi != 0 || lo > capAt {
		return capAt
	}
	return lo
}

// EnumerateStrategies lists every pure strategy at n with its risk profile. When
// there are more than limit it lists none and says so; the caller keeps to the
// alternatives. Only the choices below n are enumerated; everything above n is
// as the result has it.
func EnumerateStrategies(r *engine.Result, n *engine.Node, limit int) ([]*Profile, string, error) {
	count, over := CountStrategies(n, limit)
	if over {
		return nil, fmt.Sprintf("There are more than %d pure strategies at %q, too many to list; "+
			"the table compares the %d alternatives under their best continuation instead.",
			limit, engine.NodeTitle(n), len(n.Branches)), nil
	}
	// Bottom-up lists of strategies; each strategy is a list of choices. Every
	// list is no longer than the final count, so memory stays within the limit.
	var order []*engine.Node
	engine.Walk(n, func(m *engine.Node, _ int) bool { order = append(order, m); return true })
	pos := make(map[*engine.Node]int, len(order))
	for i, m := range order {
		pos[m] = i
	}
	lists := make(map[*engine.Node][][]Choice, len(order))
	for i := len(order) - 1; i >= 0; i-- {
		m := order[i]
		var list [][]Choice
		switch m.Kind {
		case engine.Decision:
			for bi, b := range m.Branches {
				for _, s := range lists[b.To] {
					list = append(list, append([]Choice{{Node: m, Branch: bi}}, s...))
				}
			}
		case engine.Chance:
			list = [][]Choice{nil}
			for _, b := range m.Branches {
				var next [][]Choice
				for _, prefix := range list {
					for _, s := range lists[b.To] {
						c := make([]Choice, 0, len(prefix)+len(s))
						next = append(next, append(append(c, prefix...), s...))
					}
				}
				list = next
			}
		default:
			list = [][]Choice{nil}
		}
		for _, b := range m.Branches {
			delete(lists, b.To)
		}
		lists[m] = list
	}
	all := lists[n]
	if uint64(len(all)) != count {
		return nil, "", fmt.Errorf("internal: counted %d strategies but listed %d", count, len(all))
	}
	out := make([]*Profile, 0, len(all))
	for _, choices := range all {
		sort.Slice(choices, func(a, b int) bool { return pos[choices[a].Node] < pos[choices[b].Node] })
		fixed := make(map[*engine.Node]int, len(choices))
		for _, c := range choices {
			fixed[c.Node] = c.Branch
		}
		d, err := TraceProfile(r, n, -1, func(m *engine.Node) int {
			if c, ok := fixed[m]; ok {
				return c
			}
			return r.Choice(m)
		})
		if err != nil {
			return nil, "", err
		}
		branch := -1
		if len(choices) > 0 && choices[0].Node == n {
			branch = choices[0].Branch
		}
		out = append(out, &Profile{Name: StrategyName(choices), Branch: branch, Choices: choices, Dist: d})
	}
	return out, "", nil
}

// StrategyName states a strategy's choices in plain words:
// `Order now; at "Late delivery": Extend the rental`.
func StrategyName(choices []Choice) string {
	if len(choices) == 0 {
		return "No decisions"
	}
	parts := make([]string, len(choices))
	for i, c := range choices {
		if i == 0 {
			parts[i] = engine.BranchTitle(c.Node, c.Branch)
			continue
		}
		parts[i] = fmt.Sprintf("at %q: %s", engine.NodeTitle(c.Node), engine.BranchTitle(c.Node, c.Branch))
	}
	return strings.Join(parts, "; ")
}
