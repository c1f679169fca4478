package ui

import (
	"image/color"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/theme"
)

// Theme choices kept in the preferences.
const (
	themeSystem = "system"
	themeLight  = "light"
	themeDark   = "dark"
)

// whirlTheme is Fyne's default theme with a fixed light or dark variant
// and whirlfit's own accent colour.
type whirlTheme struct {
	fyne.Theme
	variant fyne.ThemeVariant
	fixed   bool
}

// accent is whirlfit's primary colour: a teal that reads on light and dark
// backgrounds.
var accent = color.NRGBA{R: 0, G: 150, B: 160, A: 255}

func (t whirlTheme) Color(n fyne.ThemeColorName, v fyne.ThemeVariant) color.Color {
	if t.fixed {
		v = t.variant
	}
	if n == theme.ColorNamePrimary {
		return accent
	}
	return t.Theme.Color(n, v)
}

// applyTheme sets the theme and remembers the choice.
func (w *Window) applyTheme(choice string) {
	t := whirlTheme{Theme: theme.DefaultTheme()}
	switch choice {
	case themeLight:
		t.fixed, t.variant = true, theme.VariantLight
	case themeDark:
		t.fixed, t.variant = true, theme.VariantDark
	default:
		choice = themeSystem
	}
	w.prefs.SetString(prefTheme, choice)
	w.app.Settings().SetTheme(t)
	if w.view != nil {
		w.view.mu.Lock()
		w.view.gen++ // the rpm view's background follows the theme
		w.view.mu.Unlock()
		w.view.Refresh()
	}
}
