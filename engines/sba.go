package engines

// SBA is the Syntetos–Boylan approximation: Croston's method with its
// forecast multiplied by 1 − α/2, which removes most of the upward bias of
// the ratio z/p.
//
// With z_k and p_k the smoothed demand size and interval of Croston (same
// recursion, same initial values z_1 = the first non-zero demand and
// p_1 = its period number):
//
//	ŷ_{n+h} = (1 − α/2) · z_k / p_k                          h = 1, 2, …
//
// Options (registered name "sba"; for NewSBA 0 means the default):
//
//	alpha  smoothing constant α of both sizes and intervals, a float in
//	       [0.01, 1]; default 0.1 (fixed, not estimated).
//
// Missing values, negative values, all-zero series and the season length
// are handled as by Croston. The fitted model implements Described and
// Warner.
//
// References:
//   - A. A. Syntetos and J. E. Boylan (2005), The accuracy of intermittent
//     demand estimates, International Journal of Forecasting 21(2),
//     303–314.
//   - J. D. Croston (1972), Forecasting and stock control for intermittent
//     demands, Operational Research Quarterly 23(3), 289–303.
type SBA struct {
	alpha    float64
	describe string
}

var _ Method = (*SBA)(nil)

func init() {
	Register("sba", func(o Options) (Method, error) {
		v, err := intermittentOptions("sba", o, "alpha")
		if err != nil {
			return nil, err
		}
		return NewSBA(v[0])
	})
}

// NewSBA returns the Syntetos–Boylan approximation with smoothing constant
// alpha in [0.01, 1]; 0 selects the default 0.1.
func NewSBA(alpha float64) (*SBA, error) {
	a, err := intermittentConstant("sba", "alpha", alpha)
	if err != nil {
		return nil, err
	}
	return &SBA{alpha: a, describe: "sba(alpha=" + intermittentFormat(a) + ")"}, nil
}

// Name returns "sba".
func (s *SBA) Name() string { return "sba" }

// Fit runs Croston's recursion on y and scales its forecast (see SBA).
func (s *SBA) Fit(y []float64, season int) (Fitted, error) {
	f, err := crostonFit("sba", s.describe, y, s.alpha, 1-s.alpha/2)
	if err != nil {
		return nil, err
	}
	return f, nil
}
