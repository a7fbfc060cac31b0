package engines

import (
	"fmt"
	"slices"
)

// MSTL decomposes a series with several seasonal cycles (daily data:
// weekly and yearly; hourly: daily and weekly) into
//
//	y_t = T_t + Σ_j S^{(j)}_t + R_t,
//
// by the algorithm of Bandara, Hyndman & Bergmeir (2021, Algorithm 1),
// which iterates STL (see STL) over the season lengths:
//
//  1. Sort the season lengths ascending and drop those with 2m > n (STL
//     needs two full seasons; the paper drops seasons longer than half
//     the series); drop duplicates.
//  2. Start with deseasonalised series D = y and every S^{(j)} = 0.
//  3. Repeat Iterations times (default 2): for each season j, shortest
//     first, put its seasonal back (D ← D + S^{(j)}), decompose D by STL
//     with season length m_j and seasonal window w_j, take the new
//     seasonal S^{(j)} from it and remove it again (D ← D − S^{(j)}).
//  4. The trend T is the trend of the last STL fit, and R = D − T.
//
// Seasonal windows: w_j = 7 + 4j for the j-th season length in ascending
// order (11, 15, 19, …; the paper's default, from memory), unless
// given. The other STL settings are STL's defaults for a numeric window
// (seasonal degree 0, trend window from the formula, not robust unless
// Robust is set). With one season length the result is the STL
// decomposition with window w_1 (to rounding: the second iteration refits
// y − S + S).
//
// The series must be complete (no NaN; see SeasonalInterpolate to fill
// gaps first) and at least two seasons of the shortest length long.
//
// Reference:
//   - Bandara, K., Hyndman, R. J., Bergmeir, C. (2021). MSTL: A
//     Seasonal-Trend Decomposition Algorithm for Time Series with
//     Multiple Seasonal Patterns. arXiv:2107.13462.
type MSTLOptions struct {
	// Windows are the seasonal windows (odd ≥ 7), one per season length
	// in the order given to MSTL, 0 for the default; nil: all default.
	Windows []int
	// Iterations of the loop (default 2 when 0).
	Iterations int
	// Robust uses STL's robustness passes in every fit.
	Robust bool
}

// MSTLResult is a decomposition with one seasonal component per season
// length kept.
type MSTLResult struct {
	// Seasons are the season lengths kept, ascending; Windows their
	// seasonal windows.
	Seasons, Windows []int
	// Seasonal[j] is the component of Seasons[j].
	Seasonal [][]float64
	// Trend and Remainder as in Decomposition; Adjusted is y − Σ_j S^{(j)}.
	Trend, Remainder, Adjusted []float64
	// Dropped lists season lengths left out (2m > n) and Warnings says so.
	Dropped  []int
	Warnings []string
}

// MSTL decomposes y with the given season lengths (see MSTLOptions).
func MSTL(y []float64, seasons []int, opt MSTLOptions) (*MSTLResult, error) {
	if len(seasons) == 0 {
		return nil, fmt.Errorf("mstl: no season length")
	}
	if opt.Windows != nil && len(opt.Windows) != len(seasons) {
		return nil, fmt.Errorf("mstl: %d windows for %d season lengths", len(opt.Windows), len(seasons))
	}
	iters := opt.Iterations
	if iters == 0 {
		iters = 2
	}
	if iters < 1 || iters > 100 {
		return nil, fmt.Errorf("mstl: %d iterations; want 1…100", iters)
	}
	type sw struct{ m, w int }
	var list []sw
	for i, m := range seasons {
		if m < 2 {
			return nil, fmt.Errorf("mstl: season length %d; each must be at least 2", m)
		}
		w := 0
		if opt.Windows != nil {
			w = opt.Windows[i]
			if w != 0 && (w < 7 || w%2 == 0) {
				return nil, fmt.Errorf("mstl: seasonal window %d for season %d; want an odd integer ≥ 7", w, m)
			}
		}
		list = append(list, sw{m, w})
	}
	slices.SortStableFunc(list, func(a, b sw) int { return a.m - b.m })
	res := &MSTLResult{}
	n := len(y)
	for _, s := range list {
		if len(res.Seasons) > 0 && res.Seasons[len(res.Seasons)-1] == s.m {
			continue
		}
		if 2*s.m > n {
			res.Dropped = append(res.Dropped, s.m)
			res.Warnings = append(res.Warnings, fmt.Sprintf("mstl: season length %d left out: the series has %d values, fewer than two seasons", s.m, n))
			continue
		}
		res.Seasons = append(res.Seasons, s.m)
		res.Windows = append(res.Windows, s.w)
	}
	if len(res.Seasons) == 0 {
		return nil, fmt.Errorf("mstl: %d values; needs at least two seasons of the shortest length %d: %w", n, list[0].m, ErrTooShort)
	}
	for j := range res.Windows {
		if res.Windows[j] == 0 {
			res.Windows[j] = 7 + 4*(j+1)
		}
	}
	if err := stlCheck(y, res.Seasons[0]); err != nil {
		return nil, fmt.Errorf("mstl: %w", err)
	}
	fits := make([]*STL, len(res.Seasons))
	for j, w := range res.Windows {
		s, err := NewSTL(Options{"seasonal_window": w, "robust": opt.Robust})
		if err != nil {
			return nil, fmt.Errorf("mstl: %w", err)
		}
		fits[j] = s
	}
	res.Seasonal = make([][]float64, len(res.Seasons))
	for j := range res.Seasonal {
		res.Seasonal[j] = make([]float64, n)
	}
	deseas := append([]float64(nil), y...)
	var last *Decomposition
	for it := 0; it < iters; it++ {
		for j, m := range res.Seasons {
			sj := res.Seasonal[j]
			for t := range deseas {
				deseas[t] += sj[t]
			}
			d, err := fits[j].Decompose(deseas, m)
			if err != nil {
				return nil, fmt.Errorf("mstl: season %d: %w", m, err)
			}
			copy(sj, d.Seasonal)
			for t := range deseas {
				deseas[t] -= sj[t]
			}
			last = d
		}
	}
	res.Trend = append([]float64(nil), last.Trend...)
	res.Adjusted = deseas
	res.Remainder = make([]float64, n)
	for t := range deseas {
		res.Remainder[t] = deseas[t] - res.Trend[t]
	}
	return res, nil
}

// SeasonalAhead returns, for each kept season length, its component over
// the h periods after the series, each repeating its last cycle
// (S^{(j)}_{n+i} = S^{(j)}_{n+i−k·m_j}, k the smallest with n+i−k·m_j < n),
// and their sum: the seasonal part of a forecast whose adjusted part comes
// from any method fitted on Adjusted.
func (r *MSTLResult) SeasonalAhead(h int) (each [][]float64, sum []float64) {
	n := len(r.Trend)
	sum = make([]float64, max(h, 0))
	each = make([][]float64, len(r.Seasons))
	for j, m := range r.Seasons {
		each[j] = make([]float64, len(sum))
		for i := range sum {
			v := r.Seasonal[j][n-m+i%m]
			each[j][i] = v
			sum[i] += v
		}
	}
	return each, sum
}
