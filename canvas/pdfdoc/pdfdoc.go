// Package pdfdoc is a gonum vg.Canvas that writes PDF pages with Unicode
// TrueType fonts, shared by the tree export (canvas) and the report
// (canvas/report).
//
// Why not gonum's vgpdf: it embeds fonts in the Windows-1252 code page, so the
// true minus sign (U+2212) that engine.FormatValue prints, and × ≤ or any
// non-Latin text, come out as '-', '?' or mojibake in the PDF and in
// pdftotext. This canvas drives fpdf (codeberg.org/go-pdf/fpdf, already in the
// module graph through gonum plot) with AddUTF8FontFromBytes, embedding each
// face's own TrueType source: the same bytes gonum's font.Face measures with,
// so text laid out with Face.Width (or canvas.FontMeasurer) is exactly as wide
// on the page. PDF text operators do not kern by themselves; FillString places
// the text in runs broken at kerned glyph pairs so the drawn width includes the
// kerning Face.Width counts. The transform and path code follows vgpdf
// (gonum.org/v1/plot/vg/vgpdf, BSD-3-Clause).
//
// The package imports neither Fyne nor any other Ramify package.
package pdfdoc

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"strings"
	"time"
	"unicode/utf8"

	"codeberg.org/go-pdf/fpdf"
	xfont "golang.org/x/image/font"
	"golang.org/x/image/font/sfnt"
	"golang.org/x/image/math/fixed"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
)

// Info is the document's metadata.
type Info struct {
	Title  string
	Author string
	Date   time.Time // creation and modification date; zero means now
}

// Canvas is a vg.Canvas drawing onto PDF pages of one size. Call NextPage
// before drawing the first page and WriteTo once at the end.
type Canvas struct {
	doc   *fpdf.Fpdf
	w, h  vg.Length
	stack []context
	fonts map[font.Font]*embedded // face (size zero) -> its registered font
}

type context struct {
	width vg.Length
}

// embedded is a registered font with the glyph metrics FillString kerns with.
type embedded struct {
	family string
	face   *font.Face // the first face seen; only its sfnt data is used
	upem   fixed.Int26_6
	buf    sfnt.Buffer
	glyphs map[rune]glyph
	kern   map[[2]sfnt.GlyphIndex]fixed.Int26_6
}

type glyph struct {
	idx sfnt.GlyphIndex
	adv fixed.Int26_6
}

var _ vg.Canvas = (*Canvas)(nil)

// New makes a document whose pages are w × h.
func New(w, h vg.Length, info Info) *Canvas {
	doc := fpdf.NewCustom(&fpdf.InitType{UnitStr: "pt", Size: fpdf.SizeType{Wd: w.Points(), Ht: h.Points()}})
	if info.Title != "" {
		doc.SetTitle(info.Title, true)
	}
	if info.Author != "" {
		doc.SetAuthor(info.Author, true)
	}
	doc.SetCreator("Ramify", true)
	if !info.Date.IsZero() {
		doc.SetCreationDate(info.Date)
		doc.SetModificationDate(info.Date)
	}
	doc.SetAutoPageBreak(false, 0)
	doc.SetCatalogSort(true) // fonts in a stable order: same drawing and date, same bytes
	return &Canvas{doc: doc, w: w, h: h, stack: make([]context, 1), fonts: map[font.Font]*embedded{}}
}

// NextPage starts a page; the first call starts the first page. Each page
// starts with vg's default state (y up, origin at the bottom left).
func (c *Canvas) NextPage() {
	if c.doc.PageNo() > 0 {
		c.Pop()
	}
	c.doc.SetMargins(0, 0, 0)
	c.doc.AddPage()
	c.Push()
	c.Translate(vg.Point{X: 0, Y: c.h})
	c.Scale(1, -1)
	vg.Initialize(c)
}

// Pages is the number of pages started so far.
func (c *Canvas) Pages() int { return c.doc.PageNo() }

// Err is the first error met while drawing (a font that could not be read,
// an image that could not be encoded); WriteTo returns it too.
func (c *Canvas) Err() error { return c.doc.Error() }

func (c *Canvas) SetLineWidth(w vg.Length) {
	c.stack[len(c.stack)-1].width = w
	c.doc.SetLineWidth(w.Points())
}

func (c *Canvas) SetLineDash(dashes []vg.Length, offs vg.Length) {
	ds := make([]float64, len(dashes))
	for i, d := range dashes {
		ds[i] = d.Points()
	}
	c.doc.SetDashPattern(ds, offs.Points())
}

func (c *Canvas) SetColor(clr color.Color) {
	if clr == nil {
		clr = color.Black
	}
	r, g, b, a := clr.RGBA()
	alpha := float64(a) / math.MaxUint16
	if a > 0 { // un-premultiply
		r, g, b = r*math.MaxUint16/a, g*math.MaxUint16/a, b*math.MaxUint16/a
	}
	ri, gi, bi := int(r>>8), int(g>>8), int(b>>8)
	c.doc.SetFillColor(ri, gi, bi)
	c.doc.SetDrawColor(ri, gi, bi)
	c.doc.SetTextColor(ri, gi, bi)
	c.doc.SetAlpha(alpha, "Normal")
}

func (c *Canvas) Rotate(r float64) { c.doc.TransformRotate(-r*180/math.Pi, 0, 0) }

func (c *Canvas) Translate(pt vg.Point) { c.doc.TransformTranslate(pt.X.Points(), pt.Y.Points()) }

func (c *Canvas) Scale(x, y float64) { c.doc.TransformScale(x*100, y*100, 0, 0) }

func (c *Canvas) Push() {
	c.stack = append(c.stack, c.stack[len(c.stack)-1])
	c.doc.TransformBegin()
}

func (c *Canvas) Pop() {
	c.doc.TransformEnd()
	c.stack = c.stack[:len(c.stack)-1]
}

func (c *Canvas) Stroke(p vg.Path) {
	if c.stack[len(c.stack)-1].width > 0 {
		c.path(p, "D")
	}
}

func (c *Canvas) Fill(p vg.Path) { c.path(p, "F") }

func pdfPoint(pt vg.Point) (float64, float64) { return pt.X.Points(), pt.Y.Points() }

func (c *Canvas) path(path vg.Path, style string) {
	var x0, y0 float64
	for _, comp := range path {
		switch comp.Type {
		case vg.MoveComp:
			x0, y0 = pdfPoint(comp.Pos)
			c.doc.MoveTo(x0, y0)
		case vg.LineComp:
			c.doc.LineTo(pdfPoint(comp.Pos))
		case vg.ArcComp:
			c.arc(comp, style)
		case vg.CurveComp:
			px, py := pdfPoint(comp.Pos)
			switch len(comp.Control) {
			case 1:
				cx, cy := pdfPoint(comp.Control[0])
				c.doc.CurveTo(cx, cy, px, py)
			case 2:
				cx, cy := pdfPoint(comp.Control[0])
				dx, dy := pdfPoint(comp.Control[1])
				c.doc.CurveBezierCubicTo(cx, cy, dx, dy, px, py)
			}
		case vg.CloseComp:
			c.doc.LineTo(x0, y0)
			c.doc.ClosePath()
		}
	}
	c.doc.DrawPath(style)
}

func (c *Canvas) arc(comp vg.PathComp, style string) {
	x0 := comp.Pos.X + comp.Radius*vg.Length(math.Cos(comp.Start))
	y0 := comp.Pos.Y + comp.Radius*vg.Length(math.Sin(comp.Start))
	c.doc.LineTo(x0.Points(), y0.Points())
	r := comp.Radius.Points()
	const deg = 180 / math.Pi
	beg := comp.Start * deg
	c.doc.Arc(comp.Pos.X.Points(), comp.Pos.Y.Points(), r, r, comp.Angle*deg, beg, beg+comp.Angle*deg, style)
	x1 := comp.Pos.X + comp.Radius*vg.Length(math.Cos(comp.Start+comp.Angle))
	y1 := comp.Pos.Y + comp.Radius*vg.Length(math.Sin(comp.Start+comp.Angle))
	c.doc.MoveTo(x1.Points(), y1.Points())
}

// font registers a face's TrueType source once per typeface, variant, style
// and weight (whatever the size), as a UTF-8 font of its own family name.
func (c *Canvas) font(f font.Face) *embedded {
	key := f.Font
	key.Size = 0
	if e, ok := c.fonts[key]; ok {
		return e
	}
	e := &embedded{family: fmt.Sprintf("f%d", len(c.fonts)), face: &f,
		glyphs: map[rune]glyph{}, kern: map[[2]sfnt.GlyphIndex]fixed.Int26_6{}}
	if f.Face != nil {
		// The PostScript name makes the embedded font recognisable (pdffonts,
		// a viewer's font list); the counter keeps families apart.
		if ps, err := f.Face.Name(&e.buf, sfnt.NameIDPostScript); err == nil && ps != "" {
			e.family = fmt.Sprintf("%s-%d", ps, len(c.fonts))
		}
	}
	if f.Face == nil {
		c.doc.SetError(fmt.Errorf("pdf: font %s has no font data", f.Name()))
	} else {
		e.upem = fixed.Int26_6(f.Face.UnitsPerEm())
		var raw bytes.Buffer
		if _, err := f.Face.WriteSourceTo(nil, &raw); err != nil {
			c.doc.SetError(fmt.Errorf("pdf: font %s: %w", f.Name(), err))
		} else {
			c.doc.AddUTF8FontFromBytes(e.family, "", raw.Bytes())
		}
	}
	c.fonts[key] = e
	return e
}

// run is a piece of a string drawn at x (in font units from the start).
type run struct {
	text string
	x    fixed.Int26_6
}

// runs splits s where a kerned pair meets, with each piece's kerned start.
// The advances and kerning are summed exactly as gonum's font.Face.Width does
// (font units, no hinting), so the last piece ends where Width says.
//
// A rune the font has no glyph for is drawn on its own (as the font's
// missing-glyph box) so the text after it still starts where Width put it.
// Runes beyond the Basic Multilingual Plane (emoji) become U+FFFD: fpdf's
// Unicode fonts cover only the BMP.
func (e *embedded) runs(s string) []run {
	if e.face == nil || e.face.Face == nil {
		return []run{{text: bmpOnly(s)}}
	}
	fnt := e.face.Face
	out := make([]run, 0, 1)
	var (
		pen, startX fixed.Int26_6
		prev        glyph
		cur         strings.Builder
	)
	for i, r := range s {
		g, ok := e.glyphs[r]
		if !ok {
			idx, err := fnt.GlyphIndex(&e.buf, r)
			if err == nil {
				g.idx = idx
				g.adv, err = fnt.GlyphAdvance(&e.buf, idx, e.upem, xfont.HintingNone)
			}
			if err != nil {
				g = glyph{}
			}
			e.glyphs[r] = g
		}
		if i > 0 {
			pair := [2]sfnt.GlyphIndex{prev.idx, g.idx}
			k, ok := e.kern[pair]
			if !ok {
				var err error
				if k, err = fnt.Kern(&e.buf, prev.idx, g.idx, e.upem, xfont.HintingNone); err != nil {
					k = 0
				}
				e.kern[pair] = k
			}
			pen += k
			if k != 0 || g.idx == 0 || prev.idx == 0 {
				out = append(out, run{text: cur.String(), x: startX})
				cur.Reset()
				startX = pen
			}
		}
		if r > 0xFFFF {
			r = utf8.RuneError
		}
		cur.WriteRune(r)
		pen += g.adv
		prev = g
	}
	return append(out, run{text: cur.String(), x: startX})
}

func bmpOnly(s string) string {
	return strings.Map(func(r rune) rune {
		if r > 0xFFFF {
			return utf8.RuneError
		}
		return r
	}, s)
}

// FillString draws str with its baseline starting at pt.
func (c *Canvas) FillString(f font.Face, pt vg.Point, str string) {
	if f.Font.Size == 0 || str == "" {
		return
	}
	e := c.font(f)
	size := f.Font.Size.Points()
	c.doc.SetFont(e.family, "", size)
	c.Push()
	defer c.Pop()
	c.Translate(pt)
	c.Scale(1, -1) // back to fpdf's own orientation; Text places the baseline at the origin
	for _, r := range e.runs(str) {
		x := 0.0
		if e.upem > 0 {
			x = float64(r.x) * size / float64(e.upem)
		}
		c.doc.Text(x, 0, r.text)
	}
}

func (c *Canvas) DrawImage(rect vg.Rectangle, img image.Image) {
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		c.doc.SetError(err)
		return
	}
	name := fmt.Sprintf("img%p", img)
	opts := fpdf.ImageOptions{ImageType: "png", ReadDpi: true}
	c.doc.RegisterImageOptionsReader(name, opts, &buf)
	x, y := pdfPoint(rect.Min)
	w, h := pdfPoint(rect.Size())
	c.doc.ImageOptions(name, x, y, w, h, false, opts, 0, "")
}

func (c *Canvas) Size() (vg.Length, vg.Length) { return c.w, c.h }

// WriteTo closes the document and writes it.
func (c *Canvas) WriteTo(w io.Writer) (int64, error) {
	if c.doc.PageNo() > 0 {
		c.Pop()
	}
	c.doc.Close()
	cw := &countWriter{w: w}
	err := c.doc.Output(cw)
	return cw.n, err
}

type countWriter struct {
	w io.Writer
	n int64
}

func (cw *countWriter) Write(p []byte) (int, error) {
	n, err := cw.w.Write(p)
	cw.n += int64(n)
	return n, err
}
