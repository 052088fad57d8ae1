package ui

import (
	"fmt"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/engine"
)

func init() {
	RegisterMenu(MenuEntry{Menu: "View", Label: "Presentation (F5)", Order: 40, Action: StartPresentation})
}

// HandlePlainKey runs the command bound to a key pressed without modifiers,
// which Fyne does not deliver as a shortcut: F5 starts the presentation. The
// window's own key handler calls it for keys it does not use and gets back
// whether the key was taken.
func HandlePlainKey(h Host, k fyne.KeyName) bool {
	if k == fyne.KeyF5 {
		StartPresentation(h)
		return true
	}
	return false
}

// presentHint is the one line of help shown at the bottom while presenting.
const presentHint = "→ next step   ← back   double-click or Z: zoom into a subtree   X: zoom out   H: working numbers   Esc: leave"

// presentation is the full-screen presenting mode: editing chrome hidden,
// larger type, the roll-back stepped from the ends to the root one column at a
// time, and the recommendation marked at the last step.
type presentation struct {
	h       Host
	win     fyne.Window
	view    *canvas.View
	opts    canvas.Options
	lit     canvas.Theme // the presentation theme, recommended path highlighted
	unlit   canvas.Theme // every branch drawn alike, until the last step
	step    int          // 0 … last: column steps, then the recommendation
	last    int
	zoom    []*engine.Node // subtrees zoomed into, innermost last
	caption *widget.Label

	// The window as it was, restored on leaving.
	content fyne.CanvasObject
	menu    *fyne.MainMenu
	full    bool
	onKey   func(*fyne.KeyEvent)
}

// StartPresentation turns the window into the presentation view.
func StartPresentation(h Host) { startPresentation(h) }

func startPresentation(h Host) *presentation {
	p, r := h.Project(), h.Result()
	if p == nil || p.Root == nil {
		return nil
	}
	if r == nil || !r.Valid() {
		h.ShowError("Presentation", fmt.Errorf("the project has problems to fix before it can be presented"))
		return nil
	}
	win := h.Window()
	ps := &presentation{h: h, win: win, content: win.Content(), menu: win.MainMenu(), full: win.FullScreen(),
		onKey: win.Canvas().OnTypedKey()}
	ps.last = presentDepth(p) + 1
	ps.lit = canvas.PresentationTheme(canvas.LightTheme())
	ps.unlit = unlitTheme(ps.lit)
	ps.opts = canvas.Options{Theme: ps.unlit, RevealColumns: 0}
	ps.view = canvas.NewView()
	ps.view.SetData(p, r)
	ps.view.OnSelect = func(t canvas.Target) {
		ps.opts.Selected = t
		win.Canvas().Unfocus() // keys must keep reaching the presentation, not the view
	}
	ps.view.OnActivate = func(t canvas.Target) {
		ps.opts.Selected = t
		win.Canvas().Unfocus()
		ps.zoomInto(t.Node)
	}
	ps.caption = widget.NewLabel("")
	hint := widget.NewLabel(presentHint)
	hint.Importance = widget.LowImportance
	bar := container.NewBorder(nil, nil, ps.caption, hint)
	win.SetMainMenu(nil)
	win.SetContent(container.NewBorder(nil, bar, nil, nil, ps.view))
	win.SetFullScreen(true)
	win.Canvas().SetOnTypedKey(ps.typedKey)
	win.Canvas().Unfocus()
	ps.apply()
	ps.view.ZoomFit()
	return ps
}

// unlitTheme draws every branch, node and text of t alike, so the recommended
// path does not show before the roll-back reaches the root.
func unlitTheme(t canvas.Theme) canvas.Theme {
	plain := t.Style(canvas.RoleBranch)
	for _, role := range []canvas.Role{canvas.RoleBranchPolicy, canvas.RoleBranchRejected} {
		t.SetStyle(role, plain)
	}
	node := canvas.Style{Stroke: plain.Stroke, Fill: t.Background, Width: plain.Width}
	for _, role := range []canvas.Role{canvas.RoleDecisionNode, canvas.RoleChanceNode, canvas.RoleEndNode, canvas.RoleMutedNode} {
		t.SetStyle(role, node)
	}
	text := t.Style(canvas.RoleLabel)
	for _, role := range []canvas.Role{canvas.RoleProbability, canvas.RoleCash, canvas.RoleValue, canvas.RolePayoff, canvas.RoleMutedText} {
		t.SetStyle(role, text)
	}
	return t
}

// presentDepth is the deepest column shown (collapsed subtrees are not drawn).
func presentDepth(p *engine.Project) int {
	deepest := 0
	engine.Walk(p.Root, func(n *engine.Node, d int) bool {
		deepest = max(deepest, d)
		return !n.Collapsed
	})
	return deepest
}

// apply shows the current step: values revealed from the right up to the
// step's column; at the last step every value and the recommended choices.
func (ps *presentation) apply() {
	r := ps.h.Result()
	ps.opts.RevealColumns = min(ps.step, ps.last-1)
	ps.opts.NoteFunc = nil
	ps.opts.Theme = ps.unlit
	text := fmt.Sprintf("Step %d of %d: values rolled back over %d of %d columns", ps.step+1, ps.last+1, ps.step+1, ps.last)
	if ps.step == ps.last {
		ps.opts.Theme = ps.lit // the recommended path lights up
		ps.opts.NoteFunc = func(n *engine.Node, branch int) []string {
			if n.Kind == engine.Decision && r.OnPolicy(n) && r.Choice(n) == branch {
				return []string{"recommended"}
			}
			return nil
		}
		text = fmt.Sprintf("Recommendation: %s %s", r.ValueWord(), r.Format(r.Value()))
	}
	if ps.opts.HideWorkingNumbers {
		text += " (working numbers hidden)"
	}
	ps.caption.SetText(text)
	ps.view.SetOptions(ps.opts)
}

func (ps *presentation) typedKey(k *fyne.KeyEvent) {
	switch k.Name {
	case fyne.KeyRight, fyne.KeyDown, fyne.KeySpace, fyne.KeyPageDown:
		if ps.step < ps.last {
			ps.step++
			ps.apply()
		}
	case fyne.KeyLeft, fyne.KeyUp, fyne.KeyPageUp, fyne.KeyBackspace:
		if ps.step > 0 {
			ps.step--
			ps.apply()
		}
	case fyne.KeyHome:
		ps.step = 0
		ps.apply()
	case fyne.KeyEnd:
		ps.step = ps.last
		ps.apply()
	case fyne.KeyH:
		ps.opts.HideWorkingNumbers = !ps.opts.HideWorkingNumbers
		ps.apply()
	case fyne.KeyZ, fyne.KeyReturn, fyne.KeyEnter:
		ps.zoomInto(ps.opts.Selected.Node)
	case fyne.KeyX:
		ps.zoomOut()
	case fyne.KeyEscape:
		ps.leave()
	}
}

func (ps *presentation) zoomInto(n *engine.Node) {
	if n == nil || len(n.Branches) == 0 {
		return
	}
	ps.zoom = append(ps.zoom, n)
	ps.view.FocusNode(n)
}

func (ps *presentation) zoomOut() {
	if len(ps.zoom) == 0 {
		return
	}
	ps.zoom = ps.zoom[:len(ps.zoom)-1]
	if len(ps.zoom) == 0 {
		ps.view.ZoomFit()
		return
	}
	ps.view.FocusNode(ps.zoom[len(ps.zoom)-1])
}

// leave puts the window back as it was.
func (ps *presentation) leave() {
	ps.win.SetFullScreen(ps.full)
	ps.win.SetContent(ps.content)
	ps.win.SetMainMenu(ps.menu)
	ps.win.Canvas().SetOnTypedKey(ps.onKey)
}
