package spec

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"
)

// Limits that keep a hostile or broken spec from exhausting the machine.
var (
	// MaxSpecBytes is the largest spec file Load reads.
	MaxSpecBytes int64 = 1 << 20
	// MaxAliasNodes bounds how many nodes YAML aliases may expand to.
	MaxAliasNodes = 10000
)

// Load reads, decodes, defaults and validates the spec at path. On bad input
// it returns an ErrorList with every problem found, each with file:line:col.
// Other errors (the file cannot be read) are returned as they are.
func Load(path string) (*Spec, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("spec %s: %w", path, err)
	}
	defer f.Close()
	if info, err := f.Stat(); err == nil && info.IsDir() {
		return nil, fmt.Errorf("spec %s: is a directory, not a spec file", path)
	}
	// Bounded by the bytes actually read, not by stat: a pipe or a device
	// (/dev/zero) reports no size and would otherwise be read until memory
	// runs out.
	src, err := io.ReadAll(io.LimitReader(f, MaxSpecBytes+1))
	if err != nil {
		return nil, fmt.Errorf("spec %s: %w", path, err)
	}
	if int64(len(src)) > MaxSpecBytes {
		return nil, ErrorList{{File: path, Msg: fmt.Sprintf("spec file is larger than the limit of %d bytes (reading stopped there; a spec this large is almost certainly not hand-written)", MaxSpecBytes)}}
	}
	s, err := Parse(src, path)
	if err != nil {
		return nil, err
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, err
	}
	s.File = path
	s.Dir = filepath.Dir(abs)
	return s, nil
}

// Parse decodes spec source; file is used only in error messages.
func Parse(src []byte, file string) (*Spec, error) {
	if int64(len(src)) > MaxSpecBytes {
		return nil, ErrorList{{File: file, Msg: fmt.Sprintf("spec is %d bytes; the limit is %d bytes", len(src), MaxSpecBytes)}}
	}
	d := &decoder{file: file, src: src}
	var root yaml.Node
	if err := yaml.Unmarshal(src, &root); err != nil {
		return nil, ErrorList{d.yamlError(err)}
	}
	if root.Kind == 0 || len(root.Content) == 0 {
		return nil, ErrorList{{File: file, Line: 1, Col: 1, Msg: "spec is empty; expected a mapping with version, name, sources, columns, calendar, methods and horizon"}}
	}
	s := d.spec(root.Content[0])
	if len(d.errs) > 0 {
		sort.SliceStable(d.errs, func(i, j int) bool {
			a, b := d.errs[i], d.errs[j]
			if a.Line != b.Line {
				return a.Line < b.Line
			}
			return a.Col < b.Col
		})
		return nil, d.errs
	}
	return s, nil
}

var yamlLineRE = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

func (d *decoder) yamlError(err error) *Error {
	msg := err.Error()
	if m := yamlLineRE.FindStringSubmatch(msg); m != nil {
		line, _ := strconv.Atoi(m[1])
		lines := strings.Split(string(d.src), "\n")
		for _, l := range lines[max(0, line-2):min(len(lines), line+1)] {
			if strings.HasPrefix(strings.TrimLeft(l, " "), "\t") {
				m[2] += " (YAML does not allow tabs for indentation; indent with spaces)"
				break
			}
		}
		// yaml.v3 reports the line of the enclosing construct for some
		// errors, so the line is a neighbourhood, not a pinpoint.
		return &Error{File: d.file, Line: line, Col: 1, Msg: "YAML syntax error (at or just after this line): " + m[2]}
	}
	var te *yaml.TypeError
	if errors.As(err, &te) {
		return &Error{File: d.file, Msg: "YAML: " + strings.Join(te.Errors, "; ")}
	}
	return &Error{File: d.file, Msg: "YAML: " + strings.TrimPrefix(msg, "yaml: ")}
}

type decoder struct {
	routeNodes []labelRef
	chooseNode *yaml.Node // selection.choose, when given
	file       string
	src        []byte
	errs       ErrorList
	aliases    int
}

func (d *decoder) errAt(n *yaml.Node, path, format string, args ...any) {
	e := &Error{File: d.file, Path: path, Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line, e.Col = n.Line, n.Column
	}
	d.errs = append(d.errs, e)
}

// resolve follows aliases, counting how many nodes they expand to.
func (d *decoder) resolve(n *yaml.Node) *yaml.Node {
	for n != nil && n.Kind == yaml.AliasNode {
		d.aliases += countNodes(n.Alias, MaxAliasNodes+1)
		if d.aliases > MaxAliasNodes {
			d.errAt(n, "", "YAML aliases expand to more than %d nodes; refusing to expand further", MaxAliasNodes)
			return nil
		}
		n = n.Alias
	}
	return n
}

func countNodes(n *yaml.Node, limit int) int {
	if n == nil {
		return 0
	}
	c := 1
	for _, k := range n.Content {
		if c > limit {
			break
		}
		if k.Kind == yaml.AliasNode {
			c += countNodes(k.Alias, limit-c)
		} else {
			c += countNodes(k, limit-c)
		}
	}
	return c
}

func kindName(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		switch n.Tag {
		case "!!null":
			return "null"
		case "!!bool":
			return "a boolean"
		case "!!int":
			return "an integer"
		case "!!float":
			return "a number"
		}
		return fmt.Sprintf("the string %q", n.Value)
	}
	return "an unexpected node"
}

// field is one key of a mapping: its name, whether it must be present, and
// how to decode its value.
type field struct {
	name     string
	required bool
	decode   func(n *yaml.Node, path string)
}

// mapping decodes a mapping node against a field table: unknown keys are
// rejected with a suggestion, duplicate keys are rejected, and missing
// required keys are reported at the mapping.
func (d *decoder) mapping(n *yaml.Node, path, what string, fields []field) {
	n = d.resolve(n)
	if n == nil {
		return
	}
	if n.Kind != yaml.MappingNode {
		d.errAt(n, path, "expected %s (a mapping), found %s", what, kindName(n))
		return
	}
	names := make([]string, len(fields))
	for i, f := range fields {
		names[i] = f.name
	}
	seen := map[string]*yaml.Node{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if k.Kind != yaml.ScalarNode {
			d.errAt(k, path, "keys must be plain names, found %s", kindName(k))
			continue
		}
		key := k.Value
		sub := joinPath(path, key)
		if prev, dup := seen[key]; dup {
			d.errAt(k, sub, "duplicate key %q (first given at line %d)", key, prev.Line)
			continue
		}
		seen[key] = k
		var f *field
		for j := range fields {
			if fields[j].name == key {
				f = &fields[j]
				break
			}
		}
		if f == nil {
			msg := fmt.Sprintf("unknown key %q in %s", key, what)
			if s := suggest(key, names); s != "" {
				msg += fmt.Sprintf(" (did you mean %q?)", s)
			} else {
				msg += "; allowed keys: " + quoteList(names)
			}
			if what == "columns" && v.Tag == "!!null" && v.Value == "" && i >= 2 && n.Content[i-2].Value == "keys" {
				msg += fmt.Sprintf(" (a comma after keys starts a new entry here; for several key columns write a list: keys: [%s, %s])", n.Content[i-1].Value, key)
			}
			d.errAt(k, sub, "%s", msg)
			continue
		}
		f.decode(v, sub)
	}
	for _, f := range fields {
		if f.required {
			if _, ok := seen[f.name]; !ok {
				d.errAt(n, path, "missing required key %q in %s", f.name, what)
			}
		}
	}
}

func joinPath(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func (d *decoder) scalar(n *yaml.Node, path, what string) (*yaml.Node, bool) {
	n = d.resolve(n)
	if n == nil {
		return nil, false
	}
	if n.Kind != yaml.ScalarNode || n.Tag == "!!null" {
		d.errAt(n, path, "expected %s, found %s", what, kindName(n))
		return nil, false
	}
	return n, true
}

// items walks a list at n, calling each for every item that is present
// (an alias resolved) with its path, path[i]. It returns the list node
// (alias resolved), or nil when n is absent or not a list (the error
// recorded, naming what the list holds).
func (d *decoder) items(n *yaml.Node, path, what string, each func(item *yaml.Node, p string)) *yaml.Node {
	n = d.resolve(n)
	if n == nil {
		return nil
	}
	if n.Kind != yaml.SequenceNode {
		d.errAt(n, path, "expected a list of %s, found %s", what, kindName(n))
		return nil
	}
	for i, item := range n.Content {
		if item = d.resolve(item); item != nil {
			each(item, fmt.Sprintf("%s[%d]", path, i))
		}
	}
	return n
}

func (d *decoder) str(n *yaml.Node, path, what string, dst *string) {
	if n, ok := d.scalar(n, path, what); ok {
		if n.Tag == "!!bool" {
			d.errAt(n, path, "expected %s, found the boolean %s (quote it if you mean the text)", what, n.Value)
			return
		}
		if strings.TrimSpace(n.Value) == "" {
			d.errAt(n, path, "expected %s, found an empty string", what)
			return
		}
		*dst = n.Value
	}
}

func (d *decoder) integer(n *yaml.Node, path, what string, dst *int) bool {
	n, ok := d.scalar(n, path, what)
	if !ok {
		return false
	}
	if n.Tag != "!!int" {
		d.errAt(n, path, "expected %s, found %s", what, kindName(n))
		return false
	}
	// Decimal only: YAML 1.2 reads 012 as twelve, and so does almanac.
	v, err := strconv.ParseInt(strings.TrimPrefix(n.Value, "+"), 10, 32)
	if err != nil {
		d.errAt(n, path, "expected %s, found %s (write a decimal integer within ±2147483647)", what, n.Value)
		return false
	}
	*dst = int(v)
	return true
}

func (d *decoder) enum(n *yaml.Node, path, what string, allowed []string, dst *string) {
	n, ok := d.scalar(n, path, what)
	if !ok {
		return
	}
	for _, a := range allowed {
		if n.Value == a {
			*dst = a
			return
		}
	}
	msg := fmt.Sprintf("%q is not a valid %s; allowed: %s", n.Value, what, quoteList(allowed))
	if s := suggest(n.Value, allowed); s != "" {
		msg += fmt.Sprintf(" (did you mean %q?)", s)
	}
	d.errAt(n, path, "%s", msg)
}
