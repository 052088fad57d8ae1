package ui

import (
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/app"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/layout"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/assets"
	"github.com/ramify-app/ramify/engine"
)

// Description says in one line what Ramify is for.
const Description = "Lay out options and their uncertain outcomes as a decision tree, " +
	"roll it back to expected values, and show which choice to defend and why."

// appMeta is FyneApp.toml's identity, read once from the copy embedded in assets.
var appMeta, appMetaErr = loadMetadata()

// appIcon is the application icon, a 512×512 PNG drawn for Ramify.
var appIcon = fyne.NewStaticResource("ramify.png", assets.Icon())

func init() {
	// A binary built by `fyne build` or `fyne package` also gets metadata from a
	// generated init in package main, which runs after this one and carries the
	// same values; a plain `go build` gets them only from here.
	if appMetaErr != nil {
		fyne.LogError("Ramify's application metadata", appMetaErr)
	} else {
		app.SetMetadata(appMeta)
	}
	RegisterMenu(MenuEntry{Menu: "Help", Label: "About Ramify", Order: 1000, Action: func(h Host) {
		ShowAbout(h.Window())
	}})
}

func loadMetadata() (fyne.AppMetadata, error) {
	info, err := assets.App()
	if err != nil {
		return fyne.AppMetadata{}, err
	}
	return fyne.AppMetadata{
		ID:      info.ID,
		Name:    info.Name,
		Version: info.Version,
		Build:   info.Build,
		Icon:    appIcon,
		Release: releaseBuild,
	}, nil
}

// NewApp creates the Fyne application with Ramify's ID (so preferences persist),
// name, version and icon, all from FyneApp.toml.
func NewApp() fyne.App {
	a := app.New()
	a.SetIcon(appIcon)
	return a
}

// Metadata is Ramify's identity from FyneApp.toml, as given to app.SetMetadata
// at start-up; it needs no running app, so --version can print it.
func Metadata() (fyne.AppMetadata, error) {
	return appMeta, appMetaErr
}

// runningMetadata is the running app's metadata, which a binary built by the
// Fyne tool may carry from its own generated init; else Metadata.
func runningMetadata() (fyne.AppMetadata, error) {
	if a := fyne.CurrentApp(); a != nil {
		if m := a.Metadata(); m.ID != "" && m.Version != "" {
			return m, nil
		}
	}
	return Metadata()
}

// VersionLine prints a version the way --version and the About dialog show it.
func VersionLine(m fyne.AppMetadata) string {
	return fmt.Sprintf("%s %s (build %d)", m.Name, m.Version, m.Build)
}

// ShowAbout opens the About dialog over w.
func ShowAbout(w fyne.Window) {
	content, err := aboutContent()
	if err != nil {
		dialog.ShowError(fmt.Errorf("About Ramify: %w", err), w)
		return
	}
	d := dialog.NewCustom("About Ramify", "Close", content, w)
	d.Resize(fyne.NewSize(760, 560))
	d.Show()
}

// aboutContent builds the dialog's two tabs: what Ramify is, and the licences
// of the libraries it ships.
func aboutContent() (*container.AppTabs, error) {
	m, err := runningMetadata()
	if err != nil {
		return nil, err
	}
	icon := canvas.NewImageFromResource(appIcon)
	icon.FillMode = canvas.ImageFillContain
	icon.SetMinSize(fyne.NewSquareSize(96))

	title := widget.NewLabelWithStyle(VersionLine(m), fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	title.SizeName = theme.SizeNameSubHeadingText
	desc := widget.NewLabel(Description)
	desc.Wrapping = fyne.TextWrapWord
	id := widget.NewLabel("Application ID " + m.ID)
	id.Importance = widget.LowImportance

	caution := widget.NewLabel(engine.Caution)
	caution.Wrapping = fyne.TextWrapWord
	caution.Importance = widget.WarningImportance
	cautionBox := container.NewBorder(nil, nil, widget.NewIcon(theme.WarningIcon()), nil, caution)

	about := container.NewVBox(
		container.NewBorder(nil, nil, icon, nil, container.NewVBox(title, desc, id)),
		widget.NewSeparator(),
		cautionBox,
	)
	return container.NewAppTabs(
		container.NewTabItem("Ramify", container.NewPadded(about)),
		container.NewTabItem("Licences", licencesView()),
	), nil
}

// licencesView lists the shipped modules; selecting one shows its licence text.
func licencesView() fyne.CanvasObject {
	text := widget.NewLabel("")
	text.TextStyle = fyne.TextStyle{Monospace: true}
	text.Selectable = true
	header := widget.NewLabel("")
	header.Wrapping = fyne.TextWrapWord

	list := widget.NewList(
		func() int { return len(shippedModules) },
		func() fyne.CanvasObject {
			name := widget.NewLabel("module")
			name.Truncation = fyne.TextTruncateEllipsis
			lic := widget.NewLabel("licence")
			lic.SizeName = theme.SizeNameCaptionText
			lic.Importance = widget.LowImportance
			return container.New(layout.NewCustomPaddedVBoxLayout(-2*theme.Padding()), name, lic)
		},
		func(i widget.ListItemID, o fyne.CanvasObject) {
			box := o.(*fyne.Container)
			box.Objects[0].(*widget.Label).SetText(shippedModules[i].Title())
			box.Objects[1].(*widget.Label).SetText(shippedModules[i].Licence)
		},
	)
	scroll := container.NewScroll(text)
	list.OnSelected = func(i widget.ListItemID) {
		m := shippedModules[i]
		header.SetText(fmt.Sprintf("%s — %s (%s)", m.Title(), m.Licence, strings.Join(m.Files, ", ")))
		text.SetText(m.Text())
		scroll.ScrollToTop()
	}
	intro := widget.NewLabel(fmt.Sprintf("Ramify is built with %d libraries, each under its own licence. "+
		"Choose one to read its licence.", len(shippedModules)))
	intro.Wrapping = fyne.TextWrapWord
	split := container.NewHSplit(list, container.NewBorder(header, nil, nil, nil, scroll))
	split.Offset = 0.38
	if len(shippedModules) > 0 {
		list.Select(0)
	}
	return container.NewBorder(intro, nil, nil, nil, split)
}
