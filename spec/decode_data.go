package spec

import (
	"fmt"
	"path/filepath"
	"strings"
	"time"

	"gopkg.in/yaml.v3"
)

func (d *decoder) sources(n *yaml.Node, path string) []Source {
	var out []Source
	list := d.items(n, path, "sources", func(item *yaml.Node, p string) {
		var src Source
		var formatGiven bool
		if item.Kind == yaml.ScalarNode {
			d.str(item, p, "a source path", &src.Path)
		} else {
			d.mapping(item, p, "a source", []field{
				{"path", true, func(n *yaml.Node, p string) { d.str(n, p, "a file path or glob", &src.Path) }},
				{"format", false, func(n *yaml.Node, p string) {
					formatGiven = true
					d.enum(n, p, "format", Formats, (*string)(&src.Format))
				}},
				{"delimiter", false, func(n *yaml.Node, p string) { d.delimiter(n, p, &src.Delimiter) }},
			})
		}
		if src.Path == "" {
			return
		}
		d.sourceFile(item, p, &src, formatGiven)
		out = append(out, src)
	})
	if list != nil && len(list.Content) == 0 {
		d.errAt(list, path, "at least one source is needed")
	}
	return out
}

// keyColumns decodes a list of key column names, or one name, at n: the
// names and the resolved node (nil when absent). A single name holding a
// comma is an error that shows the list it was probably meant to be.
func (d *decoder) keyColumns(n *yaml.Node, p string) ([]string, *yaml.Node) {
	kn := d.resolve(n)
	if kn == nil {
		return nil, nil
	}
	if kn.Kind == yaml.ScalarNode && kn.Tag != "!!null" {
		var k string
		d.str(kn, p, "a key column name", &k)
		if strings.Contains(k, ",") {
			parts := strings.Split(k, ",")
			for i := range parts {
				parts[i] = strings.TrimSpace(parts[i])
			}
			d.errAt(kn, p, "%q is one name holding a comma; for several key columns write a list: keys: [%s]", k, strings.Join(parts, ", "))
			return nil, kn
		}
		if k == "" {
			return nil, kn
		}
		return []string{k}, kn
	}
	if kn.Kind != yaml.SequenceNode {
		d.errAt(kn, p, "expected a list of key column names, found %s", kindName(kn))
		return nil, kn
	}
	keys := []string{}
	for i, k := range kn.Content {
		var name string
		d.str(k, fmt.Sprintf("%s[%d]", p, i), "a key column name", &name)
		if name != "" {
			keys = append(keys, name)
		}
	}
	return keys, kn
}

// sourceFile fills the format (from the extension unless formatGiven) and
// the CSV delimiter of a data or event source at item, and checks the
// delimiter applies and the glob is well formed.
func (d *decoder) sourceFile(item *yaml.Node, p string, src *Source, formatGiven bool) {
	if !formatGiven {
		switch strings.ToLower(filepath.Ext(src.Path)) {
		case ".csv", ".tsv", ".txt":
			src.Format = FormatCSV
		case ".parquet", ".pq":
			src.Format = FormatParquet
		default:
			d.errAt(item, p, "cannot tell the format of %q from its extension; add format: (one of %s)", src.Path, quoteList(Formats))
		}
	}
	if src.Format == FormatCSV && src.Delimiter == "" {
		src.Delimiter = ","
		if strings.EqualFold(filepath.Ext(src.Path), ".tsv") {
			src.Delimiter = "\t"
		}
	}
	if src.Format == FormatParquet && src.Delimiter != "" {
		d.errAt(item, p, "delimiter applies only to CSV sources")
	}
	if err := checkGlob(src.Path); err != nil {
		d.errAt(item, p, "bad glob pattern %q: %v", src.Path, err)
	}
}

func (d *decoder) columns(n *yaml.Node, path string, c *Columns) {
	var keysNode *yaml.Node
	d.mapping(n, path, "columns", []field{
		{"time", true, func(n *yaml.Node, p string) { d.str(n, p, "the name of the time column", &c.Time) }},
		{"value", true, func(n *yaml.Node, p string) { d.str(n, p, "the name of the value column", &c.Value) }},
		{"keys", false, func(n *yaml.Node, p string) { c.Keys, keysNode = d.keyColumns(n, p) }},
	})
	if c.Time != "" && c.Time == c.Value {
		d.errAt(n, path, "time and value name the same column %q", c.Time)
	}
	if keysNode == nil {
		return
	}
	seen := map[string]bool{c.Time: true, c.Value: true}
	for i, k := range c.Keys {
		p := fmt.Sprintf("%s.keys[%d]", path, i)
		at := keysNode
		if keysNode.Kind == yaml.SequenceNode && i < len(keysNode.Content) {
			at = keysNode.Content[i]
		}
		if seen[k] {
			d.errAt(at, p, "column %q is listed twice among time, value and keys", k)
		}
		seen[k] = true
		if IsOutputColumn(k) {
			d.errAt(at, p, "key column %q has the name of an output column, so the tables would hold two columns of that name; rename it in the input (reserved, in any letter case: %s, and lower_<level>, upper_<level>, quantile_<level>, seasonal_<season length>)", k, quoteList(OutputColumns))
		}
	}
}

// checkGlob reports a malformed pattern: filepath.Match finds a bad
// character class only when matching reaches it.
func checkGlob(pattern string) error {
	for i := 0; i < len(pattern); i++ {
		switch pattern[i] {
		case '\\':
			i++
		case '[':
			j := i + 1
			if j < len(pattern) && pattern[j] == '^' {
				j++
			}
			if j < len(pattern) && pattern[j] == ']' {
				j++ // a literal ] first in a class is still malformed in Go; let Match say so
			}
			for j < len(pattern) && pattern[j] != ']' {
				if pattern[j] == '\\' {
					j++
				}
				j++
			}
			if j >= len(pattern) {
				return filepath.ErrBadPattern
			}
			if _, err := filepath.Match(pattern[i:j+1], "a"); err != nil {
				return err
			}
			i = j
		}
	}
	_, err := filepath.Match(pattern, "")
	return err
}

func (d *decoder) calendar(n *yaml.Node, path string, c *Calendar) (seasonNode *yaml.Node) {
	d.mapping(n, path, "calendar", []field{
		{"frequency", true, func(n *yaml.Node, p string) {
			d.enum(n, p, "frequency", Frequencies, (*string)(&c.Frequency))
		}},
		{"season_length", false, func(n *yaml.Node, p string) {
			seasonNode = n
			d.seasonLength(n, p, c)
		}},
	})
	return seasonNode
}

// day decodes a day written YYYY-MM-DD into dst; what says what the day
// is, for the error when the value is not text.
func (d *decoder) day(n *yaml.Node, p, what string, dst *string) {
	var v string
	d.str(n, p, what+" (YYYY-MM-DD)", &v)
	if v == "" {
		return
	}
	if msg := CheckDay(v); msg != "" {
		d.errAt(n, p, "%s", msg)
		return
	}
	*dst = v
}

// CheckDay checks a day written as YYYY-MM-DD (years 1 to 9999) and returns
// what is wrong with it, or "" when it is a real day.
func CheckDay(v string) string {
	if len(v) != 10 || v[4] != '-' || v[7] != '-' {
		return fmt.Sprintf("%q is not a day; write YYYY-MM-DD, e.g. 2024-03-31", v)
	}
	t, err := time.Parse("2006-01-02", v)
	if err != nil || t.Year() < 1 {
		return fmt.Sprintf("%q is not a day of the calendar (years 1 to 9999); write YYYY-MM-DD, e.g. 2024-03-31", v)
	}
	return ""
}
