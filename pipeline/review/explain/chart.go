package explain

import (
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"sort"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"almanac/pipeline/review/look"
)

// chartDPI is the resolution the chart is drawn at; sizes are in pixels.
const chartDPI = 96

// px converts pixels at chartDPI to the plot's length unit.
func px(v float64) vg.Length { return vg.Length(v) * vg.Inch / chartDPI }

// xOf places a period on the chart's x axis, in seconds since 1970.
func xOf(t time.Time) float64 { return float64(t.Unix()) }

// segments splits points into runs without NaN, as plotter lines refuse NaN.
func segments(xs, ys []float64) []plotter.XYs {
	var out []plotter.XYs
	var cur plotter.XYs
	for i := range xs {
		if math.IsNaN(ys[i]) || math.IsInf(ys[i], 0) {
			if len(cur) > 0 {
				out = append(out, cur)
				cur = nil
			}
			continue
		}
		cur = append(cur, plotter.XY{X: xs[i], Y: ys[i]})
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

// addLine adds the runs of a series as lines of one style, naming the
// first in the legend.
func addLine(p *plot.Plot, name string, xs, ys []float64, ink color.Color, width vg.Length, dashes []vg.Length) error {
	for i, seg := range segments(xs, ys) {
		var l *plotter.Line
		var err error
		if len(seg) == 1 {
			s, err := plotter.NewScatter(seg)
			if err != nil {
				return err
			}
			s.GlyphStyle.Color = ink
			s.GlyphStyle.Radius = width
			s.GlyphStyle.Shape = draw.CircleGlyph{}
			p.Add(s)
			if i == 0 {
				p.Legend.Add(name, s)
			}
			continue
		}
		if l, err = plotter.NewLine(seg); err != nil {
			return err
		}
		l.LineStyle.Color = ink
		l.LineStyle.Width = width
		l.LineStyle.Dashes = dashes
		p.Add(l)
		if i == 0 {
			p.Legend.Add(name, l)
		}
	}
	return nil
}

func buildChart(sd *seriesData, opt Options) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = fmt.Sprintf("%s · %s", sd.runName, keyText(sd.keyCols, sd.key))
	p.X.Tick.Marker = plot.TimeTicks{Format: "2006-01", Time: func(v float64) time.Time { return time.Unix(int64(v), 0).UTC() }}
	p.Y.Label.Text = "value"
	p.Legend.Top = true
	p.Legend.Left = true
	p.BackgroundColor = look.Paper.RGBA()
	p.Add(plotter.NewGrid())

	fcs := sd.forecastsShown(opt)
	if err := addBands(p, sd, fcs); err != nil {
		return nil, err
	}

	xs := make([]float64, len(sd.hist))
	obs := make([]float64, len(sd.hist))
	trend := make([]float64, len(sd.hist))
	for i, h := range sd.hist {
		xs[i], obs[i], trend[i] = xOf(h.period), h.observed, h.trend
	}
	if err := addLine(p, "observed", xs, obs, look.History.RGBA(), px(look.HistoryWidth), nil); err != nil {
		return nil, err
	}
	var trendDash []vg.Length
	for _, d := range look.TrendDash {
		trendDash = append(trendDash, px(d))
	}
	if err := addLine(p, "trend", xs, trend, look.Trend.RGBA(), px(2), trendDash); err != nil {
		return nil, err
	}
	if err := addForecasts(p, sd, xs, fcs); err != nil {
		return nil, err
	}
	// Head room above the data, so the legend (top left) covers none of it.
	// (Plot.Add has widened the axes to the data already.)
	if p.Y.Max > p.Y.Min {
		p.Y.Max += 0.3 * (p.Y.Max - p.Y.Min)
	}
	return p, nil
}

// writeChart draws the chart and writes it as a PNG of the requested size,
// through a temporary file renamed into place.
func writeChart(path string, sd *seriesData, opt Options) error {
	wpx, hpx := opt.PNGWidth, opt.PNGHeight
	if wpx <= 0 {
		wpx = 960
	}
	if hpx <= 0 {
		hpx = 480
	}
	p, err := buildChart(sd, opt)
	if err != nil {
		return err
	}
	c := vgimg.NewWith(
		vgimg.UseWH(vg.Length(wpx)*vg.Inch/chartDPI, vg.Length(hpx)*vg.Inch/chartDPI),
		vgimg.UseDPI(chartDPI),
	)
	p.Draw(draw.New(c))
	tmp, err := os.CreateTemp(filepath.Dir(path), ".explain-*.png")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name())
	if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(tmp); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Chmod(0o644); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), path)
}

// addBands draws the interval bands, before the lines so they lie under
// them, in almanac's look (package look, shared with the report): the
// narrowest level filled, each wider one its two edges, dotted.
func addBands(p *plot.Plot, sd *seriesData, fcs []*methodFC) error {
	asc := make([]int, len(sd.levels))
	for i := range asc {
		asc[i] = i
	}
	sort.SliceStable(asc, func(a, b int) bool { return sd.levels[asc[a]] < sd.levels[asc[b]] })
	for k, f := range fcs {
		ink := look.Inks[k%len(look.Inks)]
		for rank, li := range asc {
			var upper, lower plotter.XYs
			for _, r := range f.rows {
				if math.IsNaN(r.lower[li]) || math.IsNaN(r.upper[li]) {
					continue
				}
				x := xOf(r.period)
				upper = append(upper, plotter.XY{X: x, Y: r.upper[li]})
				lower = append(lower, plotter.XY{X: x, Y: r.lower[li]})
			}
			if len(upper) < 2 {
				continue
			}
			name := fmt.Sprintf("%s %d%%", f.label, sd.levels[li])
			if rank == 0 {
				ring := append(plotter.XYs{}, upper...)
				for i := len(lower) - 1; i >= 0; i-- {
					ring = append(ring, lower[i])
				}
				poly, err := plotter.NewPolygon(ring)
				if err != nil {
					return err
				}
				poly.Color = look.BandFill(ink).RGBA()
				poly.LineStyle.Width = 0
				p.Add(poly)
				p.Legend.Add(name, poly)
				continue
			}
			for e, edge := range []plotter.XYs{upper, lower} {
				l, err := plotter.NewLine(edge)
				if err != nil {
					return err
				}
				l.LineStyle.Color = ink.RGBA()
				l.LineStyle.Width = px(look.FenceWidth)
				for _, d := range look.FenceDash(rank) {
					l.LineStyle.Dashes = append(l.LineStyle.Dashes, px(d))
				}
				p.Add(l)
				if e == 0 {
					p.Legend.Add(name, l)
				}
			}
		}
	}
	return nil
}

// addForecasts draws each forecast shown, joined to the last observed
// value, with square markers on its steps.
func addForecasts(p *plot.Plot, sd *seriesData, xs []float64, fcs []*methodFC) error {
	for k, f := range fcs {
		fx := make([]float64, 0, len(f.rows)+1)
		fy := make([]float64, 0, len(f.rows)+1)
		// Join the forecast to the last observed value so the eye follows on.
		if n := len(sd.hist); n > 0 && !math.IsNaN(sd.hist[n-1].observed) {
			fx = append(fx, xs[n-1])
			fy = append(fy, sd.hist[n-1].observed)
		}
		for _, r := range f.rows {
			fx = append(fx, xOf(r.period))
			fy = append(fy, r.value)
		}
		name := "forecast: " + f.label
		if f.chosen {
			name += " (chosen)"
		}
		ink := look.Inks[k%len(look.Inks)].RGBA()
		if err := addLine(p, name, fx, fy, ink, px(look.ForecastWidth), nil); err != nil {
			return err
		}
		// Square markers on the forecast steps, as in the report.
		var pts plotter.XYs
		for _, r := range f.rows {
			if !math.IsNaN(r.value) {
				pts = append(pts, plotter.XY{X: xOf(r.period), Y: r.value})
			}
		}
		if len(pts) > 0 && len(pts) <= 60 {
			sc, err := plotter.NewScatter(pts)
			if err != nil {
				return err
			}
			sc.GlyphStyle = draw.GlyphStyle{Color: ink, Radius: px(look.MarkerSize / 2), Shape: draw.BoxGlyph{}}
			p.Add(sc)
		}
	}
	return nil
}
