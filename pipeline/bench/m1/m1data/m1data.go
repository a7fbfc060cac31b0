// Package m1data reads the M1 competition data (1001 series, Makridakis et
// al. 1982, as distributed openly by the International Institute of
// Forecasters) from its long-form CSV, and scores forecasts against the
// held-out part the way the M competitions do: sMAPE, MASE and the Naive2
// benchmark.
//
// It serves the accuracy benchmark under pipeline/bench/m1 only; nothing in
// almanac itself imports it.
package m1data

import (
	"bufio"
	"compress/gzip"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"
)

// Subsets in the order the tables print them.
var Subsets = []string{"yearly", "quarterly", "monthly"}

// Horizon is the official forecast horizon of each subset.
var Horizon = map[string]int{"yearly": 6, "quarterly": 8, "monthly": 18}

// Period is the season length of each subset.
var Period = map[string]int{"yearly": 1, "quarterly": 4, "monthly": 12}

// Series is one M1 series: its training part (what a forecaster may use)
// and its held-out test part (for scoring only).
type Series struct {
	ID         string
	Subset     string // yearly, quarterly, monthly
	Period     int    // 1, 4 or 12
	StartYear  int
	StartCycle int // 1-based quarter or month of the first value (1 for yearly)
	Train      []float64
	Test       []float64
}

// Read loads every series of the gzipped long-form CSV at path, sorted by
// subset (yearly, quarterly, monthly) and then id.
func Read(path string) ([]*Series, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var r io.Reader = bufio.NewReader(f)
	if strings.HasSuffix(path, ".gz") {
		gz, err := gzip.NewReader(r)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", path, err)
		}
		defer gz.Close()
		r = gz
	}
	cr := csv.NewReader(r)
	head, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	want := []string{"series", "period_type", "part", "t", "value", "frequency", "start_year", "start_cycle"}
	if strings.Join(head, ",") != strings.Join(want, ",") {
		return nil, fmt.Errorf("%s: header %q, want %q", path, head, want)
	}
	bySeries := map[string]*Series{}
	parts := map[string]map[string][]point{}
	line := 1
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		line++
		if err != nil {
			return nil, fmt.Errorf("%s:%d: %w", path, line, err)
		}
		bad := func(field string, err error) error {
			return fmt.Errorf("%s:%d: %s: %w", path, line, field, err)
		}
		t, err := strconv.Atoi(rec[3])
		if err != nil {
			return nil, bad("t", err)
		}
		v, err := strconv.ParseFloat(rec[4], 64)
		if err != nil {
			return nil, bad("value", err)
		}
		freq, err := strconv.Atoi(rec[5])
		if err != nil {
			return nil, bad("frequency", err)
		}
		sy, err := strconv.Atoi(rec[6])
		if err != nil {
			return nil, bad("start_year", err)
		}
		sc, err := strconv.Atoi(rec[7])
		if err != nil {
			return nil, bad("start_cycle", err)
		}
		id := rec[0]
		s := bySeries[id]
		if s == nil {
			if _, ok := Horizon[rec[1]]; !ok {
				return nil, bad("period_type", fmt.Errorf("unknown %q", rec[1]))
			}
			s = &Series{ID: id, Subset: rec[1], Period: freq, StartYear: sy, StartCycle: sc}
			bySeries[id] = s
			parts[id] = map[string][]point{}
		}
		if rec[2] != "train" && rec[2] != "test" {
			return nil, bad("part", fmt.Errorf("unknown %q", rec[2]))
		}
		parts[id][rec[2]] = append(parts[id][rec[2]], point{t, v})
	}
	return assemble(path, bySeries, parts)
}

// SMAPE is the M-competition symmetric MAPE of forecasts f against actuals
// y, in percent: the mean over steps of 200·|y−f| / (|y|+|f|). A step with
// y = f = 0 counts as 0. A NaN forecast makes the result NaN.
func SMAPE(y, f []float64) float64 {
	if len(y) != len(f) {
		panic("m1data: SMAPE: lengths differ")
	}
	s := 0.0
	for i := range y {
		d := math.Abs(y[i]) + math.Abs(f[i])
		if d == 0 {
			continue
		}
		s += 200 * math.Abs(y[i]-f[i]) / d
	}
	return s / float64(len(y))
}

// MASEScale is the in-sample mean absolute seasonal-naive error of train at
// lag m (lag 1 when m < 2): mean over t > m of |x_t − x_{t−m}|.
func MASEScale(train []float64, m int) float64 {
	if m < 1 {
		m = 1
	}
	s, n := 0.0, 0
	for t := m; t < len(train); t++ {
		s += math.Abs(train[t] - train[t-m])
		n++
	}
	if n == 0 {
		return math.NaN()
	}
	return s / float64(n)
}

// MASE is the mean absolute error of f against y divided by
// MASEScale(train, m).
func MASE(y, f, train []float64, m int) float64 {
	if len(y) != len(f) {
		panic("m1data: MASE: lengths differ")
	}
	s := 0.0
	for i := range y {
		s += math.Abs(y[i] - f[i])
	}
	return s / float64(len(y)) / MASEScale(train, m)
}

// z90 is the 95% quantile of the standard normal.
const z90 = 1.6448536269514722

// Seasonal is the 90% autocorrelation test at lag m used for Naive2 in the
// M competitions (and by the Theta method there): with the sample
// autocorrelations r_k of x,
//
//	|r_m| > 1.645 · sqrt((1 + 2·Σ_{k=1}^{m−1} r_k²) / n).
//
// It needs m ≥ 2 and n ≥ 3m (M4 practice; shorter series count as not
// seasonal).
func Seasonal(x []float64, m int) bool {
	n := len(x)
	if m < 2 || n < 3*m {
		return false
	}
	mean := 0.0
	for _, v := range x {
		mean += v
	}
	mean /= float64(n)
	den := 0.0
	for _, v := range x {
		den += (v - mean) * (v - mean)
	}
	if den == 0 {
		return false
	}
	acf := func(k int) float64 {
		s := 0.0
		for t := 0; t+k < n; t++ {
			s += (x[t] - mean) * (x[t+k] - mean)
		}
		return s / den
	}
	sum := 0.0
	for k := 1; k < m; k++ {
		r := acf(k)
		sum += r * r
	}
	limit := z90 * math.Sqrt((1+2*sum)/float64(n))
	return math.Abs(acf(m)) > limit
}

// SeasonalIndices are the classical multiplicative seasonal factors of x
// with season length m, indexed by position t mod m (t = 0 is x[0]): the
// ratios of x to its centred moving average (2×m when m is even), averaged
// by position and normalised to average 1.
func SeasonalIndices(x []float64, m int) []float64 {
	n := len(x)
	sum := make([]float64, m)
	cnt := make([]int, m)
	half := m / 2
	for t := half; t+half < n; t++ {
		var ma float64
		if m%2 == 0 {
			s := 0.5*x[t-half] + 0.5*x[t+half]
			for j := t - half + 1; j < t+half; j++ {
				s += x[j]
			}
			ma = s / float64(m)
		} else {
			s := 0.0
			for j := t - half; j <= t+half; j++ {
				s += x[j]
			}
			ma = s / float64(m)
		}
		sum[t%m] += x[t] / ma
		cnt[t%m]++
	}
	f := make([]float64, m)
	tot := 0.0
	for j := range f {
		f[j] = sum[j] / float64(cnt[j])
		tot += f[j]
	}
	for j := range f {
		f[j] *= float64(m) / tot
	}
	return f
}

// Naive2 forecasts h steps of x: the last value held flat, on data divided
// by the classical multiplicative seasonal factors when Seasonal(x, m)
// holds (then multiplied back by the factor of each forecast position);
// plain naive otherwise. This is the benchmark of the M competitions.
func Naive2(x []float64, m, h int) []float64 {
	n := len(x)
	out := make([]float64, h)
	if !Seasonal(x, m) {
		for i := range out {
			out[i] = x[n-1]
		}
		return out
	}
	f := SeasonalIndices(x, m)
	last := x[n-1] / f[(n-1)%m]
	for i := range out {
		out[i] = last * f[(n+i)%m]
	}
	return out
}

// point is one value of a series at its time index t.
type point struct {
	t     int
	value float64
}

// assemble orders each series' train and test points by time, checks the
// test length, and sorts the series by subset then id.
func assemble(path string, bySeries map[string]*Series, parts map[string]map[string][]point) ([]*Series, error) {
	out := make([]*Series, 0, len(bySeries))
	for id, s := range bySeries {
		for _, part := range []string{"train", "test"} {
			ps := parts[id][part]
			sort.Slice(ps, func(i, j int) bool { return ps[i].t < ps[j].t })
			vals := make([]float64, len(ps))
			for i, p := range ps {
				vals[i] = p.value
			}
			if part == "train" {
				s.Train = vals
			} else {
				s.Test = vals
			}
		}
		if len(s.Test) != Horizon[s.Subset] {
			return nil, fmt.Errorf("%s: series %s has %d test values, want %d", path, id, len(s.Test), Horizon[s.Subset])
		}
		out = append(out, s)
	}
	rank := map[string]int{"yearly": 0, "quarterly": 1, "monthly": 2}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Subset != out[j].Subset {
			return rank[out[i].Subset] < rank[out[j].Subset]
		}
		return out[i].ID < out[j].ID
	})
	return out, nil
}
