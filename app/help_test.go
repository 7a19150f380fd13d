package main

import (
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"
)

// The guide's formulas render as written: Markdown must not take the
// brackets of k·[reactants] for a link, nor break its spacing.
func TestGuideFormulasRenderAsWritten(t *testing.T) {
	test.NewTempApp(t)
	rt := widget.NewRichTextFromMarkdown(guide)
	// The text as drawn: the leaves of the segment tree, one after the
	// other, each block on a line of its own.
	var b strings.Builder
	var walk func(s widget.RichTextSegment)
	walk = func(s widget.RichTextSegment) {
		switch s := s.(type) {
		case *widget.ListSegment:
			for _, c := range s.Items {
				walk(c)
			}
		case *widget.ParagraphSegment:
			for _, c := range s.Texts {
				walk(c)
			}
			b.WriteString("\n")
		default:
			b.WriteString(s.Textual())
			if !s.Inline() {
				b.WriteString("\n")
			}
		}
	}
	for _, s := range rt.Segments {
		walk(s)
	}
	text := b.String()
	for _, want := range []string{"k·[reactants] − k_reverse·[products]", "Vmax·S/(Km + S)", "kcat·E·S/(Km + S)"} {
		if !strings.Contains(text, want) {
			t.Errorf("the guide renders no %q", want)
		}
	}
	if !strings.Contains(text, "research aids, not clinical or dosing advice") {
		t.Error("the guide lost its caution")
	}
}
