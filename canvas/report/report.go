// Package report writes a project's decision report as a PDF: a title page, the
// tree, the recommendation in plain sentences, the strategy and path tables, each
// analysis that applies, the assumptions, and the caution, with page numbers.
//
// It lives under canvas/ because it is a renderer: it reads an evaluated
// engine.Result (and the analyses' results) and turns them into pages; the
// engine never learns about pages. It is pure Go with no Fyne import, so the
// CLI and tests can use it headless; the tree diagram is drawn by a TreeDrawer
// the caller passes in (the canvas's DrawTree), which keeps this package free of
// the canvas's Fyne widget.
package report

import (
	"context"
	"fmt"
	"io"
	"sort"
	"strings"
	"time"

	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

// TreeDiagram is the tree drawing the canvas provides (canvas.DrawTree).
type TreeDiagram interface {
	// Size is the diagram's natural size in points at scale 1.
	Size() (w, h vg.Length)
	// Draw draws the whole diagram scaled by k (≤ 1) with its top-left corner at topLeft.
	Draw(c vg.Canvas, topLeft vg.Point, k float64) error
}

// TreeDrawer makes the diagram of p for a report theme ("print" or "colour").
type TreeDrawer func(p *engine.Project, r *engine.Result, theme string) (TreeDiagram, error)

// Options choose the report's page, look and title-page fields.
type Options struct {
	Page       string    // "A4" (default) or "Letter"
	Theme      string    // "print" (default) or "colour"
	PreparedBy string    // overrides the project's prepared-by field when set
	Date       time.Time // zero: now
	// Tree draws the diagram; nil prints the tree as an outline table instead.
	Tree TreeDrawer
}

// Input is what a section builder reads.
type Input struct {
	Ctx     context.Context
	Project *engine.Project
	Result  *engine.Result
	Options Options
	page    pageArea

	risk    *analysis.Analysis // computed once by riskAnalysis
	riskErr error
}

// pageArea is the text area of a page, for sections that size figures to it.
type pageArea struct{ textW, textH vg.Length }

// Builder makes zero or more sections; it returns none when its analysis does
// not apply to the project (no data, wrong shape).
type Builder struct {
	Name  string
	Order int // place among the analysis sections, lowest first
	Build func(in *Input) ([]Section, error)
}

// AnalysisSections is the registration point for the analyses' sections (risk
// profile, tornado, break-evens, value of information, simulation summary).
// Each analysis adds its builder here from an init function with
// RegisterAnalysis; the report places them by Order between the path table
// and the assumptions. analyses.go registers those on main and lists the
// orders; the tornado (20) and break-evens (30) are still to come.
var AnalysisSections []Builder

// RegisterAnalysis adds an analysis section builder, keeping the list in order.
func RegisterAnalysis(b Builder) {
	// A fresh slice each time, so a copy taken earlier is never reordered.
	AnalysisSections = append(append([]Builder(nil), AnalysisSections...), b)
	sort.SliceStable(AnalysisSections, func(i, j int) bool { return AnalysisSections[i].Order < AnalysisSections[j].Order })
}

// pageSizes in points, portrait (ISO 216 A4; ANSI Letter).
var pageSizes = map[string][2]vg.Length{"a4": {595.28, 841.89}, "letter": {612, 792}}

// PageNames lists the page sizes the report accepts.
var PageNames = []string{"A4", "Letter"}

// Check validates the options, naming the bad field.
func (o Options) Check() error {
	if _, ok := pageSizes[strings.ToLower(defaultTo(o.Page, "A4"))]; !ok {
		return fmt.Errorf("page %q is not known (use %s)", o.Page, strings.Join(PageNames, " or "))
	}
	if _, ok := palettes[strings.ToLower(defaultTo(o.Theme, "print"))]; !ok {
		return fmt.Errorf("theme %q is not known (use %s)", o.Theme, strings.Join(ThemeNames, " or "))
	}
	return nil
}

func defaultTo(s, def string) string {
	if strings.TrimSpace(s) == "" {
		return def
	}
	return strings.TrimSpace(s)
}

// Sections builds every section of the report in order, the title page first.
func Sections(in *Input) ([]Section, error) {
	r := in.Result
	if !r.Valid() {
		return nil, fmt.Errorf("the project has %d problem(s); fix them before writing a report (first: %s)", len(r.Problems), r.Problems[0].Msg)
	}
	builders := []Builder{
		{Name: "title page", Build: titlePage},
		{Name: "recommendation", Build: recommendation},
		{Name: "tree", Build: treeSection},
		{Name: "strategy table", Build: strategyTable},
		{Name: "path table", Build: pathTable},
	}
	builders = append(builders, AnalysisSections...)
	builders = append(builders, Builder{Name: "assumptions", Build: assumptions}, Builder{Name: "caution", Build: caution})
	var out []Section
	for _, b := range builders {
		if in.Ctx != nil {
			if err := in.Ctx.Err(); err != nil {
				return nil, err
			}
		}
		secs, err := b.Build(in)
		if err != nil {
			return nil, fmt.Errorf("report section %q: %w", b.Name, err)
		}
		out = append(out, secs...)
	}
	return out, nil
}

// Write lays the report out and writes the PDF to w.
func Write(ctx context.Context, w io.Writer, p *engine.Project, r *engine.Result, o Options) error {
	if err := o.Check(); err != nil {
		return err
	}
	if o.Date.IsZero() {
		o.Date = time.Now()
	}
	size := pageSizes[strings.ToLower(defaultTo(o.Page, "A4"))]
	pg := newPager(size[0], size[1], palettes[strings.ToLower(defaultTo(o.Theme, "print"))])
	in := &Input{Ctx: ctx, Project: p, Result: r, Options: o, page: pageArea{pg.textWidth(), pg.bottom() - pg.margin}}
	secs, err := Sections(in)
	if err != nil {
		return err
	}
	for i, s := range secs {
		if i == 0 {
			pg.titlePage(s)
			continue
		}
		pg.section(s)
	}
	c := newPDFCanvas(size[0], size[1], reportTitle(p), preparedBy(p, o), o.Date)
	if err := pg.render(ctx, c, reportTitle(p)); err != nil {
		return err
	}
	_, err = c.WriteTo(w)
	return err
}

// WriteFile writes the report to path atomically: a failed report never
// replaces an earlier good one.
func WriteFile(ctx context.Context, path string, p *engine.Project, r *engine.Result, o Options) error {
	if err := o.Check(); err != nil {
		return err
	}
	return engine.WriteAtomic(path, func(w io.Writer) error { return Write(ctx, w, p, r, o) })
}

func reportTitle(p *engine.Project) string {
	return defaultTo(p.Title, "Decision report")
}

func preparedBy(p *engine.Project, o Options) string {
	return defaultTo(o.PreparedBy, p.PreparedBy)
}

// titlePage lays the first section out as a cover: large title, the
// prepared-by and date lines, then the paragraphs (notes, headline figures).
func (pg *pager) titlePage(s Section) {
	pg.y = pg.margin + 90
	for _, line := range wrap(pg.f.title, s.Title, pg.textWidth()) {
		pg.textAt(pg.f.title, pg.pal.accent, pg.left(), pg.y, line)
		pg.y += lineHeight(pg.f.title)
	}
	pg.y += 6
	pg.rule(pg.left(), pg.y, pg.textWidth(), pg.pal.rule)
	pg.y += 14
	for _, para := range s.Paragraphs {
		if para == notesHeading {
			pg.y += 6
			pg.paragraph(pg.f.h2, pg.pal.accent, para, 0)
			continue
		}
		pg.paragraph(pg.f.body, pg.pal.text, para, 0)
	}
	pg.table(s.Table)
	pg.newPage()
}
