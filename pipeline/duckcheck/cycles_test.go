package duckcheck

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

const cyclesSpec = `version: 1
name: cycles
sources: [data.csv]
columns: {time: day, value: qty, keys: [shop]}
calendar: {frequency: day, season_length: [7, 28]}
shaping: {gaps: missing}
methods: [naive, stl]
horizon: 14
`

// cyclesWeek is the invented weekday pattern (Monday first).
var cyclesWeek = []float64{0.8, 0.9, 0.95, 1.0, 1.1, 1.35, 0.9}

// TestSeveralSeasons runs almanac on an invented daily panel with two
// cycles (7 and 28 days) and missing days, and checks with DuckDB the
// layout of tables.md for several season lengths: a seasonal_<m> column
// per cycle whose product is seasonal, the identities of the
// multiplicative form, each cycle's factors recomputed from its column,
// and the fills in problems.
func TestSeveralSeasons(t *testing.T) {
	ready(t)
	dir := filepath.Join(workDir, "cycles")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("day,shop,qty\n")
	missing := map[int]bool{9: true, 40: true, 41: true, 77: true, 150: true}
	start := time.Date(2026, 1, 5, 0, 0, 0, 0, time.UTC) // a Monday
	for k, shop := range []string{"north", "south"} {
		for i := 0; i < 168; i++ {
			if missing[i] && k == 0 {
				continue
			}
			v := (100 + 0.2*float64(i) + 10*float64(k)) * cyclesWeek[i%7] * (1 + 0.1*math.Sin(2*math.Pi*float64(i)/28))
			fmt.Fprintf(&b, "%s,%s,%.4f\n", start.AddDate(0, 0, i).Format("2006-01-02"), shop, v)
		}
	}
	os.WriteFile(filepath.Join(dir, "data.csv"), []byte(b.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(cyclesSpec), 0o644)
	out := filepath.Join(dir, "run")
	cmd := exec.CommandContext(context.Background(), binPath, "run", "spec.yaml", "--out", out, "--quiet")
	cmd.Dir = dir
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Run(); err != nil {
		if strings.Contains(stderr.String(), "season_length") {
			t.Skipf("this almanac does not take a list of season lengths yet: %s", stderr.String())
		}
		t.Fatalf("almanac run: %v\n%s", err, stderr.String())
	}
	comp := sqlStr(filepath.Join(out, "components.parquet"))
	sf := sqlStr(filepath.Join(out, "seasonal_factors.parquet"))
	prob := sqlStr(filepath.Join(out, "problems.parquet"))
	cols := rows(t, "SELECT string_agg(column_name, ',') FROM (DESCRIBE SELECT * FROM read_parquet("+comp+"))")
	if got := cols[0][0]; got != "shop,decomposition,form,period,observed,trend,seasonal,remainder,adjusted,seasonal_7,seasonal_28" {
		t.Errorf("components columns %s", got)
	}
	cols = rows(t, "SELECT string_agg(column_name, ',') FROM (DESCRIBE SELECT * FROM read_parquet("+sf+"))")
	if got := cols[0][0]; got != "shop,decomposition,form,season_length,position,factor,count" {
		t.Errorf("seasonal_factors columns %s", got)
	}
	if n := count(t, "SELECT count(*) FROM read_parquet("+comp+")"); n != 2*168 {
		t.Errorf("%d components rows", n)
	}
	none(t, "mstl, multiplicative, seasonal = seasonal_7 × seasonal_28", `
		SELECT * FROM read_parquet(`+comp+`) WHERE decomposition <> 'mstl' OR form <> 'multiplicative'
			OR seasonal_7 IS NULL OR seasonal_28 IS NULL OR abs(seasonal - seasonal_7 * seasonal_28) > 1e-12 * seasonal`)
	none(t, "observed = trend × seasonal × remainder, adjusted = observed ÷ seasonal", `
		SELECT * FROM read_parquet(`+comp+`) WHERE observed IS NOT NULL
			AND (abs(observed - trend * seasonal * remainder) > 1e-9 * observed OR abs(adjusted - observed / seasonal) > 1e-9 * adjusted)`)
	none(t, "a missing observation has a trend and a seasonal but no remainder or adjusted value", `
		SELECT * FROM read_parquet(`+comp+`) WHERE trend IS NULL
			OR (observed IS NULL) <> (remainder IS NULL) OR (observed IS NULL) <> (adjusted IS NULL)`)
	if n := count(t, "SELECT count(*) FROM read_parquet("+comp+") WHERE observed IS NULL"); n != int64(len(missing)) {
		t.Errorf("%d missing observations, want %d", n, len(missing))
	}
	none(t, "positions 1…season_length once each, factors averaging 1", `
		SELECT shop, season_length, count(*), min(position), max(position), avg(factor) FROM read_parquet(`+sf+`)
		GROUP BY ALL HAVING season_length NOT IN (7, 28) OR count(DISTINCT position) <> season_length OR count(*) <> season_length
			OR min(position) <> 1 OR max(position) <> season_length OR abs(avg(factor) - 1) > 1e-9`)
	if n := count(t, "SELECT count(DISTINCT (shop, season_length)) FROM read_parquet("+sf+")"); n != 4 {
		t.Errorf("%d series × cycles in seasonal_factors, want 4", n)
	}
	// Each cycle's factor at a position: the geometric mean of its column
	// there, the factors then scaled to mean 1; the position of a day in a
	// cycle of m days counts from Monday 1970-01-05 (tables.md).
	for _, m := range []int{7, 28} {
		none(t, fmt.Sprintf("factors of cycle %d recomputed from seasonal_%d", m, m), fmt.Sprintf(`
			WITH c AS (SELECT shop, (date_diff('day', DATE '1970-01-01', period) + 3) %% %[1]d + 1 AS position,
					exp(avg(ln(seasonal_%[1]d))) AS g, count(*) AS n FROM read_parquet(%[2]s) GROUP BY ALL),
				e AS (SELECT shop, position, g / avg(g) OVER (PARTITION BY shop) AS factor, n FROM c)
			SELECT f.shop, f.position, f.factor, e.factor, f.count, e.n FROM read_parquet(%[3]s) f
			LEFT JOIN e ON e.shop = f.shop AND e.position = f.position
			WHERE f.season_length = %[1]d AND (e.factor IS NULL OR abs(f.factor - e.factor) > 1e-9 OR f.count <> e.n)`, m, comp, sf))
	}
	// The weekly factors are the invented pattern (scaled to mean 1), to 1%.
	mean := 0.0
	for _, v := range cyclesWeek {
		mean += v / 7
	}
	for _, r := range rows(t, "SELECT position, factor FROM read_parquet("+sf+") WHERE season_length = 7 ORDER BY ALL") {
		var pos int
		var f float64
		fmt.Sscan(r[0], &pos)
		fmt.Sscan(r[1], &f)
		if want := cyclesWeek[pos-1] / mean; math.Abs(f-want) > 0.01 {
			t.Errorf("weekday %d: factor %.4f, want %.4f", pos, f, want)
		}
	}
	got := rows(t, "SELECT coalesce(shop, '-'), stage, coalesce(method, '-'), message FROM read_parquet("+prob+") WHERE code = 'imputed' ORDER BY ALL")
	want := [][]string{
		{"-", "decompose", "-", "one row per series"},
		{"north", "forecast", "stl", "5 of 168 values missing; filled by seasonal interpolation before fitting"},
	}
	if len(got) != len(want) {
		t.Fatalf("imputed rows %v", got)
	}
	for i := range want {
		if got[i][0] != want[i][0] || got[i][1] != want[i][1] || got[i][2] != want[i][2] || !strings.Contains(got[i][3], want[i][3]) {
			t.Errorf("imputed row %d: %v, want %v", i, got[i], want[i])
		}
	}
}
