package main

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/urfave/cli/v2"

	"almanac/pipeline"
	"almanac/pipeline/review/explain"
	"almanac/pipeline/review/rundiff"
	"almanac/pipeline/runfolder"
	"almanac/pipeline/synth"
)

func diffCmd(c *cli.Context) error {
	if c.NArg() != 2 {
		return &exitError{exitSpec, fmt.Errorf("almanac diff: expected BASE_RUN and HEAD_RUN, got %d argument(s)", c.NArg())}
	}
	top := c.Int("top")
	if top == 0 {
		top = -1
	}
	d, err := rundiff.Compare(c.Args().Get(0), c.Args().Get(1), rundiff.Options{Top: top})
	if err != nil {
		return &exitError{exitSpec, fmt.Errorf("almanac diff: %v", err)}
	}
	switch c.String("format") {
	case "text":
		d.WriteText(c.App.Writer)
	case "markdown", "md":
		d.WriteMarkdown(c.App.Writer)
	default:
		return &exitError{exitSpec, fmt.Errorf("almanac diff: --format %q: want text or markdown", c.String("format"))}
	}
	if p := c.String("parquet"); p != "" {
		if err := notInRunFolder("--parquet", p); err != nil {
			return &exitError{exitSpec, fmt.Errorf("almanac diff: %v", err)}
		}
		if err := d.WriteParquet(p); err != nil {
			return &exitError{exitRun, fmt.Errorf("almanac diff: %v", err)}
		}
	}
	th := rundiff.Thresholds{MaxRelChange: c.Float64("max-rel-change"), MaxSwitchShare: c.Float64("max-switch-share"),
		MaxMeanScoreWorsening: c.Float64("max-score-worsening"), MaxAdded: c.Int("max-added"), MaxRemoved: c.Int("max-removed")}
	if reasons := d.Exceeds(th); len(reasons) > 0 {
		for _, r := range reasons {
			fmt.Fprintln(c.App.ErrWriter, "almanac diff: threshold passed:", r)
		}
		return &exitError{exitRun, nil}
	}
	return nil
}

func explainCmd(c *cli.Context) error {
	if c.NArg() < 1 {
		return &exitError{exitSpec, errors.New("almanac explain: expected RUN_DIR and the series' key values")}
	}
	opt := explain.Options{AllForecasts: c.Bool("all-forecasts"), Seasons: c.Int("seasons"), PNG: c.String("png")}
	if opt.PNG != "" {
		if err := notInRunFolder("--png", opt.PNG); err != nil {
			return &exitError{exitSpec, fmt.Errorf("almanac explain: %v", err)}
		}
	}
	if m := c.String("methods"); m != "" {
		opt.Methods = strings.Split(m, ",")
	}
	// The tables hold no fitted parameters: explain refits the series.
	opt.Refit, opt.Warn = pipeline.Refit(c.Context), c.App.ErrWriter
	err := explain.Explain(c.Args().First(), c.Args().Slice()[1:], c.App.Writer, opt)
	var nf *explain.NotFoundError
	switch {
	case errors.As(err, &nf):
		return &exitError{exitRun, fmt.Errorf("almanac explain: %v", err)}
	case err != nil:
		return &exitError{exitSpec, fmt.Errorf("almanac explain: %v", err)}
	}
	return nil
}

func panelCmd(c *cli.Context) error {
	if c.NArg() != 1 {
		return &exitError{exitSpec, fmt.Errorf("almanac panel: expected one FILE argument, got %d", c.NArg())}
	}
	o := synth.Options{Series: c.Int("series"), Length: c.Int("length"), Frequency: c.String("frequency"), Season: c.Int("season"),
		Form: c.String("form"), Noise: c.Float64("noise"), Intermittent: c.Float64("intermittent"), Start: c.String("start"), RNG: c.Uint64("rng")}
	if err := synth.Write(c.Args().First(), o); err != nil {
		return &exitError{exitSpec, fmt.Errorf("almanac panel: %v", err)}
	}
	fmt.Fprintf(c.App.Writer, "wrote %d series × %d periods to %s (invented data)\n", o.Series, o.Length, c.Args().First())
	return nil
}

func combineCmd(c *cli.Context) error {
	if c.NArg() != 1 {
		return &exitError{exitSpec, fmt.Errorf("almanac combine: expected one DATASET_DIR argument, got %d", c.NArg())}
	}
	if _, err := runfolder.Combine(c.Args().First(), c.App.Writer); err != nil {
		return &exitError{exitRun, fmt.Errorf("almanac combine: %v", err)}
	}
	return nil
}

func verifyCmd(c *cli.Context) error {
	if c.NArg() != 1 {
		return &exitError{exitSpec, fmt.Errorf("almanac verify: expected one RUN_DIR argument, got %d", c.NArg())}
	}
	// Exit codes: pipeline.VerifyIdentical (0), VerifyDiffers (1),
	// VerifyInputsChanged (3), VerifyUnusable (4); 2 stays the usage error.
	code, err := pipeline.Verify(c.Context, c.Args().First(), c.App.Writer,
		pipeline.VerifyOptions{Workers: max(1, c.Int("workers")), InputRoot: c.String("input-root")})
	if err != nil {
		return &exitError{exitUnusable, fmt.Errorf("almanac verify: %v", err)}
	}
	if code := verifyExit(code); code != exitOK {
		return &exitError{code, nil}
	}
	return nil
}

// notInRunFolder refuses an output path of a review command that lies in
// a run folder (or a folder being staged as one): its files belong to the
// run, and the manifest and verify vouch for them.
func notInRunFolder(flag, path string) error {
	abs, err := filepath.Abs(path)
	if err != nil {
		return err
	}
	for dir := filepath.Dir(abs); ; dir = filepath.Dir(dir) {
		for _, m := range []string{runfolder.MarkerFile, runfolder.MarkerFile + ".staging"} {
			if _, err := os.Stat(filepath.Join(dir, m)); err == nil {
				return fmt.Errorf("%s %s: that is inside the run folder %s; write it elsewhere (almanac never changes a run folder's files)", flag, path, dir)
			}
		}
		if dir == filepath.Dir(dir) {
			return nil
		}
	}
}

// diffCommand compares two run folders.
func diffCommand() *cli.Command {
	return &cli.Command{
		Name:      "diff",
		Usage:     "compare two run folders for review: forecast totals, method switches, score changes (exit 1 when a threshold is passed)",
		ArgsUsage: "BASE_RUN HEAD_RUN",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "format", Value: "text", Usage: "text (terminal table) or markdown (for a pull-request comment)"},
			&cli.StringFlag{Name: "parquet", Usage: "also write the per-series diff as a Parquet file"},
			&cli.IntFlag{Name: "top", Value: 10, Usage: "how many of the largest movers to list"},
			&cli.Float64Flag{Name: "max-rel-change", Value: -1, Usage: "fail when any series' forecast total moves by more than this fraction (0.2 = 20%)"},
			&cli.Float64Flag{Name: "max-switch-share", Value: -1, Usage: "fail when more than this share of series switch chosen method"},
			&cli.Float64Flag{Name: "max-score-worsening", Value: -1, Usage: "fail when the mean backtest score worsens by more than this"},
			&cli.IntFlag{Name: "max-added", Value: -1, Usage: "fail when more series than this are only in HEAD"},
			&cli.IntFlag{Name: "max-removed", Value: -1, Usage: "fail when more series than this are only in BASE"},
		},
		Action: diffCmd,
	}
}

// explainCommand shows one series of a run.
func explainCommand() *cli.Command {
	return &cli.Command{
		Name:      "explain",
		Usage:     "show one series of a run: history, decomposition, backtest scores, the choice and why, the forecast with intervals",
		ArgsUsage: "RUN_DIR [KEY_VALUE...]",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "methods", Usage: "comma-separated method labels to show (default all)"},
			&cli.BoolFlag{Name: "all-forecasts", Usage: "every method's forecast, not only the chosen entry's"},
			&cli.IntFlag{Name: "seasons", Value: 2, Usage: "seasons of history to tabulate"},
			&cli.StringFlag{Name: "png", Usage: "also draw the series as a PNG chart at this path"},
		},
		Action: explainCmd,
	}
}
