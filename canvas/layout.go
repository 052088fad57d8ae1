package canvas

import (
	"math"
	"runtime"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"unsafe"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// Layout places every shown node of a tree, left to right: the root at the
// left, ends at the right, one column per depth. Coordinates are logical units
// (points) with y growing downwards; Bounds starts at (0, 0).
type Layout struct {
	Boxes   []NodeBox // shown nodes in preorder; Boxes[0] is the root
	Columns []Column  // one per depth
	Bounds  Rect
	Theme   Theme

	kids    []int32 // children of box i are kids[Boxes[i].kid0 : kid0+nkids]
	index   map[*engine.Node]int
	lookups int
}

// Column is the horizontal plan of one depth.
type Column struct {
	FanX    float64 // where branches leave the parent's stub and slant to their row
	BranchX float64 // where the horizontal part of a branch starts
	NodeX   float64 // centre of the node shapes
	ValueX  float64 // left edge of the text beside a node (value, payoff, problems)
	End     float64 // right edge of the column
}

// NodeBox is one shown node: its place, its extent and the texts drawn around it.
type NodeBox struct {
	Node   *engine.Node
	Parent int // index into Boxes, -1 for the root
	Branch int // index of the branch in the parent leading here, -1 for the root
	Depth  int
	X, Y   float64 // centre of the node shape
	Top    float64 // extent above Y (labels, value)
	Bottom float64 // extent below Y (numbers, notes, problems)
	Hidden int     // nodes hidden below a collapsed node
	*NodeTexts

	kid0, nkids int32
}

// NodeTexts are the measured texts drawn around one node. A Layouter keeps
// them between layouts and updates only what changed, so a Layout's texts are
// current until that Layouter lays out the same tree again.
type NodeTexts struct {
	Label      TextRun   // branch label above the incoming branch
	Prob       TextRun   // probability below the incoming branch (chance parents)
	Cash       TextRun   // cash below the incoming branch
	Value      TextRun   // rolled-back value beside the node (decision, chance, collapsed)
	Payoff     TextRun   // path payoff beside an end
	Notes      []TextRun // small notes under the branch numbers
	Problems   []TextRun // problem messages under the node
	HiddenNote TextRun   // "N nodes hidden" under a collapsed node
}

// TextRun is a measured line of text. Full holds the whole text when Text was cut.
type TextRun struct {
	Text  string
	Width float64
	Full  string
}

func (t TextRun) empty() bool { return t.Text == "" }

// Rect is an axis-aligned rectangle in logical units, y down.
type Rect struct{ X, Y, W, H float64 }

func (r Rect) Intersects(o Rect) bool {
	return r.X <= o.X+o.W && o.X <= r.X+r.W && r.Y <= o.Y+o.H && o.Y <= r.Y+r.H
}

func (r Rect) Contains(p Point) bool {
	return p.X >= r.X && p.X <= r.X+r.W && p.Y >= r.Y && p.Y <= r.Y+r.H
}

func (r Rect) union(o Rect) Rect {
	if r.W == 0 && r.H == 0 && r.X == 0 && r.Y == 0 {
		return o
	}
	x0, y0 := math.Min(r.X, o.X), math.Min(r.Y, o.Y)
	x1, y1 := math.Max(r.X+r.W, o.X+o.W), math.Max(r.Y+r.H, o.Y+o.H)
	return Rect{x0, y0, x1 - x0, y1 - y0}
}

// Point is a position in logical units.
type Point struct{ X, Y float64 }

// Kids returns the indexes of the shown children of box i, in branch order.
func (l *Layout) Kids(i int) []int32 {
	b := &l.Boxes[i]
	return l.kids[b.kid0 : b.kid0+b.nkids]
}

// Index returns the box index of node n, or -1 when n is not shown.
func (l *Layout) Index(n *engine.Node) int {
	if l.index == nil && l.lookups < 8 {
		// A few lookups (the selection after an edit) scan; many build a map.
		l.lookups++
		for i := range l.Boxes {
			if l.Boxes[i].Node == n {
				return i
			}
		}
		return -1
	}
	if l.index == nil {
		l.index = make(map[*engine.Node]int, len(l.Boxes))
		for i := range l.Boxes {
			l.index[l.Boxes[i].Node] = i
		}
	}
	if i, ok := l.index[n]; ok {
		return i
	}
	return -1
}

// Box is the full extent of box i: incoming branch text, node and text beside it.
func (l *Layout) Box(i int) Rect {
	b := &l.Boxes[i]
	c := l.Columns[b.Depth]
	return Rect{c.BranchX, b.Y - b.Top, c.End - c.BranchX, b.Top + b.Bottom}
}

// SubtreeBounds is the extent of box i and everything shown below it.
func (l *Layout) SubtreeBounds(i int) Rect {
	r := l.Box(i)
	stack := []int32{int32(i)}
	for len(stack) > 0 {
		j := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		r = r.union(l.Box(int(j)))
		stack = append(stack, l.Kids(int(j))...)
	}
	return r
}

// Layouter lays trees out and remembers, per node, the formatted numbers and
// measured texts of the last layout, so the re-layout after an edit formats
// and measures only what changed. A Layout it returns is meant to be drawn
// before the next call: the next call updates the texts it shares, and the
// call after that reuses its arrays. Use LayoutTree for a layout to keep.
// A Layouter is not safe for concurrent use.
type Layouter struct {
	measure *measureCache
	// entries finds a node's entry when the preorder changed. It is built
	// only then, from the last layout's preorder, so the first layout of a
	// tree and re-layouts of an unchanged shape need no map at all. When it
	// exists it holds every node of the last layout.
	entries map[*engine.Node]*nodeEntry
	slab    []nodeEntry // new entries are cut from it, a chunk at a time
	key     layoutKey
	gen     uint32
	last    int // boxes in the last layout, to size the next
	scratch rowScratch
	stack   []walkItem
	ext     extents
	// The last layout's preorder: when the tree's shape is unchanged the i-th
	// node visited is the same as last time and needs no map lookup.
	order []*nodeEntry
	nodes []*engine.Node
	// Two sets of box and child arrays used in turn, so a steady stream of
	// re-layouts allocates nothing: the layout returned by one call stays
	// intact through the next call and is reused by the one after.
	boxBuf [2][]NodeBox
	kidBuf [2][]int32
	turn   int
}

// layoutKey is everything besides the node itself that its texts depend on.
type layoutKey struct {
	evaluated             bool
	decimals              int
	currency              string
	ce                    bool
	label, num, val, note float64
	maxLabel, maxNote     float64
}

// cachedNumber remembers the text of one evaluated number. The formatter
// never prints an empty text, so an empty s means nothing is cached.
type cachedNumber struct {
	d decimal.Decimal
	s string
}

func (c *cachedNumber) get(d decimal.Decimal, format func(decimal.Decimal) string) string {
	if !c.holds(d) {
		c.set(d, format(d))
	}
	return c.s
}

// holds reports whether the cached text is the one for d.
func (c *cachedNumber) holds(d decimal.Decimal) bool { return c.s != "" && c.d.Equal(d) }

// set caches s as d's text and returns it.
func (c *cachedNumber) set(d decimal.Decimal, s string) string {
	c.d, c.s = d, s
	return s
}

// keyedNumber is a cachedNumber that can also remember a value by the
// result's ValueKey, so an unchanged value is recognised without its decimal.
type keyedNumber struct {
	cachedNumber
	k engine.ValueKey // set when the text was cached by key (then d is unused)
}

func (c *keyedNumber) holds(d decimal.Decimal) bool { return !c.k.Set() && c.cachedNumber.holds(d) }

func (c *keyedNumber) set(d decimal.Decimal, s string) string {
	c.k = engine.ValueKey{}
	return c.cachedNumber.set(d, s)
}

func (c *keyedNumber) get(d decimal.Decimal, format func(decimal.Decimal) string) string {
	if !c.holds(d) {
		c.set(d, format(d))
	}
	return c.s
}

// holdsKey reports whether the cached text is the one for the value with key k.
func (c *keyedNumber) holdsKey(k engine.ValueKey) bool { return c.s != "" && k.Set() && c.k == k }

// setKey caches s as the text of the value with the set key k.
func (c *keyedNumber) setKey(k engine.ValueKey, s string) string {
	c.k, c.d, c.s = k, decimal.Decimal{}, s
	return s
}

// nodeEntry is what a Layouter remembers about one node.
type nodeEntry struct {
	NodeTexts
	labelSrc, probSrc, cashSrc, payoffSrc string // source texts shown as typed (Value only ever shows numbers)
	prob, cash                            cachedNumber
	value                                 keyedNumber  // the value beside the node, or an end's path payoff
	lists                                 *listSources // nil while the node has neither notes nor problems
	hiddenSrc                             int32
	seen                                  uint32
}

// listSources are the notes and problem messages a node's texts were made
// from. Few nodes have any, so entries keep them behind a pointer.
type listSources struct{ notes, problems []string }

// sources returns e's list sources, made when first needed.
func (e *nodeEntry) sources() *listSources {
	if e.lists == nil {
		e.lists = &listSources{}
	}
	return e.lists
}

// numberSource marks a text that shows an evaluated number, not a source text.
const numberSource = "\x00number"

type walkItem struct {
	n      *engine.Node
	parent int32
	branch int32
	depth  int32
}

// NewLayouter returns a layouter measuring text with m.
func NewLayouter(m TextMeasurer) *Layouter {
	if m == nil {
		m = FontMeasurer{}
	}
	return &Layouter{measure: newMeasureCache(m)}
}

// LayoutTree is a one-off layout (no cache kept between calls).
func LayoutTree(p *engine.Project, r *engine.Result, m TextMeasurer, opts Options) *Layout {
	return NewLayouter(m).Layout(p, r, opts)
}

// Layout places the tree of p. r may be nil (no evaluation yet): the formula
// texts are then shown in place of numbers.
func (lo *Layouter) Layout(p *engine.Project, r *engine.Result, opts Options) *Layout {
	opts = opts.normalized()
	th := opts.Theme
	l := &Layout{Theme: th}
	if p == nil || p.Root == nil {
		return l
	}
	if r != nil && r.Project != p {
		r = nil // a result of another project would show wrong numbers
	}
	key := layoutKey{evaluated: r != nil, decimals: p.Decimals, currency: p.Currency, ce: opts.ShowCertaintyEquivalent,
		label: th.LabelSize, num: th.NumberSize, val: th.ValueSize, note: th.NoteSize, maxLabel: th.MaxLabelWidth, maxNote: th.MaxNoteWidth}
	if key != lo.key {
		lo.entries = nil
		lo.nodes, lo.order = lo.nodes[:0], lo.order[:0]
		lo.key = key
	}
	lo.gen++
	lo.collect(p, r, l, opts)
	lo.columns(l)
	placeRows(l, &lo.scratch)
	l.finish()
	lo.last = len(l.Boxes)
	if len(lo.entries) > 2*len(l.Boxes)+64 { // forget nodes that were deleted
		for n, e := range lo.entries {
			if e.seen != lo.gen {
				delete(lo.entries, n)
			}
		}
		// order only holds entries seen in this layout, so it stays valid
	}
	return l
}

// collect walks the tree without recursion and builds the preorder boxes,
// updating each node's texts only where their source changed.
func (lo *Layouter) collect(p *engine.Project, r *engine.Result, l *Layout, opts Options) {
	th := &l.Theme
	mc := lo.measure
	numT := mc.table(th.NumberSize, false)
	valT := mc.table(th.ValueSize, true)

	type fieldKey struct {
		node   string
		branch int
		field  string
	}
	var problems map[string][]string
	var badField map[fieldKey]bool
	if r != nil && len(r.Problems) > 0 {
		problems = map[string][]string{}
		badField = map[fieldKey]bool{}
		for _, pr := range r.Problems {
			if pr.NodeID != "" {
				problems[pr.NodeID] = append(problems[pr.NodeID], pr.Msg)
				badField[fieldKey{pr.NodeID, pr.Branch, pr.Field}] = true
			}
		}
	}
	// raw is the text shown for a field that could not be evaluated: what the
	// user typed, or a question mark when it is empty.
	raw := func(s string) string {
		if strings.TrimSpace(s) == "" {
			return "?"
		}
		return s
	}
	const noValue = "—" // a value that could not be computed
	format := func(d decimal.Decimal) string { return engine.FormatValue(d, p.Decimals, p.Currency) }
	fit := func(s string, size float64, max float64) TextRun {
		s = cleanText(s)
		ct := mc.fit(s, size, false, max)
		tr := TextRun{Text: ct.text, Width: ct.width}
		if ct.cut {
			tr.Full = s
		}
		return tr
	}
	// number updates a measured number text when its string changed.
	number := func(tr *TextRun, src *string, t map[string]float64, s string, size float64, bold bool) {
		if tr.Text != s || s == "" || *src != numberSource {
			*tr = TextRun{Text: s, Width: mc.width(t, s, size, bold)}
			*src = numberSource
		}
	}
	// source updates a text fitted from a formula or label when its source changed.
	source := func(tr *TextRun, src *string, s string, size, max float64) {
		if *src != s || (s != "" && tr.Text == "") {
			*src = s
			*tr = fit(s, size, max)
		}
	}
	sameStrings := func(a, b []string) bool {
		if len(a) != len(b) {
			return false
		}
		for i := range a {
			if a[i] != b[i] {
				return false
			}
		}
		return true
	}

	hasNotes := opts.Notes != nil || opts.NoteFunc != nil
	valueSrc := numberSource // Value shows only numbers (or noValue), so it needs no source of its own
	lo.ext.reset(th)
	stack := append(lo.stack[:0], walkItem{p.Root, -1, -1, 0})
	lo.turn ^= 1
	l.Boxes = lo.boxBuf[lo.turn][:0]
	switch {
	case len(lo.nodes) == 0 && cap(l.Boxes) == 0:
		// The first layout: the result's node count bounds the shown nodes
		// without a walk; only an unevaluated tree is counted.
		size := 0
		if r != nil {
			size = len(r.Nodes)
		} else {
			size = shownCount(p.Root)
		}
		l.Boxes = make([]NodeBox, 0, size)
	case cap(l.Boxes) < lo.last:
		l.Boxes = make([]NodeBox, 0, lo.last+lo.last/8+16)
	}
	// The first layout of a large evaluated tree formats and measures its
	// numbers and labels on the other cores ahead of the walk (see
	// prefiller); the walk finds them cached, as a re-layout finds unchanged texts.
	var pf *prefiller // fills entries by result index while the walk runs
	usePre := false   // the walk still follows the result's preorder
	ri := 0           // the result index of the node the walk visits next
	if len(lo.nodes) == 0 && lo.entries == nil && r != nil && mc.direct && len(r.Problems) == 0 &&
		len(r.Nodes) >= prefillMin && runtime.GOMAXPROCS(0) > 1 {
		pf, usePre = startPrefill(r, mc, th, opts), true
	}
	if c := cap(l.Boxes); cap(lo.nodes) < c {
		lo.nodes = slices.Grow(lo.nodes, c-len(lo.nodes))
		lo.order = slices.Grow(lo.order, c-len(lo.order))
	}
	for len(stack) > 0 {
		it := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		n := it.n
		k := len(l.Boxes)
		var e *nodeEntry
		if k < len(lo.nodes) && lo.nodes[k] == n {
			e = lo.order[k]
		} else {
			if lo.entries == nil && k < len(lo.nodes) {
				// The shape changed: from here on nodes are found by identity.
				lo.entries = make(map[*engine.Node]*nodeEntry, len(lo.nodes))
				for i, m := range lo.nodes {
					lo.entries[m] = lo.order[i]
				}
			}
			if lo.entries != nil {
				e = lo.entries[n]
			}
			if e == nil && usePre {
				if ri < len(r.Nodes) && r.Nodes[ri] == n {
					e = pf.entry(ri)
				} else {
					usePre = false // the walk left the result's preorder: no more prefilled entries
				}
			}
			if e == nil {
				e = lo.newEntry()
				if lo.entries != nil {
					lo.entries[n] = e
				}
			}
			if k < len(lo.nodes) {
				lo.nodes[k], lo.order[k] = n, e
			} else {
				lo.nodes, lo.order = append(lo.nodes, n), append(lo.order, e)
			}
		}
		e.seen = lo.gen
		b := NodeBox{Node: n, Parent: int(it.parent), Branch: int(it.branch), Depth: int(it.depth), NodeTexts: &e.NodeTexts}
		var notes []string
		if it.parent >= 0 {
			parent := l.Boxes[it.parent].Node
			bi := int(it.branch)
			br := parent.Branches[bi]
			source(&e.Label, &e.labelSrc, br.Label, th.LabelSize, th.MaxLabelWidth)
			switch {
			case parent.Kind != engine.Chance:
				e.Prob, e.probSrc = TextRun{}, ""
			case badField != nil && badField[fieldKey{parent.ID, bi, "probability"}]:
				source(&e.Prob, &e.probSrc, raw(br.Probability), th.NumberSize, th.MaxLabelWidth/2)
			case r != nil:
				s := e.prob.s
				if d := r.Probability(parent, bi); !e.prob.holds(d) {
					s = e.prob.set(d, r.ProbabilityText(parent, bi))
				}
				number(&e.Prob, &e.probSrc, numT, s, th.NumberSize, false)
			default:
				source(&e.Prob, &e.probSrc, br.Probability, th.NumberSize, th.MaxLabelWidth/2)
			}
			switch {
			case strings.TrimSpace(br.Cash) == "":
				e.Cash, e.cashSrc = TextRun{}, ""
			case badField != nil && badField[fieldKey{parent.ID, bi, "cash"}]:
				source(&e.Cash, &e.cashSrc, raw(br.Cash), th.NumberSize, th.MaxLabelWidth/2)
			case r != nil:
				s := e.cash.s
				if d := r.Cash(parent, bi); !e.cash.holds(d) {
					s = e.cash.set(d, r.CashText(parent, bi))
				}
				number(&e.Cash, &e.cashSrc, numT, s, th.NumberSize, false)
			default:
				source(&e.Cash, &e.cashSrc, br.Cash, th.NumberSize, th.MaxLabelWidth/2)
			}
			if hasNotes { // notesFor copies the whole Options: skip it when it can only return nil
				notes = opts.notesFor(parent, bi, n)
			}
			if r != nil && parent.Kind == engine.Decision {
				for _, t := range r.Ties(parent) {
					if t == bi {
						notes = append(notes, "ties with the recommended choice")
						break
					}
				}
			}
		} else {
			e.Label, e.Prob, e.Cash = TextRun{}, TextRun{}, TextRun{}
		}
		var notesSrc, problemsSrc []string
		if e.lists != nil {
			notesSrc, problemsSrc = e.lists.notes, e.lists.problems
		}
		if !sameStrings(notes, notesSrc) {
			e.sources().notes = notes
			e.Notes = nil
			for _, s := range notes {
				e.Notes = append(e.Notes, fit(s, th.NoteSize, th.MaxNoteWidth))
			}
		}
		collapsed := n.Collapsed && len(n.Branches) > 0
		switch {
		case n.Kind == engine.End && !collapsed:
			e.Value = TextRun{}
			switch {
			case badField != nil && badField[fieldKey{n.ID, -1, "payoff"}]:
				source(&e.Payoff, &e.payoffSrc, raw(n.Payoff), th.ValueSize, th.MaxLabelWidth/2)
			case r != nil && r.Broken(n):
				number(&e.Payoff, &e.payoffSrc, valT, noValue, th.ValueSize, true)
			case r != nil:
				s := e.value.s
				if d := r.PathValue(n); !e.value.holds(d) {
					s = e.value.set(d, r.PathValueText(n))
				}
				number(&e.Payoff, &e.payoffSrc, valT, s, th.ValueSize, true)
			default:
				source(&e.Payoff, &e.payoffSrc, n.Payoff, th.ValueSize, th.MaxLabelWidth/2)
			}
		case r != nil:
			e.Payoff = TextRun{}
			var ce decimal.Decimal
			isCE := false
			if opts.ShowCertaintyEquivalent {
				ce, isCE = r.CertaintyEquivalent(n)
			}
			switch {
			case r.Broken(n):
				number(&e.Value, &valueSrc, valT, noValue, th.ValueSize, true)
			case isCE:
				number(&e.Value, &valueSrc, valT, e.value.get(ce, format), th.ValueSize, true)
			default:
				s := e.value.s
				if k := r.ValueKey(n); k.Set() {
					// the int64 form: compared without making the decimal
					if !e.value.holdsKey(k) {
						s = e.value.setKey(k, r.ValueText(n))
					}
				} else if v := r.ValueOf(n); !e.value.holds(v) {
					s = e.value.set(v, r.ValueText(n))
				}
				number(&e.Value, &valueSrc, valT, s, th.ValueSize, true)
			}
		default:
			e.Payoff, e.Value = TextRun{}, TextRun{}
		}
		var msgs []string
		if problems != nil {
			msgs = problems[n.ID]
		}
		hidden := 0
		if collapsed {
			hidden = -1
			inside := 0
			engine.Walk(n, func(m *engine.Node, _ int) bool {
				hidden++
				if m != n {
					inside += len(problems[m.ID])
				}
				return true
			})
			if inside > 0 {
				msgs = append(msgs[:len(msgs):len(msgs)], itoa(inside)+" problem(s) in the folded part")
			}
		}
		if !sameStrings(msgs, problemsSrc) {
			e.sources().problems = msgs
			e.Problems = nil
			for _, m := range msgs {
				e.Problems = append(e.Problems, fit(m, th.NoteSize, th.MaxNoteWidth))
			}
		}
		self := int32(len(l.Boxes))
		if collapsed {
			b.Hidden = hidden
			if int32(hidden) != e.hiddenSrc || e.HiddenNote.Text == "" {
				e.hiddenSrc = int32(hidden)
				word := " nodes hidden"
				if hidden == 1 {
					word = " node hidden"
				}
				e.HiddenNote = fit("+"+itoa(hidden)+word, th.NoteSize, th.MaxNoteWidth)
			}
		} else {
			e.HiddenNote, e.hiddenSrc = TextRun{}, 0
			for i := len(n.Branches) - 1; i >= 0; i-- {
				if c := n.Branches[i].To; c != nil {
					stack = append(stack, walkItem{c, self, int32(i), it.depth + 1})
				}
			}
		}
		ri += 1 + b.Hidden // a collapsed node's hidden subtree follows it in the result's preorder
		lo.ext.add(&b)
		l.Boxes = append(l.Boxes, b)
	}
	lo.stack = stack[:0]
	if pf != nil {
		pf.wait()
	}
	lo.nodes, lo.order = lo.nodes[:len(l.Boxes)], lo.order[:len(l.Boxes)]

	// Children lists: preorder makes a parent precede its children, and
	// children of one parent appear in branch order.
	lo.boxBuf[lo.turn] = l.Boxes
	l.kids = lo.kidBuf[lo.turn][:0]
	if cap(l.kids) < len(l.Boxes) {
		l.kids = make([]int32, 0, len(l.Boxes)+len(l.Boxes)/8+16)
	}
	l.kids = l.kids[:len(l.Boxes)]
	lo.kidBuf[lo.turn] = l.kids
	counts := lo.scratch.int32s(&lo.scratch.counts, len(l.Boxes))
	for i := 1; i < len(l.Boxes); i++ {
		counts[l.Boxes[i].Parent]++
	}
	var next int32
	for i := range l.Boxes {
		l.Boxes[i].kid0 = next
		next += counts[i]
	}
	for i := 1; i < len(l.Boxes); i++ {
		pb := &l.Boxes[l.Boxes[i].Parent]
		l.kids[pb.kid0+pb.nkids] = int32(i)
		pb.nkids++
	}
}

// prefillMin is the smallest tree whose first layout formats and measures
// in parallel: below it starting the goroutines costs more than it saves.
var prefillMin = 2048

// prefillChunk is how many entries one prefill step allocates and fills.
const prefillChunk = 256

// prefiller gives a zero entry for every node of r, by result index, with
// the evaluated numbers (probability, cash, value or path payoff) formatted
// and measured and the branch labels that fit measured. Its goroutines fill
// chunks of prefillChunk entries in result order, each allocating (and so
// clearing) its own, while collect walks the tree; collect asks for a node's
// entry with entry, filling chunks itself when it catches up. It fills only
// what collect would put there itself, the same way, so collect finds those
// texts current and keeps them; anything collect decides differently (a
// broken node, a folded end) it simply overwrites. Requires a measurer safe
// for concurrent use (FontMeasurer).
type prefiller struct {
	r      *engine.Result
	th     *Theme
	ce     bool
	width  func(string, float64, bool) float64
	chunks [][]nodeEntry
	done   []atomic.Bool // chunks[c] is filled and may be read
	next   atomic.Int64  // the next chunk to claim
	wg     sync.WaitGroup
}

func startPrefill(r *engine.Result, mc *measureCache, th *Theme, opts Options) *prefiller {
	r.PathValue(r.Project.Root) // the lazy forward pass, once, before the goroutines read it
	nc := (len(r.Nodes) + prefillChunk - 1) / prefillChunk
	pf := &prefiller{r: r, th: th, ce: opts.ShowCertaintyEquivalent && r.RiskActive(), width: mc.m.TextWidth,
		chunks: make([][]nodeEntry, nc), done: make([]atomic.Bool, nc)}
	for range runtime.GOMAXPROCS(0) - 1 {
		pf.wg.Go(func() {
			for pf.fillNext() {
			}
		})
	}
	return pf
}

// fillNext claims the next chunk and fills it; false when none is left.
func (pf *prefiller) fillNext() bool {
	c := int(pf.next.Add(1)) - 1
	if c >= len(pf.chunks) {
		return false
	}
	lo := c * prefillChunk
	hi := min(lo+prefillChunk, len(pf.r.Nodes))
	entries := make([]nodeEntry, hi-lo)
	var texts textBuffer
	for i := lo; i < hi; i++ {
		pf.fill(i, &entries[i-lo], &texts)
	}
	pf.chunks[c] = entries
	pf.done[c].Store(true)
	return true
}

// entry is the prefilled entry of the node with result index i.
func (pf *prefiller) entry(i int) *nodeEntry {
	c := i / prefillChunk
	for !pf.done[c].Load() {
		if !pf.fillNext() {
			runtime.Gosched() // another goroutine is filling chunk c
		}
	}
	return &pf.chunks[c][i%prefillChunk]
}

// wait returns when every goroutine is done.
func (pf *prefiller) wait() { pf.wg.Wait() }

// textBuffer keeps many short texts in a few shared blocks: one allocation
// per block instead of one per number. Bytes once handed out as a string are
// never written again (a full block is left as it is, not grown in place).
type textBuffer struct{ b []byte }

// add appends the text that appendText makes and returns it as a string.
func (tb *textBuffer) add(appendText func([]byte) []byte) string {
	if cap(tb.b)-len(tb.b) < 64 {
		tb.b = make([]byte, 0, 2048)
	}
	start := len(tb.b)
	tb.b = appendText(tb.b) // a longer text than the room left moves the block: earlier strings keep the old one
	if len(tb.b) == start {
		return ""
	}
	return unsafe.String(&tb.b[start], len(tb.b)-start)
}

func (pf *prefiller) fill(i int, e *nodeEntry, tb *textBuffer) {
	r, th, width := pf.r, pf.th, pf.width
	n := r.Nodes[i]
	if parent, bi := r.ParentOf(n); parent != nil && bi >= 0 && bi < len(parent.Branches) {
		br := parent.Branches[bi]
		if lab := br.Label; lab != "" { // a label that must be cut is left to collect
			t := cleanText(lab)
			if w := width(t, th.LabelSize, false); w <= th.MaxLabelWidth {
				e.labelSrc, e.Label = lab, TextRun{Text: t, Width: w}
			}
		}
		if parent.Kind == engine.Chance {
			t := e.prob.set(r.Probability(parent, bi), tb.add(func(b []byte) []byte { return r.AppendProbabilityText(b, parent, bi) }))
			e.Prob, e.probSrc = TextRun{Text: t, Width: width(t, th.NumberSize, false)}, numberSource
		}
		if strings.TrimSpace(br.Cash) != "" {
			t := e.cash.set(r.Cash(parent, bi), tb.add(func(b []byte) []byte { return r.AppendCashText(b, parent, bi) }))
			e.Cash, e.cashSrc = TextRun{Text: t, Width: width(t, th.NumberSize, false)}, numberSource
		}
	}
	if r.Broken(n) {
		return
	}
	if n.Kind == engine.End && !(n.Collapsed && len(n.Branches) > 0) {
		t := e.value.set(r.PathValue(n), tb.add(func(b []byte) []byte { return r.AppendPathValueText(b, n) }))
		e.Payoff, e.payoffSrc = TextRun{Text: t, Width: width(t, th.ValueSize, true)}, numberSource
		return
	}
	if pf.ce {
		return
	}
	t := tb.add(func(b []byte) []byte { return r.AppendValueText(b, n) })
	if k := r.ValueKey(n); k.Set() {
		e.value.setKey(k, t)
	} else {
		e.value.set(r.ValueOf(n), t)
	}
	e.Value = TextRun{Text: t, Width: width(t, th.ValueSize, true)}
}

// entryChunk is how many entries one chunk holds: as many as fit in 32 KiB,
// the largest allocation Go serves from size classes without page rounding.
const entryChunk = (32 << 10) / int(unsafe.Sizeof(nodeEntry{}))

// newEntry returns a zero entry. Entries are cut from small chunks: one
// allocation per few dozen nodes, each chunk still in the cache when it is filled.
func (lo *Layouter) newEntry() *nodeEntry {
	if len(lo.slab) == 0 {
		lo.slab = make([]nodeEntry, entryChunk)
	}
	e := &lo.slab[0]
	lo.slab = lo.slab[1:]
	return e
}

// shownCount is the number of nodes a layout of the tree at root shows:
// nothing below a collapsed node.
func shownCount(root *engine.Node) int {
	count := 0
	stack := []*engine.Node{root}
	for len(stack) > 0 {
		n := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		count++
		if n.Collapsed && len(n.Branches) > 0 {
			continue
		}
		for _, b := range n.Branches {
			if b.To != nil {
				stack = append(stack, b.To)
			}
		}
	}
	return count
}

// rowScratch holds the working arrays of placeRows between layouts.
type rowScratch struct {
	prelim, mod, shift, change, mid, modsum []float64
	thread, ancestor, number, counts        []int32
}

func (s *rowScratch) floats(p *[]float64, n int) []float64 {
	if cap(*p) < n {
		*p = make([]float64, n, n+n/4) // new memory is already zero
		return *p
	}
	*p = (*p)[:n]
	clear(*p)
	return *p
}

func (s *rowScratch) int32s(p *[]int32, n int) []int32 {
	if cap(*p) < n {
		*p = make([]int32, n, n+n/4) // new memory is already zero
		return *p
	}
	*p = (*p)[:n]
	clear(*p)
	return *p
}

func itoa(n int) string {
	return engine.FormatNumber(decimal.NewFromInt(int64(n)), 0)
}

// extents gathers, box by box as collect builds them (while their texts are
// still in the cache), each box's vertical extents and each depth's widest
// branch text and value text; columns then plans the columns from them.
type extents struct {
	th                            *Theme
	lhLabel, lhNum, lhVal, lhNote float64
	half                          float64
	branchW, valueW               []float64 // by depth
}

func (x *extents) reset(th *Theme) {
	x.th = th
	x.lhLabel, x.lhNum, x.lhVal, x.lhNote = th.lineHeight(th.LabelSize), th.lineHeight(th.NumberSize), th.lineHeight(th.ValueSize), th.lineHeight(th.NoteSize)
	x.half = maxf(th.NodeSize, th.EndHeight) / 2
	x.branchW, x.valueW = x.branchW[:0], x.valueW[:0]
}

// add sets b's Top and Bottom and widens its depth's column to fit its texts.
func (x *extents) add(b *NodeBox) {
	th := x.th
	d := b.Depth
	for len(x.branchW) <= d {
		x.branchW, x.valueW = append(x.branchW, 0), append(x.valueW, 0)
	}
	w := b.Label.Width
	nums := b.Prob.Width + b.Cash.Width
	if !b.Prob.empty() && !b.Cash.empty() {
		nums += 2 * th.TextPad
	}
	w = maxf(w, nums)
	for _, n := range b.Notes {
		w = maxf(w, n.Width)
	}
	x.branchW[d] = maxf(x.branchW[d], w)
	v := maxf(b.Value.Width, b.Payoff.Width)
	v = maxf(v, b.HiddenNote.Width)
	for _, p := range b.Problems {
		v = maxf(v, p.Width)
	}
	x.valueW[d] = maxf(x.valueW[d], v)

	top, bottom := x.half, x.half
	if !b.Label.empty() {
		top = maxf(top, th.TextPad+x.lhLabel)
	}
	if !b.Value.empty() {
		top = maxf(top, th.TextPad+x.lhVal)
	}
	if len(b.Problems) > 0 { // the mark sits above the node
		top = maxf(top, maxf(th.NodeSize, th.EndHeight)/2+2*problemMarkSize(th)+2)
	}
	if !b.Payoff.empty() {
		top = maxf(top, x.lhVal/2)
		bottom = maxf(bottom, x.lhVal/2)
	}
	below := 0.0
	if !b.Prob.empty() || !b.Cash.empty() {
		below = x.lhNum
	}
	below += float64(len(b.Notes)) * x.lhNote
	if below > 0 {
		bottom = maxf(bottom, th.TextPad+below)
	}
	under := float64(len(b.Problems)) * x.lhNote
	if !b.HiddenNote.empty() {
		under += x.lhNote
	}
	if !b.Payoff.empty() && under > 0 {
		under += x.lhVal / 2
	}
	if under > 0 {
		bottom = maxf(bottom, th.TextPad+under)
	}
	b.Top, b.Bottom = top, bottom
}

// columns sets each depth's horizontal plan from the widths extents gathered.
func (lo *Layouter) columns(l *Layout) {
	th := &l.Theme
	branchW, valueW := lo.ext.branchW, lo.ext.valueW
	depth := len(branchW) - 1
	l.Columns = make([]Column, depth+1)
	x := 0.0
	for d := 0; d <= depth; d++ {
		c := &l.Columns[d]
		c.FanX = x
		if d == 0 {
			c.BranchX = 0
			c.NodeX = th.NodeSize / 2
		} else {
			c.BranchX = x + th.FanWidth
			c.NodeX = c.BranchX + maxf(branchW[d]+2*th.TextPad, th.MinBranch) + th.NodeSize/2
		}
		c.ValueX = c.NodeX + maxf(th.NodeSize, th.EndWidth)/2 + th.TextPad
		c.End = c.ValueX + valueW[d] + th.TextPad
		if d < depth {
			c.End = maxf(c.End, c.NodeX+th.NodeSize/2+th.StubLength)
		}
		x = c.End
	}
}

// placeRows sets every box's Y with the tidy tree algorithm of Buchheim,
// Jünger & Leipert, "Improving Walker's Algorithm to Run in Linear Time"
// (Graph Drawing 2002, LNCS 2528), run sideways: the paper's x is our y and its
// levels are our columns. Nodes have their own extents above and below their
// line (Top, Bottom), so the distance between two neighbours on one level is
// upper.Bottom + gap + lower.Top; columns never overlap horizontally, so only
// nodes of one depth can collide, which is exactly what the contours compare.
//
// The paper's FIRSTWALK is recursive. Here it runs over the boxes in reverse
// preorder (every descendant before its ancestor) and each node places its
// children when it is visited; SECONDWALK runs in preorder. Both use O(n) time
// and no recursion, so a chain thousands of nodes deep lays out.
func placeRows(l *Layout, sc *rowScratch) {
	n := len(l.Boxes)
	if n == 0 {
		return
	}
	th := &l.Theme
	prelim := sc.floats(&sc.prelim, n)
	mod := sc.floats(&sc.mod, n)
	shift := sc.floats(&sc.shift, n)
	change := sc.floats(&sc.change, n)
	mid := sc.floats(&sc.mid, n)
	thread := sc.int32s(&sc.thread, n)
	ancestor := sc.int32s(&sc.ancestor, n)
	number := sc.int32s(&sc.number, n) // index among siblings
	for i := range thread {
		thread[i] = -1
		ancestor[i] = int32(i)
	}
	boxes := l.Boxes
	kids := l.kids
	for i := range boxes {
		b := &boxes[i]
		for k := int32(0); k < b.nkids; k++ {
			number[kids[b.kid0+k]] = k
		}
	}
	nextLeft := func(v int32) int32 { // the upper contour
		if b := &boxes[v]; b.nkids > 0 {
			return kids[b.kid0]
		}
		return thread[v]
	}
	nextRight := func(v int32) int32 { // the lower contour
		if b := &boxes[v]; b.nkids > 0 {
			return kids[b.kid0+b.nkids-1]
		}
		return thread[v]
	}
	distance := func(upper, lower int32) float64 {
		gap := th.SubtreeGap
		if boxes[upper].Parent == boxes[lower].Parent {
			gap = th.SiblingGap
		}
		return boxes[upper].Bottom + gap + boxes[lower].Top
	}
	moveSubtree := func(wm, wp int32, s float64) {
		subtrees := float64(number[wp] - number[wm])
		change[wp] -= s / subtrees
		shift[wp] += s
		change[wm] += s / subtrees
		prelim[wp] += s
		mod[wp] += s
	}
	apportion := func(v, parent, defaultAncestor int32) int32 {
		if number[v] == 0 {
			return defaultAncestor
		}
		pb := &boxes[parent]
		w := kids[pb.kid0+number[v]-1]
		vip, vop := v, v
		vim := w
		vom := kids[pb.kid0]
		sip, sop, sim, som := mod[vip], mod[vop], mod[vim], mod[vom]
		for {
			nr, nl := nextRight(vim), nextLeft(vip)
			if nr < 0 || nl < 0 {
				break
			}
			vim, vip = nr, nl
			vom, vop = nextLeft(vom), nextRight(vop)
			ancestor[vop] = v
			s := (prelim[vim] + sim) - (prelim[vip] + sip) + distance(vim, vip)
			if s > 0 {
				a := ancestor[vim]
				if boxes[a].Parent != int(parent) {
					a = defaultAncestor
				}
				moveSubtree(a, v, s)
				sip += s
				sop += s
			}
			sim += mod[vim]
			sip += mod[vip]
			som += mod[vom]
			sop += mod[vop]
		}
		if nextRight(vim) >= 0 && nextRight(vop) < 0 {
			thread[vop] = nextRight(vim)
			mod[vop] += sim - sop
		}
		if nextLeft(vip) >= 0 && nextLeft(vom) < 0 {
			thread[vom] = nextLeft(vip)
			mod[vom] += sip - som
			defaultAncestor = v
		}
		return defaultAncestor
	}

	// FIRSTWALK, bottom-up: when v is visited all its children's subtrees are
	// done (their own children placed, mid set); v now places the children
	// against each other, left to right, exactly as the paper's loop does.
	for vi := n - 1; vi >= 0; vi-- {
		v := int32(vi)
		b := &boxes[v]
		if b.nkids == 0 {
			mid[v] = 0
			continue
		}
		ch := kids[b.kid0 : b.kid0+b.nkids]
		defaultAncestor := ch[0]
		for k, w := range ch {
			if k == 0 {
				prelim[w] = mid[w]
				mod[w] = 0
			} else {
				ls := ch[k-1]
				prelim[w] = prelim[ls] + distance(ls, w)
				mod[w] = prelim[w] - mid[w]
			}
			if boxes[w].nkids == 0 {
				mod[w] = 0
			}
			defaultAncestor = apportion(w, v, defaultAncestor)
		}
		// EXECUTESHIFTS
		var sh, chg float64
		for k := len(ch) - 1; k >= 0; k-- {
			w := ch[k]
			prelim[w] += sh
			mod[w] += sh
			chg += change[w]
			sh += shift[w] + chg
		}
		mid[v] = (prelim[ch[0]] + prelim[ch[len(ch)-1]]) / 2
	}
	prelim[0] = mid[0]

	// SECONDWALK, top-down in preorder: y = prelim + sum of the ancestors' mods.
	modsum := sc.floats(&sc.modsum, n)
	for i := range boxes {
		b := &boxes[i]
		acc := 0.0
		if b.Parent >= 0 {
			acc = modsum[b.Parent]
		}
		b.Y = prelim[i] + acc
		modsum[i] = acc + mod[i]
	}
}

// finish sets X, moves the drawing so its bounds start at (0, 0) and records them.
func (l *Layout) finish() {
	minY, maxY := math.Inf(1), math.Inf(-1)
	for i := range l.Boxes {
		b := &l.Boxes[i]
		b.X = l.Columns[b.Depth].NodeX
		minY = minf(minY, b.Y-b.Top)
		maxY = maxf(maxY, b.Y+b.Bottom)
	}
	for i := range l.Boxes {
		l.Boxes[i].Y -= minY
	}
	l.Bounds = Rect{0, 0, l.Columns[len(l.Columns)-1].End, maxY - minY}
}

// maxf is math.Max, with the same result for zeros, infinities and NaN, in a
// form the compiler inlines (on amd64 math.Max is an assembly call).
func maxf(x, y float64) float64 {
	if x > y {
		return x
	}
	if y > x {
		return y
	}
	return math.Max(x, y) // equal, or a NaN
}

// minf is math.Min in the same way.
func minf(x, y float64) float64 {
	if x < y {
		return x
	}
	if y < x {
		return y
	}
	return math.Min(x, y)
}
