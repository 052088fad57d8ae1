package canvas

import (
	"fmt"
	"image/color"
	"io"
	"math"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
)

// maxPNGPixels keeps a PNG export within memory (about 1 GB of RGBA).
const maxPNGPixels = 250_000_000

// pngPixels is the pixel size of a drawing w × h points at dpi.
func pngPixels(w, h float64, dpi int) (int, int) {
	return int(math.Ceil(w * float64(dpi) / 72)), int(math.Ceil(h * float64(dpi) / 72))
}

// writePNG rasterises the scene (its Viewport plus margin) at dpi on bg.
func writePNG(w io.Writer, s *Scene, margin float64, dpi int, bg color.NRGBA) error {
	vp := s.Viewport
	pw, ph := pngPixels(vp.W+2*margin, vp.H+2*margin, dpi)
	if pw <= 0 || ph <= 0 {
		return fmt.Errorf("nothing to draw")
	}
	if pw*ph > maxPNGPixels || pw > 1<<16 || ph > 1<<16 {
		return fmt.Errorf("the PNG would be %d × %d pixels at %d dpi; lower the dpi or export a PDF with tiles", pw, ph, dpi)
	}
	// Round the drawing up to whole pixels so the image is exactly pw × ph.
	wpt, hpt := float64(pw)*72/float64(dpi), float64(ph)*72/float64(dpi)
	c := vgimg.NewWith(vgimg.UseWH(vg.Length(wpt), vg.Length(hpt)), vgimg.UseDPI(dpi), vgimg.UseBackgroundColor(bg))
	drawVG(c, s, vgMap{vx: vp.X - margin, vy: vp.Y - margin, left: 0, top: hpt, k: 1})
	_, err := vgimg.PngCanvas{Canvas: c}.WriteTo(w)
	return err
}
