package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"math/rand/v2"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/canvas/report"
	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

func TestReportCLI(t *testing.T) {
	if _, err := exec.LookPath("pdftotext"); err != nil {
		t.Skip("pdftotext (poppler-utils) is not installed")
	}
	out := filepath.Join(t.TempDir(), "report.pdf")
	code, stdout, stderr := runCLI("report", demo, "-o", out, "--page", "Letter", "--theme", "print", "--prepared-by", "M. Lindqvist")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, stdout, out)
	info, err := exec.Command("pdfinfo", out).CombinedOutput()
	require.NoError(t, err, string(info))
	assert.Contains(t, string(info), "612 x 792 pts")
	text, err := exec.Command("pdftotext", "-enc", "UTF-8", out, "-").CombinedOutput()
	require.NoError(t, err)
	flat := strings.Join(strings.Fields(string(text)), " ")
	p, err := engine.Load(demo)
	require.NoError(t, err)
	r := engine.Evaluate(p)
	assert.Contains(t, flat, "Prepared by M. Lindqvist")
	assert.Contains(t, flat, r.Format(r.Value()))
	assert.Contains(t, flat, strings.Join(strings.Fields(r.Recommendation()[0]), " "))
	assert.Contains(t, flat, engine.Caution)
	assert.Contains(t, flat, "Decision tree")
	// The diagram's labels are real text too.
	assert.Contains(t, flat, "Extend the rental 4 weeks")
}

func TestReportCLIUsage(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"no output", []string{"report", demo}, exitUsage, "-o FILE is required"},
		{"bad page", []string{"report", demo, "-o", filepath.Join(dir, "a.pdf"), "--page", "A5"}, exitUsage, `page "A5"`},
		{"bad theme", []string{"report", demo, "-o", filepath.Join(dir, "a.pdf"), "--theme", "neon"}, exitUsage, `theme "neon"`},
		{"missing file", []string{"report", "nowhere.json", "-o", filepath.Join(dir, "a.pdf")}, exitInvalid, "nowhere.json"},
		{"unwritable", []string{"report", demo, "-o", filepath.Join(dir, "no", "such", "dir", "a.pdf")}, exitInvalid, "a.pdf"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(tc.args...)
			assert.Equal(t, tc.code, code)
			assert.Contains(t, stderr, tc.msg)
		})
	}
}

// Each CSV table parses with encoding/csv and agrees with eval --json and explain --json.
func TestEvalCSVMatchesJSON(t *testing.T) {
	code, out, stderr := runCLI("eval", demo, "--json")
	require.Equal(t, exitOK, code, stderr)
	var doc engine.ResultDoc
	require.NoError(t, json.Unmarshal([]byte(out), &doc))
	table := func(name string) [][]string {
		code, out, stderr := runCLI("eval", demo, "--csv", name)
		require.Equal(t, exitOK, code, stderr)
		rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
		require.NoError(t, err)
		require.NotEmpty(t, rows)
		return rows
	}

	paths := table("paths")
	require.Len(t, paths, len(doc.Paths)+1)
	for i, pd := range doc.Paths {
		row := paths[i+1]
		assert.Equal(t, []string{pd.End, strings.Join(pd.Path, " > "), pd.Probability, pd.Payoff, pd.Contribution},
			row[:5], "path row %d", i+1)
		assert.Equal(t, map[bool]string{true: "true", false: "false"}[pd.Optimal], row[5])
	}

	// Strategy values are the root's alternatives as explain shows them.
	code, out, stderr = runCLI("explain", demo, "--json")
	require.Equal(t, exitOK, code, stderr)
	var ex engine.Explanation
	require.NoError(t, json.Unmarshal([]byte(out), &ex))
	strategies := table("strategies")
	require.Len(t, strategies, len(ex.Terms)+1)
	for i, term := range ex.Terms {
		assert.Equal(t, term.Label, strategies[i+1][0])
		assert.Equal(t, term.Value, strategies[i+1][1])
		if term.Chosen {
			assert.Equal(t, doc.Value, strategies[i+1][1])
		}
	}

	p, err := engine.Load(demo)
	require.NoError(t, err)
	r := engine.Evaluate(p)
	vars := table("variables")
	require.Len(t, vars, len(p.Variables)+1)
	for i, v := range p.Variables {
		assert.Equal(t, []string{v.Name, r.Vars[v.Name].String(), v.Value, v.Low, v.High, v.Note}, vars[i+1])
	}
}

// A 1,000-node report with every section and the tree diagram (tiled):
// go test -bench ReportWithTree ./cmd/ramify/
func BenchmarkReportWithTree1000Nodes(b *testing.B) {
	p, r := thousandNodes(b)
	b.ReportMetric(float64(len(r.Nodes)), "nodes")
	opts := report.Options{Tree: reportTree, Date: time.Unix(0, 0)}
	for b.Loop() {
		var buf bytes.Buffer
		require.NoError(b, report.Write(context.Background(), &buf, p, r, opts))
	}
}

// thousandNodes is the first random project (in a fixed seed order) with at
// least 1,000 nodes; random growth can stop early, so seeds are tried in turn.
func thousandNodes(tb testing.TB) (*engine.Project, *engine.Result) {
	for seed := uint64(1); seed < 1000; seed++ {
		p := enginetest.RandomProject(rand.New(rand.NewPCG(seed, 9)), enginetest.Options{Nodes: 1000, UseCash: true, UseVars: true, UseRest: true})
		if len(p.Nodes()) >= 1000 {
			// A distribution, so the simulation section is in the report too.
			p.Variables[0].Dist = &engine.Distribution{Kind: engine.DistTriangular, Min: "-60", Mode: p.Variables[0].Value, Max: "160"}
			r := engine.Evaluate(p)
			require.True(tb, r.Valid(), "%v", r.Problems)
			return p, r
		}
	}
	tb.Fatal("no random project reached 1,000 nodes")
	return nil, nil
}

func TestThousandNodeReportWithTree(t *testing.T) {
	if testing.Short() {
		t.Skip("a 1,000-node report takes seconds")
	}
	if _, err := exec.LookPath("pdfinfo"); err != nil {
		t.Skip("pdfinfo (poppler-utils) is not installed")
	}
	p, r := thousandNodes(t)
	out := filepath.Join(t.TempDir(), "big.pdf")
	start := time.Now()
	require.NoError(t, report.WriteFile(context.Background(), out, p, r, report.Options{Tree: reportTree}))
	t.Logf("%d nodes: report in %v", len(r.Nodes), time.Since(start))
	info, err := exec.Command("pdfinfo", out).CombinedOutput()
	require.NoError(t, err, string(info))
	text, err := exec.Command("pdftotext", out, "-").CombinedOutput()
	require.NoError(t, err)
	for _, title := range []string{"Decision tree, part 1 of", "Strategies", "Outcomes (path table)", "Risk profile",
		"Tornado diagram", "Break-evens", "Value of information", "Simulation summary", "Assumptions", "Caution"} {
		assert.Contains(t, string(text), title, "every section is in the 1,000-node report")
	}
}
