package conformance

import (
	"fmt"
	"io"
	"regexp"
	"sort"
	"strings"
)

// Count is the number of cases of each status.
type Count struct {
	Cases, Pass, Fail, Refused int
}

func (c *Count) add(r Result) {
	c.Cases++
	switch r.Status {
	case Pass:
		c.Pass++
	case Fail:
		c.Fail++
	default:
		c.Refused++
	}
}

// PassRate returns the share of cases that pass, in percent.
func (c Count) PassRate() float64 {
	if c.Cases == 0 {
		return 0
	}
	return 100 * float64(c.Pass) / float64(c.Cases)
}

// Summary counts the results: all cases, the cases whose component tags
// are all Supported, and each component and test tag.
type Summary struct {
	All, Supported Count
	ByTag          map[string]Count // "component:Tag" and "test:Tag"
}

// Summarize counts results.
func Summarize(results []Result) Summary {
	s := Summary{ByTag: map[string]Count{}}
	for _, r := range results {
		s.All.add(r)
		if r.InSupported() {
			s.Supported.add(r)
		}
		for _, t := range r.ComponentTags {
			c := s.ByTag["component:"+t]
			c.add(r)
			s.ByTag["component:"+t] = c
		}
		for _, t := range r.TestTags {
			c := s.ByTag["test:"+t]
			c.add(r)
			s.ByTag["test:"+t] = c
		}
	}
	return s
}

// WriteMarkdown writes the summary as Markdown tables: the totals, then
// one row per tag, and the reasons for refusal among supported cases.
func (s Summary) WriteMarkdown(w io.Writer, results []Result) error {
	var b strings.Builder
	row := func(name string, c Count) {
		fmt.Fprintf(&b, "| %s | %d | %d | %d | %d | %.1f %% |\n", name, c.Cases, c.Pass, c.Refused, c.Fail, c.PassRate())
	}
	b.WriteString("# SBML Test Suite: conformance\n\n" +
		"Semantic time-course cases of the SBML Test Suite 3.3.0 (the Level 3 Version 2 files of\n" +
		"`../shared/reference/sbml-test-suite/cases`), each imported, simulated at its output times\n" +
		"(rtol 1e-10) and compared by its own rule: every value within absolute + relative × |expected|.\n" +
		"Made by `make conformance`; one row per case in `sbml-conformance.csv`.\n\n")
	head := "| | cases | pass | refused | fail | pass rate |\n|---|---:|---:|---:|---:|---:|\n"
	b.WriteString(head)
	row("all cases", s.All)
	row("supported component tags only", s.Supported)
	for _, kind := range []string{"component", "test"} {
		fmt.Fprintf(&b, "\n| %s tag | cases | pass | refused | fail | pass rate |\n|---|---:|---:|---:|---:|---:|\n", kind)
		var tags []string
		for t := range s.ByTag {
			if strings.HasPrefix(t, kind+":") {
				tags = append(tags, t)
			}
		}
		sort.Strings(tags)
		for _, t := range tags {
			row(strings.TrimPrefix(t, kind+":"), s.ByTag[t])
		}
	}
	reasons := map[string]int{}
	for _, r := range results {
		if r.Status == Refused {
			reasons[Reason(r.Message)]++
		}
	}
	if len(reasons) > 0 {
		keys := make([]string, 0, len(reasons))
		for k := range reasons {
			keys = append(keys, k)
		}
		sort.Slice(keys, func(i, j int) bool {
			if reasons[keys[i]] != reasons[keys[j]] {
				return reasons[keys[i]] > reasons[keys[j]]
			}
			return keys[i] < keys[j]
		})
		b.WriteString("\n| first reason for refusal | cases |\n|---|---:|\n")
		for _, k := range keys {
			fmt.Fprintf(&b, "| %s | %d |\n", strings.ReplaceAll(k, "|", "\\|"), reasons[k])
		}
	}
	var notPass []string
	for _, r := range results {
		if r.InSupported() && r.Status != Pass {
			notPass = append(notPass, fmt.Sprintf("- %s (%s): %s", r.Case, r.Status, shorten(r.Message, 200)))
		}
	}
	if len(notPass) > 0 {
		fmt.Fprintf(&b, "\nCases with supported component tags that do not pass:\n\n%s\n", strings.Join(notPass, "\n"))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// Reason returns the first problem of a refusal's message without its
// place and names, so that refusals group by their cause: `event "E":
// events with a delay are not supported` gives "events with a delay are
// not supported".
func Reason(msg string) string {
	if i := strings.Index(msg, "errors:; "); i >= 0 {
		msg = msg[i+len("errors:; "):]
	}
	if i := strings.Index(msg, "; "); i >= 0 {
		msg = msg[:i]
	}
	if i := strings.Index(msg, ".xml:"); i >= 0 {
		msg = msg[i+len(".xml:"):]
		// line:col: what: message
		for k := 0; k < 2; k++ {
			if j := strings.Index(msg, ": "); j >= 0 && k == 0 {
				msg = msg[j+2:]
			}
		}
		if j := strings.Index(msg, ": "); j >= 0 && strings.Count(msg[:j], " ") <= 2 {
			msg = msg[j+2:]
		}
	}
	msg = quoted.ReplaceAllString(msg, "…")
	return shorten(strings.TrimSpace(msg), 140)
}

var quoted = regexp.MustCompile(`"[^"]*"`)

func shorten(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n]) + "…"
}
