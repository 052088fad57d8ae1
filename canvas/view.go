package canvas

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"strings"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"

	"fyne.io/fyne/v2"
	fynecanvas "fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

// View is the tree on screen: a Fyne widget that lays out the project, draws
// the scene for the visible part only, pans by dragging, zooms with the scroll
// wheel and Ctrl/Cmd with plus, minus and 0 (fit), and reports taps on nodes,
// labels and numbers through OnSelect and OnActivate.
type View struct {
	widget.BaseWidget

	// OnSelect is called on a single tap with what was tapped (a zero Target
	// when the tap hit nothing).
	OnSelect func(t Target)
	// OnActivate is called on a double tap (edit or explain the target).
	OnActivate func(t Target)

	project  *engine.Project
	result   *engine.Result
	opts     Options
	layouter *Layouter
	layout   *Layout
	scene    *Scene // the last scene drawn, for hit tests

	zoom      float64       // screen units per logical unit
	offset    fyne.Position // screen position of the logical origin
	needFit   bool          // fit the whole tree at the next draw
	autoFit   bool          // keep fitting on resize until the user zooms or pans
	focused   bool
	tip       string
	tipAt     fyne.Position
	lastSize  fyne.Size
	pendingIn *engine.Node // FocusNode called before the widget had a size
	rend      *viewRenderer
}

const (
	minZoom  = 0.02
	maxZoom  = 8
	zoomStep = 1.25
)

// NewView returns an empty view with the light theme and every value shown.
func NewView() *View {
	v := &View{opts: DefaultOptions(), zoom: 1, needFit: true, autoFit: true}
	v.layouter = NewLayouter(fyneMeasurer{})
	v.ExtendBaseWidget(v)
	return v
}

// SetData shows a project and its evaluation, r = engine.Evaluate(p) (r may
// be nil; a result of another project is ignored). It is cheap
// enough to call after every edit: texts that did not change are not measured
// again. The selection is kept while its node is still in the tree.
func (v *View) SetData(p *engine.Project, r *engine.Result) {
	if p != v.project {
		v.needFit, v.autoFit = true, true
	}
	v.project, v.result = p, r
	v.relayout()
	if t := v.opts.Selected; !t.IsZero() && v.layout.Index(t.Node) < 0 {
		v.opts.Selected = Target{}
	}
	v.Refresh()
}

// SetOptions changes what the view shows (theme, presentation steps, notes, selection).
func (v *View) SetOptions(o Options) {
	v.opts = o.normalized()
	v.relayout()
	v.Refresh()
}

// Options returns the current options.
func (v *View) Options() Options { return v.opts }

// Select highlights t and scrolls it into view (without calling OnSelect).
func (v *View) Select(t Target) {
	changed := t != v.opts.Selected
	v.opts.Selected = t
	if moved := v.ensureVisible(t); changed || moved {
		v.Refresh()
	}
}

// Selected returns the highlighted target.
func (v *View) Selected() Target { return v.opts.Selected }

// Zoom returns the current scale (screen units per point).
func (v *View) Zoom() float64 { return v.zoom }

// ZoomIn enlarges the drawing about the centre of the view.
func (v *View) ZoomIn() { v.zoomAbout(zoomStep, v.centre()) }

// ZoomOut shrinks the drawing about the centre of the view.
func (v *View) ZoomOut() { v.zoomAbout(1/zoomStep, v.centre()) }

// ZoomFit shows the whole tree.
func (v *View) ZoomFit() {
	if v.layout == nil || len(v.layout.Boxes) == 0 {
		return
	}
	v.fitRect(v.layout.Bounds, 1.5)
	v.autoFit = true
	v.Refresh()
}

// FocusNode zooms and pans to the subtree of n (for presenting one part).
func (v *View) FocusNode(n *engine.Node) {
	if v.layout == nil {
		return
	}
	i := v.layout.Index(n)
	if i < 0 {
		return
	}
	if v.Size().Width <= 0 {
		v.pendingIn = n
		return
	}
	v.needFit, v.autoFit = false, false
	v.fitRect(v.layout.SubtreeBounds(i), 4)
	v.Refresh()
}

// ViewportRect is the visible part of the drawing in logical units.
func (v *View) ViewportRect() Rect {
	s := v.Size()
	return Rect{float64(-v.offset.X) / v.zoom, float64(-v.offset.Y) / v.zoom, float64(s.Width) / v.zoom, float64(s.Height) / v.zoom}
}

// TargetAt returns what is drawn at a position in the widget, and its tooltip.
func (v *View) TargetAt(pos fyne.Position) (Target, string) {
	if v.scene == nil {
		return Target{}, ""
	}
	h, ok := v.scene.HitAt(v.toLogical(pos))
	if !ok {
		return Target{}, ""
	}
	return h.Target, h.Tip
}

// ScreenRect returns where a target is drawn in widget coordinates.
func (v *View) ScreenRect(t Target) (fyne.Position, fyne.Size, bool) {
	r, ok := v.targetRect(t)
	if !ok {
		return fyne.Position{}, fyne.Size{}, false
	}
	p := v.toScreen(Point{r.X, r.Y})
	return p, fyne.NewSize(float32(r.W*v.zoom), float32(r.H*v.zoom)), true
}

func (v *View) relayout() {
	v.layout = v.layouter.Layout(v.project, v.result, v.opts)
}

func (v *View) centre() fyne.Position {
	s := v.Size()
	return fyne.NewPos(s.Width/2, s.Height/2)
}

func (v *View) toLogical(p fyne.Position) Point {
	return Point{float64(p.X-v.offset.X) / v.zoom, float64(p.Y-v.offset.Y) / v.zoom}
}

func (v *View) toScreen(p Point) fyne.Position {
	return fyne.NewPos(float32(p.X*v.zoom)+v.offset.X, float32(p.Y*v.zoom)+v.offset.Y)
}

func (v *View) zoomAbout(factor float64, at fyne.Position) {
	z := math.Max(minZoom, math.Min(maxZoom, v.zoom*factor))
	if z == v.zoom {
		return
	}
	lp := v.toLogical(at)
	v.zoom = z
	v.offset = fyne.NewPos(at.X-float32(lp.X*z), at.Y-float32(lp.Y*z))
	v.needFit, v.autoFit = false, false
	v.Refresh()
}

// fitRect zooms so r fills the view (never beyond maxScale) and centres it.
func (v *View) fitRect(r Rect, maxScale float64) {
	s := v.Size()
	if s.Width <= 0 || s.Height <= 0 || r.W <= 0 || r.H <= 0 {
		v.needFit = true
		return
	}
	const pad = 16
	z := math.Min((float64(s.Width)-2*pad)/r.W, (float64(s.Height)-2*pad)/r.H)
	z = math.Max(minZoom, math.Min(maxScale, z))
	v.zoom = z
	v.offset = fyne.NewPos(s.Width/2-float32((r.X+r.W/2)*z), s.Height/2-float32((r.Y+r.H/2)*z))
	v.needFit = false
}

func (v *View) targetRect(t Target) (Rect, bool) {
	if t.IsZero() || v.layout == nil {
		return Rect{}, false
	}
	n := t.Node
	if t.Branch >= 0 && t.Branch < len(n.Branches) && n.Branches[t.Branch].To != nil {
		n = n.Branches[t.Branch].To
	}
	i := v.layout.Index(n)
	if i < 0 {
		return Rect{}, false
	}
	return v.layout.Box(i), true
}

// ensureVisible pans the least distance that brings t's box into view.
func (v *View) ensureVisible(t Target) bool {
	r, ok := v.targetRect(t)
	s := v.Size()
	if !ok || s.Width <= 0 {
		return false
	}
	const pad = 24
	tl, br := v.toScreen(Point{r.X, r.Y}), v.toScreen(Point{r.X + r.W, r.Y + r.H})
	dx, dy := float32(0), float32(0)
	switch {
	case br.X-tl.X > s.Width-2*pad || tl.X < pad:
		dx = pad - tl.X
	case br.X > s.Width-pad:
		dx = s.Width - pad - br.X
	}
	switch {
	case br.Y-tl.Y > s.Height-2*pad || tl.Y < pad:
		dy = pad - tl.Y
	case br.Y > s.Height-pad:
		dy = s.Height - pad - br.Y
	}
	if dx != 0 || dy != 0 {
		v.offset = v.offset.Add(fyne.NewPos(dx, dy))
		v.autoFit = false
		return true
	}
	return false
}

// Tapped selects what was tapped and takes the keyboard focus for the zoom keys.
func (v *View) Tapped(ev *fyne.PointEvent) {
	if c := fyne.CurrentApp().Driver().CanvasForObject(v); c != nil {
		c.Focus(v)
	}
	t, _ := v.TargetAt(ev.Position)
	v.opts.Selected = t
	v.Refresh()
	if v.OnSelect != nil {
		v.OnSelect(t)
	}
}

// DoubleTapped activates what was tapped.
func (v *View) DoubleTapped(ev *fyne.PointEvent) {
	t, _ := v.TargetAt(ev.Position)
	if t.IsZero() {
		return
	}
	v.opts.Selected = t
	v.Refresh()
	if v.OnActivate != nil {
		v.OnActivate(t)
	}
}

// Dragged pans.
func (v *View) Dragged(ev *fyne.DragEvent) {
	v.offset = v.offset.Add(ev.Dragged)
	v.needFit, v.autoFit = false, false
	v.tip = ""
	v.Refresh()
}

func (v *View) DragEnd() {}

// Scrolled zooms about the pointer (vertical wheel) and pans sideways (horizontal).
func (v *View) Scrolled(ev *fyne.ScrollEvent) {
	if ev.Scrolled.DX != 0 {
		v.offset = v.offset.Add(fyne.NewPos(ev.Scrolled.DX, 0))
		v.needFit, v.autoFit = false, false
	}
	if dy := float64(ev.Scrolled.DY); dy != 0 {
		v.zoomAbout(math.Pow(zoomStep, math.Max(-3, math.Min(3, dy/10))), ev.Position)
		return
	}
	v.Refresh()
}

// MouseIn, MouseMoved and MouseOut show the full text of cut labels and problems.
func (v *View) MouseIn(ev *desktop.MouseEvent) { v.MouseMoved(ev) }

func (v *View) MouseMoved(ev *desktop.MouseEvent) {
	_, tip := v.TargetAt(ev.Position)
	if tip != v.tip || (tip != "" && ev.Position != v.tipAt) {
		v.tip, v.tipAt = tip, ev.Position
		v.refreshTip()
	}
}

func (v *View) MouseOut() {
	if v.tip != "" {
		v.tip = ""
		v.refreshTip()
	}
}

// refreshTip moves the tooltip without rebuilding the drawing.
func (v *View) refreshTip() {
	if r := v.rend; r != nil {
		r.tooltip(v.Size())
		fynecanvas.Refresh(r.tipBG)
		fynecanvas.Refresh(r.tipText)
	}
}

func (v *View) FocusGained()     { v.focused = true }
func (v *View) FocusLost()       { v.focused = false }
func (v *View) TypedRune(r rune) {}

// TypedKey pans with the arrow keys.
func (v *View) TypedKey(ev *fyne.KeyEvent) {
	const step = 48
	d := map[fyne.KeyName]fyne.Position{
		fyne.KeyLeft: {X: step}, fyne.KeyRight: {X: -step}, fyne.KeyUp: {Y: step}, fyne.KeyDown: {Y: -step},
	}[ev.Name]
	if d.IsZero() {
		return
	}
	v.offset = v.offset.Add(d)
	v.needFit, v.autoFit = false, false
	v.Refresh()
}

// TypedShortcut handles Ctrl/Cmd + plus (or =), minus and 0.
func (v *View) TypedShortcut(s fyne.Shortcut) {
	cs, ok := s.(*desktop.CustomShortcut)
	if !ok {
		return
	}
	switch cs.KeyName {
	case fyne.KeyPlus, fyne.KeyEqual:
		v.ZoomIn()
	case fyne.KeyMinus:
		v.ZoomOut()
	case fyne.Key0:
		v.ZoomFit()
	}
}

// ZoomShortcuts are the shortcuts the view handles; a window adds them to its
// canvas so they work whichever widget has the focus.
func (v *View) ZoomShortcuts() []fyne.Shortcut {
	mod := fyne.KeyModifierShortcutDefault
	return []fyne.Shortcut{
		&desktop.CustomShortcut{KeyName: fyne.KeyPlus, Modifier: mod},
		&desktop.CustomShortcut{KeyName: fyne.KeyEqual, Modifier: mod},
		&desktop.CustomShortcut{KeyName: fyne.KeyMinus, Modifier: mod},
		&desktop.CustomShortcut{KeyName: fyne.Key0, Modifier: mod},
	}
}

// MinSize is small: the view lives in a resizable pane.
func (v *View) MinSize() fyne.Size { return fyne.NewSize(120, 80) }

func (v *View) CreateRenderer() fyne.WidgetRenderer {
	r := &viewRenderer{v: v, bg: fynecanvas.NewRectangle(v.opts.Theme.Background)}
	r.tipBG = fynecanvas.NewRectangle(color.NRGBA{0x20, 0x24, 0x2a, 0xee})
	r.tipText = fynecanvas.NewText("", color.White)
	r.tipBG.Hide()
	r.tipText.Hide()
	v.rend = r
	return r
}

// fyneMeasurer measures with the font the screen draws with.
type fyneMeasurer struct{}

func (fyneMeasurer) TextWidth(s string, size float64, bold bool) float64 {
	return float64(fyne.MeasureText(s, float32(size), fyne.TextStyle{Bold: bold}).Width)
}

// maxViewObjects is how many primitives the view turns into canvas objects;
// beyond it (a large tree seen from afar) the visible part is drawn into one
// image instead, through the same vg drawing code as the PNG export.
const maxViewObjects = 3000

// viewRenderer turns the scene of the visible part into canvas objects.
type viewRenderer struct {
	over     *fynecanvas.Image
	overKey  overviewKey
	overRect Rect // the part of the drawing the image holds

	// An edit redraws the overview off the event goroutine, one image at a time;
	// the previous image stays up until the new one is ready.
	rasterBusy bool
	rasterNext *rasterJob

	v       *View
	bg      *fynecanvas.Rectangle
	objects []fyne.CanvasObject
	drawn   []fyne.CanvasObject
	tipBG   *fynecanvas.Rectangle
	tipText *fynecanvas.Text
	ascent  map[bool]float64 // baseline below the top of a text object, per em
}

func (r *viewRenderer) Layout(size fyne.Size) {
	r.bg.Resize(size)
	if size != r.v.lastSize {
		r.v.lastSize = size
		if r.v.autoFit {
			r.v.needFit = true
		}
		r.rebuild()
	}
}

func (r *viewRenderer) MinSize() fyne.Size { return r.v.MinSize() }

func (r *viewRenderer) Objects() []fyne.CanvasObject { return r.objects }

func (r *viewRenderer) Destroy() {}

func (r *viewRenderer) Refresh() {
	r.rebuild()
	fynecanvas.Refresh(r.v)
}

func (r *viewRenderer) rebuild() {
	v := r.v
	size := v.Size()
	r.bg.FillColor = v.opts.Theme.Background
	r.bg.Resize(size)
	if v.layout == nil {
		v.relayout()
	}
	if size.Width > 0 && size.Height > 0 {
		if n := v.pendingIn; n != nil {
			v.pendingIn = nil
			v.fitRect(v.layout.SubtreeBounds(max(0, v.layout.Index(n))), 4)
		} else if v.needFit && len(v.layout.Boxes) > 0 {
			v.fitRect(v.layout.Bounds, 1.5)
		}
	}
	vp := v.ViewportRect()
	var s *Scene
	overviewArea := false
	switch {
	case vp.W <= 0 || vp.H <= 0 || len(v.layout.Boxes) == 0:
		s = &Scene{Theme: v.opts.Theme}
	case r.over != nil && v.zoom == r.overKey.zoom && r.overRect.contains(vp):
		// Still seen from afar: one scene of the overview's area serves both the
		// image and the hit regions, instead of building the visible part twice.
		s = Build(v.project, v.result, v.layout, v.overviewOptions(), r.overRect)
		overviewArea = true
	default:
		s = Build(v.project, v.result, v.layout, v.opts, vp)
	}
	v.scene = s
	r.drawn = r.drawn[:0]
	if len(s.Prims) > maxViewObjects {
		r.overview(s, vp, overviewArea)
	} else {
		for i := range s.Prims {
			r.prim(&s.Prims[i])
		}
	}
	r.objects = append(append(r.objects[:0], r.bg), r.drawn...)
	r.tooltip(size)
	r.objects = append(r.objects, r.tipBG, r.tipText)
}

type overviewKey struct {
	layout *Layout
	zoom   float64
	theme  string
	opts   string
}

// overview shows the visible part as one image. The image covers the viewport
// and half a viewport around it, and is only redrawn when the view leaves that
// area, zooms, or the tree or options change; panning just moves it.
func (r *viewRenderer) overview(s *Scene, vp Rect, sceneIsArea bool) {
	v := r.v
	key := overviewKey{layout: v.layout, zoom: v.zoom, theme: v.opts.Theme.Name, opts: optionsKey(v.opts)}
	inside := r.overRect.contains(vp)
	switch {
	case r.over == nil || !inside || key.zoom != r.overKey.zoom:
		// Nothing usable on screen: draw now.
		area := Rect{vp.X - vp.W/2, vp.Y - vp.H/2, vp.W * 2, vp.H * 2}
		img, err := rasterScene(Build(v.project, v.result, v.layout, v.overviewOptions(), area), area, v.zoom)
		if err != nil {
			return
		}
		if r.over == nil {
			r.over = fynecanvas.NewImageFromImage(img)
			r.over.FillMode = fynecanvas.ImageFillStretch
			r.over.ScaleMode = fynecanvas.ImageScaleFastest
		} else {
			r.over.Image = img
			r.over.Refresh()
		}
		r.overKey, r.overRect = key, area
		r.rasterNext = nil
	case key != r.overKey:
		// The tree or options changed under an image that still covers the view:
		// build the scene here (it reads the project) and rasterise it in the background.
		r.overKey = key
		if !sceneIsArea {
			s = Build(v.project, v.result, v.layout, v.overviewOptions(), r.overRect)
		}
		r.queueRaster(&rasterJob{scene: s.rasterCopy(), area: r.overRect, zoom: v.zoom, key: key})
	}
	r.over.Move(v.toScreen(Point{r.overRect.X, r.overRect.Y}))
	r.over.Resize(fyne.NewSize(float32(r.overRect.W*v.zoom), float32(r.overRect.H*v.zoom)))
	r.drawn = append(r.drawn, r.over)
}

func (a Rect) contains(b Rect) bool {
	return b.X >= a.X && b.Y >= a.Y && b.X+b.W <= a.X+a.W && b.Y+b.H <= a.Y+a.H
}

// rasterCopy is what the background drawing needs: the primitives and theme,
// in a scene of its own (rasterScene filters its primitives in place).
func (s *Scene) rasterCopy() *Scene {
	return &Scene{Theme: s.Theme, Prims: append([]Prim(nil), s.Prims...)}
}

// overviewOptions leave out the text the overview image could not show anyway.
func (v *View) overviewOptions() Options {
	o := v.opts
	o.MinTextSize = minOverviewText / v.zoom
	return o
}

// minOverviewText is the smallest text, in screen pixels, an overview image draws.
const minOverviewText = 3.5

// rasterJob is one overview image to draw from a finished scene.
type rasterJob struct {
	scene *Scene
	area  Rect
	zoom  float64
	key   overviewKey
}

// RunInBackground starts overview drawing off the event goroutine. Tests that
// drive the view with Fyne's test driver replace it with an inline runner,
// because that driver runs fyne.Do on the calling goroutine.
var RunInBackground = func(f func()) { go f() }

// queueRaster draws at most one image at a time; a newer job replaces a waiting one.
func (r *viewRenderer) queueRaster(job *rasterJob) {
	if r.rasterBusy {
		r.rasterNext = job
		return
	}
	r.rasterBusy = true
	RunInBackground(func() {
		img, err := rasterScene(job.scene, job.area, job.zoom)
		fyne.Do(func() {
			r.rasterBusy = false
			if err == nil && job.key == r.overKey && job.area == r.overRect && r.over != nil {
				r.over.Image = img
				r.over.Refresh()
			}
			if next := r.rasterNext; next != nil {
				r.rasterNext = nil
				r.queueRaster(next)
			}
		})
	})
}

// optionsKey sums up the options that change the drawing.
func optionsKey(o Options) string {
	sel := ""
	if !o.Selected.IsZero() {
		sel = o.Selected.Node.ID + "/" + itoa(o.Selected.Branch) + "/" + o.Selected.Field
	}
	return fmt.Sprint(o.ShowCertaintyEquivalent, o.HideWorkingNumbers, o.RevealColumns, len(o.Notes), o.NoteFunc != nil, sel)
}

// rasterScene draws area of the scene at zoom into an image, leaving out text
// too small to read.
func rasterScene(s *Scene, area Rect, zoom float64) (image.Image, error) {
	w, h := int(math.Ceil(area.W*zoom)), int(math.Ceil(area.H*zoom))
	if w <= 0 || h <= 0 || w*h > 40_000_000 {
		return nil, fmt.Errorf("overview image %d × %d is out of range", w, h)
	}
	keep := s.Prims[:0:0]
	for _, p := range s.Prims {
		if p.Kind != PrimText || p.Size*zoom >= minOverviewText {
			keep = append(keep, p)
		}
	}
	s.Prims = keep
	c := vgimg.NewWith(vgimg.UseWH(vg.Length(w), vg.Length(h)), vgimg.UseDPI(72), vgimg.UseBackgroundColor(s.Theme.Background))
	drawVG(c, s, vgMap{vx: area.X, vy: area.Y, left: 0, top: float64(h), k: zoom})
	return c.Image(), nil
}

func (r *viewRenderer) tooltip(size fyne.Size) {
	v := r.v
	if v.tip == "" {
		r.tipBG.Hide()
		r.tipText.Hide()
		return
	}
	text := strings.ReplaceAll(v.tip, "\n", " · ")
	r.tipText.Text = text
	r.tipText.TextSize = 12
	ts := r.tipText.MinSize()
	pos := v.tipAt.Add(fyne.NewPos(12, 16))
	if pos.X+ts.Width+8 > size.Width {
		pos.X = max(0, size.Width-ts.Width-8)
	}
	r.tipBG.Move(pos)
	r.tipBG.Resize(ts.Add(fyne.NewSize(8, 4)))
	r.tipText.Move(pos.Add(fyne.NewPos(4, 2)))
	r.tipBG.Show()
	r.tipText.Show()
}

func (r *viewRenderer) pt(p Point) fyne.Position { return r.v.toScreen(p) }

func (r *viewRenderer) line(a, b Point, st Style) {
	if st.Stroke.A == 0 || st.Width <= 0 {
		return
	}
	z := r.v.zoom
	w := float32(math.Max(0.6, st.Width*z))
	add := func(p, q Point) {
		l := fynecanvas.NewLine(st.Stroke)
		l.StrokeWidth = w
		l.Position1, l.Position2 = r.pt(p), r.pt(q)
		r.drawn = append(r.drawn, l)
	}
	if len(st.Dash) < 2 {
		add(a, b)
		return
	}
	// Fyne lines have no dash pattern: draw the dashes as short lines.
	length := math.Hypot(b.X-a.X, b.Y-a.Y)
	period := st.Dash[0] + st.Dash[1]
	if period <= 0 || length/period > 400 {
		add(a, b)
		return
	}
	ux, uy := (b.X-a.X)/length, (b.Y-a.Y)/length
	for s := 0.0; s < length; s += period {
		e := math.Min(length, s+st.Dash[0])
		add(Point{a.X + ux*s, a.Y + uy*s}, Point{a.X + ux*e, a.Y + uy*e})
	}
}

func (r *viewRenderer) prim(p *Prim) {
	v := r.v
	z := v.zoom
	st := v.opts.Theme.Style(p.Role)
	if sc := v.scene; sc != nil {
		st = sc.Theme.Style(p.Role)
	}
	strokeW := float32(0)
	if st.Stroke.A > 0 {
		strokeW = float32(math.Max(0.6, st.Width*z))
	}
	switch p.Kind {
	case PrimLine, PrimPolyline:
		for i := 1; i < len(p.Points); i++ {
			r.line(p.Points[i-1], p.Points[i], st)
		}
	case PrimRect:
		rc := fynecanvas.NewRectangle(st.Fill)
		rc.StrokeColor, rc.StrokeWidth = st.Stroke, strokeW
		rc.Move(r.pt(Point{p.Rect.X, p.Rect.Y}))
		rc.Resize(fyne.NewSize(float32(p.Rect.W*z), float32(p.Rect.H*z)))
		r.drawn = append(r.drawn, rc)
	case PrimCircle:
		c := fynecanvas.NewCircle(st.Fill)
		c.StrokeColor, c.StrokeWidth = st.Stroke, strokeW
		c.Position1 = r.pt(Point{p.Center.X - p.Radius, p.Center.Y - p.Radius})
		c.Position2 = r.pt(Point{p.Center.X + p.Radius, p.Center.Y + p.Radius})
		r.drawn = append(r.drawn, c)
	case PrimPolygon:
		r.polygon(p.Points, st)
	case PrimText:
		size := p.Size * z
		if size < 3.5 || p.Text == "" { // unreadable: leave it out
			return
		}
		col := st.Fill
		if col.A == 0 {
			col = st.Stroke
		}
		t := fynecanvas.NewText(p.Text, col)
		t.TextSize = float32(size)
		t.TextStyle = fyne.TextStyle{Bold: p.Bold}
		x := p.At.X
		switch p.Align {
		case AlignCenter:
			x -= p.Width / 2
		case AlignRight:
			x -= p.Width
		}
		pos := r.pt(Point{x, p.At.Y})
		pos.Y -= float32(r.baseline(p.Bold) * size)
		t.Move(pos)
		r.drawn = append(r.drawn, t)
	}
}

// baseline is where Fyne puts the baseline of a text object, per unit of size.
func (r *viewRenderer) baseline(bold bool) float64 {
	if r.ascent == nil {
		r.ascent = map[bool]float64{}
	}
	if a, ok := r.ascent[bold]; ok {
		return a
	}
	const probe = 100
	a := 0.93
	if app := fyne.CurrentApp(); app != nil {
		if _, base := app.Driver().RenderedTextSize("Mg", probe, fyne.TextStyle{Bold: bold}, nil); base > 0 {
			a = float64(base) / probe
		}
	}
	r.ascent[bold] = a
	return a
}

// polygon draws any polygon: its fill rasterised (Fyne's Polygon is regular
// only) and its outline as lines.
func (r *viewRenderer) polygon(pts []Point, st Style) {
	if len(pts) < 3 {
		return
	}
	if st.Fill.A > 0 {
		minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		for _, p := range pts {
			minX, minY, maxX, maxY = math.Min(minX, p.X), math.Min(minY, p.Y), math.Max(maxX, p.X), math.Max(maxY, p.Y)
		}
		fillCol := st.Fill
		local := make([]Point, len(pts))
		for i, p := range pts {
			local[i] = Point{(p.X - minX) / (maxX - minX), (p.Y - minY) / (maxY - minY)}
		}
		ras := fynecanvas.NewRasterWithPixels(func(x, y, w, h int) color.Color {
			if w == 0 || h == 0 {
				return color.Transparent
			}
			if insidePolygon(Point{(float64(x) + 0.5) / float64(w), (float64(y) + 0.5) / float64(h)}, local) {
				return fillCol
			}
			return color.Transparent
		})
		ras.Move(r.pt(Point{minX, minY}))
		ras.Resize(fyne.NewSize(float32((maxX-minX)*r.v.zoom), float32((maxY-minY)*r.v.zoom)))
		r.drawn = append(r.drawn, ras)
	}
	for i := range pts {
		r.line(pts[i], pts[(i+1)%len(pts)], st)
	}
}

// insidePolygon is the even-odd ray crossing test.
func insidePolygon(p Point, poly []Point) bool {
	in := false
	for i, j := 0, len(poly)-1; i < len(poly); j, i = i, i+1 {
		a, b := poly[i], poly[j]
		if (a.Y > p.Y) != (b.Y > p.Y) && p.X < (b.X-a.X)*(p.Y-a.Y)/(b.Y-a.Y)+a.X {
			in = !in
		}
	}
	return in
}

var (
	_ fyne.Tappable       = (*View)(nil)
	_ fyne.DoubleTappable = (*View)(nil)
	_ fyne.Draggable      = (*View)(nil)
	_ fyne.Scrollable     = (*View)(nil)
	_ fyne.Focusable      = (*View)(nil)
	_ fyne.Shortcutable   = (*View)(nil)
	_ desktop.Hoverable   = (*View)(nil)
)
