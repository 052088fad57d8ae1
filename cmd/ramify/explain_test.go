package main

import (
	"bytes"
	"encoding/json"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// Every node's printed JSON terms re-add exactly to the value `eval --json` reports.
func TestExplainCLIReAddsToEval(t *testing.T) {
	var out, errOut bytes.Buffer
	require.Equal(t, exitOK, run([]string{"eval", demo, "--json"}, &out, &errOut), errOut.String())
	var doc engine.ResultDoc
	require.NoError(t, json.Unmarshal(out.Bytes(), &doc))
	values := map[string]string{}
	for _, n := range doc.Nodes {
		values[n.ID] = n.Value
	}
	pathPayoff := map[string]string{}
	for _, p := range doc.Paths {
		pathPayoff[p.End] = p.Payoff
	}
	for _, n := range doc.Nodes {
		t.Run(n.ID, func(t *testing.T) {
			out.Reset()
			require.Equal(t, exitOK, run([]string{"explain", demo, "--node", n.ID, "--json"}, &out, &errOut), errOut.String())
			var e struct {
				Value string `json:"value"`
				Terms []struct {
					Amount string `json:"amount"`
					InSum  bool   `json:"inSum"`
				} `json:"terms"`
			}
			require.NoError(t, json.Unmarshal(out.Bytes(), &e))
			sum := decimal.Zero
			for _, term := range e.Terms {
				if term.InSum {
					sum = sum.Add(decimal.RequireFromString(term.Amount))
				}
			}
			want := values[n.ID]
			if n.Kind == engine.End {
				want = pathPayoff[n.ID]
			}
			assert.True(t, sum.Equal(decimal.RequireFromString(want)), "terms %s, eval %s", sum, want)
			assert.Equal(t, want, e.Value)
		})
	}
}

func TestExplainCLIErrors(t *testing.T) {
	tests := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"unknown node", []string{"explain", demo, "--node", "zz"}, exitInvalid, `no node with the id "zz"`},
		{"missing file", []string{"explain", "nowhere.json"}, exitInvalid, "nowhere.json"},
		{"no file", []string{"explain"}, exitUsage, "expected one project FILE"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var out, errOut bytes.Buffer
			assert.Equal(t, tc.code, run(tc.args, &out, &errOut))
			assert.Contains(t, errOut.String(), tc.msg)
		})
	}
}
