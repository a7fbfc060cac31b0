package ingest

import "sort"

// origins says where each row held in memory came from: its input file and
// its CSV line or Parquet row number. Rows are added in input order, so
// the lines of one file mostly follow each other; a run of rows whose lines
// do is stored once, as its first row, file and line. A Parquet input is
// then one run, a CSV input one run per skipped line, where two columns
// per row took 12 bytes a row (a tenth of a second of page faults alone on
// a 3-million-row panel, on the goroutine every row passes through).
type origins struct {
	start []int   // row index where each run starts, increasing
	file  []int32 // the run's file (index into the run's inputs)
	line  []int64 // the line (or row number) of the run's first row
}

// add records that row i (the next row: i equals the rows added so far)
// came from line of file.
func (o *origins) add(i int, file int32, line int64) {
	if n := len(o.start); n > 0 && o.file[n-1] == file && o.line[n-1]+int64(i-o.start[n-1]) == line {
		return
	}
	o.start = append(o.start, i)
	o.file = append(o.file, file)
	o.line = append(o.line, line)
}

// at is row i's file and line.
func (o *origins) at(i int) (file int32, line int64) {
	k := sort.Search(len(o.start), func(k int) bool { return o.start[k] > i }) - 1
	return o.file[k], o.line[k] + int64(i-o.start[k])
}
