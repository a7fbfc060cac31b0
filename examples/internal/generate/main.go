// Command generate writes the data files of almanac's shipped examples.
//
// Every example's data is invented: it is drawn from a fixed pseudo-random
// stream (math/rand/v2 PCG with constant seeds), so running
//
//	go run ./examples/internal/generate
//
// from the module root rewrites every file under examples/*/data/ byte for
// byte. The program prints a few aggregate statistics so a reviewer can see
// that the data look as the example READMEs describe.
//
// Flags:
//
//	-dir      the examples folder (default "examples", i.e. run from the module root)
//	-example  all | garden-supply | quarterly-ferries | daily-grocer (default all)
//	-stats    print aggregate statistics (default true)
//
// Determinism rules kept here: no global random generator, no map iteration
// where order reaches the output, rows sorted before writing, integer values
// only, and fixed Parquet writer properties (zstd at a fixed level, a fixed
// created_by string, no timestamps anywhere in the file).
package main

import (
	"flag"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
)

// An example knows how to write its data below its own folder and how to
// describe what it wrote.
type example struct {
	name     string
	generate func(exampleDir string, stats io.Writer) error
}

var examples = []example{
	{name: "garden-supply", generate: writeGarden},
	{name: "quarterly-ferries", generate: writeFerries},
	{name: "daily-grocer", generate: writeGrocer},
}

func main() {
	dir := flag.String("dir", "examples", "the examples folder")
	only := flag.String("example", "all", "which example to generate: all, "+exampleNames())
	stats := flag.Bool("stats", true, "print aggregate statistics of the generated data")
	flag.Parse()

	if err := run(*dir, *only, *stats, os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "generate:", err)
		os.Exit(1)
	}
}

func exampleNames() string {
	names := make([]string, len(examples))
	for i, e := range examples {
		names[i] = e.name
	}
	return strings.Join(names, ", ")
}

func run(dir, only string, stats bool, out io.Writer) error {
	if fi, err := os.Stat(filepath.Join(dir, "internal", "generate")); err != nil || !fi.IsDir() {
		return fmt.Errorf("%s does not look like the examples folder (run from the module root or pass -dir)", dir)
	}
	var w io.Writer = io.Discard
	if stats {
		w = out
	}
	found := false
	for _, e := range examples {
		if only != "all" && only != e.name {
			continue
		}
		found = true
		fmt.Fprintf(w, "== %s\n", e.name)
		if err := e.generate(filepath.Join(dir, e.name), w); err != nil {
			return fmt.Errorf("%s: %w", e.name, err)
		}
	}
	if !found {
		return fmt.Errorf("unknown example %q (want all, %s)", only, exampleNames())
	}
	return nil
}

// poisson draws a Poisson variate with mean lambda: Knuth's product method
// for small means, a rounded normal approximation for large ones.
func poisson(r *rand.Rand, lambda float64) int {
	if lambda <= 0 {
		return 0
	}
	if lambda < 30 {
		limit := math.Exp(-lambda)
		k, p := 0, r.Float64()
		for p > limit {
			k++
			p *= r.Float64()
		}
		return k
	}
	k := int(math.Round(lambda + math.Sqrt(lambda)*r.NormFloat64()))
	return max(k, 0)
}

// lognormalFactor returns a multiplicative noise factor with mean 1 and
// log-scale standard deviation sd.
func lognormalFactor(r *rand.Rand, sd float64) float64 {
	return math.Exp(sd*r.NormFloat64() - sd*sd/2)
}

// writeFileAtomic writes data to path through a temporary file in the same
// folder, so an interrupted run never leaves a half-written data file.
func writeFileAtomic(path string, data []byte) error {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), ".generate-*")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name())
	if _, err := tmp.Write(data); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Close(); err != nil {
		return err
	}
	if err := os.Chmod(tmp.Name(), 0o644); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), path)
}
