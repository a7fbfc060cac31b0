package rundiff

import (
	"bytes"
	"encoding/json"
	"fmt"
	"sort"
	"strings"
)

func (d *Diff) notes() {
	b, h := d.Base, d.Head
	switch {
	case d.Mode == ModeChosen:
		d.Notes = append(d.Notes, "both runs have a backtest: one row per series, following each run's chosen entry")
	case !b.Backtest && !h.Backtest:
		d.Notes = append(d.Notes, "neither run has a backtest: one row per series and method")
	case b.Backtest:
		d.Notes = append(d.Notes, "head has no backtest (base has one): one row per series and method; scores and switches are not compared")
	default:
		d.Notes = append(d.Notes, "base has no backtest (head has one): one row per series and method; scores and switches are not compared")
	}
	if d.Mode == ModeChosen && b.Metric != h.Metric {
		d.Notes = append(d.Notes, fmt.Sprintf("selection metric changed from %s to %s: scores are not compared", b.Metric, h.Metric))
	}
	if b.Horizon != h.Horizon {
		d.Notes = append(d.Notes, fmt.Sprintf("horizon changed from %d to %d: each total covers its own run's horizon", b.Horizon, h.Horizon))
	}
	if b.Almanac != h.Almanac {
		d.Notes = append(d.Notes, fmt.Sprintf("almanac version changed from %s to %s", b.Almanac, h.Almanac))
	}
}

// specChanges lists the top-level canonical spec fields that differ.
func (d *Diff) specChanges(b, h *side) {
	d.SpecChanged = b.info.SpecSHA256 != h.info.SpecSHA256
	fields := map[string]bool{}
	for f := range b.canon {
		fields[f] = true
	}
	for f := range h.canon {
		fields[f] = true
	}
	names := make([]string, 0, len(fields))
	for f := range fields {
		names = append(names, f)
	}
	sort.Strings(names)
	for _, f := range names {
		bv, hv := compact(b.canon[f]), compact(h.canon[f])
		if bv == hv {
			continue
		}
		var note string
		switch {
		case f == "methods":
			note = methodChanges(b.canon[f], h.canon[f])
		case bv == "":
			note = "added: " + short(hv)
		case hv == "":
			note = "removed (was " + short(bv) + ")"
		default:
			note = short(bv) + " → " + short(hv)
		}
		d.SpecFields = append(d.SpecFields, FieldChange{Field: f, Note: note})
	}
}

func compact(raw json.RawMessage) string {
	if len(raw) == 0 {
		return ""
	}
	var buf bytes.Buffer
	if json.Compact(&buf, raw) != nil {
		return string(raw)
	}
	return buf.String()
}

// short returns a compact JSON value, cut to 60 characters.
func short(s string) string {
	const max = 60
	if r := []rune(s); len(r) > max {
		return string(r[:max-1]) + "…"
	}
	return s
}

// methodChanges describes how the method lists differ, by label.
func methodChanges(braw, hraw json.RawMessage) string {
	type m struct {
		Label string `json:"label"`
	}
	parse := func(raw json.RawMessage) ([]string, map[string]string) {
		var items []json.RawMessage
		_ = json.Unmarshal(raw, &items)
		var order []string
		body := map[string]string{}
		for _, it := range items {
			var x m
			_ = json.Unmarshal(it, &x)
			order = append(order, x.Label)
			body[x.Label] = compact(it)
		}
		return order, body
	}
	bo, bb := parse(braw)
	ho, hb := parse(hraw)
	var added, removed, changed []string
	for _, l := range ho {
		if v, ok := bb[l]; !ok {
			added = append(added, l)
		} else if v != hb[l] {
			changed = append(changed, l)
		}
	}
	for _, l := range bo {
		if _, ok := hb[l]; !ok {
			removed = append(removed, l)
		}
	}
	var parts []string
	if len(added) > 0 {
		parts = append(parts, "added "+strings.Join(added, ", "))
	}
	if len(removed) > 0 {
		parts = append(parts, "removed "+strings.Join(removed, ", "))
	}
	if len(changed) > 0 {
		parts = append(parts, "options changed: "+strings.Join(changed, ", "))
	}
	if len(parts) == 0 {
		parts = append(parts, "reordered")
	}
	return strings.Join(parts, "; ")
}

// inputChanges compares the manifests' input files by path.
func (d *Diff) inputChanges(b, h *side) {
	type in struct {
		sha        string
		rows, size int64
	}
	bm, hm := map[string]in{}, map[string]in{}
	var paths []string
	for _, x := range b.run.Manifest.Inputs {
		bm[x.Path] = in{x.SHA256, x.Rows, x.Size}
		paths = append(paths, x.Path)
	}
	for _, x := range h.run.Manifest.Inputs {
		hm[x.Path] = in{x.SHA256, x.Rows, x.Size}
		if _, ok := bm[x.Path]; !ok {
			paths = append(paths, x.Path)
		}
	}
	sort.Strings(paths)
	for _, p := range paths {
		bi, inB := bm[p]
		hi, inH := hm[p]
		c := InputChange{Path: p, BaseSHA256: bi.sha, HeadSHA256: hi.sha, BaseRows: bi.rows, HeadRows: hi.rows, BaseSize: bi.size, HeadSize: hi.size}
		switch {
		case !inB:
			c.Change = "added"
		case !inH:
			c.Change = "removed"
		case bi.sha != hi.sha:
			c.Change = "changed"
		default:
			continue
		}
		d.Inputs = append(d.Inputs, c)
	}
	// Pair removed and added inputs with the same content, in path order.
	var kept []InputChange
	used := map[int]bool{}
	for i, a := range d.Inputs {
		if a.Change != "added" {
			continue
		}
		for j, r := range d.Inputs {
			if r.Change == "removed" && !used[j] && r.BaseSHA256 == a.HeadSHA256 {
				used[i], used[j] = true, true
				a.Change, a.From = "moved", r.Path
				a.BaseSHA256, a.BaseRows, a.BaseSize = r.BaseSHA256, r.BaseRows, r.BaseSize
				d.Inputs[i] = a
				break
			}
		}
	}
	for j, c := range d.Inputs {
		if c.Change == "removed" && used[j] {
			continue
		}
		kept = append(kept, c)
	}
	d.Inputs = kept
}
