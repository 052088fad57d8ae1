package canvas

import (
	"math"
	"strings"

	"github.com/ramify-app/ramify/engine"
)

// Fields a hit region can point at; the editor opens the matching field.
const (
	FieldNode        = "node"
	FieldLabel       = "label"
	FieldProbability = "probability"
	FieldCash        = "cash"
	FieldPayoff      = "payoff"
	FieldValue       = "value"
)

// Target is what lies under a point: a node (Branch -1) or one of its branches,
// and which field. The zero Target is "nothing".
type Target struct {
	Node   *engine.Node
	Branch int
	Field  string
}

// IsZero reports whether t points at nothing.
func (t Target) IsZero() bool { return t.Node == nil }

// Options say what a scene shows.
type Options struct {
	Theme Theme
	// ShowCertaintyEquivalent draws the certainty equivalent in place of the
	// expected value at each node when the result has a risk attitude.
	ShowCertaintyEquivalent bool
	// HideWorkingNumbers shows only labels, probabilities, the root's value and
	// the end payoffs (for presenting).
	HideWorkingNumbers bool
	// RevealColumns steps values in from the right when presenting: values are
	// shown only at depths ≥ deepest−RevealColumns. -1 shows all. Use
	// DefaultOptions for a plain view.
	RevealColumns int
	// Notes are small notes under the numbers of the branch leading to a node
	// (keyed by that node), e.g. a break-even note.
	Notes map[*engine.Node][]string
	// NoteFunc adds notes for branch i of node n; its notes follow Notes'.
	NoteFunc func(n *engine.Node, branch int) []string
	// Selected is highlighted.
	Selected Target
	// MinTextSize leaves out text smaller than this (logical units); the view
	// sets it when a large tree is seen from so far that such text is a dot.
	MinTextSize float64
}

// DefaultOptions is the light theme with every value shown.
func DefaultOptions() Options {
	return Options{Theme: LightTheme(), RevealColumns: -1}
}

func (o Options) normalized() Options {
	if o.Theme.Name == "" {
		o.Theme = LightTheme()
	}
	return o
}

func (o Options) notesFor(parent *engine.Node, branch int, child *engine.Node) []string {
	var out []string
	if o.Notes != nil && child != nil {
		out = append(out, o.Notes[child]...)
	}
	if o.NoteFunc != nil {
		out = append(out, o.NoteFunc(parent, branch)...)
	}
	return out
}

// PrimKind is the kind of a drawing primitive.
type PrimKind uint8

const (
	PrimLine PrimKind = iota
	PrimPolyline
	PrimRect
	PrimCircle
	PrimPolygon
	PrimText
)

// Align is the horizontal alignment of a text run about its anchor.
type Align uint8

const (
	AlignLeft Align = iota
	AlignCenter
	AlignRight
)

// Prim is one drawing primitive in logical units (y down). Which fields are
// used depends on Kind:
//
//	PrimLine, PrimPolyline, PrimPolygon: Points (a polygon is closed and filled)
//	PrimRect: Rect;  PrimCircle: Center, Radius
//	PrimText: Text at At (baseline), Size, Bold, Align; Width is its measured advance
type Prim struct {
	Kind   PrimKind
	Role   Role
	Points []Point
	Rect   Rect
	Center Point
	Radius float64
	Text   string
	At     Point
	Size   float64
	Bold   bool
	Align  Align
	Width  float64
	Tip    string // full text when Text was cut
}

// Hit maps a region to what is drawn there. Tip is the text for a tooltip.
type Hit struct {
	Rect   Rect
	Target Target
	Tip    string
}

// Scene is what every renderer draws: a flat list of primitives in drawing
// order and the hit regions, both for the part of the tree inside Viewport.
type Scene struct {
	Prims    []Prim
	Hits     []Hit
	Bounds   Rect // the whole tree
	Viewport Rect
	Theme    Theme
}

// HitAt returns the hit region under p; text fields win over the node shape.
func (s *Scene) HitAt(p Point) (Hit, bool) {
	for i := len(s.Hits) - 1; i >= 0; i-- {
		if s.Hits[i].Rect.Contains(p) {
			return s.Hits[i], true
		}
	}
	return Hit{}, false
}

// HitFor returns the hit region of a target, if drawn.
func (s *Scene) HitFor(t Target) (Hit, bool) {
	for _, h := range s.Hits {
		if h.Target == t {
			return h, true
		}
	}
	return Hit{}, false
}

// Build turns a laid-out tree into a scene, keeping only what intersects the
// viewport (an empty viewport means everything). l may be nil: the tree is
// then laid out with the file fonts.
func Build(p *engine.Project, r *engine.Result, l *Layout, opts Options, viewport Rect) *Scene {
	opts = opts.normalized()
	if l == nil {
		l = LayoutTree(p, r, FontMeasurer{}, opts)
	}
	if r != nil && p != nil && r.Project != p {
		r = nil
	}
	th := &l.Theme
	s := &Scene{Bounds: l.Bounds, Viewport: viewport, Theme: l.Theme}
	if len(l.Boxes) == 0 {
		return s
	}
	if viewport.W <= 0 || viewport.H <= 0 {
		s.Viewport = l.Bounds
		viewport = Rect{l.Bounds.X - 1, l.Bounds.Y - 1, l.Bounds.W + 2, l.Bounds.H + 2}
	}
	maxDepth := len(l.Columns) - 1
	b := sceneBuilder{s: s, th: th, l: l, r: r, opts: opts}
	for i := range l.Boxes {
		box := &l.Boxes[i]
		boxVis := l.Box(i).Intersects(viewport)
		fanVis := false
		if box.Parent >= 0 && !boxVis {
			py := l.Boxes[box.Parent].Y
			c := l.Columns[box.Depth]
			fanVis = Rect{c.FanX, math.Min(py, box.Y), c.BranchX - c.FanX, math.Abs(py - box.Y)}.Intersects(viewport)
		}
		if !boxVis && !fanVis {
			continue
		}
		showValue := opts.RevealColumns < 0 || box.Depth >= maxDepth-opts.RevealColumns
		if opts.HideWorkingNumbers && box.Depth != 0 && box.Node.Kind != engine.End {
			showValue = false
		}
		b.node(i, showValue, boxVis)
	}
	if t := opts.Selected; !t.IsZero() {
		if h, ok := s.HitFor(t); ok {
			pad := th.SelectionPad
			sel := Prim{Kind: PrimRect, Role: RoleSelection, Rect: Rect{h.Rect.X - pad, h.Rect.Y - pad, h.Rect.W + 2*pad, h.Rect.H + 2*pad}}
			s.Prims = append(s.Prims, sel)
		}
	}
	return s
}

// problemMarkSize is the half-diagonal of the diamond marking a problem.
func problemMarkSize(th *Theme) float64 { return th.NodeSize * 0.42 }

type sceneBuilder struct {
	s    *Scene
	th   *Theme
	l    *Layout
	r    *engine.Result
	opts Options
}

// baseline of a line of text whose line box starts at top.
func (b *sceneBuilder) baseline(top, size float64) float64 {
	return top + b.th.Ascent*size + (b.th.LineSpacing-1)*size/2
}

func (b *sceneBuilder) text(role Role, t TextRun, x, top, size float64, bold bool, align Align) Rect {
	if size >= b.opts.MinTextSize { // smaller text is left out; its place still counts for hit regions
		at := Point{x, b.baseline(top, size)}
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimText, Role: role, Text: t.Text, At: at, Size: size, Bold: bold, Align: align, Width: t.Width, Tip: t.Full})
	}
	left := x
	switch align {
	case AlignCenter:
		left -= t.Width / 2
	case AlignRight:
		left -= t.Width
	}
	return Rect{left, top, t.Width, b.th.lineHeight(size)}
}

func (b *sceneBuilder) hit(r Rect, t Target, tip string) {
	b.s.Hits = append(b.s.Hits, Hit{Rect: r, Target: t, Tip: tip})
}

func (b *sceneBuilder) node(i int, showValue, boxVisible bool) {
	th, l, r := b.th, b.l, b.r
	box := &l.Boxes[i]
	n := box.Node
	c := l.Columns[box.Depth]
	x, y := box.X, box.Y
	half := th.NodeSize / 2
	if n.Kind == engine.End && box.Hidden == 0 {
		half = th.EndWidth / 2
	}

	// Without a recommended policy (the tree could not be evaluated) nothing
	// is de-emphasised.
	policyKnown := r != nil && !r.Broken(l.Boxes[0].Node)
	onPolicy := !policyKnown || r.OnPolicy(n)
	branchRole := RoleBranch
	if policyKnown {
		branchRole = RoleBranchRejected
		if onPolicy {
			branchRole = RoleBranchPolicy
		}
	}
	textRole := func(own Role) Role {
		if onPolicy {
			return own
		}
		return RoleMutedText
	}

	// Incoming branch: from the parent's stub, slant to this row, run to the node.
	if box.Parent >= 0 {
		py := l.Boxes[box.Parent].Y
		pts := []Point{{c.FanX, py}, {c.BranchX, y}, {x - half, y}}
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimPolyline, Role: branchRole, Points: pts})
	}
	if !boxVisible { // only the slanted part of the branch crosses the viewport
		return
	}
	// Outgoing stub under the value text, to where the children's branches fan out.
	if box.nkids > 0 {
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimLine, Role: branchRole, Points: []Point{{x + half, y}, {c.End, y}}})
	}
	if box.Hidden > 0 {
		end := math.Max(c.End-th.TextPad, x+half+th.StubLength)
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimLine, Role: RoleCollapsed, Points: []Point{{x + half, y}, {end, y}}})
		k := th.NodeSize * 0.35
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimRect, Role: RoleCollapsed, Rect: Rect{end - k, y - k, k * 2, k * 2}})
	}

	// The node itself.
	shape := Rect{x - half, y - th.NodeSize/2, 2 * half, th.NodeSize}
	nodeRole := func(own Role) Role {
		if onPolicy {
			return own
		}
		return RoleMutedNode
	}
	switch {
	case n.Kind == engine.Decision:
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimRect, Role: nodeRole(RoleDecisionNode), Rect: shape})
	case n.Kind == engine.Chance:
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimCircle, Role: nodeRole(RoleChanceNode), Center: Point{x, y}, Radius: half})
	default:
		// Our end marker: an upright bar with a round cap above it.
		bar := Rect{x - th.EndWidth/2, y - th.EndHeight/2 + th.EndWidth/2, th.EndWidth, th.EndHeight - th.EndWidth/2}
		shape = Rect{x - th.EndWidth/2, y - th.EndHeight/2, th.EndWidth, th.EndHeight}
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimRect, Role: nodeRole(RoleEndNode), Rect: bar})
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimCircle, Role: nodeRole(RoleEndNode), Center: Point{x, y - th.EndHeight/2 + th.EndWidth/2}, Radius: th.EndWidth * 0.75})
	}
	tip := n.Name
	if len(box.Problems) > 0 {
		msgs := make([]string, 0, len(box.Problems))
		for _, p := range box.Problems {
			if p.Full != "" {
				msgs = append(msgs, p.Full)
			} else {
				msgs = append(msgs, p.Text)
			}
		}
		tip = strings.TrimSpace(tip + "\n" + strings.Join(msgs, "\n"))
	}
	grow := th.TextPad / 2
	b.hit(Rect{shape.X - grow, shape.Y - grow, shape.W + 2*grow, shape.H + 2*grow}, Target{n, -1, FieldNode}, tip)

	// Problem mark: a diamond with an exclamation mark at the node's upper left.
	if len(box.Problems) > 0 {
		k := problemMarkSize(th)
		cx, cy := x, y-math.Max(th.NodeSize, th.EndHeight)/2-k-1
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimPolygon, Role: RoleProblemMark, Points: []Point{{cx, cy - k}, {cx + k, cy}, {cx, cy + k}, {cx - k, cy}}})
		bang := TextRun{Text: "!", Width: 0}
		b.s.Prims = append(b.s.Prims, Prim{Kind: PrimText, Role: RoleProblem, Text: bang.Text, At: Point{cx, cy + k*0.45}, Size: k * 1.3, Bold: true, Align: AlignCenter})
	}

	// Texts on the incoming branch.
	if box.Parent >= 0 {
		parent := l.Boxes[box.Parent].Node
		tx := c.BranchX + th.TextPad
		if !box.Label.empty() {
			top := y - th.TextPad - th.lineHeight(th.LabelSize)
			rect := b.text(textRole(RoleLabel), box.Label, tx, top, th.LabelSize, false, AlignLeft)
			b.hit(rect, Target{parent, box.Branch, FieldLabel}, box.Label.Full)
		}
		top := y + th.TextPad
		nx := tx
		if !box.Prob.empty() {
			rect := b.text(textRole(RoleProbability), box.Prob, nx, top, th.NumberSize, false, AlignLeft)
			b.hit(rect, Target{parent, box.Branch, FieldProbability}, box.Prob.Full)
			nx += box.Prob.Width + 2*th.TextPad
		}
		if !box.Cash.empty() && !b.opts.HideWorkingNumbers {
			rect := b.text(textRole(RoleCash), box.Cash, nx, top, th.NumberSize, false, AlignLeft)
			b.hit(rect, Target{parent, box.Branch, FieldCash}, box.Cash.Full)
		}
		if !box.Prob.empty() || !box.Cash.empty() {
			top += th.lineHeight(th.NumberSize)
		}
		for _, note := range box.Notes {
			b.text(RoleNote, note, tx, top, th.NoteSize, false, AlignLeft)
			top += th.lineHeight(th.NoteSize)
		}
	}

	// Texts beside the node.
	under := y + th.TextPad
	if !box.Payoff.empty() {
		lh := th.lineHeight(th.ValueSize)
		if showValue {
			rect := b.text(textRole(RolePayoff), box.Payoff, c.ValueX, y-lh/2, th.ValueSize, true, AlignLeft)
			b.hit(rect, Target{n, -1, FieldPayoff}, box.Payoff.Full)
		}
		under = y + lh/2
	}
	if !box.Value.empty() && showValue {
		top := y - th.TextPad - th.lineHeight(th.ValueSize)
		rect := b.text(textRole(RoleValue), box.Value, c.ValueX, top, th.ValueSize, true, AlignLeft)
		b.hit(rect, Target{n, -1, FieldValue}, box.Value.Full)
	}
	if !box.HiddenNote.empty() {
		b.text(RoleNote, box.HiddenNote, c.ValueX, under, th.NoteSize, false, AlignLeft)
		under += th.lineHeight(th.NoteSize)
	}
	for _, p := range box.Problems {
		rect := b.text(RoleProblem, p, c.ValueX, under, th.NoteSize, false, AlignLeft)
		full := p.Full
		if full == "" {
			full = p.Text
		}
		b.hit(rect, Target{n, -1, FieldNode}, full)
		under += th.lineHeight(th.NoteSize)
	}
}
