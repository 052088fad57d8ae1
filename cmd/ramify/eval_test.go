package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

const demo = "../../assets/demos/chiller-cover.ramify.json"

func runCLI(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := run(args, &out, &errb)
	return code, out.String(), errb.String()
}

func TestEvalJSONMatchesTheEngine(t *testing.T) {
	code, out, stderr := runCLI("eval", demo, "--json")
	require.Equal(t, exitOK, code, stderr)
	var doc struct {
		Value  string
		Policy []struct{ Node, Name, Choice string }
		Nodes  []struct{ ID, Kind, Value string }
		Paths  []struct {
			Path                              []string
			Probability, Payoff, Contribution string
			Optimal                           bool
		}
	}
	require.NoError(t, json.Unmarshal([]byte(out), &doc))
	p, err := engine.Load(demo)
	require.NoError(t, err)
	r := engine.Evaluate(p)
	assert.Equal(t, r.ValueOf(p.Root).String(), doc.Value)
	require.NotEmpty(t, doc.Policy)
	assert.Equal(t, "plan", doc.Policy[0].Node)
	assert.Len(t, doc.Nodes, len(r.Nodes))
	sum := decimal.Zero
	for _, path := range doc.Paths {
		if path.Optimal {
			sum = sum.Add(decimal.RequireFromString(path.Contribution))
		}
	}
	assert.True(t, sum.Equal(r.ValueOf(p.Root)), "optimal contributions add up to the root value")
}

func TestEvalForPeople(t *testing.T) {
	code, out, _ := runCLI("eval", demo)
	require.Equal(t, exitOK, code)
	assert.Contains(t, out, "Root expected cost: 312,200 EUR")
	assert.Contains(t, out, `At "Cooling cover plan" choose "Rent a temporary chiller"`)
}

func TestEvalCSVParses(t *testing.T) {
	code, out, _ := runCLI("eval", "--csv", demo)
	require.Equal(t, exitOK, code)
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	assert.Equal(t, []string{"end", "path", "probability", "payoff", "contribution", "optimal"}, rows[0])
	code, out, _ = runCLI("eval", demo, "--csv", "variables")
	require.Equal(t, exitOK, code)
	rows, err = csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	assert.Equal(t, "rent_week", rows[1][0])
}

func TestCheckAndExitCodes(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.json")
	require.NoError(t, os.WriteFile(bad, []byte(`{"format":"ramify","version":1,"root":{"id":"n7","kind":"chance","branches":[
		{"label":"Long delay","probability":"dlay","to":{"kind":"end"}},{"label":"x","probability":"0.2","to":{"kind":"end"}}]}}`), 0o644))
	broken := filepath.Join(dir, "broken.json")
	require.NoError(t, os.WriteFile(broken, []byte(`{"format":`), 0o644))

	tests := []struct {
		name   string
		args   []string
		code   int
		stdout string
		stderr string
	}{
		{"valid", []string{"check", demo}, exitOK, "no problems", ""},
		{"problems", []string{"check", bad}, exitInvalid, `node "n7" branch "Long delay" probability: unknown name "dlay" at column 1`, ""},
		{"eval refuses invalid", []string{"eval", bad}, exitInvalid, "", "has 1 problem(s)"},
		{"broken file", []string{"eval", broken}, exitInvalid, "", "broken.json: the file ends too early"},
		{"missing file", []string{"eval", filepath.Join(dir, "none.json")}, exitInvalid, "", "none.json: no such file or directory"},
		{"no file", []string{"eval"}, exitUsage, "", "expected one project FILE"},
		{"bad flag", []string{"eval", "--nope", demo}, exitUsage, "", "flag provided but not defined"},
		{"bad csv table", []string{"eval", demo, "--csv=sideways"}, exitUsage, "", "--csv takes paths, strategies or variables"},
		{"unknown subcommand", []string{"frobnicate", "x"}, exitUsage, "", `unknown subcommand "frobnicate"`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			code, out, errOut := runCLI(tt.args...)
			assert.Equal(t, tt.code, code, "stdout %s stderr %s", out, errOut)
			assert.Contains(t, out, tt.stdout)
			assert.Contains(t, errOut, tt.stderr)
		})
	}
}
