package runfolder

// Problem is one row of the problems table.
type Problem struct {
	Key      []string // nil for run-level problems
	Stage    string
	Severity string // error | warning
	Method   string // "" when no method is concerned
	Message  string
}

// WriteProblem appends p to the problems table t.
func WriteProblem(t *TableWriter, p Problem) error {
	t.Key(p.Key)
	t.Str(0, p.Stage)
	t.Str(1, p.Severity)
	t.StrOrNull(2, p.Method)
	t.Str(3, p.Message)
	return t.EndRow()
}
