package main

import (
	"fmt"
	"io"

	"fyne.io/fyne/v2"

	"github.com/ramify-app/ramify/assets"
	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/ui"
)

// openWindow opens the editor on FILE, or on the first demo project.
func openWindow(args []string, stderr io.Writer) int {
	a := ui.NewApp() // ID, version and icon from FyneApp.toml
	w := a.NewWindow("Ramify")
	var (
		p          *engine.Project
		path, name string
		openErr    error
	)
	if len(args) == 1 {
		if p, openErr = engine.Load(args[0]); openErr == nil {
			path = args[0]
		} else {
			fmt.Fprintln(stderr, "ramify:", openErr)
		}
	}
	if p == nil {
		p, name = ui.EmptyProject(), "Untitled"
		if demos := assets.Demos(); len(demos) > 0 {
			if dp, err := engine.Parse(demos[0].Data, demos[0].Name); err == nil {
				p, name = dp, ui.DemoTitle(demos[0].Name)+" (demo)"
			}
		}
	}
	e := ui.NewEditor(a, w, p, "", name)
	if path != "" {
		_ = e.OpenPath(path) // records it in recent files with its absolute path
	}
	w.Resize(fyne.NewSize(1280, 800))
	if openErr != nil {
		e.ShowError("Cannot open "+args[0], openErr)
	} else {
		e.OfferRecovery()
	}
	e.StartAutosave()
	w.ShowAndRun()
	return exitOK
}
