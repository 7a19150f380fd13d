package editor

import (
	"kinetarium/network"
)

// LawTitle returns the plain-words title of a rate law name, for menus.
func LawTitle(name string) string {
	if law, ok := network.LawNamed(name); ok {
		return law.Title()
	}
	return name
}

// lawFromTitle is the inverse of LawTitle.
func lawFromTitle(title string) string {
	for _, l := range network.Laws {
		if LawTitle(l) == title {
			return l
		}
	}
	return title
}
