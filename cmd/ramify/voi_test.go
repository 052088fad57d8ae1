package main

import (
	"encoding/json"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func TestVOIJSONMatchesTheEngine(t *testing.T) {
	code, out, stderr := runCLI("voi", demo, "--json", "--any-branch")
	require.Equal(t, exitOK, code, stderr)
	var doc struct {
		Without string
		Whole   struct {
			Valid bool
			EVPI  string
		}
		Uncertainties []struct {
			Name  string
			Valid bool
			EVPI  string
		}
	}
	require.NoError(t, json.Unmarshal([]byte(out), &doc))
	p, err := engine.Load(demo)
	require.NoError(t, err)
	rep, err := analysis.EVPI(p, analysis.VOIOptions{AnyBranch: true})
	require.NoError(t, err)
	assert.Equal(t, rep.Without.String(), doc.Without)
	assert.True(t, doc.Whole.Valid)
	assert.Equal(t, rep.Whole.EVPI.String(), doc.Whole.EVPI)
	require.Len(t, doc.Uncertainties, len(rep.Nodes))
	for i, f := range rep.Nodes {
		assert.Equal(t, f.EVPI.String(), doc.Uncertainties[i].EVPI)
	}
}

func TestVOIForPeople(t *testing.T) {
	code, out, _ := runCLI("voi", demo)
	require.Equal(t, exitOK, code)
	assert.Contains(t, out, "no figure")
	assert.Contains(t, out, "any-branch option")
	assert.Contains(t, out, engine.Caution)

	code, out, stderr := runCLI("voi", demo, "--any-branch", "--study-at", "plan", "--informs", "old-chiller",
		"--results", "Sound, Worn", "--likelihood", "0.8,0.3; 0.2,0.7", "--cost", "2000")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "P(Sound) = 0.575")
	assert.Contains(t, out, "EVSI:")
	assert.Contains(t, out, "Most worth paying")
}

func TestVOIBadInput(t *testing.T) {
	code, _, stderr := runCLI("voi", demo, "--study-at", "plan")
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "a study needs")
	code, _, stderr = runCLI("voi", demo, "--study-at", "plan", "--informs", "old-chiller", "--results", "A,B", "--likelihood", "0.8,0.3;0.3,0.7")
	assert.Equal(t, exitInvalid, code)
	assert.Contains(t, stderr, `when "Old chiller through the season" is "Holds" the chances of the results add up to 1.1`)
	code, _, _ = runCLI("voi", "no-such-file.json")
	assert.Equal(t, exitInvalid, code)
}
