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
	// exitUnusable: verify cannot use the folder: not a run folder, or a
	// manifest that cannot be trusted (unreadable, paths outside the folder).
	exitUnusable = 4
	// exitInterrupted: a signal stopped the work (128 + SIGINT, as shells
	// report an interrupted command).
	exitInterrupted = 130
)

// verifyExit maps a verify outcome to the exit code.
func verifyExit(outcome int) int {
	switch outcome {
	case pipeline.VerifyIdentical:
		return exitOK
	case pipeline.VerifyInputsChanged:
		return exitInputsChanged
	case pipeline.VerifyUnusable:
		return exitUnusable
	default:
		return exitRun
	}
}
