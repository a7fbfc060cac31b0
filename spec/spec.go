// Package spec defines almanac's forecast spec: a YAML file, kept in git and
// reviewed in pull requests, that says which tables to read, how to shape
// them into series, which methods to run, how far ahead, and where to write.
//
// The package is a leaf: it knows nothing of how a spec is run. Load decodes
// a file through yaml.v3 nodes so that every error carries file:line:col,
// reports every error in one pass, fills defaults, and validates. Canonical
// gives the spec's canonical JSON form; Hash its SHA-256.
package spec

// FormatVersion is the spec format this package reads.
const FormatVersion = 1

// Spec is a decoded, defaulted and validated forecast spec.
type Spec struct {
	Version       int
	Name          string
	Sources       []Source
	Events        []EventSource // known events: closures and drivers (none: nil)
	Columns       Columns
	Calendar      Calendar
	Shaping       Shaping
	Decomposition Decomposition
	Methods       []MethodSpec
	Horizon       int
	Output        string // as written; relative paths are relative to Dir
	Limits        Limits
	Backtest      Backtest  // Folds == 0: no backtest
	Selection     Selection // used when there is a backtest
	Intervals     Intervals // no Levels: no intervals
	Totals        Totals    // no LeadTimes: no totals table
	Report        *Report   // nil: no HTML report
	Problems      ProblemDetail

	// Automatic is true when the spec left out methods and runs the
	// default automatic spec (DefaultMethods, and DefaultAutomaticBacktest
	// and DefaultAutomaticSelection where it gives no backtest or
	// selection). The canonical form lists the methods; it does not
	// record this flag.
	Automatic bool

	// File is the path the spec was loaded from, Dir its folder. Neither is
	// part of the canonical form.
	File string
	Dir  string
}

// Source is one input: a path or glob, and how to read it.
type Source struct {
	Path      string // as written; relative to the spec's folder
	Format    Format // csv or parquet; inferred from the extension when not given
	Delimiter string // CSV field delimiter, one character; default ","
}

// Format is an input file format.
type Format string

// Input formats.
const (
	FormatCSV     Format = "csv"
	FormatParquet Format = "parquet"
)

// Formats lists the allowed values of Format.
var Formats = []string{string(FormatCSV), string(FormatParquet)}

// Columns names the input columns that matter.
type Columns struct {
	Time  string
	Value string
	Keys  []string // zero or more; together they identify a series
}

// Frequency is the calendar unit of one period.
type Frequency string

// Calendar frequencies.
const (
	Day     Frequency = "day"
	Week    Frequency = "week"
	Month   Frequency = "month"
	Quarter Frequency = "quarter"
	Year    Frequency = "year"
)

// Frequencies lists the allowed values of Frequency.
var Frequencies = []string{string(Day), string(Week), string(Month), string(Quarter), string(Year)}

// DefaultSeasonLength is the season length used when the spec gives none.
var DefaultSeasonLength = map[Frequency]int{Day: 7, Week: 52, Month: 12, Quarter: 4, Year: 1}

// Calendar says what one period is and how many make a season.
type Calendar struct {
	Frequency    Frequency
	SeasonLength int // periods per season; default from the frequency

	// Seasons lists every season length in ascending order when the spec
	// gives more than one (season_length: [7, 365]); SeasonLength is then
	// Seasons[0], the cycle single-season methods use. Nil with one.
	Seasons []int
}

// SeveralCycles reports whether the calendar has more than one season
// length (season_length given as a list).
func (c Calendar) SeveralCycles() bool { return len(c.Seasons) > 1 }

// AllSeasons returns every season length of the calendar in ascending
// order: Seasons, or SeasonLength alone.
func (c Calendar) AllSeasons() []int {
	if len(c.Seasons) > 0 {
		return c.Seasons
	}
	return []int{c.SeasonLength}
}

// Combine says how rows that fall into the same period of one series combine.
type Combine string

// Combine rules.
const (
	CombineSum    Combine = "sum"
	CombineMean   Combine = "mean"
	CombineLast   Combine = "last" // the last row in input order
	CombineReject Combine = "reject"
)

// CombineRules lists the allowed values of Combine.
var CombineRules = []string{string(CombineSum), string(CombineMean), string(CombineLast), string(CombineReject)}

// Gaps says what a period with no rows becomes, between a series' first and
// last period.
type Gaps string

// Gap rules.
const (
	GapsZero    Gaps = "zero"
	GapsMissing Gaps = "missing"
	GapsReject  Gaps = "reject"
)

// GapRules lists the allowed values of Gaps.
var GapRules = []string{string(GapsZero), string(GapsMissing), string(GapsReject)}

// End says where each series' history ends.
type End string

// History ends.
const (
	// EndPanel: every series runs to the latest period found in the whole
	// input, so all forecasts start at the same period; the periods after
	// a series' last row are gaps, filled by the gap rule.
	EndPanel End = "panel"
	// EndSeries: each series ends at its own last row.
	EndSeries End = "series"
)

// Ends lists the allowed values of End.
var Ends = []string{string(EndPanel), string(EndSeries)}

// StrayDates says what happens to rows dated far outside the bulk of the
// input: periods separated from the rest by a long run of periods with no
// rows at all, holding a tiny share of the rows (one row dated 2031 in a
// 2022–2024 export).
type StrayDates string

// Stray date rules.
const (
	StrayStop StrayDates = "stop" // the run stops with an error naming the rows
	StrayDrop StrayDates = "drop" // the rows are left out, a problems row each
	StrayKeep StrayDates = "keep" // the rows are used as they are
)

// StrayRules lists the allowed values of StrayDates.
var StrayRules = []string{string(StrayStop), string(StrayDrop), string(StrayKeep)}

// PartialPeriod says what happens to the last period when the rows carry
// dates finer than the calendar and the data ends before that period does
// (daily rows ending on a Tuesday, weekly calendar).
type PartialPeriod string

// Partial period rules.
const (
	PartialDrop PartialPeriod = "drop" // the incomplete last period is left out (a problems row says so)
	PartialKeep PartialPeriod = "keep" // it is used as if complete
)

// PartialRules lists the allowed values of PartialPeriod.
var PartialRules = []string{string(PartialDrop), string(PartialKeep)}

// KeyVariants says what happens when two key values differ only by
// surrounding whitespace or letter case ("Station " and "Station").
type KeyVariants string

// Key variant rules.
const (
	KeyVariantsWarn  KeyVariants = "warn"  // separate series; a problems row names both spellings
	KeyVariantsTrim  KeyVariants = "trim"  // surrounding whitespace is removed from every key value
	KeyVariantsLower KeyVariants = "lower" // whitespace removed and letters lower-cased
)

// KeyVariantRules lists the allowed values of KeyVariants.
var KeyVariantRules = []string{string(KeyVariantsWarn), string(KeyVariantsTrim), string(KeyVariantsLower)}

// Shaping turns rows into one value per period.
type Shaping struct {
	Combine Combine
	Gaps    Gaps
	End     End
	// Until, when set (YYYY-MM-DD), ignores rows dated after that day, so
	// a scheduled run or a backfill sees the same data whenever it runs.
	// The --as-of flag sets it.
	Until       string
	StrayDates  StrayDates
	Partial     PartialPeriod
	KeyVariants KeyVariants
}

// DefaultShaping: rows in one period are summed (so daily order lines add up
// to weekly demand), a period with no rows is zero demand, and every series
// runs to the end of the panel. A series starts at its own first row. Stray
// dates stop the run, an incomplete last period is dropped, and key values
// that differ only by whitespace or case are reported.
var DefaultShaping = Shaping{Combine: CombineSum, Gaps: GapsZero, End: EndPanel,
	StrayDates: StrayStop, Partial: PartialDrop, KeyVariants: KeyVariantsWarn}

// ProblemDetail says how warnings about defaults the spec did not set are
// written to the problems table.
type ProblemDetail string

// Problem detail levels.
const (
	// DetailSummary: one run-level row per code for such warnings, with the
	// count of series it concerns (the default).
	DetailSummary ProblemDetail = "summary"
	// DetailSeries: one row per series.
	DetailSeries ProblemDetail = "series"
)

// ProblemDetails lists the allowed values of ProblemDetail.
var ProblemDetails = []string{string(DetailSummary), string(DetailSeries)}

// Bounds on the sizes a spec may ask for; each keeps a typo from turning
// into a huge allocation. README's "Limits" section documents them.
const (
	// MaxHorizon bounds horizon, backtest.horizon and backtest.step.
	MaxHorizon = 10_000
	// MaxFolds bounds backtest.folds.
	MaxFolds = 100
)

// Form is additive or multiplicative.
type Form string

// Decomposition forms.
const (
	Additive       Form = "additive"
	Multiplicative Form = "multiplicative"
)

// Forms lists the allowed values of Form.
var Forms = []string{string(Additive), string(Multiplicative)}

// Decomposition configures the decompose stage, which writes the components
// and seasonal_factors tables.
type Decomposition struct {
	Method  string         // a method that decomposes: classical (default) or stl
	Options map[string]any // that method's options, defaults filled
	// Form and Average mirror the classical options (empty for others).
	Form    Form
	Average string
}

// DefaultDecomposition is a multiplicative classical decomposition with
// factors averaged by the mean.
var DefaultDecomposition = Decomposition{Method: "classical", Form: Multiplicative, Average: "mean",
	Options: map[string]any{"form": string(Multiplicative), "average": "mean"}}

// MethodSpec is one method to run, with its validated and defaulted options.
type MethodSpec struct {
	Method  string         // registered method name, e.g. "classical"
	Label   string         // output name; defaults to Method; unique within the spec
	Options map[string]any // string, int, float64 or bool values, defaults filled
}

// Limits bound what one run may take on, so that a broken export fails
// clearly instead of exhausting the machine.
type Limits struct {
	// MaxSeries is the most series a run may hold; more stops the run
	// before any forecasting.
	MaxSeries int
	// MaxPeriods is the longest a series may be, in periods from its first
	// row to its end; a longer series (usually one stray date) is skipped
	// with a problems row and the rest of the run goes on.
	MaxPeriods int
}

// DefaultLimits: ten million series, and 100,000 periods (about 270 years
// of days).
var DefaultLimits = Limits{MaxSeries: 10_000_000, MaxPeriods: 100_000}

// Report asks for report.html beside the tables: a self-contained page
// with the leaderboard, the distribution of scores, the worst and most
// changed series, and a chart per listed series.
type Report struct {
	Series []string // keys to chart, the key columns' values joined by " / "
	Picks  int      // worst-scoring (and most-changed) series added automatically; default 6
}

// DefaultOutputRoot is where the run folder goes when the spec names none:
// runs/<name> beside the spec.
const DefaultOutputRoot = "runs"
