package engines

// TSB is the method of Teunter, Syntetos and Babai for intermittent demand:
// it smooths the probability of a demand in every period and the demand
// size in periods with demand, and forecasts their product. Unlike Croston's
// method its forecast decays through a run of periods without demand.
//
// With the demands y_t ≥ 0, t = 1…n, the indicator d_t = 1 if y_t > 0 and
// 0 otherwise, k the number of periods with y_t > 0 and t_1 the first of
// them:
//
//	initial     π_0 = k / n   (the share of periods with demand)
//	            z = y_{t_1}  (the first non-zero demand)
//	every t     π_t = π_{t−1} + β·(d_t − π_{t−1})
//	if y_t > 0  z   ← z + α·(y_t − z)
//	forecast    ŷ_{n+h} = π_n · z                            h = 1, 2, …
//
// The size update at t_1 leaves z unchanged. The initial probability is the
// share of periods with demand over the whole series, rather than 1/t_1,
// so that it does not depend on where the first demand happens to fall.
//
// Options (registered name "tsb"; for NewTSB 0 means the default):
//
//	alpha  smoothing constant α of the demand size, a float in [0.01, 1];
//	       default 0.1
//	beta   smoothing constant β of the demand probability, a float in
//	       [0.01, 1]; default 0.1
//
// Both are fixed, not estimated. The season length is ignored. Missing
// values (NaN) are left out, as if the series did not contain those
// periods (they count neither in n nor in k). Demands must be ≥ 0: a
// negative value is an error. A series with no non-zero demand forecasts 0,
// with a warning. The fitted model implements Described and Warner.
//
// References:
//   - R. H. Teunter, A. A. Syntetos and M. Z. Babai (2011), Intermittent
//     demand: linking forecasting to inventory obsolescence, European
//     Journal of Operational Research 214(3), 606–615.
type TSB struct {
	alpha, beta float64
	describe    string
}

var _ Method = (*TSB)(nil)

func init() {
	Register("tsb", func(o Options) (Method, error) {
		v, err := intermittentOptions("tsb", o, "alpha", "beta")
		if err != nil {
			return nil, err
		}
		return NewTSB(v[0], v[1])
	})
}

// NewTSB returns the TSB method with size constant alpha and probability
// constant beta, each in [0.01, 1]; 0 selects the default 0.1.
func NewTSB(alpha, beta float64) (*TSB, error) {
	a, err := intermittentConstant("tsb", "alpha", alpha)
	if err != nil {
		return nil, err
	}
	b, err := intermittentConstant("tsb", "beta", beta)
	if err != nil {
		return nil, err
	}
	return &TSB{alpha: a, beta: b, describe: "tsb(alpha=" + intermittentFormat(a) + ", beta=" + intermittentFormat(b) + ")"}, nil
}

// Name returns "tsb".
func (m *TSB) Name() string { return "tsb" }

// Fit smooths the demand probability and size of y (see TSB).
func (m *TSB) Fit(y []float64, season int) (Fitted, error) {
	f := &intermittentFit{name: "tsb", describe: m.describe}
	demands, err := intermittentCheck("tsb", y, f)
	if err != nil {
		return nil, err
	}
	if demands == 0 {
		return f, nil
	}
	observed := 0
	z := 0.0
	for _, v := range y {
		if v == v {
			observed++
			if z == 0 && v > 0 {
				z = v
			}
		}
	}
	prob := float64(demands) / float64(observed)
	for _, v := range y {
		switch {
		case v != v:
		case v > 0:
			prob += m.beta * (1 - prob)
			z += m.alpha * (v - z)
		default:
			prob -= m.beta * prob
		}
	}
	f.value = prob * z
	return f, nil
}
