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

func TestProfileJSONMatchesTheEngine(t *testing.T) {
	code, out, stderr := runCLI("profile", demo, "--json", "--loss-threshold", "300000")
	require.Equal(t, exitOK, code, stderr)
	var doc struct {
		Node         string
		Objective    string
		Alternatives []struct {
			Name          string
			ExpectedValue string
			PLoss         string
			Outcomes      []struct{ Value, Probability, Cumulative string }
		}
		Dominance []string
		Caution   string
	}
	require.NoError(t, json.Unmarshal([]byte(out), &doc))
	p, err := engine.Load(demo)
	require.NoError(t, err)
	r := engine.Evaluate(p)
	require.Len(t, doc.Alternatives, len(p.Root.Branches))
	for i, alt := range doc.Alternatives {
		// Each profile sums to 1, its mean is the engine's value of the branch.
		total, mean := decimal.Zero, decimal.Zero
		for _, o := range alt.Outcomes {
			pr := decimal.RequireFromString(o.Probability)
			total = total.Add(pr)
			mean = mean.Add(pr.Mul(decimal.RequireFromString(o.Value)))
		}
		assert.True(t, total.Equal(decimal.NewFromInt(1)), alt.Name)
		assert.True(t, mean.Equal(r.BranchValue(p.Root, i)), "%s: %s vs %s", alt.Name, mean, r.BranchValue(p.Root, i))
		assert.Equal(t, mean.String(), alt.ExpectedValue)
		assert.NotEmpty(t, alt.PLoss)
	}
	assert.Equal(t, engine.Caution, doc.Caution)
	assert.NotEmpty(t, doc.Dominance)
}

func TestProfileTableAndChart(t *testing.T) {
	dir := t.TempDir()
	chart := filepath.Join(dir, "profile.pdf")
	code, out, stderr := runCLI("profile", demo, "--risk-tolerance", "200000", "-o", chart, "--cumulative")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "Certainty equivalent")
	assert.Contains(t, out, "R = 200,000 EUR")
	assert.Contains(t, out, "Chart written to")
	data, err := os.ReadFile(chart)
	require.NoError(t, err)
	assert.True(t, bytes.HasPrefix(data, []byte("%PDF-")))
}

func TestEvalCSVStrategiesIsTheRealTable(t *testing.T) {
	code, out, stderr := runCLI("eval", demo, "--csv", "strategies")
	require.Equal(t, exitOK, code, stderr)
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	assert.Equal(t, "expected_cost", rows[0][1])
	assert.Equal(t, "sd", rows[0][4])
	assert.Len(t, rows, 4)
}

func TestProfileBadInput(t *testing.T) {
	tests := []struct {
		name string
		args []string
		code int
		err  string
	}{
		{"R zero", []string{"profile", demo, "--risk-tolerance", "0"}, exitUsage, "R cannot be 0"},
		{"R not a number", []string{"profile", demo, "--risk-tolerance", "lots"}, exitUsage, "--risk-tolerance"},
		{"R NaN", []string{"profile", demo, "--risk-tolerance", "NaN"}, exitUsage, "not a number"},
		{"unknown node", []string{"profile", demo, "--node", "nowhere"}, exitInvalid, `no node with id "nowhere"`},
		{"bad chart type", []string{"profile", demo, "-o", "chart.gif"}, exitUsage, ".png, .svg or .pdf"},
		{"bad threshold", []string{"profile", demo, "--loss-threshold", "ten"}, exitUsage, "not a number"},
		{"bad limit", []string{"profile", demo, "--strategies", "--limit", "0"}, exitUsage, "--limit"},
		{"both attitudes", []string{"profile", demo, "--risk-neutral", "--risk-tolerance", "5"}, exitUsage, "not both"},
		{"missing file", []string{"profile", "nope.ramify.json"}, exitInvalid, "nope.ramify.json"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(tc.args...)
			assert.Equal(t, tc.code, code)
			assert.Contains(t, stderr, tc.err)
		})
	}
}
