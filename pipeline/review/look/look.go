// Package look is almanac's one chart style: the colours, strokes and band
// drawing that the HTML report (SVG) and explain's PNG share, so the same
// band looks the same in both.
//
// The style: history in umber ink; the forecast a terracotta line with
// square markers; the narrowest interval level a filled apricot band; every
// wider level its two edges only, dotted in the forecast's colour, so the
// bands read as an inner range and outer fences rather than as stacked
// shades of one colour.
package look

import (
	"fmt"
	"image/color"
)

// RGB is an opaque colour.
type RGB struct{ R, G, B uint8 }

// Hex is the colour as #rrggbb.
func (c RGB) Hex() string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

// RGBA is the colour for image/color users.
func (c RGB) RGBA() color.RGBA { return color.RGBA{R: c.R, G: c.G, B: c.B, A: 0xff} }

// Tint mixes c with Paper: share 0 is c, 1 is Paper.
func (c RGB) Tint(share float64) RGB {
	mix := func(a, b uint8) uint8 { return uint8(float64(a)*(1-share) + float64(b)*share + 0.5) }
	return RGB{mix(c.R, Paper.R), mix(c.G, Paper.G), mix(c.B, Paper.B)}
}

// The palette.
var (
	Paper    = RGB{0xfb, 0xfa, 0xf6} // chart background
	Grid     = RGB{0xe6, 0xe1, 0xd6}
	Axis     = RGB{0x6e, 0x66, 0x5c}
	History  = RGB{0x4a, 0x40, 0x38} // observed values: umber
	Trend    = RGB{0x5f, 0x7f, 0x4e} // the decomposition's trend: moss, dashed
	Forecast = RGB{0xc2, 0x48, 0x1c} // the drawn forecast: terracotta
	Band     = RGB{0xf3, 0xcd, 0xa8} // the narrowest level's fill: apricot
	Previous = RGB{0x8a, 0x84, 0x7c} // the previous run's forecast: stone, dotted
)

// Strokes, in pixels at 96 dpi.
const (
	HistoryWidth  = 1.4
	ForecastWidth = 2.2
	FenceWidth    = 1.3 // the dotted edges of the wider levels
	MarkerSize    = 4.5 // side of the forecast's square markers
)

// TrendDash and PreviousDash are dash patterns (on, off).
var (
	TrendDash    = []float64{7, 4}
	PreviousDash = []float64{2, 3}
)

// FenceDash is the dash pattern of the edges of the rank-th wider level
// (rank 1 is the first level wider than the filled one): longer gaps the
// wider the level.
func FenceDash(rank int) []float64 { return []float64{2, 2 + 1.5*float64(rank)} }

// Inks are the colours of further forecasts drawn beside the main one
// (explain --method …): each draws its bands the same way in its own ink.
var Inks = []RGB{
	Forecast,
	{0x2f, 0x6f, 0x86}, // slate teal
	{0x8a, 0x4f, 0x9e}, // heather
	{0xa8, 0x8a, 0x1f}, // mustard
	{0x3d, 0x7a, 0x3a}, // fern
	{0x9b, 0x2d, 0x4a}, // claret
}

// BandFill is the fill of the narrowest level for a forecast drawn in ink.
func BandFill(ink RGB) RGB {
	if ink == Forecast {
		return Band
	}
	return ink.Tint(0.72)
}
