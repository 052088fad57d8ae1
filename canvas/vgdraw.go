package canvas

import (
	"errors"
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/vg"

	"github.com/ramify-app/ramify/engine"
)

// PDF and PNG are drawn through gonum/plot's vg.Canvas (canvas/pdfdoc for PDF,
// vgimg for PNG): one drawing routine below serves both, they draw with the
// same Liberation Sans faces the layout measured with, and the PDF carries
// real Unicode text that pdftotext and screen readers can find. The report
// draws on the same pdfdoc canvas, so the tree can be placed into a report
// page with DrawTree or Diagram.

// vgMap maps scene coordinates (y down) into a vg canvas region (y up).
type vgMap struct {
	vx, vy float64 // scene point drawn at (left, top)
	left   float64
	top    float64
	k      float64 // scale: points per logical unit
}

func (m vgMap) pt(p Point) vg.Point {
	return vg.Point{X: vg.Length(m.left + (p.X-m.vx)*m.k), Y: vg.Length(m.top - (p.Y-m.vy)*m.k)}
}

// drawVG draws every primitive of s on c. The last argument is no longer used:
// it adapted text to vgpdf's Windows-1252 fonts before PDFs moved to pdfdoc,
// and stays only so the callers outside the PDF code need no change.
func drawVG(c vg.Canvas, s *Scene, m vgMap) {
	th := &s.Theme
	for i := range s.Prims {
		p := &s.Prims[i]
		st := th.Style(p.Role)
		switch p.Kind {
		case PrimLine, PrimPolyline:
			if len(p.Points) < 2 {
				continue
			}
			var path vg.Path
			path.Move(m.pt(p.Points[0]))
			for _, q := range p.Points[1:] {
				path.Line(m.pt(q))
			}
			stroke(c, path, st, m.k)
		case PrimPolygon, PrimRect:
			pts := p.Points
			if p.Kind == PrimRect {
				r := p.Rect
				pts = []Point{{r.X, r.Y}, {r.X + r.W, r.Y}, {r.X + r.W, r.Y + r.H}, {r.X, r.Y + r.H}}
			}
			if len(pts) < 3 {
				continue
			}
			var path vg.Path
			path.Move(m.pt(pts[0]))
			for _, q := range pts[1:] {
				path.Line(m.pt(q))
			}
			path.Close()
			fill(c, path, st)
			stroke(c, path, st, m.k)
		case PrimCircle:
			var path vg.Path
			ctr := m.pt(p.Center)
			rad := vg.Length(p.Radius * m.k)
			path.Move(vg.Point{X: ctr.X + rad, Y: ctr.Y})
			path.Arc(ctr, rad, 0, 2*math.Pi)
			path.Close()
			fill(c, path, st)
			stroke(c, path, st, m.k)
		case PrimText:
			col := st.Fill
			if col.A == 0 {
				col = st.Stroke
			}
			if col.A == 0 || p.Text == "" || p.Size*m.k <= 0 {
				continue
			}
			face := fileFace(p.Size*m.k, p.Bold)
			w := float64(face.Width(p.Text).Points())
			at := m.pt(p.At)
			switch p.Align {
			case AlignCenter:
				at.X -= vg.Length(w / 2)
			case AlignRight:
				at.X -= vg.Length(w)
			}
			c.SetColor(col)
			c.FillString(face, at, p.Text)
		}
	}
}

func stroke(c vg.Canvas, path vg.Path, st Style, k float64) {
	if st.Stroke.A == 0 || st.Width <= 0 {
		return
	}
	c.SetColor(st.Stroke)
	c.SetLineWidth(vg.Length(st.Width * k))
	var dash []vg.Length
	for _, d := range st.Dash {
		dash = append(dash, vg.Length(d*k))
	}
	c.SetLineDash(dash, 0)
	c.Stroke(path)
	c.SetLineDash(nil, 0)
}

func fill(c vg.Canvas, path vg.Path, st Style) {
	if st.Fill.A == 0 {
		return
	}
	c.SetColor(st.Fill)
	c.Fill(path)
}

func fillRect(c vg.Canvas, r vg.Rectangle, col color.Color) {
	var path vg.Path
	path.Move(r.Min)
	path.Line(vg.Point{X: r.Max.X, Y: r.Min.Y})
	path.Line(r.Max)
	path.Line(vg.Point{X: r.Min.X, Y: r.Max.Y})
	path.Close()
	c.SetColor(col)
	c.Fill(path)
}

// Diagram is a tree laid out once with the file fonts, ready to be drawn into
// any vg.Canvas at any scale and as often as wanted (a report draws it whole,
// or once per tile). It satisfies the report's TreeDiagram.
type Diagram struct {
	scene  *Scene
	bounds Rect
}

// NewDiagram lays out p with a theme: "print" (greyscale-safe), "colour" or
// "light", or "dark". r may be nil.
func NewDiagram(p *engine.Project, r *engine.Result, theme string) (*Diagram, error) {
	if p == nil || p.Root == nil {
		return nil, errors.New("tree diagram: the project has no tree")
	}
	if theme == "colour" || theme == "color" {
		theme = "light"
	}
	th, ok := ThemeByName(theme)
	if !ok {
		return nil, fmt.Errorf("tree diagram: unknown theme %q (use print, colour or dark)", theme)
	}
	opts := DefaultOptions()
	opts.Theme = th
	l := LayoutTree(p, r, FontMeasurer{}, opts)
	return &Diagram{scene: Build(p, r, l, opts, Rect{}), bounds: l.Bounds}, nil
}

// Size is the diagram's natural size in points at scale 1.
func (d *Diagram) Size() (w, h vg.Length) { return vg.Length(d.bounds.W), vg.Length(d.bounds.H) }

// Draw draws the whole diagram scaled by k with its top-left corner at
// topLeft (vg coordinates, y up). It uses no canvas transforms. For a PDF,
// draw on a pdfdoc.Canvas: gonum's vgpdf has only Windows-1252 fonts and
// cannot find the bold face by the name the diagram asks for.
func (d *Diagram) Draw(c vg.Canvas, topLeft vg.Point, k float64) error {
	if k <= 0 || math.IsNaN(k) || math.IsInf(k, 0) {
		return fmt.Errorf("tree diagram: scale %v must be positive", k)
	}
	drawVG(c, d.scene, vgMap{vx: d.bounds.X, vy: d.bounds.Y, left: float64(topLeft.X), top: float64(topLeft.Y), k: k})
	return nil
}

// DrawTree draws the tree of p (with the values of r, which may be nil) into
// rect of a vg canvas (pdfdoc for PDF, see Diagram.Draw), scaled down to fit and placed at the rect's top left.
// The report uses it (or Diagram) to put the tree on a page of its own PDF.
func DrawTree(c vg.Canvas, rect vg.Rectangle, p *engine.Project, r *engine.Result, opts Options) error {
	if p == nil || p.Root == nil {
		return errors.New("draw tree: the project has no tree")
	}
	opts = opts.normalized()
	l := LayoutTree(p, r, FontMeasurer{}, opts)
	w, h := float64(rect.Max.X-rect.Min.X), float64(rect.Max.Y-rect.Min.Y)
	if w <= 0 || h <= 0 || l.Bounds.W <= 0 || l.Bounds.H <= 0 {
		return errors.New("draw tree: empty drawing area")
	}
	d := &Diagram{scene: Build(p, r, l, opts, Rect{}), bounds: l.Bounds}
	k := math.Min(1, math.Min(w/l.Bounds.W, h/l.Bounds.H))
	return d.Draw(c, vg.Point{X: rect.Min.X, Y: rect.Max.Y}, k)
}
