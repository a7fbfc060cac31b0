// Command convert turns the M1 data into almanac inputs: one CSV of the
// TRAIN part per subset (yearly, quarterly, monthly) and the specs the
// benchmark runs on them. The test part never reaches these files.
//
//	go run ./pipeline/bench/m1/convert -data m1.csv.gz -out DIR
//
// Per subset it writes DIR/<subset>.csv (columns series, period, value;
// periods built from each series' start_year and start_cycle on the year,
// quarter or month calendar) and:
//
//	<subset>-methods.yaml  every method in almanac's catalogue at its
//	                       defaults (seasonal ones only where the season
//	                       length is above 1) plus a damped holt, no backtest
//	<subset>-today.yaml    the same methods with a 3-fold backtest, choice by
//	                       MASE and the mean of the best 3 as an entry
//	<subset>-default.yaml  no methods: almanac's default automatic spec
package main

import (
	"bufio"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"almanac/pipeline/bench/m1/m1data"
	"almanac/spec"
)

func main() {
	data := flag.String("data", "", "path to m1.csv.gz")
	out := flag.String("out", "", "folder to write the inputs and specs into")
	flag.Parse()
	if *data == "" || *out == "" {
		fmt.Fprintln(os.Stderr, "usage: convert -data m1.csv.gz -out DIR")
		os.Exit(2)
	}
	if err := run(*data, *out); err != nil {
		fmt.Fprintln(os.Stderr, "convert:", err)
		os.Exit(1)
	}
}

var freqOf = map[string]string{"yearly": "year", "quarterly": "quarter", "monthly": "month"}

// label is the almanac time value of the i-th value (0-based) of s.
func label(s *m1data.Series, i int) string {
	switch s.Period {
	case 4:
		q := s.StartYear*4 + s.StartCycle - 1 + i
		return fmt.Sprintf("%04d-Q%d", q/4, q%4+1)
	case 12:
		mo := s.StartYear*12 + s.StartCycle - 1 + i
		return fmt.Sprintf("%04d-%02d", mo/12, mo%12+1)
	}
	return fmt.Sprintf("%04d", s.StartYear+i)
}

func run(data, out string) error {
	all, err := m1data.Read(data)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return err
	}
	for _, sub := range m1data.Subsets {
		if err := writeCSV(filepath.Join(out, sub+".csv"), all, sub); err != nil {
			return err
		}
		m := m1data.Period[sub]
		methods := methodList(m)
		bt := "backtest: {folds: 3}\nselection:\n  metric: mase\n  combine: {kind: mean, top: 3}\n"
		specs := map[string]string{
			"methods": header(sub, "methods") + "methods:\n" + methods,
			"today":   header(sub, "today") + "methods:\n" + methods + bt,
			"default": header(sub, "default"),
		}
		for _, kind := range []string{"methods", "today", "default"} {
			p := filepath.Join(out, sub+"-"+kind+".yaml")
			if err := os.WriteFile(p, []byte(specs[kind]), 0o644); err != nil {
				return err
			}
		}
	}
	return nil
}

func header(sub, kind string) string {
	return fmt.Sprintf(`# M1 %s series, train part only (written by pipeline/bench/m1/convert).
version: 1
name: m1-%s-%s
sources:
  - path: %s.csv
columns: {time: period, value: value, keys: [series]}
calendar: {frequency: %s, season_length: %d}
# Each series ends at its own last value; a missing period would be an error.
# Some series count their years from 1: those years are real, not stray.
shaping: {combine: reject, gaps: reject, end: series, stray_dates: keep}
horizon: %d
`, sub, sub, kind, sub, freqOf[sub], m1data.Period[sub], m1data.Horizon[sub])
}

// methodList is every catalogue method at its defaults, seasonal ones only
// when m > 1, plus holt with a damped trend and damped_trend.
func methodList(m int) string {
	var b strings.Builder
	for _, name := range spec.MethodNames() {
		if spec.MethodIsSeasonal(name) && m < 2 {
			continue
		}
		fmt.Fprintf(&b, "  - %s\n", name)
		if name == "holt" {
			b.WriteString("  - {method: holt, damped: true, label: holt_damped}\n")
		}
	}
	// The default pool's damped trend, under one label for every subset:
	// holt (damped) without a season, holt_winters (damped, season
	// tested) with one.
	if m < 2 {
		b.WriteString("  - {method: holt, damped: true, label: damped_trend}\n")
	} else {
		b.WriteString("  - {method: holt_winters, damped: true, label: damped_trend}\n")
	}
	return b.String()
}

func writeCSV(path string, all []*m1data.Series, sub string) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	fmt.Fprintln(w, "series,period,value")
	for _, s := range all {
		if s.Subset != sub {
			continue
		}
		for i, v := range s.Train {
			fmt.Fprintf(w, "%s,%s,%s\n", s.ID, label(s, i), fmtFloat(v))
		}
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func fmtFloat(v float64) string { return fmt.Sprint(v) }
