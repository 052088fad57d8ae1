package report

import (
	"fmt"
	"image/color"
	"math"
	"strings"

	"github.com/shopspring/decimal"
	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/engine"
)

// Each section is a small function of the evaluated project. Every number is
// printed with engine.FormatValue (through Result.Format) or
// engine.FormatProbability, so the report shows exactly what the app shows.

// RootSentence states the root value in words, as the title page and the
// recommendation print it.
func RootSentence(r *engine.Result) string {
	s := fmt.Sprintf("Following the recommendation, the %s is %s.", r.ValueWord(), r.Format(r.Value()))
	if r.RiskActive() {
		s += fmt.Sprintf(" Its expected value is %s (risk tolerance %s).", r.Format(r.ValueOf(r.Project.Root)),
			r.Format(decimal.NewFromFloat(r.Tolerance())))
	}
	return s
}

// notesHeading introduces the project notes on the title page, set as a subheading.
const notesHeading = "Notes"

func titlePage(in *Input) ([]Section, error) {
	p, r, o := in.Project, in.Result, in.Options
	var paras []string
	if by := preparedBy(p, o); by != "" {
		paras = append(paras, "Prepared by "+by)
	}
	paras = append(paras, "Date: "+o.Date.Format("2 January 2006"))
	goal := "highest benefit"
	if p.Objective == engine.Minimize {
		goal = "lowest cost"
	}
	paras = append(paras, fmt.Sprintf("The tree has %d nodes and %d outcomes; the decisions aim for the %s. Values are in %s.",
		len(r.Nodes), len(r.Paths()), goal, defaultTo(p.Currency, "the project's units")))
	paras = append(paras, RootSentence(r))
	if strings.TrimSpace(p.Notes) != "" {
		paras = append(paras, notesHeading, strings.TrimSpace(p.Notes))
	}
	return []Section{{Title: reportTitle(p), Paragraphs: paras}}, nil
}

func recommendation(in *Input) ([]Section, error) {
	r := in.Result
	paras := []string{RootSentence(in.Result)}
	rec := r.Recommendation()
	if len(rec) == 0 {
		rec = []string{"The tree has no decision to make: the value above is what to expect."}
	}
	paras = append(paras, rec...)
	return []Section{{Title: "Recommendation", Paragraphs: paras}}, nil
}

// Below this scale a whole-page diagram is too small to read, and the tree is
// tiled over several pages at tileScale instead (labels stay near 7 pt).
const (
	minFitScale = 0.45
	tileScale   = 0.65
)

func treeSection(in *Input) ([]Section, error) {
	p, r := in.Project, in.Result
	if in.Options.Tree == nil {
		return []Section{outline(r)}, nil
	}
	d, err := in.Options.Tree(p, r, strings.ToLower(defaultTo(in.Options.Theme, "print")))
	if err != nil {
		return nil, err
	}
	w, h := d.Size()
	if w <= 0 || h <= 0 {
		return []Section{outline(r)}, nil
	}
	intro := "The recommended path is highlighted; the values shown are " + r.ValueWord() + "s rolled back from the ends."
	// The figure area of a fresh page after the heading and one line of text.
	areaW, areaH := in.page.textW, in.page.textH-70
	k := min(1, float64(areaW/w), float64(areaH/h))
	if k >= minFitScale {
		return []Section{{Title: "Decision tree", Paragraphs: []string{intro}, FigureHeight: vg.Length(float64(h)*k) + 4,
			Figure: func(c vg.Canvas, rect vg.Rectangle) error {
				kk := min(1, float64((rect.Max.X-rect.Min.X)/w), float64((rect.Max.Y-rect.Min.Y)/h))
				return d.Draw(c, vg.Point{X: rect.Min.X, Y: rect.Max.Y}, kk)
			}}}, nil
	}
	tileW, tileH := in.page.textW, in.page.textH-70
	cols := int(math.Ceil(float64(w) * tileScale / float64(tileW)))
	rows := int(math.Ceil(float64(h) * tileScale / float64(tileH)))
	// Tiles the drawing does not touch are left out (a sparse tree would
	// otherwise print many blank pages); the rest keep their row and column.
	used := func(row, col int) bool { return true }
	probe := &probeCanvas{}
	if err := d.Draw(probe, vg.Point{}, tileScale); err == nil && !probe.transform && len(probe.boxes) > 0 {
		hit := map[[2]int]bool{}
		for _, b := range probe.boxes {
			c0, c1 := int(math.Floor(float64(b.Min.X/tileW))), int(math.Floor(float64(b.Max.X/tileW)))
			r0, r1 := int(math.Floor(float64(-b.Max.Y/tileH))), int(math.Floor(float64(-b.Min.Y/tileH)))
			for r := max(r0, 0); r <= min(r1, rows-1); r++ {
				for c := max(c0, 0); c <= min(c1, cols-1); c++ {
					hit[[2]int{r, c}] = true
				}
			}
		}
		used = func(row, col int) bool { return hit[[2]int{row, col}] }
	}
	type tile struct{ row, col int }
	var tiles []tile
	for row := 0; row < rows; row++ {
		for col := 0; col < cols; col++ {
			if used(row, col) {
				tiles = append(tiles, tile{row, col})
			}
		}
	}
	var out []Section
	for k, tl := range tiles {
		row, col := tl.row, tl.col
		s := Section{Title: fmt.Sprintf("Decision tree, part %d of %d (row %d, column %d)", k+1, len(tiles), row+1, col+1),
			NewPage: true, Behind: true, FigureHeight: tileH,
			Figure: func(c vg.Canvas, rect vg.Rectangle) error {
				top := vg.Point{X: rect.Min.X - vg.Length(col)*tileW, Y: rect.Max.Y + vg.Length(row)*tileH}
				if err := d.Draw(newCullCanvas(c, rect), top, tileScale); err != nil {
					return err
				}
				maskOutside(c, rect)
				return nil
			}}
		if k == 0 {
			s.Paragraphs = []string{intro + fmt.Sprintf(" The tree is printed in %d parts on a grid %d across and %d down (blank parts left out); "+
				"each part names its row and column.", len(tiles), cols, rows)}
		}
		out = append(out, s)
	}
	return out, nil
}

// maskOutside paints the page white outside rect: vg has no clipping, and a
// tile's neighbours must not show in the margins.
func maskOutside(c vg.Canvas, rect vg.Rectangle) {
	pw, ph := vg.Length(2000), vg.Length(2000)
	if sz, ok := c.(vg.CanvasSizer); ok {
		pw, ph = sz.Size()
	}
	c.SetColor(color.White)
	c.Fill(rectPath(0, 0, pw, rect.Min.Y))
	c.Fill(rectPath(0, rect.Max.Y, pw, ph-rect.Max.Y))
	c.Fill(rectPath(0, 0, rect.Min.X, ph))
	c.Fill(rectPath(rect.Max.X, 0, pw-rect.Max.X, ph))
}

// outline lists the tree as an indented table, for when no diagram is drawn.
func outline(r *engine.Result) Section {
	t := &Table{Header: []string{"Branch / node", "Probability", "Cash", "Value"}, Align: []Align{Left, Right, Right, Right}}
	for _, n := range r.Nodes {
		parent, bi := r.ParentOf(n)
		name := fmt.Sprintf("%s %s", kindMark(n.Kind), engine.NodeTitle(n))
		prob, cash := "", ""
		if parent != nil {
			name = engine.BranchTitle(parent, bi) + " → " + name
			if parent.Kind == engine.Chance {
				prob = engine.FormatProbability(r.Probability(parent, bi))
			}
			if c := r.Cash(parent, bi); !c.IsZero() {
				cash = r.Format(c)
			}
		}
		value := r.Format(r.DisplayValue(n))
		if n.Kind == engine.End {
			value = r.Format(r.PathValue(n))
		}
		t.Rows = append(t.Rows, []string{name, prob, cash, value})
		t.Highlight = append(t.Highlight, r.OnPolicy(n))
		t.Indent = append(t.Indent, r.Depth(n))
	}
	t.Note = "■ decision, ● chance, ◄ end. Bold rows are on the recommended path. An end's value is its path payoff."
	return Section{Title: "Decision tree (outline)", Table: t}
}

func kindMark(k engine.Kind) string {
	switch k {
	case engine.Decision:
		return "■"
	case engine.Chance:
		return "●"
	}
	return "◄"
}

func titleCase(hs []string) []string {
	out := make([]string, len(hs))
	for i, h := range hs {
		if h != "" {
			out[i] = strings.ToUpper(h[:1]) + h[1:]
		}
	}
	return out
}

func isDecimal(s string) bool {
	if s == "" {
		return false
	}
	_, err := decimal.NewFromString(s)
	return err == nil
}

func pathTable(in *Input) ([]Section, error) {
	r := in.Result
	rows := r.Paths()
	t := &Table{Header: []string{"End", "Path", "Probability", "Payoff", "Contribution"},
		Align: []Align{Left, Left, Right, Right, Right}}
	for _, row := range rows {
		t.Rows = append(t.Rows, []string{engine.NodeTitle(row.End), strings.Join(row.Labels, " › "),
			engine.FormatProbability(row.Probability), r.Format(row.Payoff), r.Format(row.Contribution)})
		t.Highlight = append(t.Highlight, row.Optimal)
	}
	t.Note = "Bold rows are reached under the recommended policy. Payoff is the cash along the path plus the end payoff; " +
		"contribution is probability × payoff."
	return []Section{{Title: "Outcomes (path table)", Table: t, NewPage: len(rows) > 25}}, nil
}

// exactNumber prints a variable's value with every decimal it has.
func exactNumber(d decimal.Decimal) string {
	places := 0
	if s := d.String(); strings.Contains(s, ".") {
		places = len(s) - strings.IndexByte(s, '.') - 1
	}
	return engine.FormatNumber(d, places)
}

func assumptions(in *Input) ([]Section, error) {
	p, r := in.Project, in.Result
	var paras []string
	if r.RiskActive() {
		paras = append(paras, fmt.Sprintf("Decisions follow an exponential utility with risk tolerance %s: an alternative is valued by its certainty equivalent.",
			r.Format(decimal.NewFromFloat(r.Tolerance()))))
	} else {
		paras = append(paras, "Decisions are made on expected values (risk-neutral).")
	}
	if len(p.Variables) == 0 {
		paras = append(paras, "The project uses no named variables; every figure is entered on the tree.")
		return []Section{{Title: "Assumptions", Paragraphs: paras}}, nil
	}
	paras = append(paras, "The named inputs, with their notes. Low and high give the range explored by sensitivity analysis.")
	t := &Table{Header: []string{"Variable", "Value", "Formula", "Low – high", "Note"}, Align: []Align{Left, Right, Left, Left, Left}}
	for _, v := range p.Variables {
		val := ""
		if d, ok := r.Vars[v.Name]; ok {
			val = exactNumber(d)
		}
		formula := ""
		if !isDecimal(strings.TrimSpace(v.Value)) {
			formula = v.Value
		}
		rng := ""
		if v.Low != "" || v.High != "" {
			rng = shownInput(v.Low, r.Vars) + " – " + shownInput(v.High, r.Vars)
		}
		t.Rows = append(t.Rows, []string{v.Name, val, formula, rng, v.Note})
	}
	return []Section{{Title: "Assumptions", Paragraphs: paras, Table: t}}, nil
}

// shownInput prints a low/high formula text as its value when it evaluates,
// and as typed otherwise.
func shownInput(src string, vars engine.MapEnv) string {
	if strings.TrimSpace(src) == "" {
		return "—"
	}
	f, err := engine.ParseFormula(src)
	if err != nil {
		return src
	}
	d, err := f.Eval(vars)
	if err != nil {
		return src
	}
	return exactNumber(d)
}

func caution(in *Input) ([]Section, error) {
	return []Section{{Title: "Caution", Paragraphs: []string{engine.Caution,
		"The figures above are only as good as the probabilities and values entered; the assumptions section lists them."}}}, nil
}
