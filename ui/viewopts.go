package ui

import (
	"github.com/ramify-app/ramify/canvas"
)

func init() {
	RegisterMenu(MenuEntry{Menu: "View", Label: "Show certainty equivalents", Order: 30, Action: toggleCertaintyEquivalents})
}

// ViewOptions and SetViewOptions let panels change how the tree is drawn
// (break-even notes, certainty equivalents); the editor implements ViewOptionsHost.
func (e *Editor) ViewOptions() canvas.Options {
	if cv, ok := e.view.(*canvasView); ok {
		return cv.v.Options()
	}
	return canvas.DefaultOptions()
}

func (e *Editor) SetViewOptions(o canvas.Options) {
	if cv, ok := e.view.(*canvasView); ok {
		cv.v.SetOptions(o)
	}
}

// initViewOptions draws with the theme chosen in Preferences, following later
// changes, and shows certainty equivalents whenever a risk attitude is set.
func (e *Editor) initViewOptions() {
	settings := AppSettings()
	apply := func() {
		o := e.ViewOptions()
		if t, ok := canvas.ThemeByName(string(settings.Theme())); ok {
			o.Theme = t
		}
		e.SetViewOptions(o)
	}
	o := e.ViewOptions()
	o.ShowCertaintyEquivalent = true
	e.SetViewOptions(o)
	apply()
	settings.OnChange(apply)
}

func toggleCertaintyEquivalents(h Host) {
	vh, ok := h.(ViewOptionsHost)
	if !ok {
		return
	}
	o := vh.ViewOptions()
	o.ShowCertaintyEquivalent = !o.ShowCertaintyEquivalent
	vh.SetViewOptions(o)
}
