package main

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// demoWithSpreads writes the demo with invented distributions on two variables.
func demoWithSpreads(t *testing.T, bad bool) string {
	t.Helper()
	p, err := engine.Load(demo)
	require.NoError(t, err)
	for _, v := range p.Variables {
		switch v.Name {
		case "rent_week":
			v.Dist = &engine.Distribution{Kind: engine.DistTriangular, Min: "7000", Mode: "9500", Max: "13000"}
			if bad {
				v.Dist.Mode = "20000"
			}
		case "p_holds":
			v.Dist = &engine.Distribution{Kind: engine.DistPERT, Min: "0.4", Mode: "0.55", Max: "0.7"}
		}
	}
	path := filepath.Join(t.TempDir(), "spread.ramify.json")
	require.NoError(t, engine.Save(path, p))
	return path
}

func TestSimulateJSONIsReproducible(t *testing.T) {
	path := demoWithSpreads(t, false)
	type doc struct {
		Seed    uint64
		Varying []string
		Value   struct {
			Count             int
			Mean, SE, P5, P95 float64
		}
		Alternatives []struct {
			Label string
			PBest float64
		}
	}
	var a, b doc
	code, out, stderr := runCLI("simulate", path, "-n", "30000", "--seed", "11", "--json", "--workers", "1")
	require.Equal(t, exitOK, code, stderr)
	require.NoError(t, json.Unmarshal([]byte(out), &a))
	code, out, stderr = runCLI("simulate", "--json", "--seed", "11", "-n", "30000", path)
	require.Equal(t, exitOK, code, stderr)
	require.NoError(t, json.Unmarshal([]byte(out), &b))
	assert.Equal(t, a, b, "same seed, any number of workers")
	assert.Equal(t, uint64(11), a.Seed)
	assert.Equal(t, []string{"rent_week", "p_holds"}, a.Varying)
	assert.Equal(t, 30000, a.Value.Count)
	assert.Len(t, a.Alternatives, 3)
	assert.Less(t, a.Value.P5, a.Value.P95)
}

func TestSimulateTextCSVAndChart(t *testing.T) {
	path := demoWithSpreads(t, false)
	code, out, stderr := runCLI("simulate", path, "-n", "5000", "--mode", "full")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "seed ")
	assert.Contains(t, out, "Drawn: rent_week, p_holds")
	assert.Contains(t, out, engine.Caution)

	code, out, _ = runCLI("simulate", path, "-n", "5000", "--csv", "samples", "--seed", "1")
	require.Equal(t, exitOK, code)
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	assert.Len(t, rows, 5001)
	assert.Len(t, rows[0], 5, "iteration, value, three alternatives")

	code, out, _ = runCLI("simulate", path, "-n", "5000", "--csv")
	require.Equal(t, exitOK, code)
	assert.Contains(t, out, "chance best,Rent a temporary chiller,")

	chart := filepath.Join(t.TempDir(), "run.pdf")
	code, _, stderr = runCLI("simulate", path, "-n", "5000", "-o", chart)
	require.Equal(t, exitOK, code, stderr)
	data, err := os.ReadFile(chart)
	require.NoError(t, err)
	assert.True(t, strings.HasPrefix(string(data), "%PDF"))
}

func TestSimulateBadInput(t *testing.T) {
	tests := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"-n", "0"}, exitUsage, "-n must be at least 1 (got 0)"},
		{[]string{"--mode", "wild"}, exitUsage, "--mode takes parameters or full"},
		{[]string{"--seed", "x"}, exitUsage, "--seed takes a whole number"},
		{[]string{"-o", "chart.gif"}, exitUsage, "use .png, .svg or .pdf"},
		{[]string{"--csv", "paths"}, exitUsage, ""},
	}
	path := demoWithSpreads(t, false)
	for _, tc := range tests {
		code, _, stderr := runCLI(append([]string{"simulate", path}, tc.args...)...)
		assert.Equal(t, tc.code, code, tc.args)
		assert.Contains(t, stderr, tc.want, tc.args)
	}
	code, _, stderr := runCLI("simulate", demoWithSpreads(t, true), "-n", "10")
	assert.Equal(t, exitInvalid, code)
	assert.Contains(t, stderr, `variable "rent_week" distribution mode: 20000 is outside min 7000 to max 13000`)
}
