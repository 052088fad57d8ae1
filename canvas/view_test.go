package canvas

import (
	"image"
	"image/color"
	"image/png"
	"os"
	"path/filepath"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/test"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// smallTree is a four-node tree for the golden image: one decision, one chance.
func smallTree(t testing.TB) (*engine.Project, *engine.Result) {
	p := &engine.Project{Title: "Small", Currency: "EUR", Objective: engine.Maximize, Root: &engine.Node{ID: "d", Kind: engine.Decision, Branches: []*engine.Branch{
		{Label: "Try", Cash: "-10", To: &engine.Node{ID: "c", Kind: engine.Chance, Branches: []*engine.Branch{
			{Label: "Works", Probability: "0.6", To: &engine.Node{ID: "w", Kind: engine.End, Payoff: "100"}},
			{Label: "Fails", Probability: "rest", To: &engine.Node{ID: "f", Kind: engine.End, Payoff: "0"}},
		}}},
		{Label: "Skip", To: &engine.Node{ID: "s", Kind: engine.End, Payoff: "20"}},
	}}}
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "%v", r.Problems)
	return p, r
}

func newTestView(t *testing.T, p *engine.Project, r *engine.Result, size fyne.Size) (*View, fyne.Window) {
	t.Helper()
	test.NewTempApp(t)
	v := NewView()
	v.SetData(p, r)
	w := test.NewTempWindow(t, v)
	w.SetPadded(false)
	w.Resize(size)
	return v, w
}

// imageDiff is the share of pixels whose channels differ by more than tol.
func imageDiff(a, b image.Image, tol uint32) float64 {
	if a.Bounds().Size() != b.Bounds().Size() {
		return 1
	}
	bad := 0
	ab, bb := a.Bounds(), b.Bounds()
	for y := 0; y < ab.Dy(); y++ {
		for x := 0; x < ab.Dx(); x++ {
			r1, g1, b1, _ := a.At(ab.Min.X+x, ab.Min.Y+y).RGBA()
			r2, g2, b2, _ := b.At(bb.Min.X+x, bb.Min.Y+y).RGBA()
			d := func(p, q uint32) uint32 {
				if p > q {
					return p - q
				}
				return q - p
			}
			if d(r1, r2)>>8 > tol || d(g1, g2)>>8 > tol || d(b1, b2)>>8 > tol {
				bad++
			}
		}
	}
	return float64(bad) / float64(ab.Dx()*ab.Dy())
}

// TestViewGolden renders a small tree through Fyne's test driver and compares
// it with testdata/view_small.png (2 % of pixels may differ by more than 24 of
// 255, for font rasterising differences). RAMIFY_UPDATE_GOLDEN=1 rewrites it.
func TestViewGolden(t *testing.T) {
	p, r := smallTree(t)
	_, w := newTestView(t, p, r, fyne.NewSize(360, 160))
	img := w.Canvas().Capture()
	golden := filepath.Join("testdata", "view_small.png")
	if os.Getenv("RAMIFY_UPDATE_GOLDEN") == "1" {
		require.NoError(t, os.MkdirAll("testdata", 0o755))
		f, err := os.Create(golden)
		require.NoError(t, err)
		require.NoError(t, png.Encode(f, img))
		require.NoError(t, f.Close())
	}
	f, err := os.Open(golden)
	require.NoError(t, err, "golden image missing; run with RAMIFY_UPDATE_GOLDEN=1 once and look at it")
	want, err := png.Decode(f)
	f.Close()
	require.NoError(t, err)
	diff := imageDiff(img, want, 24)
	if !assert.LessOrEqual(t, diff, 0.02, "view differs from the golden image") {
		out := filepath.Join(t.TempDir(), "view_small_failed.png")
		if g, err := os.Create(out); err == nil {
			png.Encode(g, img)
			g.Close()
			t.Logf("actual image written to %s", out)
		}
	}
}

func TestViewTapSelectsAndActivates(t *testing.T) {
	p, r := smallTree(t)
	v, _ := newTestView(t, p, r, fyne.NewSize(500, 260))
	var selected, activated []Target
	v.OnSelect = func(t Target) { selected = append(selected, t) }
	v.OnActivate = func(t Target) { activated = append(activated, t) }

	chance := p.Root.Branches[0].To
	tests := []struct {
		name string
		want Target
	}{
		{"node", Target{chance, -1, FieldNode}},
		{"label", Target{p.Root, 0, FieldLabel}},
		{"probability", Target{chance, 0, FieldProbability}},
		{"cash", Target{p.Root, 0, FieldCash}},
		{"value", Target{chance, -1, FieldValue}},
		{"payoff", Target{p.Root.Branches[1].To, -1, FieldPayoff}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			h, ok := v.scene.HitFor(tc.want)
			require.True(t, ok, "drawn")
			centre := v.toScreen(Point{h.Rect.X + h.Rect.W/2, h.Rect.Y + h.Rect.H/2})
			selected = nil
			test.TapAt(v, centre)
			require.Len(t, selected, 1)
			assert.Equal(t, tc.want, selected[0])
			assert.Equal(t, tc.want, v.Selected())
			activated = nil
			v.DoubleTapped(&fyne.PointEvent{Position: centre})
			require.Len(t, activated, 1)
			assert.Equal(t, tc.want, activated[0])
		})
	}
	selected = nil
	test.TapAt(v, fyne.NewPos(2, 2))
	require.Len(t, selected, 1)
	assert.True(t, selected[0].IsZero(), "a tap on empty space selects nothing")
}

func TestViewZoomAndPan(t *testing.T) {
	p, r := smallTree(t)
	v, w := newTestView(t, p, r, fyne.NewSize(400, 300))
	fit := v.Zoom()
	vp := v.ViewportRect()
	b := v.layout.Bounds
	assert.True(t, vp.X <= b.X && vp.Y <= b.Y && vp.X+vp.W >= b.X+b.W && vp.Y+vp.H >= b.Y+b.H, "fit shows the whole tree")

	v.ZoomIn()
	assert.InDelta(t, fit*zoomStep, v.Zoom(), 1e-9)
	v.ZoomOut()
	v.ZoomOut()
	assert.InDelta(t, fit/zoomStep, v.Zoom(), 1e-9)

	mod := fyne.KeyModifierShortcutDefault
	v.TypedShortcut(&desktop.CustomShortcut{KeyName: fyne.KeyPlus, Modifier: mod})
	assert.InDelta(t, fit, v.Zoom(), 1e-9)
	v.TypedShortcut(&desktop.CustomShortcut{KeyName: fyne.KeyEqual, Modifier: mod})
	v.TypedShortcut(&desktop.CustomShortcut{KeyName: fyne.Key0, Modifier: mod})
	assert.InDelta(t, fit, v.Zoom(), 1e-9, "Ctrl+0 fits")
	v.TypedShortcut(&desktop.CustomShortcut{KeyName: fyne.KeyMinus, Modifier: mod})
	assert.InDelta(t, fit/zoomStep, v.Zoom(), 1e-9)

	before := v.ViewportRect()
	test.Drag(w.Canvas(), fyne.NewPos(200, 150), 40, -30)
	after := v.ViewportRect()
	assert.InDelta(t, before.X-40/v.Zoom(), after.X, 1e-3, "dragging moves the drawing with the pointer")
	assert.InDelta(t, before.Y+30/v.Zoom(), after.Y, 1e-3)

	// the wheel zooms about the pointer: the point under it stays put
	at := fyne.NewPos(120, 90)
	under := v.toLogical(at)
	v.Scrolled(&fyne.ScrollEvent{PointEvent: fyne.PointEvent{Position: at}, Scrolled: fyne.Delta{DY: 10}})
	assert.Greater(t, v.Zoom(), fit/zoomStep)
	again := v.toLogical(at)
	assert.InDelta(t, under.X, again.X, 1e-3)
	assert.InDelta(t, under.Y, again.Y, 1e-3)
}

func TestViewKeepsSelectionInView(t *testing.T) {
	p := bigTree(2000)
	r := engine.Evaluate(p)
	v, _ := newTestView(t, p, r, fyne.NewSize(600, 400))
	v.zoom = 1
	v.Refresh()
	last := v.layout.Boxes[len(v.layout.Boxes)-1].Node
	v.Select(Target{last, -1, FieldNode})
	pos, size, ok := v.ScreenRect(Target{last, -1, FieldNode})
	require.True(t, ok)
	vs := v.Size()
	assert.True(t, pos.X >= 0 && pos.Y >= 0 && pos.X+size.Width <= vs.Width && pos.Y+size.Height <= vs.Height, "selected node scrolled into view: %v %v", pos, size)
	_, ok = v.scene.HitFor(Target{last, -1, FieldNode})
	assert.True(t, ok)

	v.FocusNode(p.Root.Branches[1].To)
	sub := v.layout.SubtreeBounds(v.layout.Index(p.Root.Branches[1].To))
	vp := v.ViewportRect()
	assert.True(t, vp.X <= sub.X+1e-6 && vp.Y <= sub.Y+1e-6 && vp.X+vp.W >= sub.X+sub.W-1e-6 && vp.Y+vp.H >= sub.Y+sub.H-1e-6, "FocusNode shows the whole subtree")
}

func TestViewDrawsOnlyTheViewport(t *testing.T) {
	p := bigTree(10000)
	r := engine.Evaluate(p)
	v, _ := newTestView(t, p, r, fyne.NewSize(800, 600))
	v.zoom = 1
	v.offset = fyne.NewPos(0, 0)
	v.Refresh()
	rend := test.WidgetRenderer(v)
	objects := len(rend.Objects())
	full := Build(p, r, v.layout, v.opts, Rect{})
	assert.Less(t, objects, len(full.Prims)/20, "only the visible part becomes canvas objects")
	assert.Positive(t, objects)
}

func TestViewSetDataOnEveryEdit(t *testing.T) {
	p, r := smallTree(t)
	v, _ := newTestView(t, p, r, fyne.NewSize(400, 200))
	chance := p.Root.Branches[0].To
	v.Select(Target{chance, -1, FieldNode})
	for _, payoff := range []string{"150", "90", "1e3", "not a number"} {
		chance.Branches[0].To.Payoff = payoff
		r = engine.Evaluate(p)
		require.NotPanics(t, func() { v.SetData(p, r) })
		assert.Equal(t, chance, v.Selected().Node, "selection survives an edit")
		var texts []string
		for _, pr := range v.scene.Prims {
			texts = append(texts, pr.Text)
		}
		if r.Valid() {
			assert.Contains(t, texts, r.Format(r.ValueOf(p.Root)))
		}
	}
	// removing the selected node clears the selection
	p.Root.Branches = p.Root.Branches[1:]
	v.SetData(p, engine.Evaluate(p))
	assert.True(t, v.Selected().IsZero())
	v.SetData(nil, nil)
}

func TestViewTooltipShowsFullText(t *testing.T) {
	p, r := smallTree(t)
	long := "Try the pilot in the northern depot first, then decide about the others"
	p.Root.Branches[0].Label = long
	r = engine.Evaluate(p)
	v, _ := newTestView(t, p, r, fyne.NewSize(900, 300))
	h, ok := v.scene.HitFor(Target{p.Root, 0, FieldLabel})
	require.True(t, ok)
	if h.Tip == "" {
		t.Skip("label fits at this theme's width; nothing to show")
	}
	assert.Equal(t, long, h.Tip)
	at := v.toScreen(Point{h.Rect.X + h.Rect.W/2, h.Rect.Y + h.Rect.H/2})
	v.MouseMoved(&desktop.MouseEvent{PointEvent: fyne.PointEvent{Position: at}})
	rend := test.WidgetRenderer(v).(*viewRenderer)
	assert.True(t, rend.tipText.Visible())
	assert.Equal(t, long, rend.tipText.Text)
	v.MouseOut()
	assert.False(t, rend.tipText.Visible())
}

func TestViewOverviewOfLargeTree(t *testing.T) {
	p := bigTree(10000)
	r := engine.Evaluate(p)
	v, w := newTestView(t, p, r, fyne.NewSize(800, 600))
	v.ZoomFit()
	rend := test.WidgetRenderer(v).(*viewRenderer)
	require.NotNil(t, rend.over, "a whole 10,000-node tree is drawn as one image")
	assert.Less(t, len(rend.Objects()), 10)
	img := rend.over.Image
	require.NotNil(t, img)
	bg := v.opts.Theme.Background
	inked := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 3 {
		for x := b.Min.X; x < b.Max.X; x += 3 {
			c := color.NRGBAModel.Convert(img.At(x, y)).(color.NRGBA)
			if c != bg {
				inked++
			}
		}
	}
	assert.Positive(t, inked, "the overview image shows the tree")
	// a small pan moves the image instead of drawing it again
	test.Drag(w.Canvas(), fyne.NewPos(400, 300), 10, 10)
	assert.Same(t, img, rend.over.Image)
	// taps still find nodes
	h := v.scene.Hits[0]
	got, _ := v.TargetAt(v.toScreen(Point{h.Rect.X + h.Rect.W/2, h.Rect.Y + h.Rect.H/2}))
	assert.Equal(t, h.Target, got)
}

func TestViewArrowKeysPan(t *testing.T) {
	p, r := smallTree(t)
	v, _ := newTestView(t, p, r, fyne.NewSize(400, 200))
	before := v.ViewportRect()
	v.TypedKey(&fyne.KeyEvent{Name: fyne.KeyRight})
	v.TypedKey(&fyne.KeyEvent{Name: fyne.KeyDown})
	after := v.ViewportRect()
	assert.Greater(t, after.X, before.X, "right arrow shows more to the right")
	assert.Greater(t, after.Y, before.Y)
	v.TypedKey(&fyne.KeyEvent{Name: fyne.KeyA})
	assert.Equal(t, after, v.ViewportRect())
}
