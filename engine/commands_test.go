package engine

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// randomProject builds a valid random tree of about size nodes with formulas
// that use variables, so that every command has something to work on.
func randomProject(rng *rand.Rand, size int) *Project {
	p := &Project{Title: "random", Objective: Maximize, Currency: "EUR", Decimals: 2}
	p.Variables = []*Variable{
		{Name: "a", Value: "100", Low: "80", High: "120", Note: "first"},
		{Name: "b", Value: "a * 2"},
		{Name: "p", Value: "0.3", Low: "0.2", High: "0.4",
			Dist: &Distribution{Kind: DistTriangular, Min: "0.2", Mode: "p", Max: "0.4"}},
		{Name: "unused", Value: "7"},
	}
	id := 0
	newNode := func(k Kind) *Node {
		id++
		return &Node{ID: fmt.Sprintf("n%d", id), Kind: k, Name: fmt.Sprintf("Node %d", id)}
	}
	p.Root = newNode(Decision)
	frontier := []*Node{p.Root}
	for len(frontier) > 0 {
		n := frontier[0]
		frontier = frontier[1:]
		k := 2 + rng.IntN(2)
		for i := 0; i < k; i++ {
			kind := End
			if id < size {
				kind = []Kind{Decision, Chance, End}[rng.IntN(3)]
			}
			c := newNode(kind)
			if kind == End {
				c.Payoff = []string{"a", "b - 10", "", "250", "a * p"}[rng.IntN(5)]
			} else {
				frontier = append(frontier, c)
			}
			b := &Branch{Label: fmt.Sprintf("B%d", i+1), To: c, Cash: []string{"", "-5", "b / 4"}[rng.IntN(3)]}
			if n.Kind == Chance {
				switch {
				case i == k-1:
					b.Probability = RestProbability
				case i == 0:
					b.Probability = "p"
				default:
					b.Probability = "0.1"
				}
			}
			n.Branches = append(n.Branches, b)
		}
	}
	return p
}

func marshal(t *testing.T, p *Project) string {
	t.Helper()
	data, err := Marshal(p)
	require.NoError(t, err)
	return string(data)
}

// commandMakers build a random command of each kind for a project.
var commandMakers = map[string]func(rng *rand.Rand, p *Project) (Command, error){
	"set node field": func(rng *rand.Rand, p *Project) (Command, error) {
		n := pick(rng, p)
		field := []string{FieldName, FieldNote, FieldPayoff}[rng.IntN(3)]
		return &SetNodeField{Node: n, Field: field, Value: []string{"a + 1", "x y", "Renamed", "", "2 *"}[rng.IntN(5)]}, nil
	},
	"set branch field": func(rng *rand.Rand, p *Project) (Command, error) {
		n := pickInner(rng, p)
		if n == nil {
			return nil, errNoInner
		}
		field := []string{FieldLabel, FieldProbability, FieldCash}[rng.IntN(3)]
		return &SetBranchField{Node: n, Branch: rng.IntN(len(n.Branches)), Field: field,
			Value: []string{"0.25", "rest", "p / 2", "(", "Go ahead", ""}[rng.IntN(6)]}, nil
	},
	"add branch": func(rng *rand.Rand, p *Project) (Command, error) {
		return &AddBranch{Node: pick(rng, p), At: rng.IntN(4) - 1}, nil
	},
	"add sibling": func(rng *rand.Rand, p *Project) (Command, error) { return NewAddSibling(p, pick(rng, p)) },
	"change kind": func(rng *rand.Rand, p *Project) (Command, error) {
		return &ChangeKind{Node: pick(rng, p), Kind: []Kind{Decision, Chance, End}[rng.IntN(3)]}, nil
	},
	"delete subtree": func(rng *rand.Rand, p *Project) (Command, error) { return NewDeleteSubtree(p, pick(rng, p)) },
	"move branch": func(rng *rand.Rand, p *Project) (Command, error) {
		n := pickInner(rng, p)
		if n == nil {
			return nil, errNoInner
		}
		from := rng.IntN(len(n.Branches))
		return &MoveBranch{Node: n, From: from, To: from + rng.IntN(3) - 1}, nil
	},
	"collapse": func(rng *rand.Rand, p *Project) (Command, error) {
		return &SetCollapsed{Node: pick(rng, p), Collapsed: rng.IntN(2) == 0}, nil
	},
	"paste": func(rng *rand.Rand, p *Project) (Command, error) {
		other := randomProject(rng, 8)
		other.Variables = append(other.Variables, &Variable{Name: "fromclip", Value: "3"})
		other.Root.Branches[0].Cash = "fromclip"
		data, err := MarshalSubtree(other, other.Root)
		if err != nil {
			return nil, err
		}
		clip, err := Parse(data, "clipboard")
		if err != nil {
			return nil, err
		}
		return NewPaste(p, pick(rng, p), clip)
	},
	"duplicate": func(rng *rand.Rand, p *Project) (Command, error) { return NewDuplicate(p, pick(rng, p)) },
	"settings": func(rng *rand.Rand, p *Project) (Command, error) {
		s := SettingsOf(p)
		s.Title, s.Notes, s.PreparedBy, s.Currency = "New title", "Notes", "Someone", "days"
		s.Objective = Minimize
		s.Decimals = rng.IntN(15) - 1 // sometimes out of range: refused
		if rng.IntN(2) == 0 {
			s.Risk = RiskAttitude{Mode: RiskExponential, Tolerance: []string{"5000", "a*", ""}[rng.IntN(3)]}
		}
		return &SetSettings{Settings: s}, nil
	},
	"add variable": func(rng *rand.Rand, p *Project) (Command, error) {
		name := []string{NewVariableName(p), "a", "9bad", "max"}[rng.IntN(4)]
		return &AddVariable{Variable: &Variable{Name: name, Value: []string{"1", "a+", "b*3"}[rng.IntN(3)]}, At: rng.IntN(6) - 1}, nil
	},
	"remove variable": func(rng *rand.Rand, p *Project) (Command, error) {
		return &RemoveVariable{Name: []string{"a", "b", "p", "unused", "missing"}[rng.IntN(5)]}, nil
	},
	"rename variable": func(rng *rand.Rand, p *Project) (Command, error) {
		return &RenameVariableCmd{Old: []string{"a", "b", "p", "missing"}[rng.IntN(4)], New: []string{"alpha", "b", "1x", "rate_2"}[rng.IntN(4)]}, nil
	},
	"set variable field": func(rng *rand.Rand, p *Project) (Command, error) {
		return &SetVariableField{Name: []string{"a", "p", "zz"}[rng.IntN(3)], Field: []string{VarValue, VarLow, VarHigh, VarNote, "colour"}[rng.IntN(5)],
			Value: []string{"42", "", "a*(", "Note text"}[rng.IntN(4)]}, nil
	},
	"set distribution": func(rng *rand.Rand, p *Project) (Command, error) {
		d := []*Distribution{nil, {Kind: DistUniform, Min: "1", Max: "2"}, {Kind: DistDiscrete, Values: []string{"1", "2"}, Probs: []string{"0.5"}},
			{Kind: "wobbly"}, {Kind: DistNormal, Mean: "a", SD: "3 +"}}[rng.IntN(5)]
		return &SetDistribution{Name: []string{"a", "p"}[rng.IntN(2)], Dist: d}, nil
	},
}

var errNoInner = errors.New("no node with branches")

func pick(rng *rand.Rand, p *Project) *Node {
	nodes := p.Nodes()
	return nodes[rng.IntN(len(nodes))]
}

func pickInner(rng *rand.Rand, p *Project) *Node {
	var inner []*Node
	for _, n := range p.Nodes() {
		if len(n.Branches) > 0 {
			inner = append(inner, n)
		}
	}
	if len(inner) == 0 { // the root was made an end node
		return nil
	}
	return inner[rng.IntN(len(inner))]
}

// TestCommandsInvert applies every kind of command many times on random trees:
// a refused command leaves the file bytes unchanged; an accepted one is undone
// by its inverse to identical bytes, and redone by the inverse's inverse to the
// same bytes as the first application.
func TestCommandsInvert(t *testing.T) {
	for name, mk := range commandMakers {
		t.Run(name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(1, uint64(len(name))))
			applied, refused := 0, 0
			for trial := 0; trial < 150; trial++ {
				p := randomProject(rng, 5+rng.IntN(40))
				before := marshal(t, p)
				cmd, err := mk(rng, p)
				if err != nil {
					refused++
					assert.Equal(t, before, marshal(t, p), "building the command changed the project")
					continue
				}
				inv, err := cmd.Apply(p)
				if err != nil {
					refused++
					assert.Equal(t, before, marshal(t, p), "refused %s changed the project: %v", cmd.Describe(), err)
					continue
				}
				applied++
				after := marshal(t, p)
				redo, err := inv.Apply(p)
				require.NoError(t, err)
				assert.Equal(t, before, marshal(t, p), "undo of %s", cmd.Describe())
				_, err = redo.Apply(p)
				require.NoError(t, err)
				assert.Equal(t, after, marshal(t, p), "redo of %s", cmd.Describe())
				// The project still loads from its own bytes: ids stay unique.
				_, err = Parse([]byte(after), "after")
				assert.NoError(t, err, "after %s", cmd.Describe())
			}
			assert.Positive(t, applied, "no %s command was ever accepted", name)
			t.Logf("%s: %d applied, %d refused", name, applied, refused)
		})
	}
}

// TestHistorySequence runs long random edit sequences through History and
// checks every undo and redo step against the bytes recorded on the way.
func TestHistorySequence(t *testing.T) {
	names := make([]string, 0, len(commandMakers))
	for n := range commandMakers {
		names = append(names, n)
	}
	for seed := uint64(0); seed < 20; seed++ {
		rng := rand.New(rand.NewPCG(seed, 99))
		p := randomProject(rng, 30)
		var h History
		states := []string{marshal(t, p)}
		for i := 0; i < 40; i++ {
			cmd, err := commandMakers[names[rng.IntN(len(names))]](rng, p)
			if err != nil {
				continue
			}
			if h.Do(p, cmd, len(states)-1) != nil {
				assert.Equal(t, states[len(states)-1], marshal(t, p))
				continue
			}
			states = append(states, marshal(t, p))
		}
		require.True(t, h.Dirty() || len(states) == 1)
		for i := len(states) - 1; i > 0; i-- {
			sel, ok, err := h.Undo(p, i)
			require.NoError(t, err)
			require.True(t, ok)
			assert.Equal(t, i-1, sel, "undo restores the selection from before the edit")
			assert.Equal(t, states[i-1], marshal(t, p), "seed %d undo to state %d", seed, i-1)
		}
		_, ok, _ := h.Undo(p, nil)
		assert.False(t, ok)
		assert.False(t, h.Dirty(), "back at the opened state")
		for i := 1; i < len(states); i++ {
			sel, ok, err := h.Redo(p, i-1)
			require.NoError(t, err)
			require.True(t, ok)
			assert.Equal(t, i, sel, "redo restores the selection from after the edit")
			assert.Equal(t, states[i], marshal(t, p), "seed %d redo to state %d", seed, i)
		}
	}
}

func TestFieldEditRefusesBadFormula(t *testing.T) {
	p := randomProject(rand.New(rand.NewPCG(3, 3)), 10)
	var end *Node
	for _, n := range p.Nodes() {
		if n.Kind == End && end == nil {
			end = n
		}
	}
	require.NotNil(t, end)
	before := marshal(t, p)
	var h History
	err := h.Do(p, &SetNodeField{Node: end, Field: FieldPayoff, Value: "a * (b"}, nil)
	require.Error(t, err)
	_, parseErr := ParseFormula("a * (b")
	require.Error(t, parseErr)
	assert.Contains(t, err.Error(), parseErr.Error(), "the parse error is passed on")
	assert.Contains(t, err.Error(), end.ID, "the message names the node")
	assert.Equal(t, before, marshal(t, p))
	assert.False(t, h.CanUndo())
}

func TestRemoveVariableNamesEveryUse(t *testing.T) {
	p := randomProject(rand.New(rand.NewPCG(4, 4)), 20)
	p.Risk = RiskAttitude{Mode: RiskExponential, Tolerance: "a * 10"}
	_, err := (&RemoveVariable{Name: "a"}).Apply(p)
	require.Error(t, err)
	// Every place is found independently of Uses: scan the file text's formulas.
	var want []string
	want = append(want, `variable "b" value`, "risk tolerance")
	Walk(p.Root, func(n *Node, _ int) bool {
		if strings.Contains(n.Payoff, "a") {
			want = append(want, Place(n, -1)+" payoff")
		}
		return true
	})
	for _, w := range want {
		assert.Contains(t, err.Error(), w)
	}
	_, err = (&RemoveVariable{Name: "unused"}).Apply(p)
	assert.NoError(t, err)
}

func TestRenameVariableKeepsValues(t *testing.T) {
	p := randomProject(rand.New(rand.NewPCG(5, 5)), 30)
	r1 := Evaluate(p)
	require.True(t, r1.Valid(), "%v", r1.Problems)
	v1 := r1.Value()
	_, err := (&RenameVariableCmd{Old: "a", New: "base_cost"}).Apply(p)
	require.NoError(t, err)
	assert.Empty(t, Uses(p, "a"))
	assert.NotEmpty(t, Uses(p, "base_cost"))
	r2 := Evaluate(p)
	require.True(t, r2.Valid(), "%v", r2.Problems)
	assert.True(t, v1.Equal(r2.Value()), "%s vs %s", v1, r2.Value())
}

func TestChangeKindKeepsTreeValid(t *testing.T) {
	p := randomProject(rand.New(rand.NewPCG(6, 6)), 30)
	for _, n := range p.Nodes() {
		for _, k := range []Kind{Chance, Decision, End, Chance} {
			if n.Kind == k {
				continue
			}
			_, err := (&ChangeKind{Node: n, Kind: k}).Apply(p)
			require.NoError(t, err)
			r := Evaluate(p)
			// Equal shares 1/k plus rest add to exactly 1 (closed form).
			assert.True(t, r.Valid(), "after making %s a %s: %v", n.ID, k, r.Problems)
		}
	}
}

func TestPasteCarriesVariablesAndFreshIDs(t *testing.T) {
	src := randomProject(rand.New(rand.NewPCG(7, 7)), 12)
	src.Variables = append(src.Variables, &Variable{Name: "clip_only", Value: "b + 1"})
	src.Root.Branches[0].Cash = "clip_only"
	data, err := MarshalSubtree(src, src.Root)
	require.NoError(t, err)
	clip, err := Parse(data, "clipboard")
	require.NoError(t, err)
	assert.Nil(t, clip.Variable("unused"), "only variables the subtree needs travel")

	dst := &Project{Objective: Maximize, Root: &Node{ID: "n1", Kind: Decision, Branches: []*Branch{{Label: "x", To: &Node{ID: "n2", Kind: End}}}}}
	cmd, err := NewPaste(dst, dst.Root, clip)
	require.NoError(t, err)
	_, err = cmd.Apply(dst)
	require.NoError(t, err)
	for _, name := range []string{"a", "b", "p", "clip_only"} {
		assert.NotNil(t, dst.Variable(name), name)
	}
	ids := map[string]bool{}
	for _, n := range dst.Nodes() {
		assert.False(t, ids[n.ID], "id %s twice", n.ID)
		ids[n.ID] = true
	}
	// The pasted subtree has the same expected value as in its source project.
	rs, rd := Evaluate(src), Evaluate(dst)
	require.True(t, rs.Valid(), "%v", rs.Problems)
	require.True(t, rd.Valid(), "%v", rd.Problems)
	pasted := dst.Root.Branches[1].To
	assert.True(t, rs.ValueOf(src.Root).Equal(rd.ValueOf(pasted)))

	dup, err := NewDuplicate(dst, pasted)
	require.NoError(t, err)
	_, err = dup.Apply(dst)
	require.NoError(t, err)
	ids = map[string]bool{}
	for _, n := range dst.Nodes() {
		assert.False(t, ids[n.ID], "id %s twice after duplicate", n.ID)
		ids[n.ID] = true
	}
}
