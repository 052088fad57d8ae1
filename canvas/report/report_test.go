package report

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

var demoFile = filepath.Join("..", "..", "assets", "demos", "chiller-cover.ramify.json")

func loadDemo(t testing.TB) (*engine.Project, *engine.Result) {
	p, err := engine.Load(demoFile)
	require.NoError(t, err)
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	return p, r
}

// poppler runs a poppler-utils tool on a PDF; the tests need a real reader.
func poppler(t *testing.T, tool string, args ...string) string {
	t.Helper()
	if _, err := exec.LookPath(tool); err != nil {
		t.Skipf("%s (poppler-utils) is not installed", tool)
	}
	out, err := exec.Command(tool, args...).CombinedOutput()
	require.NoError(t, err, string(out))
	return string(out)
}

func writeReport(t *testing.T, p *engine.Project, r *engine.Result, o Options) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "report.pdf")
	require.NoError(t, WriteFile(context.Background(), path, p, r, o))
	return path
}

func pdfPages(t *testing.T, path string) int {
	info := poppler(t, "pdfinfo", path)
	m := regexp.MustCompile(`(?m)^Pages:\s+(\d+)`).FindStringSubmatch(info)
	require.NotNil(t, m, info)
	n, err := strconv.Atoi(m[1])
	require.NoError(t, err)
	return n
}

// squash joins wrapped lines so sentences can be searched whole.
func squash(s string) string { return strings.Join(strings.Fields(s), " ") }

// engineFigures is every value the engine and its analyses can print for the
// project: the report may show no other amount.
func engineFigures(t *testing.T, r *engine.Result) map[string]bool {
	set := map[string]bool{r.Format(r.Value()): true}
	a, err := analysis.Analyse(r.Project, analysis.Options{})
	require.NoError(t, err)
	for _, row := range a.TableCells() {
		for _, cell := range row {
			set[cell] = true
		}
	}
	voi, err := analysis.EVPI(r.Project, analysis.VOIOptions{})
	require.NoError(t, err)
	set[voi.Format(voi.Without)] = true
	for _, f := range append([]analysis.EVPIFigure{voi.Whole}, voi.Nodes...) {
		set[voi.Format(f.With)], set[voi.Format(f.EVPI)] = true, true
	}
	pc := r.Project.Clone()
	tor, err := analysis.Tornado(context.Background(), pc, engine.Evaluate(pc))
	require.NoError(t, err)
	set[r.Format(tor.Base)] = true
	for _, b := range tor.Bars {
		set[r.Format(b.AtLow)], set[r.Format(b.AtHigh)], set[r.Format(b.Swing)] = true, true, true
	}
	for _, v := range r.Project.Variables {
		pc := r.Project.Clone()
		sw, err := analysis.Sweep(context.Background(), pc, engine.Evaluate(pc), analysis.VariableInput(v.Name), analysis.SweepOptions{})
		require.NoError(t, err)
		for _, b := range sw.BreakEvens {
			set[r.Format(b.Value)] = true
		}
	}
	for _, n := range r.Nodes {
		set[r.Format(r.ValueOf(n))] = true
		set[r.Format(r.DisplayValue(n))] = true
		set[r.Format(r.PathValue(n))] = true
		set[r.Format(r.Payoff(n))] = true
		for i := range n.Branches {
			set[r.Format(r.Cash(n, i))] = true
			set[r.Format(r.BranchValue(n, i))] = true
		}
	}
	for _, row := range r.Paths() {
		set[r.Format(row.Payoff)] = true
		set[r.Format(row.Contribution)] = true
	}
	if r.RiskActive() {
		set[r.Format(decimal.NewFromFloat(r.Tolerance()))] = true
	}
	// The simulation summary: the same run, repeated here with the report's fixed seed.
	sim, err := analysis.Simulate(context.Background(), r.Project.Clone(), analysis.SimOptions{N: reportSimIterations, Seed: reportSimSeed, Mode: analysis.SimParameters})
	if err == nil {
		f := func(x float64) { set[r.Format(decimal.NewFromFloat(x))] = true }
		for _, x := range []float64{sim.Base, sim.Value.Mean, sim.Value.SE, sim.Value.SD, sim.Value.P5, sim.Value.P50, sim.Value.P95, sim.Value.Min, sim.Value.Max} {
			f(x)
		}
		for _, a := range sim.Alternatives {
			f(a.Value.Mean)
			f(a.Value.P5)
			f(a.Value.P95)
		}
	}
	return set
}

func TestReportOpensInPoppler(t *testing.T) {
	demo, demoR := loadDemo(t)
	averse, _ := loadDemo(t)
	averse.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "200000"}
	tests := []struct {
		name string
		p    *engine.Project
		opts Options
	}{
		{"demo on A4, print theme", demo, Options{PreparedBy: "R. Adeyemi"}},
		{"demo on Letter, colour theme", demo, Options{Page: "Letter", Theme: "colour"}},
		{"demo with a risk attitude", averse, Options{}},
	}
	_ = demoR
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r := engine.Evaluate(tc.p)
			require.True(t, r.Valid())
			path := writeReport(t, tc.p, r, tc.opts)
			pages := pdfPages(t, path)
			text := poppler(t, "pdftotext", "-enc", "UTF-8", path, "-")
			flat := squash(text)

			// Every page carries "Page i of N" with N the reader's page count.
			for i := 1; i <= pages; i++ {
				assert.Contains(t, flat, fmt.Sprintf("Page %d of %d", i, pages))
			}
			assert.NotContains(t, flat, fmt.Sprintf("Page %d of", pages+1))
			if tc.opts.Page == "Letter" {
				assert.Contains(t, poppler(t, "pdfinfo", path), "612 x 792 pts")
			} else {
				assert.Contains(t, poppler(t, "pdfinfo", path), "595.28 x 841.89 pts")
			}

			assert.Contains(t, flat, squash(RootSentence(r)))
			assert.Contains(t, flat, r.Format(r.Value()))
			for _, s := range r.Recommendation() {
				assert.Contains(t, flat, squash(s))
			}
			assert.Contains(t, flat, engine.Caution)
			assert.Contains(t, flat, tc.p.Title)
			if tc.opts.PreparedBy != "" {
				assert.Contains(t, flat, "Prepared by "+tc.opts.PreparedBy)
			}
			for _, row := range r.Paths() {
				assert.Contains(t, flat, r.Format(row.Payoff))
				assert.Contains(t, flat, r.Format(row.Contribution))
			}
			for _, v := range tc.p.Variables {
				assert.Contains(t, flat, v.Name)
			}

			// Every amount printed with the unit is one the engine computed.
			figures := engineFigures(t, r)
			amounts := regexp.MustCompile(`−?\d[\d,]*(?:\.\d+)? `+regexp.QuoteMeta(tc.p.Currency)).FindAllString(flat, -1)
			require.NotEmpty(t, amounts)
			for _, a := range amounts {
				assert.True(t, figures[a], "%q is not a figure the engine computed", a)
			}
		})
	}
}

func TestReportRejectsBadInput(t *testing.T) {
	p, r := loadDemo(t)
	tests := []struct {
		name string
		opts Options
		want string
	}{
		{"page", Options{Page: "A5"}, `page "A5"`},
		{"theme", Options{Theme: "neon"}, `theme "neon"`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "r.pdf")
			assert.ErrorContains(t, WriteFile(context.Background(), path, p, r, tc.opts), tc.want)
			assert.NoFileExists(t, path)
		})
	}
	broken := p.Clone()
	broken.Root.Branches[0].Cash = "rent_week *"
	br := engine.Evaluate(broken)
	path := filepath.Join(t.TempDir(), "r.pdf")
	require.NoError(t, os.WriteFile(path, []byte("earlier report"), 0o644))
	assert.ErrorContains(t, WriteFile(context.Background(), path, broken, br, Options{}), "problem")
	data, err := os.ReadFile(path)
	require.NoError(t, err)
	assert.Equal(t, "earlier report", string(data), "a failed report must not replace the earlier file")
}

// The analyses on main each get their section, in order, with their figures.
func TestAnalysisSections(t *testing.T) {
	p, _ := loadDemo(t)
	p.Variable("rent_week").Dist = &engine.Distribution{Kind: engine.DistTriangular, Min: "7000", Mode: "9500", Max: "13000"}
	r := engine.Evaluate(p)
	require.True(t, r.Valid())
	path := writeReport(t, p, r, Options{})
	flat := squash(poppler(t, "pdftotext", "-enc", "UTF-8", path, "-"))
	order := []string{"Strategies", "Outcomes (path table)", "Risk profile", "Tornado diagram", "Break-evens", "Value of information",
		"Simulation summary", "Assumptions", "Caution"}
	last := -1
	for _, title := range order {
		at := strings.Index(flat, title)
		require.GreaterOrEqual(t, at, 0, title)
		assert.Greater(t, at, last, "%s comes after the section before it", title)
		last = at
	}
	voi, err := analysis.EVPI(p, analysis.VOIOptions{})
	require.NoError(t, err)
	if voi.Whole.Valid {
		assert.Contains(t, flat, "Every uncertainty "+voi.Format(voi.Whole.With)+" "+voi.Format(voi.Whole.EVPI))
	} else {
		// The demo's uncertainties lie on some branches only: the reason is printed instead.
		assert.Contains(t, flat, squash(voi.Whole.Reason))
	}
	sim, err := analysis.Simulate(context.Background(), p, analysis.SimOptions{N: reportSimIterations, Seed: reportSimSeed, Mode: analysis.SimParameters})
	require.NoError(t, err)
	assert.Contains(t, flat, "Base case "+r.Format(decimal.NewFromFloat(sim.Base)))
	assert.Contains(t, flat, "Mean (± standard error) "+r.Format(decimal.NewFromFloat(sim.Value.Mean)))
	pc := p.Clone()
	tor, err := analysis.Tornado(context.Background(), pc, engine.Evaluate(pc))
	require.NoError(t, err)
	require.NotEmpty(t, tor.Bars)
	top := tor.Bars[0]
	assert.Contains(t, flat, top.Variable+" "+exactNumber(top.Low)+" – "+exactNumber(top.High)+" "+r.Format(top.AtLow)+" "+r.Format(top.AtHigh)+" "+r.Format(top.Swing))
	a, err := analysis.Analyse(p, analysis.Options{})
	require.NoError(t, err)
	for _, s := range analysis.DominanceSummary(a.Profiles, a.Dominance) {
		assert.Contains(t, flat, squash(s))
	}
}

// A registered analysis section lands between the path table and the assumptions,
// with its chart drawn.
func TestAnalysisSectionRegistration(t *testing.T) {
	p, r := loadDemo(t)
	saved := AnalysisSections
	defer func() { AnalysisSections = saved }()
	RegisterAnalysis(Builder{Name: "test chart", Build: func(in *Input) ([]Section, error) {
		pl := plot.New()
		pl.Title.Text = "Cumulative chance"
		line, err := plotter.NewLine(plotter.XYs{{X: 0, Y: 0}, {X: 1, Y: 1}})
		if err != nil {
			return nil, err
		}
		pl.Add(line)
		return []Section{{Title: "Registered analysis", Paragraphs: []string{"Shown by a registered builder."}, Chart: pl}}, nil
	}})
	path := writeReport(t, p, r, Options{})
	flat := squash(poppler(t, "pdftotext", "-enc", "UTF-8", path, "-"))
	at := strings.Index(flat, "Registered analysis")
	require.GreaterOrEqual(t, at, 0)
	assert.Less(t, strings.Index(flat, "Outcomes (path table)"), at)
	assert.Less(t, at, strings.Index(flat, "Assumptions"))
	assert.Contains(t, flat, "Cumulative chance")
}

// fakeTree records where the report asks for the diagram, and draws boxes
// given in its own coordinates (points from its top-left corner, y down).
type fakeTree struct {
	w, h  vg.Length
	boxes []vg.Rectangle
	calls []vg.Point
	k     []float64
}

func (f *fakeTree) Size() (vg.Length, vg.Length) { return f.w, f.h }
func (f *fakeTree) Draw(c vg.Canvas, topLeft vg.Point, k float64) error {
	if _, probing := c.(*probeCanvas); !probing {
		f.calls, f.k = append(f.calls, topLeft), append(f.k, k)
	}
	for _, b := range f.boxes {
		kk := vg.Length(k)
		c.Fill(rectPath(topLeft.X+b.Min.X*kk, topLeft.Y-b.Max.Y*kk, (b.Max.X-b.Min.X)*kk, (b.Max.Y-b.Min.Y)*kk))
	}
	return nil
}

// A small tree is fitted on one page; a big one is tiled at a readable scale,
// one page per tile that has something on it, every tile offset by whole tiles.
func TestTreeDiagramFitOrTiled(t *testing.T) {
	p, r := loadDemo(t)
	tw, th := vg.Length(595.28-2*56), vg.Length(841.89-2*56-28-70)
	box := func(x0, y0, x1, y1 vg.Length) vg.Rectangle {
		return vg.Rectangle{Min: vg.Point{X: x0, Y: y0}, Max: vg.Point{X: x1, Y: y1}}
	}
	tests := []struct {
		name        string
		w, h        vg.Length
		boxes       []vg.Rectangle
		tiles       int
		scaleAtMost float64
	}{
		{"fits at full size", 300, 200, nil, 1, 1},
		{"fits scaled down", 900, 600, nil, 1, 0.6},
		{"tiled, drawing everywhere", 3000, 2500, []vg.Rectangle{box(0, 0, 3000, 2500)}, 0, tileScale},
		// Two small marks in opposite corners: only their two tiles are printed.
		{"tiled, sparse", 3000, 2500, []vg.Rectangle{box(0, 0, 10, 10), box(2990, 2490, 3000, 2500)}, 2, tileScale},
		{"tiled, drawing nothing", 3000, 2500, nil, 0, tileScale},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			f := &fakeTree{w: tc.w, h: tc.h, boxes: tc.boxes}
			var theme string
			opts := Options{Tree: func(pp *engine.Project, rr *engine.Result, th string) (TreeDiagram, error) {
				assert.Same(t, p, pp)
				assert.Same(t, r, rr)
				theme = th
				return f, nil
			}}
			path := writeReport(t, p, r, opts)
			assert.Equal(t, "print", theme)
			flat := squash(poppler(t, "pdftotext", path, "-"))
			assert.NotContains(t, flat, "Decision tree (outline)")
			want := tc.tiles
			if want == 0 {
				want = int(math.Ceil(float64(tc.w)*tileScale/float64(tw))) * int(math.Ceil(float64(tc.h)*tileScale/float64(th)))
			}
			if want > 1 {
				assert.Contains(t, flat, fmt.Sprintf("part %d of %d", want, want))
			}
			require.Len(t, f.calls, want)
			if tc.name == "tiled, sparse" {
				assert.Contains(t, flat, "part 1 of 2 (row 1, column 1)")
				assert.Contains(t, flat, "part 2 of 2 (row 3, column 5)")
			}
			for _, k := range f.k {
				assert.LessOrEqual(t, k, tc.scaleAtMost+1e-9)
			}
		})
	}
}

func TestColumnWidths(t *testing.T) {
	tests := []struct {
		name             string
		natural, minimum []vg.Length
		total            vg.Length
		want             []vg.Length
	}{
		{"fits", []vg.Length{10, 20}, nil, 100, []vg.Length{10, 20}},
		{"wide column shares what is left", []vg.Length{10, 300, 20}, nil, 100, []vg.Length{10, 70, 20}},
		{"two wide columns split evenly", []vg.Length{10, 300, 200}, nil, 110, []vg.Length{10, 50, 50}},
		{"a minimum is kept", []vg.Length{10, 300, 200}, []vg.Length{5, 70, 20}, 110, []vg.Length{10, 70, 30}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			assert.Equal(t, tc.want, columnWidths(tc.natural, tc.minimum, tc.total))
		})
	}
}

func TestDropEmptyColumns(t *testing.T) {
	in := &Table{Header: []string{"a", "b", "c"}, Align: []Align{Left, Right, Right},
		Rows: [][]string{{"1", "", "x"}, {"2", " ", "y"}}}
	out := dropEmptyColumns(in)
	assert.Equal(t, []string{"a", "c"}, out.Header)
	assert.Equal(t, [][]string{{"1", "x"}, {"2", "y"}}, out.Rows)
	assert.Equal(t, []Align{Left, Right}, out.Align)
	assert.Len(t, in.Header, 3, "the input table is left alone")
}

// bigProject grows a random valid tree of about n nodes with variables and
// formulas, deterministically from seed.
func bigProject(n int, seed uint64) *engine.Project {
	rng := rand.New(rand.NewPCG(seed, 7))
	p := &engine.Project{Title: "Generated plant upgrade", Objective: engine.Maximize, Currency: "$", Decimals: 0,
		Variables: []*engine.Variable{{Name: "base", Value: "12000", Low: "9000", High: "15000", Note: "Base margin",
			Dist: &engine.Distribution{Kind: engine.DistPERT, Min: "9000", Mode: "12000", Max: "15000"}},
			{Name: "k", Value: "1.5", Low: "1", High: "2", Note: "Scale"}}}
	id := 0
	next := func(kind engine.Kind) *engine.Node {
		id++
		return &engine.Node{ID: fmt.Sprintf("n%d", id), Kind: kind, Name: fmt.Sprintf("%s %d", kind, id)}
	}
	p.Root = next(engine.Decision)
	frontier := []*engine.Node{p.Root}
	count := 1
	for len(frontier) > 0 {
		node := frontier[0]
		frontier = frontier[1:]
		kids := 2 + rng.IntN(2)
		for i := 0; i < kids; i++ {
			kind := engine.End
			if count+len(frontier)*2 < n {
				kind = []engine.Kind{engine.Decision, engine.Chance}[rng.IntN(2)]
			}
			c := next(kind)
			count++
			b := &engine.Branch{Label: fmt.Sprintf("option %d", i+1), To: c, Cash: fmt.Sprintf("%d", rng.IntN(2000)-1000)}
			if node.Kind == engine.Chance {
				b.Probability = "rest"
				if i < kids-1 {
					b.Probability = fmt.Sprintf("0.%d", 1+rng.IntN(3))
				}
			}
			if kind == engine.End {
				c.Payoff = fmt.Sprintf("base * k - %d", rng.IntN(20000))
			} else {
				frontier = append(frontier, c)
			}
			node.Branches = append(node.Branches, b)
		}
	}
	return p
}

// The 1,000-node report, every section: go test -bench Report ./canvas/report/
func BenchmarkReport1000Nodes(b *testing.B) {
	p := bigProject(1000, 1)
	r := engine.Evaluate(p)
	require.True(b, r.Valid(), "%v", r.Problems)
	b.ReportMetric(float64(len(r.Nodes)), "nodes")
	for b.Loop() {
		var buf bytes.Buffer
		require.NoError(b, Write(context.Background(), &buf, p, r, Options{Date: time.Unix(0, 0)}))
	}
}

func TestBigReportReads(t *testing.T) {
	p := bigProject(1000, 2)
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	require.GreaterOrEqual(t, len(r.Nodes), 1000)
	path := writeReport(t, p, r, Options{})
	pages := pdfPages(t, path)
	assert.Greater(t, pages, 10)
	flat := squash(poppler(t, "pdftotext", "-enc", "UTF-8", path, "-"))
	assert.Contains(t, flat, fmt.Sprintf("Page %d of %d", pages, pages))
	assert.Contains(t, flat, r.Format(r.Value()))
	for _, title := range []string{"Strategies", "Outcomes (path table)", "Risk profile", "Tornado diagram", "Break-evens",
		"Value of information", "Simulation summary", "Assumptions", "Caution"} {
		assert.True(t, strings.Contains(flat, title), "%q is missing from the 1,000-node report", title)
	}
}

// Odd but valid trees still give a complete report: a lone end, a chance root,
// a project without variables or title.
func TestReportOddTrees(t *testing.T) {
	tests := []struct {
		name string
		p    *engine.Project
	}{
		{"lone end", &engine.Project{Objective: engine.Maximize, Root: &engine.Node{ID: "e", Kind: engine.End, Payoff: "5"}}},
		{"chance root", &engine.Project{Objective: engine.Maximize, Currency: "$", Root: &engine.Node{ID: "c", Kind: engine.Chance,
			Branches: []*engine.Branch{
				{Label: "up", Probability: "0.25", To: &engine.Node{ID: "u", Kind: engine.End, Payoff: "-12000"}},
				{Label: "down", Probability: "rest", To: &engine.Node{ID: "d", Kind: engine.End, Payoff: "-4000"}},
			}}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r := engine.Evaluate(tc.p)
			require.True(t, r.Valid(), "%v", r.Problems)
			path := writeReport(t, tc.p, r, Options{})
			flat := squash(poppler(t, "pdftotext", "-enc", "UTF-8", path, "-"))
			assert.Contains(t, flat, "Decision report")
			assert.Contains(t, flat, r.Format(r.Value()))
			assert.Contains(t, flat, engine.Caution)
		})
	}
}
