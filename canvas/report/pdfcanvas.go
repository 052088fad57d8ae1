package report

import (
	"image"
	"image/color"
	"math"
	"time"
	"unicode/utf8"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/canvas/pdfdoc"
)

// pdfCanvas is the shared UTF-8 PDF canvas (canvas/pdfdoc): fpdf with the
// report's Liberation Sans faces embedded as Unicode TrueType fonts, so the
// true minus sign, × and ≤ survive into the PDF and pdftotext, and gonum plot
// charts and the tree diagram draw onto its pages as vectors.
type pdfCanvas = pdfdoc.Canvas

func newPDFCanvas(w, h vg.Length, title, author string, date time.Time) *pdfCanvas {
	return pdfdoc.New(w, h, pdfdoc.Info{Title: title, Author: author, Date: date})
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
