package report

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"time"
	"unicode/utf8"

	"codeberg.org/go-pdf/fpdf"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
)

// pdfCanvas is a vg.Canvas drawing onto fpdf pages with Unicode (UTF-8) fonts.
//
// Why not gonum's vgpdf, which the tree export uses: vgpdf embeds fonts in the
// Windows-1252 code page, so the true minus sign (U+2212) that FormatValue prints,
// and the × and ≤ of the explain arithmetic, come out as mojibake in the PDF and in
// pdftotext. The report is mostly text and tables, so it drives fpdf directly with
// AddUTF8FontFromBytes (fpdf is already in the module graph through gonum plot),
// and still offers the vg.Canvas interface so gonum plot charts and the canvas's
// DrawTree draw onto its pages as vectors. The transform and path code follows
// vgpdf (gonum.org/v1/plot/vg/vgpdf, BSD-3-Clause).
type pdfCanvas struct {
	doc   *fpdf.Fpdf
	w, h  vg.Length
	stack []pdfContext
	fonts map[font.Font]string // face -> registered family name
}

type pdfContext struct {
	width vg.Length
}

func newPDFCanvas(w, h vg.Length, title, author string, date time.Time) *pdfCanvas {
	doc := fpdf.NewCustom(&fpdf.InitType{UnitStr: "pt", Size: fpdf.SizeType{Wd: w.Points(), Ht: h.Points()}})
	doc.SetTitle(title, true)
	if author != "" {
		doc.SetAuthor(author, true)
	}
	doc.SetCreator("Ramify", true)
	if !date.IsZero() {
		doc.SetCreationDate(date)
		doc.SetModificationDate(date)
	}
	doc.SetAutoPageBreak(false, 0)
	c := &pdfCanvas{doc: doc, w: w, h: h, stack: make([]pdfContext, 1), fonts: map[font.Font]string{}}
	return c
}

// NextPage starts a page; the first call starts the first page.
func (c *pdfCanvas) NextPage() {
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

func (c *pdfCanvas) unit(l vg.Length) float64 { return l.Points() }

func (c *pdfCanvas) pdfPoint(pt vg.Point) (float64, float64) { return c.unit(pt.X), c.unit(pt.Y) }

func (c *pdfCanvas) SetLineWidth(w vg.Length) {
	c.stack[len(c.stack)-1].width = w
	c.doc.SetLineWidth(c.unit(w))
}

func (c *pdfCanvas) SetLineDash(dashes []vg.Length, offs vg.Length) {
	ds := make([]float64, len(dashes))
	for i, d := range dashes {
		ds[i] = c.unit(d)
	}
	c.doc.SetDashPattern(ds, c.unit(offs))
}

func (c *pdfCanvas) SetColor(clr color.Color) {
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

func (c *pdfCanvas) Rotate(r float64) { c.doc.TransformRotate(-r*180/math.Pi, 0, 0) }

func (c *pdfCanvas) Translate(pt vg.Point) {
	x, y := c.pdfPoint(pt)
	c.doc.TransformTranslate(x, y)
}

func (c *pdfCanvas) Scale(x, y float64) { c.doc.TransformScale(x*100, y*100, 0, 0) }

func (c *pdfCanvas) Push() {
	c.stack = append(c.stack, c.stack[len(c.stack)-1])
	c.doc.TransformBegin()
}

func (c *pdfCanvas) Pop() {
	c.doc.TransformEnd()
	c.stack = c.stack[:len(c.stack)-1]
}

func (c *pdfCanvas) Stroke(p vg.Path) {
	if c.stack[len(c.stack)-1].width > 0 {
		c.path(p, "D")
	}
}

func (c *pdfCanvas) Fill(p vg.Path) { c.path(p, "F") }

func (c *pdfCanvas) path(path vg.Path, style string) {
	var x0, y0 float64
	for _, comp := range path {
		switch comp.Type {
		case vg.MoveComp:
			x0, y0 = c.pdfPoint(comp.Pos)
			c.doc.MoveTo(x0, y0)
		case vg.LineComp:
			c.doc.LineTo(c.pdfPoint(comp.Pos))
		case vg.ArcComp:
			c.arc(comp, style)
		case vg.CurveComp:
			px, py := c.pdfPoint(comp.Pos)
			switch len(comp.Control) {
			case 1:
				cx, cy := c.pdfPoint(comp.Control[0])
				c.doc.CurveTo(cx, cy, px, py)
			case 2:
				cx, cy := c.pdfPoint(comp.Control[0])
				dx, dy := c.pdfPoint(comp.Control[1])
				c.doc.CurveBezierCubicTo(cx, cy, dx, dy, px, py)
			}
		case vg.CloseComp:
			c.doc.LineTo(x0, y0)
			c.doc.ClosePath()
		}
	}
	c.doc.DrawPath(style)
}

func (c *pdfCanvas) arc(comp vg.PathComp, style string) {
	x0 := comp.Pos.X + comp.Radius*vg.Length(math.Cos(comp.Start))
	y0 := comp.Pos.Y + comp.Radius*vg.Length(math.Sin(comp.Start))
	c.doc.LineTo(c.unit(x0), c.unit(y0))
	r := c.unit(comp.Radius)
	const deg = 180 / math.Pi
	beg := comp.Start * deg
	c.doc.Arc(c.unit(comp.Pos.X), c.unit(comp.Pos.Y), r, r, comp.Angle*deg, beg, beg+comp.Angle*deg, style)
	x1 := comp.Pos.X + comp.Radius*vg.Length(math.Cos(comp.Start+comp.Angle))
	y1 := comp.Pos.Y + comp.Radius*vg.Length(math.Sin(comp.Start+comp.Angle))
	c.doc.MoveTo(c.unit(x1), c.unit(y1))
}

// family registers a face's TrueType source once, as a UTF-8 font of its own name.
func (c *pdfCanvas) family(f font.Face) string {
	if name, ok := c.fonts[f.Font]; ok {
		return name
	}
	name := fmt.Sprintf("f%d", len(c.fonts))
	var raw bytes.Buffer
	if _, err := f.Face.WriteSourceTo(nil, &raw); err == nil {
		c.doc.AddUTF8FontFromBytes(name, "", raw.Bytes())
	} else {
		c.doc.SetError(fmt.Errorf("report: font %s: %w", f.Name(), err))
	}
	c.fonts[f.Font] = name
	return name
}

func (c *pdfCanvas) FillString(f font.Face, pt vg.Point, str string) {
	if f.Font.Size == 0 || str == "" {
		return
	}
	c.doc.SetFont(c.family(f), "", c.unit(f.Font.Size))
	c.Push()
	defer c.Pop()
	c.Translate(pt)
	c.Scale(1, -1) // back to fpdf's own orientation; Text places the baseline at the origin
	c.doc.Text(0, 0, str)
}

func (c *pdfCanvas) DrawImage(rect vg.Rectangle, img image.Image) {
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		c.doc.SetError(err)
		return
	}
	name := fmt.Sprintf("img%p", img)
	opts := fpdf.ImageOptions{ImageType: "png", ReadDpi: true}
	c.doc.RegisterImageOptionsReader(name, opts, &buf)
	x, y := c.pdfPoint(rect.Min)
	w, h := c.pdfPoint(rect.Size())
	c.doc.ImageOptions(name, x, y, w, h, false, opts, 0, "")
}

func (c *pdfCanvas) Size() (vg.Length, vg.Length) { return c.w, c.h }

// WriteTo closes the document and writes it.
func (c *pdfCanvas) WriteTo(w io.Writer) (int64, error) {
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

// cullCanvas passes drawing on to a canvas but drops paths and text that lie
// wholly outside a rectangle, so a tree tile writes only its own part of the
// tree into the PDF instead of the whole tree on every page. Culling stops as
// soon as the drawer transforms the canvas (it could no longer tell where
// things land).
type cullCanvas struct {
	vg.Canvas
	view        vg.Rectangle
	transformed []bool // per Push level
	// Style changes wait until something visible is drawn, so culled
	// primitives cost no PDF operators at all.
	color      color.Color
	width      vg.Length
	dashes     []vg.Length
	dashOffs   vg.Length
	colorSet   bool
	widthSet   bool
	dashSet    bool
	colorDirty bool
	widthDirty bool
	dashDirty  bool
}

func (c *cullCanvas) SetColor(col color.Color) { c.color, c.colorSet, c.colorDirty = col, true, true }
func (c *cullCanvas) SetLineWidth(w vg.Length) { c.width, c.widthSet, c.widthDirty = w, true, true }
func (c *cullCanvas) SetLineDash(d []vg.Length, offs vg.Length) {
	c.dashes, c.dashOffs, c.dashSet, c.dashDirty = d, offs, true, true
}

// flush applies the pending style before a visible draw.
func (c *cullCanvas) flush() {
	if c.colorDirty {
		c.Canvas.SetColor(c.color)
		c.colorDirty = false
	}
	if c.widthDirty {
		c.Canvas.SetLineWidth(c.width)
		c.widthDirty = false
	}
	if c.dashDirty {
		c.Canvas.SetLineDash(c.dashes, c.dashOffs)
		c.dashDirty = false
	}
}

// restyle marks every style set so far for re-applying: Push and Pop change
// the underlying canvas's state behind our back.
func (c *cullCanvas) restyle() {
	c.colorDirty, c.widthDirty, c.dashDirty = c.colorSet, c.widthSet, c.dashSet
}

func newCullCanvas(c vg.Canvas, view vg.Rectangle) *cullCanvas {
	return &cullCanvas{Canvas: c, view: view, transformed: []bool{false}}
}

func (c *cullCanvas) off() bool { return c.transformed[len(c.transformed)-1] }

func (c *cullCanvas) Push() {
	c.transformed = append(c.transformed, c.off())
	c.Canvas.Push()
	c.restyle()
}

func (c *cullCanvas) Pop() {
	if len(c.transformed) > 1 {
		c.transformed = c.transformed[:len(c.transformed)-1]
	}
	c.Canvas.Pop()
	c.restyle()
}

func (c *cullCanvas) Rotate(a float64) {
	c.transformed[len(c.transformed)-1] = true
	c.Canvas.Rotate(a)
}

func (c *cullCanvas) Translate(pt vg.Point) {
	c.transformed[len(c.transformed)-1] = true
	c.Canvas.Translate(pt)
}

func (c *cullCanvas) Scale(x, y float64) {
	c.transformed[len(c.transformed)-1] = true
	c.Canvas.Scale(x, y)
}

func (c *cullCanvas) visible(minX, minY, maxX, maxY vg.Length) bool {
	return c.off() || !(maxX < c.view.Min.X || minX > c.view.Max.X || maxY < c.view.Min.Y || minY > c.view.Max.Y)
}

func (c *cullCanvas) pathVisible(p vg.Path) bool {
	minX, minY, maxX, maxY, ok := pathBounds(p)
	return ok && c.visible(minX, minY, maxX, maxY)
}

// pathBounds is a path's bounding box (arcs by their whole circle).
func pathBounds(p vg.Path) (minX, minY, maxX, maxY vg.Length, ok bool) {
	if len(p) == 0 {
		return 0, 0, 0, 0, false
	}
	inf := vg.Length(math.Inf(1))
	minX, minY, maxX, maxY = inf, inf, -inf, -inf
	grow := func(pt vg.Point, r vg.Length) {
		minX, minY = min(minX, pt.X-r), min(minY, pt.Y-r)
		maxX, maxY = max(maxX, pt.X+r), max(maxY, pt.Y+r)
	}
	for _, comp := range p {
		switch comp.Type {
		case vg.ArcComp:
			grow(comp.Pos, comp.Radius)
		case vg.CloseComp:
		default:
			grow(comp.Pos, 0)
			for _, ctl := range comp.Control {
				grow(ctl, 0)
			}
		}
	}
	return minX, minY, maxX, maxY, minX <= maxX
}

// textBounds bounds a string drawn at pt: no glyph is wider than 1.2 em.
func textBounds(f font.Face, pt vg.Point, s string) (minX, minY, maxX, maxY vg.Length) {
	size := f.Font.Size
	return pt.X, pt.Y - size, pt.X + size*1.2*vg.Length(utf8.RuneCountInString(s)), pt.Y + size
}

// probeCanvas draws nothing: it records the bounding box of everything drawn,
// so the report can leave out tiles of a tiled tree that would be blank.
// A drawer that transforms the canvas makes every tile count as used.
type probeCanvas struct {
	boxes     []vg.Rectangle
	transform bool
}

func (c *probeCanvas) add(minX, minY, maxX, maxY vg.Length) {
	c.boxes = append(c.boxes, vg.Rectangle{Min: vg.Point{X: minX, Y: minY}, Max: vg.Point{X: maxX, Y: maxY}})
}
func (c *probeCanvas) SetLineWidth(vg.Length)             {}
func (c *probeCanvas) SetLineDash([]vg.Length, vg.Length) {}
func (c *probeCanvas) SetColor(color.Color)               {}
func (c *probeCanvas) Rotate(float64)                     { c.transform = true }
func (c *probeCanvas) Translate(vg.Point)                 { c.transform = true }
func (c *probeCanvas) Scale(float64, float64)             { c.transform = true }
func (c *probeCanvas) Push()                              {}
func (c *probeCanvas) Pop()                               {}
func (c *probeCanvas) Stroke(p vg.Path)                   { c.Fill(p) }
func (c *probeCanvas) DrawImage(r vg.Rectangle, _ image.Image) {
	c.add(r.Min.X, r.Min.Y, r.Max.X, r.Max.Y)
}
func (c *probeCanvas) Fill(p vg.Path) {
	if minX, minY, maxX, maxY, ok := pathBounds(p); ok {
		c.add(minX, minY, maxX, maxY)
	}
}
func (c *probeCanvas) FillString(f font.Face, pt vg.Point, s string) {
	c.add(textBounds(f, pt, s))
}

func (c *cullCanvas) Stroke(p vg.Path) {
	if c.pathVisible(p) {
		c.flush()
		c.Canvas.Stroke(p)
	}
}

func (c *cullCanvas) Fill(p vg.Path) {
	if c.pathVisible(p) {
		c.flush()
		c.Canvas.Fill(p)
	}
}

func (c *cullCanvas) FillString(f font.Face, pt vg.Point, s string) {
	if c.visible(textBounds(f, pt, s)) {
		c.flush()
		c.Canvas.FillString(f, pt, s)
	}
}

func (c *cullCanvas) DrawImage(rect vg.Rectangle, img image.Image) {
	if c.visible(rect.Min.X, rect.Min.Y, rect.Max.X, rect.Max.Y) {
		c.flush()
		c.Canvas.DrawImage(rect, img)
	}
}
