package canvas

import (
	"bufio"
	"encoding/xml"
	"fmt"
	"image/color"
	"io"
	"strconv"
)

// SVG is written directly rather than through gonum/plot's vgsvg: a direct
// writer keeps text as real <text> with text-anchor (so a viewer's font
// fallback can show any script), adds <title> tooltips with the full text of
// cut labels and problems, and styles by CSS class per role, which keeps a
// 10,000-node file small and fast to write.

// WriteSVG writes the scene as a standalone SVG document showing s.Viewport
// with a margin around it, on the theme's background (unless transparent).
func WriteSVG(w io.Writer, s *Scene, margin float64, background color.NRGBA) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	sw := svgWriter{w: bw, th: &s.Theme}
	vp := s.Viewport
	width, height := vp.W+2*margin, vp.H+2*margin
	fmt.Fprintf(bw, `<?xml version="1.0" encoding="UTF-8"?>`+"\n")
	fmt.Fprintf(bw, `<svg xmlns="http://www.w3.org/2000/svg" width="%spt" height="%spt" viewBox="%s %s %s %s">`+"\n",
		num(width), num(height), num(vp.X-margin), num(vp.Y-margin), num(width), num(height))
	sw.styles()
	if background.A > 0 {
		fmt.Fprintf(bw, `<rect x="%s" y="%s" width="%s" height="%s" fill="%s"/>`+"\n",
			num(vp.X-margin), num(vp.Y-margin), num(width), num(height), cssColor(background))
	}
	fmt.Fprintf(bw, "<g font-family=\"%s\">\n", xmlAttr(s.Theme.FontFamily))
	for i := range s.Prims {
		sw.prim(&s.Prims[i])
	}
	bw.WriteString("</g>\n</svg>\n")
	return bw.Flush()
}

type svgWriter struct {
	w   *bufio.Writer
	th  *Theme
	buf []byte
}

// styles writes one class per role and use: s = stroke only (lines), f = filled
// shape, t = text.
func (sw *svgWriter) styles() {
	w := sw.w
	w.WriteString("<style>\n")
	for r := Role(0); r < roleCount; r++ {
		st := sw.th.Style(r)
		stroke := "none"
		if st.Stroke.A > 0 && st.Width > 0 {
			stroke = cssColor(st.Stroke)
		}
		dash := ""
		if len(st.Dash) > 0 {
			dash = ";stroke-dasharray:"
			for i, d := range st.Dash {
				if i > 0 {
					dash += ","
				}
				dash += num(d)
			}
		}
		fill := "none"
		if st.Fill.A > 0 {
			fill = cssColor(st.Fill)
		}
		fmt.Fprintf(w, ".s%d{fill:none;stroke:%s;stroke-width:%s;stroke-linejoin:round;stroke-linecap:round%s}\n", r, stroke, num(st.Width), dash)
		fmt.Fprintf(w, ".f%d{fill:%s;stroke:%s;stroke-width:%s%s}\n", r, fill, stroke, num(st.Width), dash)
		textFill := fill
		if textFill == "none" {
			textFill = stroke
		}
		fmt.Fprintf(w, ".t%d{fill:%s}\n", r, textFill)
	}
	w.WriteString("</style>\n")
}

func (sw *svgWriter) prim(p *Prim) {
	w := sw.w
	switch p.Kind {
	case PrimLine, PrimPolyline:
		if len(p.Points) < 2 {
			return
		}
		fmt.Fprintf(w, `<polyline class="s%d" points="%s"/>`+"\n", p.Role, sw.points(p.Points))
	case PrimPolygon:
		if len(p.Points) < 3 {
			return
		}
		fmt.Fprintf(w, `<polygon class="f%d" points="%s"/>`+"\n", p.Role, sw.points(p.Points))
	case PrimRect:
		fmt.Fprintf(w, `<rect class="f%d" x="%s" y="%s" width="%s" height="%s"/>`+"\n", p.Role, num(p.Rect.X), num(p.Rect.Y), num(p.Rect.W), num(p.Rect.H))
	case PrimCircle:
		fmt.Fprintf(w, `<circle class="f%d" cx="%s" cy="%s" r="%s"/>`+"\n", p.Role, num(p.Center.X), num(p.Center.Y), num(p.Radius))
	case PrimText:
		anchor := ""
		switch p.Align {
		case AlignCenter:
			anchor = ` text-anchor="middle"`
		case AlignRight:
			anchor = ` text-anchor="end"`
		}
		weight := ""
		if p.Bold {
			weight = ` font-weight="bold"`
		}
		fmt.Fprintf(w, `<text class="t%d" x="%s" y="%s" font-size="%s"%s%s>`, p.Role, num(p.At.X), num(p.At.Y), num(p.Size), weight, anchor)
		if p.Tip != "" {
			w.WriteString("<title>")
			xml.EscapeText(w, []byte(p.Tip))
			w.WriteString("</title>")
		}
		xml.EscapeText(w, []byte(p.Text))
		w.WriteString("</text>\n")
	}
}

func (sw *svgWriter) points(pts []Point) string {
	b := sw.buf[:0]
	for i, p := range pts {
		if i > 0 {
			b = append(b, ' ')
		}
		b = strconv.AppendFloat(b, round2(p.X), 'f', -1, 64)
		b = append(b, ',')
		b = strconv.AppendFloat(b, round2(p.Y), 'f', -1, 64)
	}
	sw.buf = b
	return string(b)
}

func round2(f float64) float64 {
	return float64(int64(f*100+copysignHalf(f))) / 100
}

func copysignHalf(f float64) float64 {
	if f < 0 {
		return -0.5
	}
	return 0.5
}

func num(f float64) string { return strconv.FormatFloat(round2(f), 'f', -1, 64) }

func cssColor(c color.NRGBA) string {
	if c.A == 0xff {
		return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B)
	}
	return fmt.Sprintf("rgba(%d,%d,%d,%s)", c.R, c.G, c.B, strconv.FormatFloat(float64(c.A)/255, 'f', 3, 64))
}

func xmlAttr(s string) string {
	var b []byte
	for _, r := range s {
		switch r {
		case '"':
			b = append(b, "&quot;"...)
		case '&':
			b = append(b, "&amp;"...)
		case '<':
			b = append(b, "&lt;"...)
		default:
			b = append(b, string(r)...)
		}
	}
	return string(b)
}
