package main

import "almanac/pipeline"

// Exit codes, defined once; README.md's "Exit codes" table documents them.
const (
	exitOK = 0 // success: the run finished, the spec is valid, the rerun is identical
	// exitRun: the run or the data failed (bad data, unreadable input,
	// output refused), or a difference was found (verify, diff thresholds,
	// explain's series not found, combine incomplete).
	exitRun = 1
	// exitSpec: the spec or the command line is wrong.
	exitSpec = 2
	// exitInputsChanged: verify found an input changed, missing, or a new
	// one matching the sources, so the rerun proves nothing.
	exitInputsChanged = 3
)

// verifyExit maps a verify outcome to the exit code.
func verifyExit(outcome int) int {
	switch outcome {
	case pipeline.VerifyIdentical:
		return exitOK
	case pipeline.VerifyInputsChanged:
		return exitInputsChanged
	default:
		return exitRun
	}
}
