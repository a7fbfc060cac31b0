package engines

import (
	"math"
	"strings"
	"testing"
)

// WWWusage (R datasets) read with season 12 has no season by the test (R
// agrees: naive2/WWWusage_m12.json); AirPassengers with 12 has one.
func TestSeasonalAutoClassicalAndSTL(t *testing.T) {
	www := datasetValues(t, "WWWusage")
	air := datasetValues(t, "AirPassengers")
	if _, s := SeasonalityTest(www, 12); s {
		t.Fatal("WWWusage at lag 12 tests seasonal; the test below needs a non-seasonal series")
	}
	const h = 6
	n := len(www)

	// classical, seasonal: auto, no season: the forecast is the ordinary
	// least-squares line through the series itself (factors 1), worked out
	// here from the normal equations.
	var st, sy float64
	for i, v := range www {
		st += float64(i + 1)
		sy += v
	}
	tb, yb := st/float64(n), sy/float64(n)
	var sxx, sxy float64
	for i, v := range www {
		sxx += (float64(i+1) - tb) * (float64(i+1) - tb)
		sxy += (float64(i+1) - tb) * (v - yb)
	}
	b := sxy / sxx
	c, err := New("classical", nil)
	if err != nil {
		t.Fatal(err)
	}
	f, err := c.Fit(www, 12)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := f.(Described).Describe(), "classical(no season by the seasonality test; multiplicative, trend=adjusted_line, average=mean)"; got != want {
		t.Errorf("classical Describe() = %q, want %q", got, want)
	}
	for k, v := range f.Forecast(h) {
		want := yb + b*(float64(n+1+k)-tb)
		if math.Abs(v-want) > 1e-9*math.Abs(want) {
			t.Errorf("classical no-season forecast %d = %v, want %v", k+1, v, want)
		}
	}
	for _, v := range f.(Decomposed).Components().Factors {
		if v != 1 {
			t.Fatalf("no-season factors %v, want all 1", f.(Decomposed).Components().Factors)
		}
	}

	// stl, seasonal: auto, no season: SES of the series itself, a flat
	// forecast at its last level.
	s, err := New("stl", nil)
	if err != nil {
		t.Fatal(err)
	}
	f, err = s.Fit(www, 12)
	if err != nil {
		t.Fatal(err)
	}
	if got := f.(Described).Describe(); !strings.HasPrefix(got, "stl(no season; seasonality test; adjusted=ses(alpha=") {
		t.Errorf("stl Describe() = %q", got)
	}
	_, level := stlSES(www)
	for k, v := range f.Forecast(h) {
		if math.Abs(v-level) > 1e-12*math.Abs(level) {
			t.Errorf("stl no-season forecast %d = %v, want the SES level %v", k+1, v, level)
		}
	}

	// On a seasonal series auto and always agree exactly; on WWWusage
	// always keeps the season.
	for _, name := range []string{"classical", "stl"} {
		auto, _ := New(name, Options{"seasonal": "auto"})
		always, err := New(name, Options{"seasonal": "always"})
		if err != nil {
			t.Fatal(err)
		}
		fa, _ := auto.Fit(air, 12)
		fw, _ := always.Fit(air, 12)
		a, w := fa.Forecast(24), fw.Forecast(24)
		for k := range a {
			if a[k] != w[k] {
				t.Fatalf("%s AirPassengers: auto %v ≠ always %v at step %d", name, a[k], w[k], k+1)
			}
		}
		fw, _ = always.Fit(www, 12)
		if d := fw.(Described).Describe(); strings.Contains(d, "no season") {
			t.Errorf("%s seasonal: always on WWWusage: Describe() = %q", name, d)
		}
	}
	for _, name := range []string{"classical", "stl"} {
		if _, err := New(name, Options{"seasonal": "never"}); err == nil || !strings.Contains(err.Error(), "want auto or always") {
			t.Errorf("%s seasonal: never: error %v", name, err)
		}
	}
}
