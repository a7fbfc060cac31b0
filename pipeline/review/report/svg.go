package report

import (
	"fmt"
	"html"
	"math"
	"strconv"
	"strings"

	"almanac/pipeline/review/look"
)

// Colours: almanac's one palette (package look), shared with explain's
// chart; every series is also told apart by its dash pattern or shape, so
// the charts print legibly in grey.
var (
	colInk      = "#1d1d1d"
	colGrid     = look.Grid.Hex()
	colAxis     = look.Axis.Hex()
	colObserved = look.History.Hex()
	colTrend    = look.Trend.Hex()
	colForecast = look.Forecast.Hex()
	colBand     = look.Band.Hex()
	colPrevious = look.Previous.Hex()
	colBar      = look.History.Tint(0.3).Hex()
	colBarAlt   = look.Forecast.Tint(0.15).Hex()
	colBarHi    = "#9b2d4a"
)

// dashOf writes a dash pattern for stroke-dasharray.
func dashOf(d []float64) string {
	parts := make([]string, len(d))
	for i, v := range d {
		parts[i] = strconv.FormatFloat(v, 'f', -1, 64)
	}
	return strings.Join(parts, " ")
}

// svg builds one inline SVG figure.
type svg struct {
	b      strings.Builder
	w, h   float64
	id     string
	closed bool
}

var esc = html.EscapeString

// newSVG opens an SVG of w×h user units whose accessible name is title and
// whose description is desc.
func newSVG(id, class string, w, h float64, title, desc string) *svg {
	s := &svg{w: w, h: h, id: id}
	fmt.Fprintf(&s.b, `<svg xmlns="http://www.w3.org/2000/svg" class="%s" id="%s" viewBox="0 0 %g %g" width="%g" height="%g" role="img" aria-labelledby="%s-t %s-d" preserveAspectRatio="xMinYMin meet">`,
		class, id, w, h, w, h, id, id)
	fmt.Fprintf(&s.b, `<title id="%s-t">%s</title><desc id="%s-d">%s</desc>`, id, esc(title), id, esc(desc))
	return s
}

func (s *svg) raw(format string, args ...any) { fmt.Fprintf(&s.b, format, args...) }

func (s *svg) line(x1, y1, x2, y2 float64, stroke string, width float64, dash string) {
	d := ""
	if dash != "" {
		d = fmt.Sprintf(` stroke-dasharray="%s"`, dash)
	}
	s.raw(`<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="%s" stroke-width="%g"%s/>`, x1, y1, x2, y2, stroke, width, d)
}

func (s *svg) rect(x, y, w, h float64, fill string, extra string) {
	if w < 0 {
		x, w = x+w, -w
	}
	if h < 0 {
		y, h = y+h, -h
	}
	s.raw(`<rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="%s"%s/>`, x, y, w, h, fill, extra)
}

// text writes a label; anchor is start, middle or end.
func (s *svg) text(x, y float64, anchor, class, label string) {
	c := ""
	if class != "" {
		c = fmt.Sprintf(` class="%s"`, class)
	}
	s.raw(`<text x="%.1f" y="%.1f" text-anchor="%s"%s>%s</text>`, x, y, anchor, c, esc(label))
}

func (s *svg) String() string {
	if !s.closed {
		s.b.WriteString(`</svg>`)
		s.closed = true
	}
	return s.b.String()
}

// pathOf draws the points (x, y) as a path, lifting the pen over NaN.
func pathOf(xs, ys []float64) string {
	var b strings.Builder
	pen := false
	for i := range xs {
		if math.IsNaN(ys[i]) || math.IsNaN(xs[i]) {
			pen = false
			continue
		}
		if pen {
			fmt.Fprintf(&b, "L%.1f %.1f", xs[i], ys[i])
		} else {
			fmt.Fprintf(&b, "M%.1f %.1f", xs[i], ys[i])
			pen = true
		}
	}
	return b.String()
}

// bandOf draws the area between lo and hi as closed shapes, one per run of
// points where both are known.
func bandOf(xs, lo, hi []float64) string {
	var b strings.Builder
	flush := func(idx []int) {
		if len(idx) == 0 {
			return
		}
		for j, i := range idx {
			c := "L"
			if j == 0 {
				c = "M"
			}
			fmt.Fprintf(&b, "%s%.1f %.1f", c, xs[i], hi[i])
		}
		for j := len(idx) - 1; j >= 0; j-- {
			i := idx[j]
			fmt.Fprintf(&b, "L%.1f %.1f", xs[i], lo[i])
		}
		b.WriteString("Z")
	}
	var run []int
	for i := range xs {
		if math.IsNaN(lo[i]) || math.IsNaN(hi[i]) {
			flush(run)
			run = run[:0]
			continue
		}
		run = append(run, i)
	}
	flush(run)
	return b.String()
}

// textWidth estimates the width of a label in a sans-serif face of size px.
func textWidth(s string, px float64) int {
	n := 0.0
	for _, r := range s {
		switch {
		case strings.ContainsRune("il.,:;|!'()[]", r):
			n += 0.3
		case strings.ContainsRune("mwMW", r):
			n += 0.85
		case r >= 'A' && r <= 'Z':
			n += 0.66
		default:
			n += 0.55
		}
	}
	return int(math.Ceil(n * px))
}
