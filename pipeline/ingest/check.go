package ingest

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/parquet/file"

	"almanac/spec"
)

// CheckSources is what check can say about the inputs without reading
// their rows: every source matches files, and each file (its CSV header
// line, its Parquet schema) names the spec's columns.
func CheckSources(s *spec.Spec) error {
	files, err := ResolveSources(s)
	if err != nil {
		return err
	}
	var errs []error
	for _, f := range files {
		if err := checkHeader(s, f); err != nil {
			errs = append(errs, err)
		}
	}
	return errors.Join(errs...)
}

func checkHeader(s *spec.Spec, f InputFile) (err error) {
	if f.Format == string(spec.FormatParquet) {
		defer func() {
			if r := recover(); r != nil {
				err = fmt.Errorf("%s: not a readable Parquet file: %v", f.Path, r)
			}
		}()
		pf, err := file.OpenParquetFile(f.Abs, false)
		if err != nil {
			return fmt.Errorf("%s: not a readable Parquet file: %v", f.Path, err)
		}
		defer pf.Close()
		_, err = parquetColumns(pf, f.Path, s)
		return err
	}
	fh, err := os.Open(f.Abs)
	if err != nil {
		return fmt.Errorf("%s: %v", f.Path, err)
	}
	defer fh.Close()
	cr := csv.NewReader(io.LimitReader(fh, 1<<20))
	cr.FieldsPerRecord = -1
	if d := s.Sources[f.Source].Delimiter; d != "" {
		cr.Comma, _ = utf8.DecodeRuneInString(d)
	}
	header, err := readHeader(cr, f.Path, s)
	if err != nil {
		return err
	}
	_, err = columnIndexes(f.Path, header, s)
	return err
}
