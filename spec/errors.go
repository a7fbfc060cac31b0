package spec

import (
	"fmt"
	"strings"
)

// An Error is one problem in a spec, at a position in its file.
type Error struct {
	File string // spec file as given to Load; may be empty
	Line int    // 1-based; 0 when the problem has no position
	Col  int    // 1-based
	Path string // dotted path of the field, e.g. methods[2].trend
	Msg  string
}

func (e *Error) Error() string {
	var b strings.Builder
	if e.File != "" {
		b.WriteString(e.File)
		b.WriteByte(':')
	}
	if e.Line > 0 {
		fmt.Fprintf(&b, "%d:%d:", e.Line, e.Col)
	}
	if b.Len() > 0 {
		b.WriteByte(' ')
	}
	if e.Path != "" {
		b.WriteString(e.Path)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// ErrorList is every problem found in one pass over a spec, in file order.
type ErrorList []*Error

func (l ErrorList) Error() string {
	msgs := make([]string, len(l))
	for i, e := range l {
		msgs[i] = e.Error()
	}
	return strings.Join(msgs, "\n")
}

// Pretty renders the errors with the offending source line and a caret under
// the column, for people reading a terminal.
func (l ErrorList) Pretty(src []byte) string {
	lines := strings.Split(string(src), "\n")
	var b strings.Builder
	for _, e := range l {
		b.WriteString(e.Error())
		b.WriteByte('\n')
		if e.Line > 0 && e.Line <= len(lines) {
			text := strings.TrimRight(lines[e.Line-1], "\r")
			if len(text) > 160 {
				text = text[:160] + "…"
			}
			fmt.Fprintf(&b, "  %4d | %s\n", e.Line, text)
			if e.Col > 0 && e.Col <= len(text)+1 {
				pad := strings.Map(func(r rune) rune {
					if r == '\t' {
						return '\t'
					}
					return ' '
				}, text[:e.Col-1])
				fmt.Fprintf(&b, "       | %s^\n", pad)
			}
		}
	}
	return b.String()
}

// suggest returns the candidate closest to s by edit distance, or "" when
// none is close enough to be a plausible typo.
func suggest(s string, candidates []string) string {
	best, bestD := "", 1<<30
	for _, c := range candidates {
		d := EditDistance(strings.ToLower(s), strings.ToLower(c))
		if d < bestD {
			best, bestD = c, d
		}
	}
	limit := 2
	if len(s) > 6 {
		limit = 3
	}
	if bestD <= limit || (best != "" && (strings.HasPrefix(best, s) || strings.HasPrefix(s, best)) && len(s) >= 3) {
		return best
	}
	return ""
}

// EditDistance is the Levenshtein distance between a and b, by rune. The
// "did you mean" suggestions of the spec and the CLI use it.
func EditDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}

func quoteList(xs []string) string {
	return strings.Join(xs, ", ")
}
