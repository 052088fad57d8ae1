package ui

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/engine"
)

// outlineView is a temporary stand-in for the canvas package's tree widget:
// an indented list of the visible nodes, one button each. It is replaced by
// the real drawing when the canvas branch is merged.
type outlineView struct {
	box        *fyne.Container
	scroll     *container.Scroll
	onSelect   func(Target)
	onActivate func(Target)
	selected   Target
	rows       map[*engine.Node]*widget.Button
}

func newCanvasView() treeView {
	v := &outlineView{box: container.NewVBox(), rows: map[*engine.Node]*widget.Button{}}
	v.scroll = container.NewScroll(v.box)
	return v
}

func (v *outlineView) Object() fyne.CanvasObject { return v.scroll }

func (v *outlineView) SetData(p *engine.Project, r *engine.Result) {
	v.box.RemoveAll()
	v.rows = map[*engine.Node]*widget.Button{}
	engine.Walk(p.Root, func(n *engine.Node, depth int) bool {
		var b strings.Builder
		b.WriteString(strings.Repeat("    ", depth))
		if parent, i := r.ParentOf(n); parent != nil {
			b.WriteString(engine.BranchTitle(parent, i))
			b.WriteString(" → ")
		}
		fmt.Fprintf(&b, "%s (%s) %s", engine.NodeTitle(n), n.Kind, r.Format(r.DisplayValue(n)))
		if n.Collapsed {
			b.WriteString(" [+]")
		}
		node := n
		btn := widget.NewButton(b.String(), func() {
			t := Target{Node: node, Branch: -1, Field: "node"}
			if v.selected == t && v.onActivate != nil {
				v.onActivate(t)
				return
			}
			v.selected = t
			if v.onSelect != nil {
				v.onSelect(t)
			}
		})
		btn.Alignment = widget.ButtonAlignLeading
		v.rows[n] = btn
		v.box.Add(btn)
		return !n.Collapsed
	})
	v.Select(v.selected)
}

func (v *outlineView) Select(t Target) {
	v.selected = t
	for n, b := range v.rows {
		imp := widget.LowImportance
		if n == t.Node {
			imp = widget.HighImportance
		}
		if b.Importance != imp {
			b.Importance = imp
			b.Refresh()
		}
	}
}

func (v *outlineView) SetOnSelect(f func(Target))   { v.onSelect = f }
func (v *outlineView) SetOnActivate(f func(Target)) { v.onActivate = f }
func (v *outlineView) ZoomIn()                      {}
func (v *outlineView) ZoomOut()                     {}
func (v *outlineView) ZoomFit()                     {}
func (v *outlineView) FocusNode(n *engine.Node) {
	if b := v.rows[n]; b != nil {
		v.scroll.ScrollToOffset(fyne.NewPos(0, b.Position().Y))
	}
}

func (v *outlineView) FieldPosition(t Target) (fyne.Position, fyne.Size, bool) {
	b := v.rows[t.Node]
	if b == nil {
		return fyne.Position{}, fyne.Size{}, false
	}
	return fyne.CurrentApp().Driver().AbsolutePositionForObject(b), b.Size(), true
}
