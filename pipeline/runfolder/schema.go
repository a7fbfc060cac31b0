package runfolder

import (
	"fmt"

	"almanac/spec"
)

// The output contract: the tables of a run folder and their fixed columns
// (each table starts with the spec's key columns). schemas/tables.md
// documents them for people; writers and readers use these names.

// Table names, as files in the run folder (with .parquet).
const (
	TableForecasts       = "forecasts"
	TableComponents      = "components"
	TableSeasonalFactors = "seasonal_factors"
	TableProblems        = "problems"
	TableAccuracy        = "accuracy"
	TableChoices         = "choices"
	TableTotals          = "totals"
)

// Column names of the tables.
const (
	ColADI            = "adi"
	ColAdjusted       = "adjusted"
	ColBias           = "bias"
	ColChosen         = "chosen"
	ColCode           = "code"
	ColCount          = "count"
	ColCV2            = "cv2"
	ColDecomposition  = "decomposition"
	ColDemandClass    = "demand_class"
	ColFactor         = "factor"
	ColFirstPeriod    = "first_period"
	ColLastPeriod     = "last_period"
	ColLeadTime       = "lead_time"
	ColTotal          = "total"
	ColTotalSource    = "total_source"
	ColFold           = "fold"
	ColFolds          = "folds"
	ColForm           = "form"
	ColIntervalSource = "interval_source"
	ColMAE            = "mae"
	ColMAPE           = "mape"
	ColMAPEZeros      = "mape_zeros"
	ColMASE           = "mase"
	ColMessage        = "message"
	ColMethod         = "method"
	ColMetric         = "metric"
	ColModel          = "model"
	ColObserved       = "observed"
	ColOrigin         = "origin"
	ColPeriod         = "period"
	ColPosition       = "position"
	ColReason         = "reason"
	ColRemainder      = "remainder"
	ColRMSE           = "rmse"
	ColRMSSE          = "rmsse"
	ColRunnerUp       = "runner_up"
	ColRunnerUpScore  = "runner_up_score"
	ColScore          = "score"
	ColSeasonal       = "seasonal"
	ColSeasonLength   = "season_length"
	ColSeverity       = "severity"
	ColSMAPE          = "smape"
	ColStage          = "stage"
	ColStatus         = "status"
	ColStep           = "step"
	ColTestPeriods    = "test_periods"
	ColScoredPeriods  = "scored_periods"
	ColTrainPeriods   = "train_periods"
	ColTrainStart     = "train_start"
	ColTrend          = "trend"
	ColValue          = "value"
	ColWAPE           = "wape"
)

// ColLower names the lower interval bound of a level in the forecasts
// table: lower_80.
func ColLower(level int) string { return fmt.Sprintf("lower_%d", level) }

// ColUpper names the upper interval bound of a level: upper_80.
func ColUpper(level int) string { return fmt.Sprintf("upper_%d", level) }

// ColQuantile names a quantile of a lead-time total in the totals table:
// quantile_95.
func ColQuantile(level int) string { return fmt.Sprintf("quantile_%d", level) }

// ColSeasonalOf names the component of one seasonal cycle in the
// components table of a calendar with several season lengths: seasonal_7,
// seasonal_365.
func ColSeasonalOf(season int) string { return fmt.Sprintf("seasonal_%d", season) }

// TotalsColumns is the totals table's layout for a spec: a quantile column
// per totals level, in spec order.
func TotalsColumns(s *spec.Spec) []Column {
	cols := []Column{
		{ColMethod, colString, false},
		{ColLeadTime, colInt, false},
		{ColFirstPeriod, colDate, false},
		{ColLastPeriod, colDate, false},
		{ColTotal, colFloat, true},
		{ColTotalSource, colString, true},
	}
	for _, l := range s.Totals.Levels {
		cols = append(cols, Column{ColQuantile(l), colFloat, true})
	}
	return cols
}

// ForecastColumns is the forecasts table's layout for a spec: with a
// backtest it says which entry was chosen; with intervals it has a lower and
// upper bound per level and where the bounds came from.
func ForecastColumns(s *spec.Spec) []Column {
	cols := []Column{
		{ColMethod, colString, false},
		{ColModel, colString, false},
		{ColPeriod, colDate, false},
		{ColStep, colInt, false},
		{ColValue, colFloat, true},
	}
	if s.Backtest.Folds > 0 {
		cols = append(cols, Column{ColChosen, colBool, false})
	}
	if len(s.Intervals.Levels) > 0 {
		cols = append(cols, Column{ColIntervalSource, colString, true})
		for _, l := range s.Intervals.Levels {
			cols = append(cols, Column{ColLower(l), colFloat, true}, Column{ColUpper(l), colFloat, true})
		}
	}
	return cols
}

// AccuracyColumns is the fixed columns (after the keys) of the accuracy table.
func AccuracyColumns() []Column {
	return []Column{
		{ColMethod, colString, false},
		{ColFold, colInt, false},
		{ColOrigin, colDate, false},
		{ColTrainStart, colDate, false},
		{ColTrainPeriods, colInt, false},
		{ColTestPeriods, colInt, false},
		{ColScoredPeriods, colInt, false},
		{ColMAE, colFloat, true},
		{ColRMSE, colFloat, true},
		{ColMAPE, colFloat, true},
		{ColMAPEZeros, colInt, false},
		{ColSMAPE, colFloat, true},
		{ColMASE, colFloat, true},
		{ColRMSSE, colFloat, true},
		{ColWAPE, colFloat, true},
		{ColBias, colFloat, true},
		{ColStatus, colString, false},
	}
}

// ChoiceColumns is the fixed columns (after the keys) of the choices table.
func ChoiceColumns() []Column {
	return []Column{
		{ColChosen, colString, true},
		{ColMetric, colString, false},
		{ColScore, colFloat, true},
		{ColRunnerUp, colString, true},
		{ColRunnerUpScore, colFloat, true},
		{ColFolds, colInt, false},
		{ColDemandClass, colString, true},
		{ColADI, colFloat, true},
		{ColCV2, colFloat, true},
		{ColReason, colString, false},
	}
}

// ComponentColumns is the components table's layout (after the keys) for
// a spec: with several season lengths (spec.Calendar.Seasons) a column per
// cycle follows the columns of the single-season layout.
func ComponentColumns(s *spec.Spec) []Column {
	cols := []Column{
		{ColDecomposition, colString, false},
		{ColForm, colString, false},
		{ColPeriod, colDate, false},
		{ColObserved, colFloat, true},
		{ColTrend, colFloat, true},
		{ColSeasonal, colFloat, true},
		{ColRemainder, colFloat, true},
		{ColAdjusted, colFloat, true},
	}
	if s.Calendar.SeveralCycles() {
		for _, m := range s.Calendar.Seasons {
			cols = append(cols, Column{ColSeasonalOf(m), colFloat, true})
		}
	}
	return cols
}

// FactorColumns is the seasonal_factors table's layout (after the keys)
// for a spec: with several season lengths a season_length column says
// which cycle a row's position belongs to.
func FactorColumns(s *spec.Spec) []Column {
	cols := []Column{
		{ColDecomposition, colString, false},
		{ColForm, colString, false},
	}
	if s.Calendar.SeveralCycles() {
		cols = append(cols, Column{ColSeasonLength, colInt, false})
	}
	return append(cols,
		Column{ColPosition, colInt, false},
		Column{ColFactor, colFloat, true},
		Column{ColCount, colInt, false},
	)
}

// ProblemColumns is the fixed columns (after the keys) of the problems table.
func ProblemColumns() []Column {
	return []Column{
		{ColStage, colString, false},
		{ColSeverity, colString, false},
		{ColCode, colString, false},
		{ColMethod, colString, true},
		{ColMessage, colString, false},
	}
}

// Name is the table's name.
func (t *TableWriter) Name() string { return t.name }

// Path is the table's file.
func (t *TableWriter) Path() string { return t.path }

// Rows is how many rows were written.
func (t *TableWriter) Rows() int64 { return t.rows }
