package engines

import (
	"math"
	"testing"
)

// Which methods can forecast below zero from a strictly positive history
// (README's method table and the pipeline's floor at zero rest on this):
//
//   - never: naive, seasonal_naive, mean, ses, naive2, croston, sba, tsb —
//     their forecasts are weighted averages (or ratios of averages) of
//     observed values, or such a value times a positive factor;
//   - can: drift, holt (also damped), holt_winters' additive forms,
//     smoothing_auto (additive-error forms), classical (its trend lines,
//     and the additive form), stl (drift, or a negative seasonal
//     component added to a small level), theta (its drift), arima.
//
// The multiplicative-error and multiplicative-season smoothing forms
// refuse a fit whose states go non-positive (ErrNonPositiveState), so
// their forecasts stay positive.

// falling is an invented, strictly positive series that drops steeply.
var falling = []float64{200, 185, 168, 150, 139, 120, 104, 90, 71, 60, 45, 30, 22, 12, 8, 5}

func TestNeverNegativeOnPositiveHistory(t *testing.T) {
	series := [][]float64{falling, datasetValues(t, "AirPassengers")[:48], datasetValues(t, "Nile"), {3, 1, 4, 1, 5, 9, 2, 6, 5, 3, 5, 8}}
	for _, name := range []string{"naive", "seasonal_naive", "mean", "ses", "naive2", "croston", "sba", "tsb"} {
		m, err := New(name, nil)
		if err != nil {
			t.Fatal(err)
		}
		for k, y := range series {
			f, err := m.Fit(y, 4)
			if err != nil {
				t.Fatalf("%s on series %d: %v", name, k, err)
			}
			for s, v := range f.Forecast(24) {
				if !(v >= 0) {
					t.Errorf("%s on series %d: forecast %d = %v < 0", name, k, s+1, v)
				}
			}
		}
	}
}

func TestCanGoNegativeOnPositiveHistory(t *testing.T) {
	for _, tc := range []struct {
		name string
		o    Options
	}{
		{"drift", nil},
		{"holt", nil},
		{"theta", nil},
		{"classical", Options{"trend": "adjusted_line"}},
		{"stl", Options{"adjusted_method": "drift"}},
	} {
		m, err := New(tc.name, tc.o)
		if err != nil {
			t.Fatal(err)
		}
		f, err := m.Fit(falling, 2)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		low := math.Inf(1)
		for _, v := range f.Forecast(12) {
			low = math.Min(low, v)
		}
		if !(low < 0) {
			t.Errorf("%s: lowest forecast %v on the falling series; expected it to go below zero (the case the pipeline floors)", tc.name, low)
		}
	}
}
