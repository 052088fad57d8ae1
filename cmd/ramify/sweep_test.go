package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

const demoFile = "../../assets/demos/chiller-cover.ramify.json"

func TestSweepJSONGivesExactBreakEvens(t *testing.T) {
	code, out, stderr := runCLI("sweep", demoFile, "--field", "delivery:Late:probability", "--json")
	require.Equal(t, exitOK, code, stderr)
	var doc struct {
		Rule       string `json:"probabilityRule"`
		BreakEvens []struct {
			At string `json:"at"`
		} `json:"breakEvens"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &doc))
	require.Len(t, doc.BreakEvens, 1)
	// Late delivery costs min(4·9,500, 45,000) = 38,000 more; renting is
	// 57,000 + 240,000 + q·38,000 against the premium 315,000, so it breaks even
	// at q = 18,000/38,000 (hand-derived from the demo's figures).
	want := engine.Divide(decimal.NewFromInt(18000), decimal.NewFromInt(38000))
	got := decimal.RequireFromString(doc.BreakEvens[0].At)
	assert.True(t, got.Sub(want).Abs().LessThan(decimal.New(1, -25)), "got %s want %s", got, want)
	assert.Contains(t, doc.Rule, "scaled in proportion", "the varied branch is the rest branch itself")
}

func TestSensitivityCommandsWriteChartsAndTables(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		args  []string
		chart string
		want  string
	}{
		{[]string{"sweep", demoFile, "--var", "p_holds", "--from", "0", "--to", "1", "-o"}, "sweep.png", "Break-evens"},
		{[]string{"tornado", demoFile, "-o"}, "tornado.svg", "install_cost"},
		{[]string{"regions", demoFile, "--x", "p_holds", "--y", "rent_week", "--steps", "12", "-o"}, "map.pdf", "of the grid"},
	}
	for _, tc := range tests {
		path := filepath.Join(dir, tc.chart)
		code, out, stderr := runCLI(append(tc.args, path)...)
		require.Equal(t, exitOK, code, stderr)
		assert.Contains(t, out, tc.want)
		assert.Contains(t, out, engine.Caution)
		info, err := os.Stat(path)
		require.NoError(t, err)
		assert.Greater(t, info.Size(), int64(1000))
	}
	code, out, _ := runCLI("tornado", demoFile, "--csv")
	require.Equal(t, exitOK, code)
	assert.Contains(t, out, "variable,low,high,base")
}

func TestSensitivityCommandsRejectBadInput(t *testing.T) {
	tests := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"sweep", demoFile}, exitUsage, "--var NAME"},
		{[]string{"sweep", demoFile, "--var", "x", "--field", "plan:1:cash"}, exitUsage, "not both"},
		{[]string{"sweep", demoFile, "--var", "nope"}, exitInvalid, `unknown variable "nope"`},
		{[]string{"sweep", demoFile, "--var", "rent_week", "--from", "9"}, exitUsage, "both --from and --to"},
		{[]string{"sweep", demoFile, "--var", "rent_week", "--from", "9", "--to", "2"}, exitInvalid, "low 9 is above high 2"},
		{[]string{"sweep", demoFile, "--field", "plan:1:probability"}, exitInvalid, "only chance branches"},
		{[]string{"sweep", demoFile, "--field", "ghost:1:probability"}, exitInvalid, `unknown node "ghost"`},
		{[]string{"sweep", demoFile, "--var", "p_holds", "--from", "0", "--to", "1.2"}, exitInvalid, `node "old-chiller"`},
		{[]string{"sweep", demoFile, "--var", "p_holds", "--node", "delivery"}, exitInvalid, "is a chance node"},
		{[]string{"regions", demoFile, "--x", "p_holds"}, exitUsage, "--x and --y"},
		{[]string{"regions", demoFile, "--x", "p_holds", "--y", "p_holds"}, exitInvalid, "both"},
		{[]string{"tornado", demoFile, "-o", "chart.bmp"}, exitInvalid, ".png, .svg or .pdf"},
	}
	for _, tc := range tests {
		code, _, stderr := runCLI(tc.args...)
		assert.Equal(t, tc.code, code, "%v: %s", tc.args, stderr)
		assert.Contains(t, stderr, tc.want, "%v", tc.args)
	}
}
