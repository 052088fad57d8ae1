package engine_test

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/assets"
	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

func TestLoadSaveLoadIsLossless(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	projects := []*engine.Project{}
	for _, d := range assets.Demos() {
		p, err := engine.Parse(d.Data, d.Name)
		require.NoError(t, err, d.Name)
		projects = append(projects, p)
	}
	for i := 0; i < 50; i++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 30, UseRest: true, UseCash: true, UseVars: true})
		p.Notes = "line one\nline \"two\" ünïcødé"
		p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "5000"}
		p.Variables = append(p.Variables, &engine.Variable{Name: "d", Value: "3", Dist: &engine.Distribution{Kind: engine.DistDiscrete, Values: []string{"1", "3"}, Probs: []string{"0.5", "0.5"}}})
		p.Root.Collapsed = true
		projects = append(projects, p)
	}
	for i, p := range projects {
		first, err := engine.Marshal(p)
		require.NoError(t, err)
		back, err := engine.Parse(first, "round trip")
		require.NoError(t, err, "project %d", i)
		second, err := engine.Marshal(back)
		require.NoError(t, err)
		assert.Equal(t, string(first), string(second), "project %d", i)
		assert.True(t, json.Valid(first))
		assert.True(t, engine.Evaluate(p).ValueOf(p.Root).Equal(engine.Evaluate(back).ValueOf(back.Root)))
	}
}

func TestWriterIsStableAndDiffable(t *testing.T) {
	d, ok := assets.DemoByName("chiller-cover")
	require.True(t, ok)
	p, err := engine.Parse(d.Data, d.Name)
	require.NoError(t, err)
	out, err := engine.Marshal(p)
	require.NoError(t, err)
	assert.Equal(t, string(d.Data), string(out), "the demo is stored exactly as the writer writes it")
	for _, line := range strings.Split(string(out), "\n") {
		assert.LessOrEqual(t, strings.Count(line, `": `), 1, "one field per line: %s", line)
	}
}

func TestLoadErrorsNameTheJSONLocation(t *testing.T) {
	wrap := func(root string) string {
		return `{"format": "ramify", "version": 1, "root": ` + root + `}`
	}
	tests := []struct{ name, doc, want string }{
		{"syntax", `{"format": "ramify",`, "the file ends too early"},
		{"syntax position", "{\n  \"format\": \"ramify\" \"version\": 1}", "not valid JSON at line 2, column 22"},
		{"newer", `{"format": "ramify", "version": 7, "root": {"kind": "end"}}`, "version: the file was written by a newer Ramify (file format 7; this version reads up to 1)"},
		{"not ours", `{"format": "other", "version": 1}`, `format: this is not a Ramify project`},
		{"no root", `{"format": "ramify", "version": 1}`, "root: missing"},
		{"wrong type", wrap(`{"kind": "decision", "branches": [{"to": {"kind": "end"}}, {"to": {"kind": "chance", "branches": [{"probability": true, "to": {"kind": "end"}}]}}]}`),
			"root.branches[1].to.branches[0].probability: expected text or a number, found true/false"},
		{"bad kind", wrap(`{"kind": "maybe"}`), `root.kind: expected decision, chance or end, found "maybe"`},
		{"missing to", wrap(`{"kind": "decision", "branches": [{"label": "x"}]}`), "root.branches[0].to: missing"},
		{"typo", wrap(`{"kind": "end", "payof": "3"}`), "root.payof: unknown field"},
		{"duplicate id", wrap(`{"id": "a", "kind": "decision", "branches": [{"to": {"id": "a", "kind": "end"}}]}`), `root.branches[0].to.id: the id "a" is used by another node`},
		{"objective", `{"format": "ramify", "version": 1, "objective": "most", "root": {"kind": "end"}}`, `objective: expected "maximize" or "minimize"`},
		{"trailing", `{"format": "ramify", "version": 1, "root": {"kind": "end"}} {}`, "extra data"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := engine.Parse([]byte(tt.doc), "case.json")
			require.Error(t, err)
			assert.Contains(t, err.Error(), tt.want)
			assert.True(t, strings.HasPrefix(err.Error(), "case.json: "), err.Error())
		})
	}
}

func TestNumbersMayBeJSONNumbers(t *testing.T) {
	p, err := engine.Parse([]byte(`{"format":"ramify","version":1,"variables":[{"name":"x","value":2.5}],
		"root":{"kind":"chance","branches":[{"probability":0.25,"to":{"kind":"end","payoff":-12000}},{"probability":"rest","to":{"kind":"end","payoff":"x"}}]}}`), "n")
	require.NoError(t, err)
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	assert.Equal(t, "-2998.125", r.ValueOf(p.Root).String())
	assert.NotEmpty(t, p.Root.ID, "missing ids are assigned")
}

func TestDepthLimits(t *testing.T) {
	// 2,500 levels must load; far deeper is refused with a message, not a crash.
	for _, tt := range []struct {
		depth int
		ok    bool
	}{{2500, true}, {5000, false}} {
		data, err := engine.Marshal(enginetest.Chain(tt.depth))
		require.NoError(t, err)
		p, err := engine.Parse(data, "deep")
		if tt.ok {
			require.NoError(t, err)
			assert.True(t, engine.Evaluate(p).Valid())
		} else {
			require.Error(t, err)
			assert.Contains(t, err.Error(), "nested too deeply")
		}
	}
}

func TestSaveIsAtomicAndKeepsBackup(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "plan.ramify.json")
	p := settlementTree()
	require.NoError(t, engine.Save(path, p))
	first, _ := os.ReadFile(path)
	p.Title = "changed"
	require.NoError(t, engine.Save(path, p))
	bak, err := os.ReadFile(path + ".bak")
	require.NoError(t, err)
	assert.Equal(t, first, bak)

	// A save that cannot complete (the folder is really a file) leaves the old file intact.
	err = engine.Save(filepath.Join(path, "inside.json"), p)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "cannot write")
	// A failing writer leaves no temporary file and does not touch the target.
	before, _ := os.ReadFile(path)
	err = engine.WriteAtomic(path, func(w io.Writer) error { return errors.New("disk full") })
	require.Error(t, err)
	after, _ := os.ReadFile(path)
	assert.True(t, bytes.Equal(before, after))
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		assert.False(t, strings.Contains(e.Name(), ".tmp-"), "temporary file left: %s", e.Name())
	}
}

func FuzzLoad(f *testing.F) {
	for _, d := range assets.Demos() {
		f.Add(d.Data)
	}
	f.Add([]byte(`{"format":"ramify","version":1,"root":{"kind":"decision","branches":[{"to":{"kind":"end","payoff":"1/0"}}]}}`))
	f.Add([]byte(`{"format":"ramify","version":1,"variables":[{"name":"a","value":"a"}],"root":{"kind":"end","payoff":"a"}}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		p, err := engine.Parse(data, "fuzz")
		if err != nil {
			return
		}
		r := engine.Evaluate(p)
		_ = r.Paths()
		out, err := engine.Marshal(p)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := engine.Parse(out, "again"); err != nil {
			t.Fatalf("a loaded project did not load again after saving: %v", err)
		}
	})
}
