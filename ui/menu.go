package ui

import (
	"os"
	"path/filepath"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/storage"
)

// shortcut binds a key with the platform's shortcut modifier (Ctrl, or
// Cmd on macOS) plus extra modifiers.
func shortcut(k fyne.KeyName, extra fyne.KeyModifier) *desktop.CustomShortcut {
	return &desktop.CustomShortcut{KeyName: k, Modifier: fyne.KeyModifierShortcutDefault | extra}
}

// action is a menu entry that may also have a keyboard shortcut.
type action struct {
	label string
	key   *desktop.CustomShortcut
	do    func()
}

func (w *Window) actions() map[string]action {
	return map[string]action{
		"open":      {"Open…", shortcut(fyne.KeyO, 0), w.showOpen},
		"demo":      {"Open the demo", nil, w.OpenDemo},
		"compare":   {"Add to comparison…", shortcut(fyne.KeyO, fyne.KeyModifierShift), w.compare.showAdd},
		"export":    {"Export…", shortcut(fyne.KeyE, 0), w.showExport},
		"spec":      {"Spectrogram", shortcut(fyne.Key1, 0), func() { w.modeRadio.SetSelected("Spectrogram") }},
		"rpm":       {"rpm over time", shortcut(fyne.Key2, 0), func() { w.modeRadio.SetSelected("rpm") }},
		"zoomin":    {"Zoom in", shortcut(fyne.KeyEqual, 0), func() { w.view.Zoom(1/zoomStep, false) }},
		"zoomout":   {"Zoom out", shortcut(fyne.KeyMinus, 0), func() { w.view.Zoom(zoomStep, false) }},
		"zoomsel":   {"Zoom to selection", shortcut(fyne.KeyEnter, 0), func() { w.view.ZoomToSelection() }},
		"zoomreset": {"Whole recording", shortcut(fyne.Key0, 0), w.view.ResetView},
		"next":      {"Next step", shortcut(fyne.KeyRight, 0), func() { w.stepBy(1) }},
		"prev":      {"Previous step", shortcut(fyne.KeyLeft, 0), func() { w.stepBy(-1) }},
		"undo":      {"Undo marker or interval edit", shortcut(fyne.KeyZ, 0), w.undoMarker},
		"redo":      {"Redo marker or interval edit", shortcut(fyne.KeyZ, fyne.KeyModifierShift), w.redoMarker},
		"span":      {"Analyse the selected span", shortcut(fyne.KeyI, 0), w.analyseSelection},
		"whole":     {"Analyse the whole recording", shortcut(fyne.KeyI, fyne.KeyModifierShift), w.analyseWhole},
		"clear":     {"Remove all markers", nil, w.clearMarkers},
		"note":      {"Safety and first steps", nil, func() { w.showFirstRunNote(false) }},
		"light":     {"Light theme", nil, func() { w.applyTheme(themeLight) }},
		"dark":      {"Dark theme", nil, func() { w.applyTheme(themeDark) }},
		"system":    {"Theme of the system", nil, func() { w.applyTheme(themeSystem) }},
	}
}

func (w *Window) item(name string) *fyne.MenuItem {
	a := w.actions()[name]
	it := fyne.NewMenuItem(a.label, a.do)
	if a.key != nil {
		it.Shortcut = a.key
	}
	return it
}

func (w *Window) mainMenu() *fyne.MainMenu {
	w.recentMenu = fyne.NewMenuItem("Open recent", nil)
	w.refreshRecent()
	file := fyne.NewMenu("File", w.item("open"), w.recentMenu, w.item("demo"), fyne.NewMenuItemSeparator(),
		w.item("compare"), fyne.NewMenuItemSeparator(), w.item("export"))
	theme := fyne.NewMenuItem("Theme", nil)
	theme.ChildMenu = fyne.NewMenu("", w.item("system"), w.item("light"), w.item("dark"))
	view := fyne.NewMenu("View", w.item("spec"), w.item("rpm"), fyne.NewMenuItemSeparator(),
		w.item("zoomin"), w.item("zoomout"), w.item("zoomsel"), w.item("zoomreset"), fyne.NewMenuItemSeparator(), theme)
	steps := fyne.NewMenu("Steps", w.item("next"), w.item("prev"), fyne.NewMenuItemSeparator(),
		w.item("span"), w.item("whole"), fyne.NewMenuItemSeparator(),
		w.item("undo"), w.item("redo"), w.item("clear"))
	help := fyne.NewMenu("Help", w.item("note"))
	return fyne.NewMainMenu(file, view, steps, help)
}

// addShortcuts registers the keyboard shortcuts with the window's canvas.
func (w *Window) addShortcuts() {
	for _, a := range w.actions() {
		if a.key == nil {
			continue
		}
		do := a.do
		w.win.Canvas().AddShortcut(a.key, func(fyne.Shortcut) { do() })
	}
}

// refreshRecent rebuilds the recent-files submenu.
func (w *Window) refreshRecent() {
	if w.recentMenu == nil {
		return
	}
	var items []*fyne.MenuItem
	for _, p := range w.prefs.StringList(prefRecent) {
		p := p
		items = append(items, fyne.NewMenuItem(p, func() { w.Open([]string{p}) }))
	}
	if len(items) == 0 {
		it := fyne.NewMenuItem("(none yet)", nil)
		it.Disabled = true
		items = append(items, it)
	}
	w.recentMenu.ChildMenu = fyne.NewMenu("", items...)
	if m := w.win.MainMenu(); m != nil {
		m.Refresh()
	}
}

// startFolder is where file dialogs open: the last folder used.
func (w *Window) startFolder() fyne.ListableURI {
	dir := w.prefs.String(prefLastFolder)
	if dir == "" {
		return nil
	}
	if fi, err := os.Stat(dir); err != nil || !fi.IsDir() {
		return nil
	}
	l, err := storage.ListerForURI(storage.NewFileURI(dir))
	if err != nil {
		return nil
	}
	return l
}

func (w *Window) showOpen() {
	d := dialog.NewFileOpen(func(r fyne.URIReadCloser, err error) {
		if err != nil {
			dialog.ShowError(err, w.win)
			return
		}
		if r == nil {
			return
		}
		path := r.URI().Path()
		r.Close()
		w.Open([]string{path})
	}, w.win)
	d.SetFilter(storage.NewExtensionFileFilter(audioExts))
	if l := w.startFolder(); l != nil {
		d.SetLocation(l)
	}
	d.Resize(fyne.NewSize(760, 520))
	d.Show()
}

// rememberFolder stores the folder of a chosen file as the last folder.
func (w *Window) rememberFolder(path string) {
	w.prefs.SetString(prefLastFolder, filepath.Dir(path))
}
