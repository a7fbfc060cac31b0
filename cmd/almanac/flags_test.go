package main

import (
	"io"
	"slices"
	"testing"
)

// flagsFirst learns from the commands' flag definitions which flags take a
// value, so a boolean flag between arguments does not swallow the next one.
func TestFlagsFirstReadsTheFlagDefinitions(t *testing.T) {
	app := newApp(io.Discard, io.Discard)
	cases := []struct{ in, want []string }{
		{[]string{"almanac", "run", "s.yaml", "--workers", "2", "-q", "--out=o"},
			[]string{"almanac", "run", "--workers", "2", "-q", "--out=o", "s.yaml"}},
		{[]string{"almanac", "run", "s.yaml", "--quiet", "-w", "3"},
			[]string{"almanac", "run", "--quiet", "-w", "3", "s.yaml"}},
		{[]string{"almanac", "explain", "runs/x", "north", "--all-forecasts", "widget", "--seasons", "3"},
			[]string{"almanac", "explain", "--all-forecasts", "--seasons", "3", "runs/x", "north", "widget"}},
		{[]string{"almanac", "explain", "runs/x", "-h", "north"},
			[]string{"almanac", "explain", "-h", "runs/x", "north"}},
		{[]string{"almanac", "nosuch", "a", "--b", "c"}, []string{"almanac", "nosuch", "a", "--b", "c"}},
	}
	for _, c := range cases {
		if got := flagsFirst(app, c.in); !slices.Equal(got, c.want) {
			t.Errorf("flagsFirst(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}
