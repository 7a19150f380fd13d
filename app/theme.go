package main

import (
	"image/color"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/theme"
)

// kinTheme is the default light theme with a calmer primary colour and
// slightly tighter spacing, for a dense, tool-like window.
type kinTheme struct{ fyne.Theme }

func newTheme() fyne.Theme { return kinTheme{theme.DefaultTheme()} }

// Color uses a muted teal as the primary colour and the light variant.
func (t kinTheme) Color(n fyne.ThemeColorName, _ fyne.ThemeVariant) color.Color {
	switch n {
	case theme.ColorNamePrimary:
		return color.NRGBA{R: 0x1f, G: 0x6f, B: 0x78, A: 0xff}
	case theme.ColorNameFocus:
		return color.NRGBA{R: 0x1f, G: 0x6f, B: 0x78, A: 0x80}
	case theme.ColorNameSelection:
		return color.NRGBA{R: 0x1f, G: 0x6f, B: 0x78, A: 0x30}
	}
	return t.Theme.Color(n, theme.VariantLight)
}

// Size tightens padding a little.
func (t kinTheme) Size(n fyne.ThemeSizeName) float32 {
	switch n {
	case theme.SizeNamePadding:
		return 3
	case theme.SizeNameInnerPadding:
		return 6
	case theme.SizeNameText:
		return 13
	}
	return t.Theme.Size(n)
}
