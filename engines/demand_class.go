package engines

import "math"

// The demand classes of ClassifyDemand.
const (
	DemandSmooth       = "smooth"       // ADI < 1.32, CV² < 0.49
	DemandErratic      = "erratic"      // ADI < 1.32, CV² ≥ 0.49
	DemandIntermittent = "intermittent" // ADI ≥ 1.32, CV² < 0.49
	DemandLumpy        = "lumpy"        // ADI ≥ 1.32, CV² ≥ 0.49
	DemandNone         = "none"         // no period with demand
)

// The cut-offs of ClassifyDemand (Syntetos, Boylan and Croston 2005).
const (
	DemandADICutoff = 1.32
	DemandCV2Cutoff = 0.49
)

// A DemandClass describes how intermittent and how variable a demand
// series is.
type DemandClass struct {
	// Class is DemandSmooth, DemandErratic, DemandIntermittent,
	// DemandLumpy, or DemandNone when no period has demand.
	Class string

	// ADI is the average inter-demand interval, Periods / Demands: +Inf
	// when Demands is 0, NaN when Periods is 0.
	ADI float64

	// CV2 is the squared coefficient of variation of the non-zero demand
	// sizes, (σ/μ)², with the population standard deviation
	// σ² = (1/k)·Σ (y − μ)² over the k = Demands sizes: 0 for a single
	// demand, NaN for none.
	CV2 float64

	// Periods is the number of observed (non-NaN) periods; Demands the
	// number of them with y > 0.
	Periods, Demands int
}

// ClassifyDemand classifies the demand series y by the scheme of Syntetos,
// Boylan and Croston (2005):
//
//	                 CV² < 0.49      CV² ≥ 0.49
//	ADI < 1.32       smooth          erratic
//	ADI ≥ 1.32       intermittent    lumpy
//
// ADI = n / k, where n is the number of observed periods and k the number
// of periods with demand (y > 0). This equals the mean interval between
// demands when the intervals are counted as in Croston (the first from the
// start of the series) and the series ends with a demand; periods after the
// last demand raise it. CV² is that of the k non-zero sizes, with the
// population variance (see DemandClass). A value exactly at a cut-off
// falls in the class on the ≥ side.
//
// Missing values (NaN) are left out. Zero and negative values are periods
// without demand (the intermittent-demand methods reject negative values).
// ClassifyDemand does not modify y.
//
// References:
//   - A. A. Syntetos, J. E. Boylan and J. D. Croston (2005), On the
//     categorization of demand patterns, Journal of the Operational
//     Research Society 56(5), 495–503.
func ClassifyDemand(y []float64) DemandClass {
	var c DemandClass
	var sum float64
	for _, v := range y {
		if v != v {
			continue
		}
		c.Periods++
		if v > 0 {
			c.Demands++
			sum += v
		}
	}
	switch {
	case c.Periods == 0:
		c.Class, c.ADI, c.CV2 = DemandNone, math.NaN(), math.NaN()
		return c
	case c.Demands == 0:
		c.Class, c.ADI, c.CV2 = DemandNone, math.Inf(1), math.NaN()
		return c
	}
	k := float64(c.Demands)
	mean := sum / k
	var ss float64
	for _, v := range y {
		if v > 0 {
			ss += (v - mean) * (v - mean)
		}
	}
	c.ADI = float64(c.Periods) / k
	c.CV2 = ss / k / (mean * mean)
	switch {
	case c.ADI < DemandADICutoff && c.CV2 < DemandCV2Cutoff:
		c.Class = DemandSmooth
	case c.ADI < DemandADICutoff:
		c.Class = DemandErratic
	case c.CV2 < DemandCV2Cutoff:
		c.Class = DemandIntermittent
	default:
		c.Class = DemandLumpy
	}
	return c
}
