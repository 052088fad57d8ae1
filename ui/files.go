package ui

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/storage"
	"fyne.io/fyne/v2/widget"

	"github.com/ramify-app/ramify/assets"
	"github.com/ramify-app/ramify/engine"
)

// Preference keys.
const (
	prefRecent      = "recentFiles"
	prefAutosave    = "autosaveSeconds"
	prefRecoveryFor = "recoveryFor"
	maxRecent       = 8
)

// EmptyProject is what File ▸ New starts from: one decision with two options.
func EmptyProject() *engine.Project {
	p := &engine.Project{Title: "Untitled decision", Objective: engine.Maximize, Decimals: 0,
		Root: &engine.Node{ID: "n1", Kind: engine.End, Name: "Decision"}}
	_, _ = (&engine.ChangeKind{Node: p.Root, Kind: engine.Decision}).Apply(p) // cannot fail: end → decision
	return p
}

// DemoTitle is a demo file name as a title: "chiller-cover.ramify.json" → "Chiller cover".
func DemoTitle(file string) string {
	s := strings.ReplaceAll(strings.TrimSuffix(file, ".ramify.json"), "-", " ")
	return strings.ToUpper(s[:1]) + s[1:]
}

// ---- New, Open, Save ----

func (e *Editor) fileNew() {
	e.confirmDiscard("starting a new project", func() {
		p := EmptyProject()
		AppSettings().ApplyDefaults(p)
		e.setProject(p, "", "Untitled")
	})
}

func (e *Editor) fileNewDemo(d assets.Demo) {
	e.confirmDiscard("opening a demo", func() {
		p, err := engine.Parse(d.Data, d.Name)
		if err != nil {
			e.ShowError("Cannot open the demo", err)
			return
		}
		e.setProject(p, "", DemoTitle(d.Name)+" (demo)")
	})
}

func (e *Editor) fileOpen() {
	e.confirmDiscard("opening another project", func() {
		d := dialog.NewFileOpen(func(rc fyne.URIReadCloser, err error) {
			if err != nil {
				e.ShowError("Open", err)
				return
			}
			if rc == nil {
				return
			}
			path := rc.URI().Path()
			rc.Close()
			_ = e.OpenPath(path)
		}, e.win)
		d.SetFilter(storage.NewExtensionFileFilter([]string{".json"}))
		if e.path != "" {
			if dir, err := storage.ListerForURI(storage.NewFileURI(filepath.Dir(e.path))); err == nil {
				d.SetLocation(dir)
			}
		}
		d.Resize(fyne.NewSize(760, 520))
		d.Show()
	})
}

// OpenPath loads a project file into the window. A broken or newer-version
// file is refused with the loader's message and the open project is kept.
func (e *Editor) OpenPath(path string) error {
	p, err := engine.Load(path)
	if err != nil {
		e.ShowError("Cannot open the project", err)
		return err
	}
	abs, absErr := filepath.Abs(path)
	if absErr == nil {
		path = abs
	}
	e.setProject(p, path, "")
	e.addRecent(path)
	return nil
}

// fileSave saves to the current file, or asks for one. done (optional) learns
// whether the project was saved.
func (e *Editor) fileSave(done func(saved bool)) {
	if e.path == "" {
		e.fileSaveAs(done)
		return
	}
	err := e.SaveTo(e.path)
	if done != nil {
		done(err == nil)
	}
}

// SaveTo writes the project atomically (keeping NAME.bak). A failure is shown
// and returned; the file on disk is then unchanged and the project stays dirty.
func (e *Editor) SaveTo(path string) error {
	data, err := engine.Marshal(e.project)
	if err == nil {
		err = e.writeFile(path, data)
	}
	if err != nil {
		e.ShowError("Save failed, the file on disk is unchanged", err)
		return err
	}
	e.path = path
	e.history.MarkSaved()
	e.dirty = false
	e.removeRecovery()
	e.addRecent(path)
	e.updateTitle()
	return nil
}

// fileSaveAs asks for a folder and file name. It does not use Fyne's save
// dialog because that opens (and so truncates) the chosen file before we write;
// an atomic save must leave the old file whole until the new one is complete.
func (e *Editor) fileSaveAs(done func(saved bool)) {
	dir := filepath.Dir(e.path)
	if e.path == "" {
		dir, _ = os.UserHomeDir()
	}
	name := filepath.Base(e.path)
	if e.path == "" {
		name = safeFileName(e.project.Title) + ".ramify.json"
	}
	folder := widget.NewEntry()
	folder.SetText(dir)
	file := widget.NewEntry()
	file.SetText(name)
	browse := widget.NewButton("Choose folder…", func() {
		fd := dialog.NewFolderOpen(func(l fyne.ListableURI, err error) {
			if err == nil && l != nil {
				folder.SetText(l.Path())
			}
		}, e.win)
		fd.Resize(fyne.NewSize(760, 520))
		fd.Show()
	})
	items := []*widget.FormItem{
		widget.NewFormItem("Folder", container.NewBorder(nil, nil, nil, browse, folder)),
		widget.NewFormItem("File name", file),
	}
	d := dialog.NewForm("Save project as", "Save", "Cancel", items, func(ok bool) {
		if !ok {
			if done != nil {
				done(false)
			}
			return
		}
		fname := strings.TrimSpace(file.Text)
		if !strings.HasSuffix(fname, ".json") {
			fname += ".ramify.json"
		}
		path := filepath.Join(strings.TrimSpace(folder.Text), fname)
		save := func() {
			err := e.SaveTo(path)
			if done != nil {
				done(err == nil)
			}
		}
		if _, err := os.Stat(path); err == nil && path != e.path {
			dialog.ShowConfirm("Replace file?", fmt.Sprintf("%s already exists. Replace it? (The old file is kept as %s.bak.)", path, filepath.Base(path)),
				func(yes bool) {
					if yes {
						save()
					} else if done != nil {
						done(false)
					}
				}, e.win)
			return
		}
		save()
	}, e.win)
	d.Resize(fyne.NewSize(620, 220))
	d.Show()
}

func safeFileName(title string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(strings.TrimSpace(title)) {
		switch {
		case r >= 'a' && r <= 'z', r >= '0' && r <= '9':
			b.WriteRune(r)
		case b.Len() > 0 && !strings.HasSuffix(b.String(), "-"):
			b.WriteByte('-')
		}
	}
	s := strings.Trim(b.String(), "-")
	if s == "" {
		return "project"
	}
	return s
}

// confirmDiscard runs then at once when there are no unsaved changes;
// otherwise it asks to save, discard or cancel.
func (e *Editor) confirmDiscard(what string, then func()) {
	if !e.Dirty() {
		then()
		return
	}
	var d dialog.Dialog
	msg := widget.NewLabel(fmt.Sprintf("The project has unsaved changes. Save them before %s?", what))
	msg.Wrapping = fyne.TextWrapWord
	save := widget.NewButton("Save", func() {
		d.Hide()
		e.fileSave(func(saved bool) {
			if saved {
				then()
			}
		})
	})
	save.Importance = widget.HighImportance
	discard := widget.NewButton("Don't save", func() { d.Hide(); e.removeRecovery(); then() })
	cancel := widget.NewButton("Cancel", func() { d.Hide() })
	d = dialog.NewCustomWithoutButtons("Unsaved changes", container.NewVBox(msg, container.NewHBox(save, discard, cancel)), e.win)
	d.Resize(fyne.NewSize(440, 160))
	d.Show()
}

// ---- recent files ----

// Recent lists recently opened or saved files, newest first.
func (e *Editor) Recent() []string { return e.app.Preferences().StringList(prefRecent) }

func (e *Editor) addRecent(path string) {
	list := []string{path}
	for _, p := range e.Recent() {
		if p != path && len(list) < maxRecent {
			list = append(list, p)
		}
	}
	e.app.Preferences().SetStringList(prefRecent, list)
	e.updateRecentMenu()
}

func (e *Editor) updateRecentMenu() {
	if e.recent == nil {
		return
	}
	var items []*fyne.MenuItem
	for _, p := range e.Recent() {
		p := p
		items = append(items, fyne.NewMenuItem(p, func() {
			e.confirmDiscard("opening another project", func() { _ = e.OpenPath(p) })
		}))
	}
	if len(items) == 0 {
		none := fyne.NewMenuItem("(none yet)", nil)
		none.Disabled = true
		items = append(items, none)
	}
	e.recent.ChildMenu.Items = items
	if e.menu != nil {
		e.menu.Refresh()
	}
}

// ---- autosave and recovery ----

func defaultRecoveryDir(a fyne.App) string {
	if root := a.Storage().RootURI(); root != nil && root.Scheme() == "file" {
		return root.Path()
	}
	dir, err := os.UserCacheDir()
	if err != nil {
		return os.TempDir()
	}
	return filepath.Join(dir, "ramify")
}

// RecoveryPath is the file autosave writes while there are unsaved changes.
func (e *Editor) RecoveryPath() string { return filepath.Join(e.recoveryDir, "recovery.ramify.json") }

// Autosave writes the recovery file now if there are unsaved changes.
func (e *Editor) Autosave() error {
	if !e.Dirty() {
		return nil
	}
	data, err := engine.Marshal(e.project)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(e.recoveryDir, 0o755); err != nil {
		return err
	}
	if err := engine.WriteFileAtomic(e.RecoveryPath(), data, false); err != nil {
		return err
	}
	e.app.Preferences().SetString(prefRecoveryFor, e.path)
	return nil
}

func (e *Editor) removeRecovery() {
	_ = os.Remove(e.RecoveryPath())
	e.app.Preferences().RemoveValue(prefRecoveryFor)
}

// StartAutosave saves a recovery copy every 30 seconds (or the preference
// autosaveSeconds) while there are unsaved changes, until the window closes.
func (e *Editor) StartAutosave() {
	secs := e.app.Preferences().IntWithFallback(prefAutosave, 30)
	if secs <= 0 {
		return
	}
	e.stopAutosave = make(chan struct{})
	stop := e.stopAutosave
	go func() {
		t := time.NewTicker(time.Duration(secs) * time.Second)
		defer t.Stop()
		for {
			select {
			case <-stop:
				return
			case <-t.C:
				fyne.Do(func() {
					if err := e.Autosave(); err != nil {
						e.status.SetText("Autosave failed: " + err.Error())
					}
				})
			}
		}
	}()
	e.win.SetOnClosed(func() { close(stop) })
}

// OfferRecovery asks to restore the recovery file left by a session that did
// not close normally. Restored work is unsaved: it keeps the original path.
func (e *Editor) OfferRecovery() {
	path := e.RecoveryPath()
	info, err := os.Stat(path)
	if err != nil {
		return
	}
	p, err := engine.Load(path)
	if err != nil {
		e.ShowError("The recovery file cannot be read", err)
		return
	}
	orig := e.app.Preferences().String(prefRecoveryFor)
	what := "an unsaved project"
	if orig != "" {
		what = filepath.Base(orig)
	}
	dialog.ShowConfirm("Restore unsaved work?",
		fmt.Sprintf("Ramify did not close normally. Restore the unsaved changes to %s from %s?", what, info.ModTime().Format("2 Jan 15:04")),
		func(yes bool) {
			if !yes {
				e.removeRecovery()
				return
			}
			e.RestoreRecovery(p, orig)
		}, e.win)
}

// RestoreRecovery opens recovered work as unsaved changes to orig.
func (e *Editor) RestoreRecovery(p *engine.Project, orig string) {
	e.setProject(p, orig, "Recovered")
	e.dirty = true
	e.updateTitle()
}
