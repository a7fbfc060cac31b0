package runfolder

// Problem is one row of the problems table.
type Problem struct {
	Key      []string // nil for run-level problems
	Stage    string
	Severity string // error | warning
	Code     string // stable and machine-readable: one of the Code constants
	Method   string // "" when no method is concerned
	Message  string
}

// Problem codes: the problems table's code column. schemas/tables.md
// documents each; a code, once written, keeps its meaning.
const (
	CodeAfterUntil        = "after_until"
	CodeNoRows            = "no_rows"
	CodeEmptyKey          = "empty_key"
	CodeMissingValues     = "missing_values"
	CodeKeyVariants       = "key_variants"
	CodeStrayPeriod       = "stray_period"
	CodePartialPeriod     = "partial_period"
	CodeAggregateOverflow = "aggregate_overflow"
	CodeTooLong           = "too_long"
	CodeAllMissing        = "all_missing"
	CodeShortHistory      = "short_history"
	CodeNonpositive       = "nonpositive_for_multiplicative"
	CodeDecomposeFailed   = "decompose_failed"
	CodeDecomposeWarning  = "decompose_warning"
	CodeMethodFailed      = "method_failed"
	CodeMethodWarning     = "method_warning"
	CodeCombinationFailed = "combination_failed"
	CodeBacktestShort     = "backtest_short"
	CodeClosedPeriod      = "closed_period"
	CodePartialClosure    = "partial_closure"
	CodeImputed           = "imputed"
)

// WriteProblem appends p to the problems table t.
func WriteProblem(t *TableWriter, p Problem) error {
	t.Key(p.Key)
	t.Str(0, p.Stage)
	t.Str(1, p.Severity)
	t.Str(2, p.Code)
	t.StrOrNull(3, p.Method)
	t.Str(4, p.Message)
	return t.EndRow()
}
