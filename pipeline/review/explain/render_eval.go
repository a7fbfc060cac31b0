package explain

import (
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
)

func renderBacktest(w io.Writer, sd *seriesData, opt Options) {
	if !sd.hasBacktest() {
		section(w, "backtest")
		fmt.Fprintln(w, "  none: the spec has no backtest")
		return
	}
	bt := sd.eval.Backtest
	section(w, fmt.Sprintf("backtest · %d fold(s) of %d %s, %s window · MASE per fold", bt.Folds, bt.Horizon, unit(sd.freq), bt.Window))
	if len(sd.folds) == 0 {
		fmt.Fprintln(w, "  no fold fit this series' history")
		return
	}
	other := sd.metric != "" && sd.metric != "mase"
	g := &grid{left: 1, lastLeft: true}
	head := []string{"method"}
	origins := []string{"origin"}
	train := []string{"trained on"}
	// Scored periods, shown only when some test window has periods that
	// were not scored (closed, or missing actuals).
	scored := []string{"scored"}
	unscored := false
	for _, f := range sd.folds {
		head = append(head, fmt.Sprintf("fold %d", f.fold))
		origins = append(origins, f.origin.Format(dateFmt))
		train = append(train, strconv.Itoa(f.trainPeriods))
		scored = append(scored, fmt.Sprintf("%d of %d", f.scored, f.testPer))
		unscored = unscored || (f.scored >= 0 && f.scored < f.testPer)
	}
	head = append(head, "mean")
	origins = append(origins, "")
	train = append(train, "")
	scored = append(scored, "")
	if other {
		head = append(head, "mean "+sd.metric)
		origins = append(origins, "")
		train = append(train, "")
		scored = append(scored, "")
	}
	head = append(head, "")
	g.add(head...)
	g.add(origins...)
	g.add(train...)
	if unscored {
		g.add(scored...)
	}
	for _, label := range sd.accOrder {
		if !shown(opt, label) {
			continue
		}
		row := []string{label}
		var mases, metrics []float64
		for _, f := range sd.folds {
			c, ok := sd.acc[label][f.fold]
			switch {
			case !ok:
				row = append(row, "")
			case c.status == "failed":
				row = append(row, "failed")
			default:
				row = append(row, f3(c.mase))
				mases = append(mases, c.mase)
				metrics = append(metrics, c.metric)
			}
		}
		mean, k := meanOf(mases)
		row = append(row, f3(mean))
		if other {
			mm, _ := meanOf(metrics)
			row = append(row, f3(mm))
		}
		var note []string
		if sd.choice != nil && sd.choice.hasChosen && sd.choice.chosen == label {
			note = append(note, "◀ chosen")
		}
		if sd.choice != nil && sd.choice.hasRunnerUp && sd.choice.runnerUp == label {
			note = append(note, "◁ runner-up")
		}
		if k < len(sd.folds) {
			note = append(note, fmt.Sprintf("(mean of %d fold(s))", k))
		}
		if sd.choice != nil && sd.choice.hasClass && sd.eval.Selection != nil {
			if route, ok := sd.eval.Selection.Route[sd.choice.demandClass]; ok && !contains(route, label) {
				note = append(note, "not eligible for "+sd.choice.demandClass+" demand")
			}
		}
		row = append(row, strings.Join(note, " "))
		g.add(row...)
	}
	g.write(w, "  ")
}

func renderChoice(w io.Writer, sd *seriesData) {
	if !sd.hasBacktest() {
		return
	}
	section(w, "choice")
	c := sd.choice
	if c == nil {
		fmt.Fprintln(w, "  not in choices.parquet")
		return
	}
	g := &grid{left: 2}
	if c.hasChosen {
		s := c.chosen
		if !math.IsNaN(c.score) {
			s += fmt.Sprintf(" (mean %s %s over %d fold(s))", c.metric, f3(c.score), c.folds)
		} else {
			s += " (no score: fallback)"
		}
		g.add("chosen", s)
	} else {
		g.add("chosen", "none (no usable history)")
	}
	if c.hasRunnerUp {
		g.add("runner-up", fmt.Sprintf("%s (%s)", c.runnerUp, f3(c.runnerUpScore)))
	} else {
		g.add("runner-up", "none")
	}
	if c.hasClass {
		g.add("demand class", fmt.Sprintf("%s (ADI %s, CV² %s)", c.demandClass, f3(c.adi), f3(c.cv2)))
	} else {
		g.add("demand class", "not classified (negative values)")
	}
	g.add("reason", c.reason)
	g.write(w, "  ")
}

func renderModels(w io.Writer, sd *seriesData, opt Options) {
	section(w, "models fitted")
	g := &grid{left: 2}
	for _, label := range sd.labels {
		if !shown(opt, label) {
			continue
		}
		f := sd.fc(label)
		if f == nil {
			g.add(label, "no forecast for this series (see problems)")
		} else {
			g.add(label, f.model)
		}
		if ps := opt.Params[label]; len(ps) > 0 {
			names := make([]string, 0, len(ps))
			for n := range ps {
				names = append(names, n)
			}
			sort.Strings(names)
			parts := make([]string, len(names))
			for i, n := range names {
				parts[i] = n + "=" + fp(ps[n])
			}
			g.add("", "parameters: "+strings.Join(parts, " "))
		}
	}
	g.write(w, "  ")
}

func renderForecasts(w io.Writer, sd *seriesData, fcs []*methodFC) {
	if len(fcs) == 0 {
		section(w, "forecast")
		fmt.Fprintln(w, "  none for this series (see problems)")
		return
	}
	// Lower bounds widest first, upper bounds narrowest first, so the
	// columns read from low to high.
	order := make([]int, len(sd.levels))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return sd.levels[order[a]] > sd.levels[order[b]] })
	for _, f := range fcs {
		sources := map[string]bool{}
		for _, r := range f.rows {
			if r.source != "" {
				sources[r.source] = true
			}
		}
		title := "forecast · " + f.label
		if f.chosen {
			title += " (chosen)"
		}
		withBounds := len(sources) > 0 && len(sd.levels) > 0
		var srcList []string
		for s := range sources {
			srcList = append(srcList, s)
		}
		sort.Strings(srcList)
		if withBounds && len(srcList) == 1 {
			title += " · intervals: " + srcList[0]
		} else if !withBounds {
			title += " · no intervals"
		}
		section(w, title)
		g := &grid{left: 0}
		head := []string{"step", "period"}
		if withBounds {
			for _, li := range order {
				head = append(head, fmt.Sprintf("lower_%d", sd.levels[li]))
			}
		}
		head = append(head, "value")
		if withBounds {
			for k := len(order) - 1; k >= 0; k-- {
				head = append(head, fmt.Sprintf("upper_%d", sd.levels[order[k]]))
			}
			if len(srcList) > 1 {
				head = append(head, "source")
			}
		}
		g.add(head...)
		for _, r := range f.rows {
			row := []string{strconv.Itoa(r.step), r.period.Format(dateFmt)}
			if withBounds {
				for _, li := range order {
					row = append(row, fv(r.lower[li]))
				}
			}
			row = append(row, fv(r.value))
			if withBounds {
				for k := len(order) - 1; k >= 0; k-- {
					row = append(row, fv(r.upper[order[k]]))
				}
				if len(srcList) > 1 {
					s := r.source
					if s == "" {
						s = null
					}
					row = append(row, s)
				}
			}
			g.add(row...)
		}
		g.write(w, "  ")
	}
}
