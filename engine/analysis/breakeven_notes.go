package analysis

import (
	"strings"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// noteSamples is how many probabilities in [0, 1] each note checks before
// narrowing a change of choice down by bisection.
const noteSamples = 41

// BreakEvenNotes gives, for each branch of a chance node that feeds a decision,
// the probabilities in [0, 1] at which the nearest decision above it changes
// its choice ("choice flips at 0.42"); branches whose probability cannot flip
// the choice get no note. Notes are keyed by the node the branch leads to (the
// canvas's convention). The other branches follow the same rule as a sweep:
// the rest branch takes up the change, otherwise the others scale in proportion.
//
// It is meant to run after every edit: the tree is compiled once into the float
// evaluator and each probability only re-rolls the path from its chance node up
// to the decision; each flip found is then located with the exact engine on a
// copy reduced to the path that can change. p itself is only read.
func BreakEvenNotes(p *engine.Project, r *engine.Result) map[*engine.Node][]string {
	notes := map[*engine.Node][]string{}
	if r == nil || !r.Valid() || p.Root == nil {
		return notes
	}
	// Work on a clone so the caller's project is not even re-indexed; the
	// clone's preorder matches p's, which maps the notes back.
	clone := p.Clone()
	m, err := engine.CompileFast(clone)
	if err != nil {
		return notes
	}
	original := map[*engine.Node]*engine.Node{}
	pn, cn := p.Nodes(), clone.Nodes()
	if len(pn) != len(cn) {
		return notes
	}
	for i := range cn {
		original[cn[i]] = pn[i]
	}
	kinds, first, count, child := m.Kinds(), m.First(), m.Count(), m.Child()
	nodes := m.Nodes()
	parent := make([]int32, len(nodes))
	parentSlot := make([]int32, len(nodes))
	parent[0] = -1
	for i := range nodes {
		for k := first[i]; k < first[i]+count[i]; k++ {
			parent[child[k]], parentSlot[child[k]] = int32(i), k
		}
	}
	var pr *pruner // built on the first note, to confirm notes exactly
	w := &pathRoller{m: m, R: r.Tolerance(), kinds: kinds, first: first, count: count, child: child}
	if !m.Maximize() {
		w.sign = -1
	} else {
		w.sign = 1
	}
	for i, n := range nodes {
		if kinds[i] != engine.Chance || count[i] < 2 {
			continue
		}
		// The path up to the nearest decision above.
		var path []pathStep // from the chance node's parent upwards, ending at the decision
		dec := int32(-1)
		for c := int32(i); parent[c] >= 0; c = parent[c] {
			path = append(path, pathStep{owner: parent[c], slot: parentSlot[c]})
			if kinds[parent[c]] == engine.Decision {
				dec = parent[c]
				break
			}
		}
		if dec < 0 {
			continue
		}
		w.path, w.dec, w.node = path, dec, int32(i)
		for b := 0; b < int(count[i]); b++ {
			flips := w.flips(n, b)
			if len(flips) == 0 || n.Branches[b].To == nil {
				continue
			}
			if pr == nil {
				pr = newPruner(p, r)
			}
			parts := confirmFlips(p, r, pr, original[n], b, original[nodes[dec]], flips, w.spacing)
			if len(parts) == 0 {
				continue
			}
			key := original[n.Branches[b].To]
			notes[key] = append(notes[key], "choice flips at "+strings.Join(parts, " and "))
		}
	}
	return notes
}

// confirmFlips finds each flip exactly: the exact engine, on a copy reduced to
// the chance node and its ancestors (every other subtree paying its exact base
// value), locates the change of choice within one sample spacing of the float
// estimate. Flips the exact engine does not see are dropped.
// Subtle point: with a risk attitude the end nodes pay the base CE, which is
// what a decision compares, so the reduced decision chooses as the full one.
func confirmFlips(p *engine.Project, r *engine.Result, pr *pruner, n *engine.Node, branch int, dec *engine.Node, flips []float64, spacing float64) []string {
	s, err := prepare(p, r, FieldInput(n.ID, branch, FieldProbability), nil, false)
	if err != nil {
		return nil
	}
	reduced := pr.reduce(dec, []*engine.Node{n}) // the decision's choice depends only on its subtree
	if reduced == nil {
		return nil
	}
	f := newCrossingFinderOn(reduced, s, dec.ID)
	if f.dec == nil {
		return nil
	}
	var out []string
	seen := map[string]bool{}
	for _, x := range flips {
		lo := decimal.Max(s.Low, decimal.NewFromFloat(x-spacing))
		hi := decimal.Min(s.High, decimal.NewFromFloat(x+spacing))
		bes, err := f.between(lo, hi)
		if err != nil {
			continue
		}
		for _, be := range bes {
			text := formatShare(be.At)
			if !seen[text] {
				seen[text] = true
				out = append(out, text)
			}
		}
	}
	return out
}

// formatShare prints a probability with two decimals, more when needed to stay off 0 and 1.
func formatShare(x decimal.Decimal) string {
	for places := int32(2); places <= 6; places++ {
		t := x.StringFixed(places)
		if t != decimal.Zero.StringFixed(places) && t != decimal.NewFromInt(1).StringFixed(places) {
			return t
		}
	}
	return x.String()
}

// pathRoller recomputes the values from one chance node up to a decision with
// the chance node's probabilities replaced, reading everything else from a
// rolled FastModel.
type pathRoller struct {
	m                   *engine.FastModel
	R, sign             float64
	kinds               []engine.Kind
	first, count, child []int32
	node, dec           int32
	path                []pathStep
	probs               []float64
	ps, vs              []float64
	spacing             float64 // distance between samples in the last flips call
}

// pathStep is one branch on the way up: the node owning it and its slot.
type pathStep struct{ owner, slot int32 }

// flips lists where the decision's choice changes as branch b's probability goes
// from 0 to 1 (within what the rule allows).
func (w *pathRoller) flips(n *engine.Node, b int) []float64 {
	first, count := w.first[w.node], int(w.count[w.node])
	base := w.m.Prob[first : first+int32(count)]
	rest := -1
	for k, br := range n.Branches {
		if k != b && strings.TrimSpace(br.Probability) == engine.RestProbability {
			rest = k
		}
	}
	hi := 1.0
	fixed := 0.0
	others := 0.0
	for k := 0; k < count; k++ {
		if k != b {
			others += base[k]
			if k != rest {
				fixed += base[k]
			}
		}
	}
	if rest >= 0 {
		hi = 1 - fixed
	} else if others <= 0 {
		return nil // nothing can take up a change
	}
	if hi <= 0 {
		return nil
	}
	if cap(w.probs) < count {
		w.probs = make([]float64, count)
	}
	w.probs = w.probs[:count]
	choiceAt := func(x float64) int {
		for k := 0; k < count; k++ {
			switch {
			case k == b:
				w.probs[k] = x
			case rest >= 0 && k == rest:
				w.probs[k] = 1 - fixed - x
			case rest >= 0:
				w.probs[k] = base[k]
			default:
				w.probs[k] = base[k] * (1 - x) / others
			}
		}
		return w.choice()
	}
	var out []float64
	w.spacing = hi / float64(noteSamples-1)
	prevX := 0.0
	prev := choiceAt(0)
	for s := 1; s < noteSamples; s++ {
		x := hi * float64(s) / float64(noteSamples-1)
		c := choiceAt(x)
		if c != prev {
			lo, up := prevX, x
			for it := 0; it < 40 && up-lo > 1e-9; it++ {
				mid := (lo + up) / 2
				if choiceAt(mid) == prev {
					lo = mid
				} else {
					up = mid
				}
			}
			out = append(out, (lo+up)/2)
		}
		prev, prevX = c, x
	}
	return out
}

// choice rolls the path up with w.probs at the chance node and returns the decision's choice.
func (w *pathRoller) choice() int {
	m := w.m
	i := w.node
	first, count := w.first[i], w.count[i]
	v := w.chance(first, count, w.probs, -1, 0)
	for _, st := range w.path {
		owner, slot := st.owner, st.slot
		of, oc := w.first[owner], w.count[owner]
		if owner == w.dec {
			best, bestV := -1, 0.0
			for k := of; k < of+oc; k++ {
				bv := m.Cash[k] + m.Value[w.child[k]]
				if k == slot {
					bv = m.Cash[k] + v
				}
				if best < 0 || (w.sign > 0 && bv > bestV) || (w.sign < 0 && bv < bestV) {
					best, bestV = int(k-of), bv
				}
			}
			return best
		}
		v = w.chance(of, oc, m.Prob[of:of+oc], slot, v)
	}
	return -1
}

// chance is the value of a chance node (EV, or CE with a risk attitude) whose
// branch in slot `replace` leads to value v instead of the rolled one.
func (w *pathRoller) chance(first, count int32, probs []float64, replace int32, v float64) float64 {
	m := w.m
	branch := func(k int32) float64 {
		if k == replace {
			return m.Cash[k] + v
		}
		return m.Cash[k] + m.Value[w.child[k]]
	}
	if !m.RiskOn() {
		sum := 0.0
		for k := first; k < first+count; k++ {
			sum += probs[k-first] * branch(k)
		}
		return sum
	}
	w.ps, w.vs = w.ps[:0], w.vs[:0]
	for k := first; k < first+count; k++ {
		if probs[k-first] == 0 {
			continue
		}
		w.ps = append(w.ps, probs[k-first])
		w.vs = append(w.vs, w.sign*branch(k))
	}
	return w.sign * engine.CertaintyEquivalent(w.ps, w.vs, w.R)
}
