package main

import (
	"testing"

	"almanac/pipeline"
)

// Verify's outcomes map to distinct exit codes, and "inputs changed" does
// not collide with a bad spec or a difference.
func TestVerifyOutcomeMapping(t *testing.T) {
	got := map[int]int{
		pipeline.VerifyIdentical:     verifyExit(pipeline.VerifyIdentical),
		pipeline.VerifyDiffers:       verifyExit(pipeline.VerifyDiffers),
		pipeline.VerifyInputsChanged: verifyExit(pipeline.VerifyInputsChanged),
		pipeline.VerifyUnusable:      verifyExit(pipeline.VerifyUnusable),
	}
	want := map[int]int{pipeline.VerifyIdentical: 0, pipeline.VerifyDiffers: 1, pipeline.VerifyInputsChanged: 3, pipeline.VerifyUnusable: 4}
	for k, v := range want {
		if got[k] != v {
			t.Errorf("verify outcome %d exits %d, want %d", k, got[k], v)
		}
	}
	seen := map[int]bool{}
	for _, c := range []int{exitOK, exitRun, exitSpec, exitInputsChanged, exitUnusable, exitInterrupted} {
		if seen[c] {
			t.Errorf("exit code %d defined twice", c)
		}
		seen[c] = true
	}
}
