package pipeline

import (
	"almanac/pipeline/runfolder"
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"
)

// rowStrings renders every row of a Parquet file as text, for comparing
// tables row for row.
func rowStrings(t *testing.T, path string) []string {
	tb := readTable(t, path)
	names := make([]string, 0, len(tb.schema.Fields()))
	for _, f := range tb.schema.Fields() {
		names = append(names, f.Name)
	}
	out := make([]string, tb.rows)
	for i := 0; i < tb.rows; i++ {
		var b strings.Builder
		for _, n := range names {
			c := tb.cols[n]
			if c.IsNull(i) {
				b.WriteString("∅|")
				continue
			}
			switch a := c.(type) {
			case *array.Float64:
				fmt.Fprintf(&b, "%x|", math.Float64bits(a.Value(i)))
			default:
				b.WriteString(c.ValueStr(i) + "|")
			}
		}
		out[i] = b.String()
	}
	return out
}

// shardSpec: backtest, selection with a combination, routing and model
// intervals: every per-series stage. (Empirical intervals pool errors
// across the series of a run, so a shard pools across its own series only;
// see the README.)
//
// Problems are written one row per series here: the summary rows of
// problems.detail: summary count within a shard.
const shardSpec = fixtureSpec + `problems: {detail: series}
backtest: {folds: 2}
selection: {combine: {kind: median, top: 3}, route: {intermittent: [seasonal_naive, mean]}}
intervals: {levels: [80], source: model}
`

// The union of the shards' tables equals the single run's, row for row
// (after sorting), for 1, 2 and 4 shards; the combined manifest lists every
// shard, and a missing shard is refused.
func TestShardUnionEqualsSingleRun(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	for k := 0; k < 60; k++ {
		n := 40
		if k%11 == 0 {
			n = 20 // a few short series
		}
		for i := 40 - n; i < 40; i++ {
			v := 50 + float64(k%13) + float64(i) + 15*math.Sin(float64(i)/2+float64(k))
			if k%7 == 0 && i%3 != 0 {
				v = 0 // intermittent
			}
			fmt.Fprintf(&b, "%04d-%02d,S%02d,I%d,%.2f\n", 2020+i/12, i%12+1, k%20, k/20, v)
		}
	}
	os.MkdirAll(filepath.Join(dir, "data"), 0o755)
	os.WriteFile(filepath.Join(dir, "data", "sales.csv"), []byte(b.String()), 0o644)
	s := loadFixture(t, dir, shardSpec)
	single := filepath.Join(dir, "single")
	if _, err := Run(context.Background(), s, Options{Out: single}); err != nil {
		t.Fatal(err)
	}
	tables := []string{runfolder.TableForecasts, runfolder.TableComponents, runfolder.TableSeasonalFactors, runfolder.TableProblems, runfolder.TableAccuracy, runfolder.TableChoices}
	want := map[string][]string{}
	for _, tb := range tables {
		want[tb] = rowStrings(t, filepath.Join(single, tb+".parquet"))
		sort.Strings(want[tb])
	}
	for _, n := range []int{1, 2, 4} {
		ds := filepath.Join(dir, fmt.Sprintf("ds%d", n))
		series := 0
		for i := 0; i < n; i++ {
			sum, err := Run(context.Background(), s, Options{Out: ds, Shard: Shard{Index: i, Count: n}, Workers: 2})
			if err != nil {
				t.Fatal(err)
			}
			series += sum.Manifest.Series
		}
		if n == 1 {
			// One shard is the plain run: same folder layout, same bytes.
			for _, tb := range tables {
				a, _ := os.ReadFile(filepath.Join(single, tb+".parquet"))
				b, _ := os.ReadFile(filepath.Join(ds, tb+".parquet"))
				if !bytes.Equal(a, b) {
					t.Errorf("1 shard: %s differs from the single run", tb)
				}
			}
			continue
		}
		if series != 60 {
			t.Errorf("%d shards hold %d series, want 60", n, series)
		}
		var log bytes.Buffer
		cm, err := runfolder.Combine(ds, &log)
		if err != nil {
			t.Fatalf("%d shards: %v\n%s", n, err, log.String())
		}
		if len(cm.Shards) != n || cm.Series != 60 {
			t.Errorf("combined manifest: %d shards, %d series", len(cm.Shards), cm.Series)
		}
		for i, sh := range cm.Shards {
			if sh.Index != i {
				t.Errorf("shard %d listed as %d", i, sh.Index)
			}
		}
		for _, tb := range tables {
			var got []string
			parts, _ := filepath.Glob(filepath.Join(ds, tb, "shard=*", "part.parquet"))
			if len(parts) != n {
				t.Fatalf("%s: %d parts for %d shards", tb, len(parts), n)
			}
			for _, p := range parts {
				got = append(got, rowStrings(t, p)...)
			}
			sort.Strings(got)
			if strings.Join(got, "\n") != strings.Join(want[tb], "\n") {
				for i := range got {
					if i < len(want[tb]) && got[i] != want[tb][i] {
						t.Logf("first difference:\n got %s\nwant %s", got[i], want[tb][i])
						break
					}
				}
				t.Errorf("%d shards: the union of %s differs from the single run (%d vs %d rows)", n, tb, len(got), len(want[tb]))
			}
		}
		if n == 4 {
			os.Remove(filepath.Join(ds, runfolder.ShardsDir, "shard=0002.json"))
			_, err := runfolder.Combine(ds, &log)
			if err == nil || !strings.Contains(log.String(), "shard(s) 2 of 4 missing or incomplete") {
				t.Errorf("a missing shard was not refused: %v\n%s", err, log.String())
			}
		}
	}
}
