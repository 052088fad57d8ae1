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
