package ingest

import (
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"almanac/pipeline/calendar"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// InputFile is one file a run read, as recorded in the manifest.
type InputFile struct {
	Path   string `json:"path"` // as resolved from the spec's source, relative to the spec's folder when below it
	Format string `json:"format"`
	Size   int64  `json:"size"`
	SHA256 string `json:"sha256"`
	Rows   int64  `json:"rows"`
	Abs    string `json:"-"`
	Source int    `json:"-"` // index into the spec's sources
}

// Rows holds every input row in columns: the interned series key, the
// period, the value (NaN when missing) and where the row came from.
type Rows struct {
	KeyIDs  []int32
	Periods []int64
	Values  []float64
	origin  origins // each row's file and CSV line or Parquet row number (1-based)

	Keys      [][]string // by key id
	keyIndex  map[string]int32
	files_    []InputFile
	Missing   int64               // rows whose value was empty or NaN
	KeyBlanks int64               // rows whose key had an empty component
	Notes     []runfolder.Problem // run-level problems rows: read warnings, the guards' notes

	// Past batchRows rows, rows go to spill instead of the slices above;
	// keyRows counts rows per key either way, rowCount all rows, and
	// panelLast is the latest period seen.
	batchRows int64
	spill     *spill
	spillErr  error
	keyRows   []int64
	RowCount  int64
	PanelLast int64
	order     []int32 // key ids in sorted key order, once batched

	// With sharding, only keys of this shard are kept (see ShardOf).
	shardIndex, shardCount int

	// Times is what the rows' times say, for the time guards (see Guard);
	// the batches of one run share it.
	Times *TimeStats
	// keyRule is shaping.key_variants, applied to key values as read.
	keyRule spec.KeyVariants
	// keyValues, when the spec's events name key columns, holds every
	// value of each key column seen, in any shard (Events.Check).
	keyValues []map[string]bool
}

func newRows() *Rows {
	return &Rows{keyIndex: map[string]int32{}, PanelLast: math.MinInt64}
}

// internJoined is the id of the key whose nparts values, joined by a 0
// byte, are k (key values never hold a 0 byte: see keyCharError); -1 for
// another shard's key.
func (r *Rows) internJoined(k []byte, nparts int) int32 {
	if id, ok := r.keyIndex[string(k)]; ok {
		return id
	}
	if r.keyValues != nil {
		var parts []string
		if nparts > 0 {
			parts = strings.Split(string(k), "\x00")
		}
		r.noteKeyValues(parts)
	}
	if r.shardCount > 1 && int(ShardOf(k, r.shardCount)) != r.shardIndex {
		return -1
	}
	id := int32(len(r.Keys))
	ks := string(k)
	r.keyIndex[ks] = id
	var parts []string
	if nparts > 0 {
		parts = strings.Split(ks, "\x00")
	}
	r.Keys = append(r.Keys, parts)
	r.keyRows = append(r.keyRows, 0)
	return id
}

// reserve makes room for n more rows in memory, up to the batch size
// (rows past it are spilled), so that the columns do not grow by copying.
func (r *Rows) reserve(n int64) {
	if r.spill != nil {
		return
	}
	if r.batchRows > 0 {
		n = min(n, r.batchRows-int64(len(r.KeyIDs)))
	}
	if n <= 0 {
		return
	}
	k := int(n)
	r.KeyIDs = grow(r.KeyIDs, k)
	r.Periods = grow(r.Periods, k)
	r.Values = grow(r.Values, k)
}

// grow is slices.Grow without clearing the room it makes: it is written
// row by row anyway, and clearing a large new slice up front touches every
// page of it at once, on the goroutine every row passes through, where the
// garbage collector cannot preempt it either.
func grow[T any](s []T, k int) []T {
	if cap(s)-len(s) >= k {
		return s
	}
	g := make([]T, len(s), len(s)+k)
	copy(g, s)
	return g
}

func (r *Rows) add(key int32, period int64, value float64, file int32, line int64) {
	if key < 0 { // another shard's series: it still marks the panel's end
		r.PanelLast = max(r.PanelLast, period)
		return
	}
	r.RowCount++
	r.keyRows[key]++
	r.PanelLast = max(r.PanelLast, period)
	if math.IsNaN(value) {
		r.Missing++
	}
	if r.spill == nil && r.batchRows > 0 && int64(len(r.KeyIDs)) >= r.batchRows {
		r.startSpill()
	}
	if r.spill != nil {
		if err := r.spill.add(key, period, value, file, line); err != nil && r.spillErr == nil {
			r.spillErr = err
		}
		return
	}
	r.KeyIDs = append(r.KeyIDs, key)
	r.Periods = append(r.Periods, period)
	r.origin.add(len(r.Values), file, line)
	r.Values = append(r.Values, value)
}

// startSpill moves the rows held so far to a spill file; later rows follow.
func (r *Rows) startSpill() {
	sp, err := newSpill()
	if err != nil {
		r.spillErr = err
		r.batchRows = 0 // keep going in memory
		return
	}
	for i := range r.KeyIDs {
		file, line := r.origin.at(i)
		if err := sp.add(r.KeyIDs[i], r.Periods[i], r.Values[i], file, line); err != nil {
			r.spillErr = err
		}
	}
	r.spill = sp
	r.KeyIDs, r.Periods, r.Values, r.origin = nil, nil, nil, origins{}
}

func (r *Rows) Where(i int) string {
	file, line := r.origin.at(i)
	f := r.files_[file]
	if f.Format == string(spec.FormatParquet) {
		return fmt.Sprintf("%s: row %d", f.Path, line)
	}
	return fmt.Sprintf("%s:%d", f.Path, line)
}

// DataError is bad input data: it names the file and line (or row).
type DataError struct {
	Msgs []string
}

func (e *DataError) Error() string { return strings.Join(e.Msgs, "\n") }

// MaxDataErrors is how many bad rows are reported before reading stops.
const MaxDataErrors = 20

// ResolveSources expands every source's path or glob, relative to the spec's
// folder, into files in sorted order.
func ResolveSources(s *spec.Spec) ([]InputFile, error) {
	pats := make([]pattern, len(s.Sources))
	for i, src := range s.Sources {
		pats[i] = pattern{src.Path, src.Format}
	}
	return resolveFiles(s, "sources", pats)
}

// pattern is a source's path or glob and its format.
type pattern struct {
	path   string
	format spec.Format
}

// resolveFiles expands each path or glob of the spec's list what (sources,
// events), relative to the spec's folder, into files in sorted order.
func resolveFiles(s *spec.Spec, what string, pats []pattern) ([]InputFile, error) {
	var out []InputFile
	seen := map[string]bool{}
	for i, src := range pats {
		glob := src.path
		if !filepath.IsAbs(glob) {
			glob = filepath.Join(s.Dir, glob)
		}
		matches, err := filepath.Glob(glob)
		if err != nil {
			return nil, fmt.Errorf("%s: %s[%d]: bad glob %q: %v", s.File, what, i, src.path, err)
		}
		if len(matches) == 0 {
			if hasMeta(src.path) {
				return nil, fmt.Errorf("%s: %s[%d]: the pattern %q matches no files (looked in %s)", s.File, what, i, src.path, filepath.Dir(glob))
			}
			return nil, fmt.Errorf("%s: %s[%d]: source file %q does not exist (looked for %s)", s.File, what, i, src.path, glob)
		}
		sort.Strings(matches)
		for _, m := range matches {
			st, err := os.Stat(m)
			if err != nil {
				return nil, fmt.Errorf("%s: %s[%d]: %v", s.File, what, i, err)
			}
			if st.IsDir() {
				return nil, fmt.Errorf("%s: %s[%d]: %q matches the folder %s; sources must be files (use a pattern such as %s)", s.File, what, i, src.path, relTo(s.Dir, m), filepath.Join(src.path, "*."+string(src.format)))
			}
			if seen[m] {
				continue
			}
			seen[m] = true
			// A source written relative to the spec is recorded relative
			// to it (even above it, ../data/x.csv), so a copied project
			// verifies against its own inputs and keeps its run id.
			rel := relTo(s.Dir, m)
			if !filepath.IsAbs(src.path) {
				if r, err := filepath.Rel(s.Dir, m); err == nil {
					rel = filepath.ToSlash(r)
				}
			}
			out = append(out, InputFile{Path: rel, Format: string(src.format), Size: st.Size(), Abs: m, Source: i})
		}
	}
	return out, nil
}

func hasMeta(p string) bool { return strings.ContainsAny(p, "*?[") }

// relTo shows path relative to dir when it lies below dir, else absolute.
func relTo(dir, path string) string {
	if r, err := filepath.Rel(dir, path); err == nil && !strings.HasPrefix(r, "..") {
		return filepath.ToSlash(r)
	}
	return path
}

// Read reads every input file into one Rows.
func Read(ctx context.Context, s *spec.Spec, files []InputFile, cal calendar.Calendar, batchRows int64, shard ...Shard) (*Rows, error) {
	rs := newRows()
	rs.files_ = files
	rs.batchRows = batchRows
	rs.Times = newTimeStats(s.Shaping.Until)
	rs.keyRule = s.Shaping.KeyVariants
	if eventsUseKeys(s) {
		rs.keyValues = make([]map[string]bool, len(s.Columns.Keys))
		for i := range rs.keyValues {
			rs.keyValues[i] = map[string]bool{}
		}
	}
	if len(shard) > 0 {
		rs.shardIndex, rs.shardCount = shard[0].Index, shard[0].Count
	}
	for i := range files {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		f := &files[i]
		var err error
		switch f.Format {
		case string(spec.FormatCSV):
			err = readCSV(ctx, s, f, int32(i), s.Sources[f.Source], cal, rs)
		case string(spec.FormatParquet):
			err = readParquet(ctx, s, f, int32(i), cal, rs)
		default:
			err = fmt.Errorf("%s: unknown format %q", f.Path, f.Format)
		}
		if err == nil {
			err = rs.spillErr
		}
		if err != nil {
			rs.spill.close()
			return nil, err
		}
	}
	// A shard whose series are all on other shards still writes its
	// (empty) parts, so that the dataset can be combined.
	if rs.RowCount == 0 && !(rs.shardCount > 1 && len(rs.Times.periods) > 0) {
		rs.spill.close()
		if rs.Times.afterUntil > 0 {
			return nil, fmt.Errorf("every row is dated after %s (shaping.until or --as-of); nothing to forecast", calendar.LabelDay(rs.Times.until))
		}
		return nil, fmt.Errorf("no data rows in any input (%d file(s) read); nothing to forecast", len(files))
	}
	return rs, nil
}

// hashingReader hashes what is read through it.
type hashingReader struct {
	r io.Reader
	h interface {
		io.Writer
		Sum([]byte) []byte
	}
}

func (h *hashingReader) Read(p []byte) (int, error) {
	n, err := h.r.Read(p)
	h.h.Write(p[:n])
	return n, err
}

// ctxEvery is how many rows a reader reads between looks at its context,
// so that a signal stops a long read within a fraction of a second.
const ctxEvery = 4096

// readHeader reads a CSV file's header line, without a byte-order mark and
// with its names trimmed.
func readHeader(cr *csv.Reader, path string, s *spec.Spec) ([]string, error) {
	header, err := cr.Read()
	if err == io.EOF {
		return nil, fmt.Errorf("%s: the file is empty; expected a header line naming the columns %s", path, strings.Join(wantedColumns(s), ", "))
	}
	if err != nil {
		return nil, csvError(path, err)
	}
	header = append([]string(nil), header...)
	if len(header) > 0 {
		header[0] = strings.TrimPrefix(header[0], "\ufeff")
	}
	for i := range header {
		header[i] = strings.TrimSpace(header[i])
	}
	return header, nil
}

func sameFields(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if strings.TrimSpace(strings.TrimPrefix(a[i], "\ufeff")) != b[i] {
			return false
		}
	}
	return true
}

func csvError(path string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		if errors.Is(pe.Err, csv.ErrFieldCount) {
			return fmt.Errorf("%s:%d: this line has a different number of fields from the header", path, pe.Line)
		}
		return fmt.Errorf("%s:%d:%d: CSV: %v", path, pe.Line, pe.Column, pe.Err)
	}
	return fmt.Errorf("%s: %v", path, err)
}

func wantedColumns(s *spec.Spec) []string {
	return append([]string{s.Columns.Time, s.Columns.Value}, s.Columns.Keys...)
}

// columnIndexes finds the time, value and key columns in a header.
func columnIndexes(path string, header []string, s *spec.Spec) ([]int, error) {
	pos := map[string]int{}
	for i, h := range header {
		if _, dup := pos[h]; !dup {
			pos[h] = i
		}
	}
	var out []int
	var missing []string
	for _, want := range wantedColumns(s) {
		i, ok := pos[want]
		if !ok {
			missing = append(missing, fmt.Sprintf("%q", want))
			continue
		}
		out = append(out, i)
	}
	if len(missing) > 0 {
		return nil, missingColumns(path, missing, header)
	}
	return out, nil
}

// missingColumns explains which spec columns a file lacks, lists the
// columns it has, and points out names that differ only in letter case.
func missingColumns(path string, missing, present []string) error {
	quoted := make([]string, len(present))
	for i, h := range present {
		quoted[i] = fmt.Sprintf("%q", h)
	}
	noun := "column"
	if len(missing) > 1 {
		noun = "columns"
	}
	msg := fmt.Sprintf("%s: %s %s named in the spec %s not in the file; columns present: %s",
		path, noun, strings.Join(missing, ", "), map[bool]string{true: "are", false: "is"}[len(missing) > 1], strings.Join(quoted, ", "))
	var hints []string
	for _, m := range missing {
		want, _ := strconv.Unquote(m)
		for _, h := range present {
			if h != want && strings.EqualFold(h, want) {
				hints = append(hints, fmt.Sprintf("%q for %q", h, want))
			}
		}
	}
	if len(hints) > 0 {
		msg += " (names are case-sensitive: the file has " + strings.Join(hints, ", ") + ")"
	}
	return errors.New(msg)
}

// parseValue reads a number. Empty text, NA and NaN are a missing value;
// infinities and anything else that is not a plain number are errors.
func parseValue(s string) (float64, error) {
	t := strings.TrimSpace(s)
	switch t {
	case "", "NA", "NaN", "nan", "NAN", "null", "NULL":
		return math.NaN(), nil
	}
	v, err := strconv.ParseFloat(t, 64)
	if errors.Is(err, strconv.ErrRange) && math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is too large for a 64-bit float", s)
	}
	if err == nil && math.IsInf(v, 0) {
		if strings.ContainsAny(t, "iI") {
			return 0, fmt.Errorf("%q: infinite values are not accepted; leave the cell empty for a missing value", s)
		}
		return 0, fmt.Errorf("%q is too large for a 64-bit float", s)
	}
	if err != nil || math.IsNaN(v) || strings.ContainsAny(t, "xXpP_") {
		hint := ""
		if strings.Contains(t, ",") {
			hint = " (a comma is not read as a decimal point or thousands separator; export plain numbers such as 1234.5)"
		}
		return 0, fmt.Errorf("%q is not a number%s", s, hint)
	}
	return v, nil
}

func CompareKeys(a, b []string) int {
	for i := range a {
		if c := strings.Compare(a[i], b[i]); c != 0 {
			return c
		}
	}
	return 0
}
