package report

import (
	"context"
	"fmt"
	"image/color"
	"strings"
	"unicode/utf8"

	stdfont "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/font/liberation"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Align places a table column's text.
type Align uint8

const (
	Left Align = iota
	Right
)

// Table is a section's table. Cells are display text, already formatted the
// way every view formats values (engine.FormatValue).
type Table struct {
	Header    []string
	Rows      [][]string
	Align     []Align // per column; missing columns are left-aligned
	Highlight []bool  // per row: drawn bold (the recommended rows)
	Indent    []int   // per row: indent levels of the first cell (tree outline)
	Note      string  // a line under the table
}

// Section is one part of the report: a title, paragraphs, then optionally a
// table, a chart and a figure, in that order.
type Section struct {
	Title      string
	Paragraphs []string
	Table      *Table
	Chart      *plot.Plot
	// ChartHeight defaults to 40% of the page's text height.
	ChartHeight vg.Length
	// Figure draws into the rectangle it is given; FigureHeight 0 means the
	// rest of a fresh page.
	Figure       func(c vg.Canvas, rect vg.Rectangle) error
	FigureHeight vg.Length
	NewPage      bool // start the section on a fresh page
	// Behind draws the figure before everything else on its page, so the
	// heading and page number are drawn over it (tiles that mask their margins).
	Behind bool
}

// palette is the report's theme: print is black on white with grey rules;
// colour adds an accent for headings and the recommended rows.
type palette struct {
	text, muted, rule, headFill, highlight, accent color.Color
}

var palettes = map[string]palette{
	"print": {text: color.Black, muted: color.Gray{0x55}, rule: color.Gray{0x99}, headFill: color.Gray{0xE6},
		highlight: color.Gray{0xF2}, accent: color.Black},
	"colour": {text: color.RGBA{0x1F, 0x24, 0x2B, 0xFF}, muted: color.RGBA{0x55, 0x5E, 0x68, 0xFF}, rule: color.RGBA{0x9A, 0xA6, 0xB2, 0xFF},
		headFill: color.RGBA{0xDD, 0xE8, 0xF3, 0xFF}, highlight: color.RGBA{0xE3, 0xF4, 0xE1, 0xFF}, accent: color.RGBA{0x1B, 0x5E, 0x9A, 0xFF}},
}

// ThemeNames lists the report themes.
var ThemeNames = []string{"print", "colour"}

type faces struct {
	body, bold, italic, small, h1, h2, title font.Face
}

var fontCache = font.NewCache(liberation.Collection())

func face(size vg.Length, bold, italic bool) font.Face {
	f := font.Font{Typeface: "Liberation", Variant: "Sans", Size: size}
	if bold {
		f.Weight = stdfont.WeightBold
	}
	if italic {
		f.Style = stdfont.StyleItalic
	}
	return fontCache.Lookup(f, size)
}

func newFaces() faces {
	return faces{body: face(10, false, false), bold: face(10, true, false), italic: face(10, false, true),
		small: face(8, false, false), h1: face(16, true, false), h2: face(12, true, false), title: face(24, true, false)}
}

// op draws one thing onto the page it belongs to.
type op func(c vg.Canvas) error

// pager lays blocks out top to bottom, breaking pages, and records draw
// operations per page so page numbers ("page 3 of 12") are known when drawing.
type pager struct {
	w, h    vg.Length
	margin  vg.Length
	footer  vg.Length // height reserved at the bottom for the page number
	y       vg.Length // distance of the cursor from the top edge
	pages   [][]op
	f       faces
	pal     palette
	started bool
}

func newPager(w, h vg.Length, pal palette) *pager {
	pg := &pager{w: w, h: h, margin: 56, footer: 28, f: newFaces(), pal: pal}
	pg.newPage()
	return pg
}

func (pg *pager) newPage() {
	pg.pages = append(pg.pages, nil)
	pg.y = pg.margin
	pg.started = false
}

func (pg *pager) add(o op) { pg.pages[len(pg.pages)-1] = append(pg.pages[len(pg.pages)-1], o) }

// addFirst puts o before everything already on the current page.
func (pg *pager) addFirst(o op) {
	last := len(pg.pages) - 1
	pg.pages[last] = append([]op{o}, pg.pages[last]...)
}

func (pg *pager) left() vg.Length      { return pg.margin }
func (pg *pager) textWidth() vg.Length { return pg.w - 2*pg.margin }
func (pg *pager) bottom() vg.Length    { return pg.h - pg.margin - pg.footer }
func (pg *pager) room() vg.Length      { return pg.bottom() - pg.y }

// need starts a new page unless h fits below the cursor.
func (pg *pager) need(h vg.Length) {
	if pg.started && h > pg.room() {
		pg.newPage()
	}
}

func lineHeight(f font.Face) vg.Length { return f.Font.Size * 1.35 }

// textAt draws s with its top-left at (x, top), in page terms (top from the top edge).
func (pg *pager) textAt(f font.Face, col color.Color, x, top vg.Length, s string) {
	h := pg.h
	asc := f.Extents().Ascent
	pg.add(func(c vg.Canvas) error {
		c.SetColor(col)
		c.FillString(f, vg.Point{X: x, Y: h - top - asc}, s)
		return nil
	})
	pg.started = true
}

func (pg *pager) rect(x, top, w, hgt vg.Length, col color.Color) {
	h := pg.h
	pg.add(func(c vg.Canvas) error {
		c.SetColor(col)
		c.Fill(rectPath(x, h-top-hgt, w, hgt))
		return nil
	})
}

func (pg *pager) rule(x, top, w vg.Length, col color.Color) {
	h := pg.h
	pg.add(func(c vg.Canvas) error {
		c.SetColor(col)
		c.SetLineWidth(0.5)
		var p vg.Path
		p.Move(vg.Point{X: x, Y: h - top})
		p.Line(vg.Point{X: x + w, Y: h - top})
		c.Stroke(p)
		return nil
	})
}

func rectPath(x, y, w, h vg.Length) vg.Path {
	var p vg.Path
	p.Move(vg.Point{X: x, Y: y})
	p.Line(vg.Point{X: x + w, Y: y})
	p.Line(vg.Point{X: x + w, Y: y + h})
	p.Line(vg.Point{X: x, Y: y + h})
	p.Close()
	return p
}

// wrap breaks s into lines no wider than width; a word wider than a line is cut.
func wrap(f font.Face, s string, width vg.Length) []string {
	var lines []string
	for _, para := range strings.Split(s, "\n") {
		words := strings.Fields(para)
		if len(words) == 0 {
			lines = append(lines, "")
			continue
		}
		line := ""
		for _, w := range words {
			try := w
			if line != "" {
				try = line + " " + w
			}
			if f.Width(try) <= width {
				line = try
				continue
			}
			if line != "" {
				lines = append(lines, line)
			}
			for f.Width(w) > width && utf8.RuneCountInString(w) > 1 {
				cut := cutToWidth(f, w, width)
				lines = append(lines, w[:cut])
				w = w[cut:]
			}
			line = w
		}
		lines = append(lines, line)
	}
	return lines
}

// cutToWidth returns the byte length of the longest prefix of w that fits (at least one rune).
func cutToWidth(f font.Face, w string, width vg.Length) int {
	cut := 0
	for i, r := range w {
		if i > 0 && f.Width(w[:i+utf8.RuneLen(r)]) > width {
			return i
		}
		cut = i + utf8.RuneLen(r)
	}
	return cut
}

// paragraph lays out wrapped text at the cursor.
func (pg *pager) paragraph(f font.Face, col color.Color, s string, indent vg.Length) {
	lh := lineHeight(f)
	for _, line := range wrap(f, s, pg.textWidth()-indent) {
		pg.need(lh)
		pg.textAt(f, col, pg.left()+indent, pg.y, line)
		pg.y += lh
	}
	pg.y += f.Font.Size * 0.5
}

func (pg *pager) heading(s string) {
	lh := lineHeight(pg.f.h1)
	// Keep a heading with at least a few lines of what follows.
	pg.need(lh + 4*lineHeight(pg.f.body))
	if pg.started {
		pg.y += 8
	}
	pg.textAt(pg.f.h1, pg.pal.accent, pg.left(), pg.y, s)
	pg.y += lh
	pg.rule(pg.left(), pg.y-3, pg.textWidth(), pg.pal.rule)
	pg.y += 6
}

const cellPad = 4

// columnWidths gives each column its natural width when everything fits, and
// otherwise shares the line fairly: narrow columns keep their width, wide ones
// split what is left (water-filling), but none goes below its minimum (its
// longest word), so words are not broken when they need not be.
func columnWidths(natural, minimum []vg.Length, total vg.Length) []vg.Length {
	out := append([]vg.Length(nil), natural...)
	sum := vg.Length(0)
	for _, w := range natural {
		sum += w
	}
	if sum <= total {
		return out
	}
	fixed := make([]bool, len(natural))
	left, flex := total, len(natural)
	for changed := true; changed && flex > 0; {
		changed = false
		share := left / vg.Length(flex)
		for i, w := range natural {
			if fixed[i] {
				continue
			}
			lo := vg.Length(0)
			if i < len(minimum) {
				lo = minimum[i]
			}
			switch {
			case w <= share:
				out[i] = w
			case lo >= share:
				out[i] = lo
			default:
				continue
			}
			fixed[i], changed = true, true
			left -= out[i]
			flex--
		}
	}
	if flex > 0 {
		share := max(left/vg.Length(flex), 0)
		for i := range out {
			if !fixed[i] {
				out[i] = share
			}
		}
	}
	return out
}

// longestWord is the width of the widest word of s.
func longestWord(f font.Face, s string) vg.Length {
	w := vg.Length(0)
	for _, word := range strings.Fields(s) {
		w = max(w, f.Width(word))
	}
	return w
}

func (pg *pager) table(t *Table) {
	if t == nil || len(t.Header) == 0 {
		return
	}
	size := vg.Length(10)
	if len(t.Header) > 5 || len(t.Rows) > 40 {
		size = 9
	}
	const indentStep = 10
	t = dropEmptyColumns(t)
	cols := len(t.Header)
	measure := func(f, fb font.Face) (natural, minimum []vg.Length) {
		natural = make([]vg.Length, cols)
		minimum = make([]vg.Length, cols)
		for i, h := range t.Header {
			natural[i] = fb.Width(h) + 2*cellPad
			minimum[i] = longestWord(fb, h) + 2*cellPad
		}
		for r, row := range t.Rows {
			for i := 0; i < cols && i < len(row); i++ {
				fc := f
				if r < len(t.Highlight) && t.Highlight[r] {
					fc = fb
				}
				w := fc.Width(row[i]) + 2*cellPad
				if i == 0 && r < len(t.Indent) {
					w += vg.Length(t.Indent[r]) * indentStep
				}
				natural[i] = max(natural[i], w)
				// Numbers and short cells keep their width; long text may wrap.
				if len(row[i]) <= 24 {
					minimum[i] = max(minimum[i], w)
				} else {
					minimum[i] = max(minimum[i], min(longestWord(fc, row[i])+2*cellPad, pg.textWidth()/vg.Length(cols)))
				}
			}
		}
		return natural, minimum
	}
	f, fb := face(size, false, false), face(size, true, false)
	natural, minimum := measure(f, fb)
	// A wide table is set smaller (down to 7 pt) rather than run off the page.
	if need := sumLengths(minimum); need > pg.textWidth() && size > 7 {
		size = max(7, size*pg.textWidth()/need)
		f, fb = face(size, false, false), face(size, true, false)
		natural, minimum = measure(f, fb)
	}
	widths := columnWidths(natural, minimum, pg.textWidth())
	align := func(i int) Align {
		if i < len(t.Align) {
			return t.Align[i]
		}
		return Left
	}
	lh := lineHeight(f)
	drawRow := func(cells []string, fc font.Face, fill color.Color, indent vg.Length) {
		wrapped := make([][]string, cols)
		lines := 1
		for i := 0; i < cols; i++ {
			s := ""
			if i < len(cells) {
				s = cells[i]
			}
			in := vg.Length(0)
			if i == 0 {
				in = indent
			}
			wrapped[i] = wrap(fc, s, widths[i]-2*cellPad-in)
			lines = max(lines, len(wrapped[i]))
		}
		hgt := vg.Length(lines)*lh + 2
		pg.need(hgt)
		if fill != nil {
			pg.rect(pg.left(), pg.y, sumLengths(widths), hgt, fill)
		}
		x := pg.left()
		for i := 0; i < cols; i++ {
			for k, line := range wrapped[i] {
				tx := x + cellPad
				if i == 0 {
					tx += indent
				}
				if align(i) == Right {
					tx = x + widths[i] - cellPad - fc.Width(line)
				}
				pg.textAt(fc, pg.pal.text, tx, pg.y+1+vg.Length(k)*lh, line)
			}
			x += widths[i]
		}
		pg.y += hgt
		pg.rule(pg.left(), pg.y, sumLengths(widths), pg.pal.rule)
	}
	header := func() { drawRow(t.Header, fb, pg.pal.headFill, 0) }
	pg.need(3 * lh)
	header()
	for r, row := range t.Rows {
		fc, fill := f, color.Color(nil)
		if r < len(t.Highlight) && t.Highlight[r] {
			fc, fill = fb, pg.pal.highlight
		}
		indent := vg.Length(0)
		if r < len(t.Indent) {
			indent = vg.Length(t.Indent[r]) * indentStep
		}
		page := len(pg.pages)
		pg.need(lh + 2)
		if len(pg.pages) != page {
			header() // repeat the header on every page the table runs onto
		}
		drawRow(row, fc, fill, indent)
	}
	pg.y += 4
	if t.Note != "" {
		pg.paragraph(pg.f.small, pg.pal.muted, t.Note, 0)
	}
	pg.y += 6
}

// dropEmptyColumns leaves out columns with no text in any row.
func dropEmptyColumns(t *Table) *Table {
	keep := make([]bool, len(t.Header))
	drop := false
	for c := range t.Header {
		for _, row := range t.Rows {
			if c < len(row) && strings.TrimSpace(row[c]) != "" {
				keep[c] = true
			}
		}
		if !keep[c] {
			drop = true
		}
	}
	if !drop || len(t.Rows) == 0 {
		return t
	}
	pick := func(cells []string) []string {
		var out []string
		for c, k := range keep {
			if k && c < len(cells) {
				out = append(out, cells[c])
			}
		}
		return out
	}
	out := *t
	out.Header = pick(t.Header)
	out.Rows = make([][]string, len(t.Rows))
	for i, row := range t.Rows {
		out.Rows[i] = pick(row)
	}
	out.Align = nil
	for c, k := range keep {
		if k {
			a := Left
			if c < len(t.Align) {
				a = t.Align[c]
			}
			out.Align = append(out.Align, a)
		}
	}
	return &out
}

func sumLengths(ls []vg.Length) vg.Length {
	s := vg.Length(0)
	for _, l := range ls {
		s += l
	}
	return s
}

// figure reserves hgt (0: the rest of a fresh page) and draws into it.
func (pg *pager) figure(hgt vg.Length, drawIt func(c vg.Canvas, rect vg.Rectangle) error) {
	pg.figureOp(hgt, drawIt, false)
}

func (pg *pager) figureOp(hgt vg.Length, drawIt func(c vg.Canvas, rect vg.Rectangle) error, behind bool) {
	if full := pg.bottom() - pg.margin; hgt <= 0 || hgt > full {
		// The rest of the page, on a fresh one when less than 60% is left.
		if pg.room() < full*0.6 {
			pg.newPage()
		}
		hgt = pg.room()
	}
	pg.need(hgt)
	rect := vg.Rectangle{Min: vg.Point{X: pg.left(), Y: pg.h - pg.y - hgt}, Max: vg.Point{X: pg.left() + pg.textWidth(), Y: pg.h - pg.y}}
	o := func(c vg.Canvas) error {
		c.Push()
		defer c.Pop()
		return drawIt(c, rect)
	}
	if behind {
		pg.addFirst(o)
	} else {
		pg.add(o)
	}
	pg.started = true
	pg.y += hgt + 8
}

func (pg *pager) chart(p *plot.Plot, hgt vg.Length) {
	if hgt <= 0 {
		hgt = (pg.bottom() - pg.margin) * 0.4
	}
	pg.figure(hgt, func(c vg.Canvas, rect vg.Rectangle) (err error) {
		defer func() { // a chart that cannot draw must not lose the whole report
			if e := recover(); e != nil {
				err = fmt.Errorf("chart: %v", e)
			}
		}()
		p.Draw(draw.Canvas{Canvas: c, Rectangle: rect})
		return nil
	})
}

func (pg *pager) section(s Section) {
	if s.NewPage && pg.started {
		pg.newPage()
	}
	if s.Figure != nil && s.FigureHeight > 0 && !s.Behind {
		// Keep the heading and intro with a figure of known height.
		pg.need(s.FigureHeight + lineHeight(pg.f.h1) + vg.Length(len(s.Paragraphs)*3)*lineHeight(pg.f.body))
	}
	if s.Title != "" {
		pg.heading(s.Title)
	}
	for _, para := range s.Paragraphs {
		pg.paragraph(pg.f.body, pg.pal.text, para, 0)
	}
	pg.table(s.Table)
	if s.Chart != nil {
		pg.chart(s.Chart, s.ChartHeight)
	}
	if s.Figure != nil {
		pg.figureOp(s.FigureHeight, s.Figure, s.Behind)
	}
}

// render draws every page with its footer onto c.
func (pg *pager) render(ctx context.Context, c *pdfCanvas, footer string) error {
	n := len(pg.pages)
	for i, ops := range pg.pages {
		if ctx != nil && ctx.Err() != nil {
			return ctx.Err()
		}
		c.NextPage()
		for _, o := range ops {
			if err := o(c); err != nil {
				return fmt.Errorf("page %d: %w", i+1, err)
			}
		}
		label := fmt.Sprintf("Page %d of %d", i+1, n)
		f := pg.f.small
		y := pg.margin * 0.6
		c.SetColor(pg.pal.muted)
		c.FillString(f, vg.Point{X: pg.w - pg.margin - f.Width(label), Y: y}, label)
		if footer != "" {
			s := footer
			if f.Width(s) > pg.textWidth()-f.Width(label)-20 {
				s = wrap(f, s, pg.textWidth()-f.Width(label)-20)[0] + "…"
			}
			c.FillString(f, vg.Point{X: pg.margin, Y: y}, s)
		}
	}
	return nil
}
