package engines

// Accuracy metrics for backtests.
//
// Conventions shared by every function in this file:
//
//   - y holds the actuals and f the forecasts, period by period; the error
//     is e_t = y_t − f_t (actual minus forecast).
//   - A pair in which either side is NaN is skipped. The returned count n is
//     the number of pairs used, so len(y) − n pairs were skipped (MAPE also
//     returns the pairs it excluded for a zero actual). ±Inf is not missing:
//     it takes part and yields an infinite or NaN result.
//   - With no pair left (empty input, or every pair missing) the value is
//     NaN and n is 0; that is not an error.
//   - Slices of different lengths, a season length below 1, and an α or τ
//     outside (0, 1) are programmer errors and panic.
//   - No function modifies its arguments.

import (
	"errors"
	"fmt"
	"math"
)

// ErrZeroScale means the scale of a scaled metric (MASE, RMSSE) is zero:
// the training series does not change at the lag the scale is taken at
// (for lag 1, a constant series). The metric is then undefined and returned
// as NaN.
var ErrZeroScale = errors.New("scale is zero")

// Scores holds the point-forecast metrics of one set of forecasts, for
// example one method on one backtest fold (a row of an accuracy table).
// PointScores computes them all in one pass; each field is defined as in
// the function of the same name.
type Scores struct {
	// N is the number of (actual, forecast) pairs used: those with neither
	// side NaN. Skipped is the number of pairs left out for a NaN.
	N, Skipped int

	MAE  float64 // mean |e|
	RMSE float64 // sqrt(mean e²)

	// MAPE is in percent, over the pairs with y ≠ 0; MAPEZeros counts the
	// pairs excluded for y = 0 (they are included in N).
	MAPE      float64
	MAPEZeros int

	SMAPE float64 // M4 sMAPE, in percent
	MASE  float64 // MAE / MASEScale; NaN when the scale is zero or undefined
	RMSSE float64 // M5 RMSSE (lag-1 scale); NaN when the scale is zero or undefined
	WAPE  float64 // Σ|e| / Σ|y|, a ratio
	Bias  float64 // mean(f − y); positive means over-forecast

	// MASEScale is mean |x_t − x_{t−lag}| of the training series (lag = the
	// season length, or 1; see MASE); RMSSEScale is mean (x_t − x_{t−1})²
	// (see RMSSE). NaN when the training series has no usable pair.
	MASEScale, RMSSEScale float64
}

// PointScores returns every point metric of the forecasts f against the
// actuals y, with the MASE and RMSSE scales taken from the training series
// train (the data the forecasts were fitted on) and season length m ≥ 1.
// It reads y and f once and train once.
//
// The Scores are always filled in. The error is nil unless a scale could
// not be used; it then wraps ErrZeroScale or ErrTooShort (errors.Join of
// both metrics' errors when both fail), and the failing MASE and/or RMSSE
// is NaN while every other field is still valid.
//
// See the functions named after each field for the definitions and
// references.
func PointScores(y, f, train []float64, m int) (Scores, error) {
	metricsSameLen("PointScores", "forecasts", y, f)
	lag := metricsScaleLag("PointScores", len(train), m)

	var s Scores
	var sumAbs, sumSq, sumPct, sumSym, sumAct, sumOver float64
	for i, yi := range y {
		fi := f[i]
		if yi != yi || fi != fi {
			s.Skipped++
			continue
		}
		e := yi - fi
		ae := math.Abs(e)
		sumAbs += ae
		sumSq += e * e
		sumSym += smapeTerm(yi, fi, ae)
		sumAct += math.Abs(yi)
		sumOver += fi - yi
		if yi == 0 {
			s.MAPEZeros++
		} else {
			sumPct += ae / math.Abs(yi)
		}
		s.N++
	}
	s.MAE = metricsMean(sumAbs, s.N)
	s.RMSE = math.Sqrt(metricsMean(sumSq, s.N))
	s.MAPE = 100 * metricsMean(sumPct, s.N-s.MAPEZeros)
	s.SMAPE = 100 * metricsMean(sumSym, s.N)
	s.WAPE = metricsRatio(sumAbs, sumAct, s.N)
	s.Bias = metricsMean(sumOver, s.N)

	absMean, sqMean, nAbs, nSq := naiveScales(train, lag, 1)
	s.MASEScale, s.RMSSEScale = absMean, sqMean
	errMASE := metricsScaleErr("mase", absMean, nAbs, lag)
	errRMSSE := metricsScaleErr("rmsse", sqMean, nSq, 1)
	s.MASE, s.RMSSE = math.NaN(), math.NaN()
	if errMASE == nil {
		s.MASE = s.MAE / absMean
	}
	if errRMSSE == nil {
		s.RMSSE = math.Sqrt(metricsMean(sumSq, s.N) / sqMean)
	}
	return s, errors.Join(errMASE, errRMSSE)
}

// MAE returns the mean absolute error
//
//	MAE = mean_t |y_t − f_t|
//
// and the number of pairs used (pairs with a NaN are skipped).
//
// References:
//   - R. J. Hyndman and A. B. Koehler (2006), Another look at measures of
//     forecast accuracy, International Journal of Forecasting 22(4),
//     679–688 (scale-dependent measures).
func MAE(y, f []float64) (mae float64, n int) {
	metricsSameLen("MAE", "forecasts", y, f)
	var sum float64
	for i, yi := range y {
		if fi := f[i]; yi == yi && fi == fi {
			sum += math.Abs(yi - fi)
			n++
		}
	}
	return metricsMean(sum, n), n
}

// RMSE returns the root mean squared error
//
//	RMSE = sqrt( mean_t (y_t − f_t)² )
//
// and the number of pairs used (pairs with a NaN are skipped).
//
// References:
//   - R. J. Hyndman and A. B. Koehler (2006), Another look at measures of
//     forecast accuracy, International Journal of Forecasting 22(4),
//     679–688 (scale-dependent measures).
func RMSE(y, f []float64) (rmse float64, n int) {
	metricsSameLen("RMSE", "forecasts", y, f)
	mse, n := metricsMSE(y, f)
	return math.Sqrt(mse), n
}

// metricsMSE is mean (y − f)² over the pairs without a NaN, and their count.
func metricsMSE(y, f []float64) (mse float64, n int) {
	var sum float64
	for i, yi := range y {
		if fi := f[i]; yi == yi && fi == fi {
			e := yi - fi
			sum += e * e
			n++
		}
	}
	return metricsMean(sum, n), n
}

// MAPE returns the mean absolute percentage error, in percent,
//
//	MAPE = 100 · mean_t |y_t − f_t| / |y_t|    over the t with y_t ≠ 0
//
// Periods with a zero actual, where the percentage error is undefined
// (Hyndman and Koehler 2006), are excluded from the mean and
// counted in zeros; n is the number of pairs averaged. Pairs with a NaN are
// skipped and in neither count, so len(y) − n − zeros pairs were skipped.
// With every observed actual zero the MAPE is NaN.
//
// References:
//   - R. J. Hyndman and A. B. Koehler (2006), Another look at measures of
//     forecast accuracy, International Journal of Forecasting 22(4),
//     679–688 (measures based on percentage errors).
func MAPE(y, f []float64) (mape float64, n, zeros int) {
	metricsSameLen("MAPE", "forecasts", y, f)
	var sum float64
	for i, yi := range y {
		fi := f[i]
		switch {
		case yi != yi || fi != fi:
		case yi == 0:
			zeros++
		default:
			sum += math.Abs(yi-fi) / math.Abs(yi)
			n++
		}
	}
	return 100 * metricsMean(sum, n), n, zeros
}

// SMAPE returns the symmetric mean absolute percentage error in the form
// used to rank the M4 competition, in percent (0 to 200):
//
//	sMAPE = 100 · mean_t 2|y_t − f_t| / (|y_t| + |f_t|)
//
// A period with y_t = f_t = 0 contributes 0 (a perfect forecast), not the
// undefined 0/0. Every other period is used, including those with a zero
// actual (they contribute 200). n is the number of pairs used (pairs with
// a NaN are skipped).
//
// References:
//   - S. Makridakis, E. Spiliotis and V. Assimakopoulos (2020), The M4
//     Competition: 100,000 time series and 61 forecasting methods,
//     International Journal of Forecasting 36(1), 54–74 (the sMAPE used
//     to rank the point forecasts).
func SMAPE(y, f []float64) (smape float64, n int) {
	metricsSameLen("SMAPE", "forecasts", y, f)
	var sum float64
	for i, yi := range y {
		if fi := f[i]; yi == yi && fi == fi {
			sum += smapeTerm(yi, fi, math.Abs(yi-fi))
			n++
		}
	}
	return 100 * metricsMean(sum, n), n
}

// smapeTerm is 2|e| / (|y| + |f|), with 0/0 taken as 0.
func smapeTerm(y, f, absErr float64) float64 {
	d := math.Abs(y) + math.Abs(f)
	if d == 0 {
		return 0
	}
	return 2 * absErr / d
}

// MASE returns the mean absolute scaled error of the forecasts f against
// the actuals y: their MAE divided by the in-sample MAE of the seasonal
// naive method on the training series x = train (x_1 … x_N, the data the
// forecasts were fitted on), for season length m ≥ 1:
//
//	MASE  = mean_t |y_t − f_t| / scale
//	scale = mean_{s = lag+1 … N} |x_s − x_{s−lag}|
//
// with lag = m, or lag = 1 (the non-seasonal naive method) when m = 1 or
// when the training series is too short for a seasonal difference
// (N < m + 1). Differences with a NaN on either side are left out of the
// scale.
//
// n is the number of (y, f) pairs used (pairs with a NaN are skipped). If
// the training series has no two observed values lag apart, the MASE is
// NaN and the error wraps ErrTooShort; if the scale is zero (the training
// series never changes at that lag: for lag 1, a constant series) it is
// NaN and the error wraps ErrZeroScale. The error concerns only the scale.
//
// References:
//   - R. J. Hyndman and A. B. Koehler (2006), Another look at measures of
//     forecast accuracy, International Journal of Forecasting 22(4),
//     679–688 (scaled errors; the one-step naive scale).
//   - S. Makridakis, E. Spiliotis and V. Assimakopoulos (2020), The M4
//     Competition: 100,000 time series and 61 forecasting methods,
//     International Journal of Forecasting 36(1), 54–74 (the seasonal
//     scale with lag m).
func MASE(y, f, train []float64, m int) (mase float64, n int, err error) {
	metricsSameLen("MASE", "forecasts", y, f)
	lag := metricsScaleLag("MASE", len(train), m)
	scale, _, pairs, _ := naiveScales(train, lag, 0)
	mae, n := MAE(y, f)
	if err := metricsScaleErr("mase", scale, pairs, lag); err != nil {
		return math.NaN(), n, err
	}
	return mae / scale, n, nil
}

// RMSSE returns the root mean squared scaled error in the form used to
// rank the M5 accuracy competition, with the one-step naive scale of the
// training series x = train (x_1 … x_N):
//
//	RMSSE = sqrt( mean_t (y_t − f_t)² / scale )
//	scale = mean_{s = 2 … N} (x_s − x_{s−1})²
//
// Differences with a NaN on either side are left out of the scale. The M5
// computed the scale only from the first non-zero value of each series on;
// a caller who wants that passes train with its leading zeros cut off.
// SeasonalRMSSE takes the scale at a seasonal lag instead.
//
// n and the error are as for MASE: NaN and ErrTooShort with fewer than two
// consecutive observed training values, NaN and ErrZeroScale for a
// constant training series.
//
// References:
//   - S. Makridakis, E. Spiliotis and V. Assimakopoulos (2022), M5 accuracy
//     competition: Results, findings, and conclusions, International
//     Journal of Forecasting 38(4), 1346–1364 (the RMSSE behind the
//     competition's weighted WRMSSE).
func RMSSE(y, f, train []float64) (rmsse float64, n int, err error) {
	metricsSameLen("RMSSE", "forecasts", y, f)
	return rmsseAt("rmsse", y, f, train, 1)
}

// SeasonalRMSSE is RMSSE with the scale taken at lag m, the in-sample mean
// squared error of the seasonal naive method:
//
//	scale = mean_{s = lag+1 … N} (x_s − x_{s−lag})²
//
// with lag chosen as for MASE (m, or 1 when m = 1 or N < m + 1). With
// m = 1 it equals RMSSE. This variant is not the M5 definition.
func SeasonalRMSSE(y, f, train []float64, m int) (rmsse float64, n int, err error) {
	metricsSameLen("SeasonalRMSSE", "forecasts", y, f)
	return rmsseAt("rmsse", y, f, train, metricsScaleLag("SeasonalRMSSE", len(train), m))
}

// rmsseAt is RMSSE with the scale at the given lag.
func rmsseAt(what string, y, f, train []float64, lag int) (float64, int, error) {
	_, scale, _, pairs := naiveScales(train, 0, lag)
	mse, n := metricsMSE(y, f)
	if err := metricsScaleErr(what, scale, pairs, lag); err != nil {
		return math.NaN(), n, err
	}
	return math.Sqrt(mse / scale), n, nil
}

// WAPE returns the weighted absolute percentage error as a ratio (not in
// percent), the total absolute error over the total absolute actual:
//
//	WAPE = Σ_t |y_t − f_t| / Σ_t |y_t|
//
// It equals MAE / mean|y| over the pairs used (the MAD/mean ratio). It is
// +Inf when every used actual is zero and some error is not, and NaN when
// both sums are zero. n is the number of pairs used (pairs with a NaN are
// skipped).
//
// References:
//   - S. Kolassa and W. Schütz (2007), Advantages of the MAD/MEAN ratio
//     over the MAPE, Foresight 6, 40–43.
func WAPE(y, f []float64) (wape float64, n int) {
	metricsSameLen("WAPE", "forecasts", y, f)
	var sumAbs, sumAct float64
	for i, yi := range y {
		if fi := f[i]; yi == yi && fi == fi {
			sumAbs += math.Abs(yi - fi)
			sumAct += math.Abs(yi)
			n++
		}
	}
	return metricsRatio(sumAbs, sumAct, n), n
}

// Bias returns the mean forecast minus actual,
//
//	Bias = mean_t (f_t − y_t) = −mean_t e_t
//
// so a positive bias means the forecasts were too high on average
// (over-forecast). Note the sign: it is the negative of the mean error
// mean(y − f). n is the number of pairs used (pairs with a NaN are
// skipped).
//
// References:
//   - R. J. Hyndman and G. Athanasopoulos (2021), Forecasting: Principles
//     and Practice, 3rd ed., OTexts, section 5.8 (the forecast error
//     e = y − ŷ, whose mean is the negative of this bias).
func Bias(y, f []float64) (bias float64, n int) {
	metricsSameLen("Bias", "forecasts", y, f)
	var sum float64
	for i, yi := range y {
		if fi := f[i]; yi == yi && fi == fi {
			sum += fi - yi
			n++
		}
	}
	return metricsMean(sum, n), n
}

// Coverage returns the share (0 to 1) of the actuals inside their
// prediction intervals, bounds included:
//
//	coverage = mean_t 1{lo_t ≤ y_t ≤ hi_t}
//
// n is the number of periods used: periods where y, lo or hi is NaN are
// skipped. An interval with lo > hi covers nothing.
//
// References:
//   - P. F. Christoffersen (1998), Evaluating interval forecasts,
//     International Economic Review 39(4), 841–862 (unconditional
//     coverage).
func Coverage(y, lo, hi []float64) (coverage float64, n int) {
	metricsSameLen("Coverage", "lower bounds", y, lo)
	metricsSameLen("Coverage", "upper bounds", y, hi)
	in := 0
	for i, yi := range y {
		l, h := lo[i], hi[i]
		if yi != yi || l != l || h != h {
			continue
		}
		if l <= yi && yi <= h {
			in++
		}
		n++
	}
	return metricsMean(float64(in), n), n
}

// IntervalScore returns the mean interval score of central (1 − α)
// prediction intervals [lo_t, hi_t], for 0 < α < 1:
//
//	S_t = (hi_t − lo_t) + (2/α)(lo_t − y_t)·1{y_t < lo_t}
//	                    + (2/α)(y_t − hi_t)·1{y_t > hi_t}
//	IS  = mean_t S_t
//
// Lower is better: it rewards narrow intervals and penalises each miss in
// proportion to its distance. n is the number of periods used: periods
// where y, lo or hi is NaN are skipped. Bounds with lo > hi are scored by
// the same formula.
//
// References:
//   - R. L. Winkler (1972), A decision-theoretic approach to interval
//     estimation, Journal of the American Statistical Association 67(337),
//     187–191.
//   - T. Gneiting and A. E. Raftery (2007), Strictly proper scoring rules,
//     prediction, and estimation, Journal of the American Statistical
//     Association 102(477), 359–378 (the interval score).
func IntervalScore(y, lo, hi []float64, alpha float64) (score float64, n int) {
	metricsSameLen("IntervalScore", "lower bounds", y, lo)
	metricsSameLen("IntervalScore", "upper bounds", y, hi)
	if !(alpha > 0 && alpha < 1) {
		panic(fmt.Sprintf("engines: IntervalScore: alpha %v outside (0, 1)", alpha))
	}
	k := 2 / alpha
	var sum float64
	for i, yi := range y {
		l, h := lo[i], hi[i]
		if yi != yi || l != l || h != h {
			continue
		}
		s := h - l
		if yi < l {
			s += k * (l - yi)
		}
		if yi > h {
			s += k * (yi - h)
		}
		sum += s
		n++
	}
	return metricsMean(sum, n), n
}

// PinballLoss returns the mean pinball (quantile) loss of the forecasts q
// of the τ-quantile, for 0 < τ < 1:
//
//	L_t = max( τ(y_t − q_t), (τ − 1)(y_t − q_t) )
//	PL  = mean_t L_t
//
// An actual above the forecast quantile costs τ per unit, one below it
// 1 − τ per unit; at τ = ½ the loss is half the absolute error. Lower is
// better. n is the number of pairs used (pairs with a NaN are skipped).
//
// References:
//   - R. Koenker and G. Bassett (1978), Regression quantiles,
//     Econometrica 46(1), 33–50.
//   - T. Gneiting (2011), Quantiles as optimal point forecasts,
//     International Journal of Forecasting 27(2), 197–207.
func PinballLoss(y, q []float64, tau float64) (loss float64, n int) {
	metricsSameLen("PinballLoss", "quantiles", y, q)
	if !(tau > 0 && tau < 1) {
		panic(fmt.Sprintf("engines: PinballLoss: tau %v outside (0, 1)", tau))
	}
	var sum float64
	for i, yi := range y {
		qi := q[i]
		if yi != yi || qi != qi {
			continue
		}
		u := yi - qi
		sum += max(tau*u, (tau-1)*u)
		n++
	}
	return metricsMean(sum, n), n
}

// naiveScales returns, over the training series x, the mean absolute
// difference at lag a and the mean squared difference at lag b, each over
// the differences with both values observed, with their counts. A lag of 0
// skips that sum. One pass over x.
func naiveScales(x []float64, a, b int) (absMean, sqMean float64, na, nb int) {
	var sumAbs, sumSq float64
	for t, v := range x {
		if v != v {
			continue
		}
		if a > 0 && t >= a {
			if p := x[t-a]; p == p {
				sumAbs += math.Abs(v - p)
				na++
			}
		}
		if b > 0 && t >= b {
			if p := x[t-b]; p == p {
				d := v - p
				sumSq += d * d
				nb++
			}
		}
	}
	return metricsMean(sumAbs, na), metricsMean(sumSq, nb), na, nb
}

// metricsScaleLag is the lag of the naive scale for season length m and a
// training series of n values: m, or 1 when the series is too short for a
// seasonal difference. It panics for m < 1.
func metricsScaleLag(fn string, n, m int) int {
	if m < 1 {
		panic(fmt.Sprintf("engines: %s: season length %d; needs at least 1", fn, m))
	}
	if n < m+1 {
		return 1
	}
	return m
}

// metricsScaleErr reports a scale that cannot be divided by.
func metricsScaleErr(what string, scale float64, pairs, lag int) error {
	switch {
	case pairs == 0:
		return fmt.Errorf("%s: training series has no two observed values %d apart: %w", what, lag, ErrTooShort)
	case scale == 0:
		return fmt.Errorf("%s: training series does not change at lag %d, so the scale is 0: %w", what, lag, ErrZeroScale)
	}
	return nil
}

func metricsSameLen(fn, what string, y, other []float64) {
	if len(y) != len(other) {
		panic(fmt.Sprintf("engines: %s: %d actuals but %d %s", fn, len(y), len(other), what))
	}
}

// metricsMean is sum/n, or NaN when n is 0.
func metricsMean(sum float64, n int) float64 {
	if n == 0 {
		return math.NaN()
	}
	return sum / float64(n)
}

// metricsRatio is num/den, or NaN when no pair was used.
func metricsRatio(num, den float64, n int) float64 {
	if n == 0 {
		return math.NaN()
	}
	return num / den
}
