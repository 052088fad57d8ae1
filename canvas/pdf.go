package canvas

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"strings"

	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/canvas/pdfdoc"
	"github.com/ramify-app/ramify/engine"
)

// Page sizes in points, portrait (ISO 216 for A4/A3; ANSI for Letter/Legal).
var pageSizes = map[string][2]float64{
	"a4":     {595.28, 841.89},
	"a3":     {841.89, 1190.55},
	"letter": {612, 792},
	"legal":  {612, 1008},
}

// PageNames lists the page sizes Export accepts.
var PageNames = []string{"A4", "A3", "Letter", "Legal"}

// PageSize returns the width and height of a named page in points.
func PageSize(name string, landscape bool) (w, h float64, ok bool) {
	s, ok := pageSizes[strings.ToLower(strings.TrimSpace(name))]
	if !ok {
		return 0, 0, false
	}
	w, h = s[0], s[1]
	if landscape {
		w, h = h, w
	}
	return w, h, true
}

const (
	maxPDFPages = 200
	pageMargin  = 36 // half an inch
	tileOverlap = 24 // repeated on neighbouring tiles so cut branches can be matched
)

// pdfPlan is the page arrangement of a tree.
type pdfPlan struct {
	pageW, pageH float64
	area         Rect    // content area on the page, in page points, y down from the top
	k            float64 // scale
	tiles        []Rect  // scene regions, one per page
	rows, cols   int
}

func planPDF(bounds Rect, pageW, pageH, header, footer float64, tile bool) pdfPlan {
	p := pdfPlan{pageW: pageW, pageH: pageH}
	p.area = Rect{pageMargin, pageMargin + header, pageW - 2*pageMargin, pageH - 2*pageMargin - header - footer}
	fit := math.Min(p.area.W/bounds.W, p.area.H/bounds.H)
	if !tile || fit >= 1 {
		p.k = math.Min(1, fit)
		p.rows, p.cols = 1, 1
		p.tiles = []Rect{bounds}
		return p
	}
	p.k = 1
	stepW, stepH := p.area.W-tileOverlap, p.area.H-tileOverlap
	p.cols = max(1, int(math.Ceil((bounds.W-tileOverlap)/stepW)))
	p.rows = max(1, int(math.Ceil((bounds.H-tileOverlap)/stepH)))
	for r := 0; r < p.rows; r++ {
		for c := 0; c < p.cols; c++ {
			p.tiles = append(p.tiles, Rect{bounds.X + float64(c)*stepW, bounds.Y + float64(r)*stepH, p.area.W, p.area.H})
		}
	}
	return p
}

func writePDF(w io.Writer, p *engine.Project, r *engine.Result, l *Layout, opts Options, eo ExportOptions, bg color.NRGBA) error {
	pw, ph, ok := PageSize(eo.Page, eo.Landscape)
	if !ok {
		return fmt.Errorf("unknown page size %q (use %s)", eo.Page, strings.Join(PageNames, ", "))
	}
	th := l.Theme
	header := headerHeight(&th)
	footer := footerHeight(&th, pw-2*pageMargin) + 6
	plan := planPDF(l.Bounds, pw, ph, header, footer, eo.Tile)
	if len(plan.tiles) > maxPDFPages {
		return fmt.Errorf("the tree would need %d pages (%d × %d); fit it on one page or choose a larger page", len(plan.tiles), plan.rows, plan.cols)
	}
	title := eo.title(p)
	// pdfdoc embeds the very Liberation Sans faces FontMeasurer measured the
	// layout with, as Unicode fonts, and kerns as the measurer does.
	c := pdfdoc.New(vg.Length(pw), vg.Length(ph), pdfdoc.Info{Title: title, Date: eo.Date})
	pageRect := vg.Rectangle{Max: vg.Point{X: vg.Length(pw), Y: vg.Length(ph)}}
	for i, tile := range plan.tiles {
		c.NextPage()
		fillRect(c, pageRect, bg)
		s := Build(p, r, l, opts, tile)
		m := vgMap{vx: tile.X, vy: tile.Y, left: plan.area.X, top: ph - plan.area.Y, k: plan.k}
		drawVG(c, s, m)
		// Mask what spilled past the content area (vg has no clipping).
		a := plan.area
		fillRect(c, vg.Rectangle{Max: vg.Point{X: vg.Length(pw), Y: vg.Length(ph - a.Y - a.H)}}, bg)
		fillRect(c, vg.Rectangle{Min: vg.Point{Y: vg.Length(ph - a.Y)}, Max: vg.Point{X: vg.Length(pw), Y: vg.Length(ph)}}, bg)
		fillRect(c, vg.Rectangle{Max: vg.Point{X: vg.Length(a.X), Y: vg.Length(ph)}}, bg)
		fillRect(c, vg.Rectangle{Min: vg.Point{X: vg.Length(a.X + a.W)}, Max: vg.Point{X: vg.Length(pw), Y: vg.Length(ph)}}, bg)

		label := fmt.Sprintf("page %d of %d", i+1, len(plan.tiles))
		if len(plan.tiles) > 1 {
			label += fmt.Sprintf(" · row %d, column %d", i/plan.cols+1, i%plan.cols+1)
		}
		hs := &Scene{Theme: th, Prims: headerPrims(&th, Rect{pageMargin, pageMargin, pw - 2*pageMargin, header}, title, eo.dateText(), label)}
		hs.Prims = append(hs.Prims, footerPrims(&th, pageMargin, ph-pageMargin-footer+6, pw-2*pageMargin)...)
		drawVG(c, hs, vgMap{left: 0, top: ph, k: 1})
	}
	_, err := c.WriteTo(w)
	return err
}
