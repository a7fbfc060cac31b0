package runfolder

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// shardName is the Hive-style partition folder of a shard: shard=0003.
func shardName(i int) string { return fmt.Sprintf("shard=%04d", i) }

// MaxShards bounds a sharded run's shard count, on the command line and in
// manifests read back (a corrupt count must not allocate without end).
const MaxShards = 10000

// ValidateShard checks a shard's index and count.
func ValidateShard(index, count int) error {
	if count < 1 || count > MaxShards {
		return fmt.Errorf("shard count %d is outside 1…%d", count, MaxShards)
	}
	if index < 0 || index >= count {
		return fmt.Errorf("shard index %d is outside 0…%d", index, count-1)
	}
	return nil
}

// ShardsDir holds each finished shard's manifest in a sharded dataset.
const ShardsDir = "_shards"

// ShardInfo is recorded in a shard's manifest.
type ShardInfo struct {
	Index int `json:"index"`
	Count int `json:"count"`
}

// PrepareDataset makes (or accepts) the dataset folder the shards of a
// count-shard run write into. It refuses a plain run folder, and a dataset
// holding shards of a run with another shard count (their parts would be
// read with the new ones) unless clean is set: then that run's leftovers
// are removed.
func PrepareDataset(target string, inputs []Input, count int, clean bool) error {
	if err := CheckTarget(target, inputs); err != nil {
		return err
	}
	if _, err := os.Stat(filepath.Join(target, MarkerFile)); err == nil {
		if _, err := os.Stat(filepath.Join(target, ShardsDir)); errors.Is(err, os.ErrNotExist) {
			return fmt.Errorf("%s is the folder of a run that was not sharded; shard parts go into a dataset folder of their own (choose another --out, or remove the folder)", target)
		}
	}
	if stale := staleShards(target, count); len(stale) > 0 {
		if !clean {
			return fmt.Errorf("%s holds %s of a run with another shard count (this run has %d shards); rerun with --clean-shards to remove them, or write to another folder", target, strings.Join(stale, ", "), count)
		}
		for _, p := range stale {
			if err := os.RemoveAll(filepath.Join(target, p)); err != nil {
				return err
			}
		}
		if err := os.Remove(filepath.Join(target, ManifestFile)); err != nil && !errors.Is(err, os.ErrNotExist) {
			return err
		}
	}
	if err := os.MkdirAll(filepath.Join(target, ShardsDir), 0o755); err != nil {
		return err
	}
	marker := filepath.Join(target, MarkerFile)
	f, err := os.OpenFile(marker, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
	if errors.Is(err, os.ErrExist) {
		return nil // another shard (or an earlier run) marked it
	}
	if err != nil {
		return err
	}
	_, werr := f.WriteString(markerText)
	if err := errors.Join(werr, f.Sync(), f.Close()); err != nil {
		return fmt.Errorf("writing %s: %w", marker, err)
	}
	return fsyncPath(target)
}

// staleShards lists what a run with another shard count left: manifests of
// another count, and part folders of shard indexes at or past count.
func staleShards(target string, count int) []string {
	var out []string
	manifests, _ := filepath.Glob(filepath.Join(target, ShardsDir, "shard=*.json"))
	sort.Strings(manifests)
	for _, p := range manifests {
		var m struct{ Shard *ShardInfo }
		b, err := os.ReadFile(p)
		if err == nil {
			err = json.Unmarshal(b, &m)
		}
		if err != nil || m.Shard == nil || m.Shard.Count != count {
			out = append(out, filepath.ToSlash(filepath.Join(ShardsDir, filepath.Base(p))))
		}
	}
	parts, _ := filepath.Glob(filepath.Join(target, "*", "shard=*"))
	sort.Strings(parts)
	for _, p := range parts {
		var i int
		if _, err := fmt.Sscanf(filepath.Base(p), "shard=%d", &i); err != nil || i >= count {
			out = append(out, filepath.ToSlash(filepath.Join(filepath.Base(filepath.Dir(p)), filepath.Base(p))))
		}
	}
	return out
}

// CommitShard moves a shard's staged tables into the dataset's partition
// folders, <table>/shard=NNNN/part.parquet, then its manifest into
// _shards/shard=NNNN.json. The manifest goes last and is removed first, so
// a shard whose manifest is present is complete.
func CommitShard(staging, target string, index int, tables []string) error {
	name := shardName(index)
	manifest := filepath.Join(target, ShardsDir, name+".json")
	// The combined manifest no longer describes the dataset once a shard
	// changes: it goes first, and combine writes it again.
	if err := os.Remove(filepath.Join(target, ManifestFile)); err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	if err := os.Remove(manifest); err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	// Parts of tables this run no longer writes would be stale. (Glob fails
	// only on a malformed pattern; shard names have no pattern characters.)
	old, _ := filepath.Glob(filepath.Join(target, "*", name, "part.parquet"))
	keep := map[string]bool{}
	for _, t := range tables {
		keep[filepath.Join(target, t, name, "part.parquet")] = true
	}
	for _, o := range old {
		if !keep[o] {
			if err := os.Remove(o); err != nil && !errors.Is(err, os.ErrNotExist) {
				return err
			}
		}
	}
	for _, t := range tables {
		dir := filepath.Join(target, t, name)
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return err
		}
		if err := os.Rename(filepath.Join(staging, t+".parquet"), filepath.Join(dir, "part.parquet")); err != nil {
			return err
		}
		// The part's entry, and the partition folder's in its table folder.
		if err := errors.Join(fsyncPath(dir), fsyncPath(filepath.Dir(dir))); err != nil {
			return err
		}
	}
	if err := os.Rename(filepath.Join(staging, ManifestFile), manifest); err != nil {
		return err
	}
	if err := fsyncPath(filepath.Join(target, ShardsDir)); err != nil {
		return fmt.Errorf("shard %d is in place but %s could not be synced, so it may not survive a crash: %w", index, ShardsDir, err)
	}
	return os.RemoveAll(staging)
}

// CombinedManifest is a sharded dataset's manifest.json, written by
// Combine once every shard is present and complete.
type CombinedManifest struct {
	Almanac string          `json:"almanac_version"`
	RunID   string          `json:"run_id"`
	Spec    ManifestSpec    `json:"spec"`
	Inputs  []Input         `json:"inputs"`
	Shards  []CombinedShard `json:"shards"`
	Series  int             `json:"series"`
	Tables  []CombinedTable `json:"tables"`
	// Problems sums the shards' counts.
	Problems ProblemCounts `json:"problems"`
	// Chosen sums, per method, the series each shard chose it for.
	Chosen map[string]int `json:"series_per_chosen_method,omitempty"`
}

// CombinedShard is one shard of a combined dataset.
type CombinedShard struct {
	Index    int     `json:"index"`
	Manifest string  `json:"manifest"`
	Series   int     `json:"series"`
	Seconds  float64 `json:"seconds"`
}

// CombinedTable lists a table's part files.
type CombinedTable struct {
	Name  string      `json:"name"`
	Rows  int64       `json:"rows"`
	Parts []TableInfo `json:"parts"`
}

// Combine checks that every shard of a sharded dataset is present and
// complete — one manifest per shard index, all of the same run (spec and
// inputs), every part file present with its recorded SHA-256 — and writes
// the combined manifest.json. It reports what it checked to w.
func Combine(dir string, w io.Writer) (*CombinedManifest, error) {
	paths, ms, err := readShardManifests(dir)
	if err != nil {
		return nil, err
	}
	for i, m := range ms {
		if err := ValidateShard(m.Shard.Index, m.Shard.Count); err != nil {
			return nil, fmt.Errorf("%s: %v", paths[i], err)
		}
	}
	count := ms[0].Shard.Count
	seen := map[int]*Manifest{}
	var problems []string
	for i, m := range ms {
		if m.Shard.Count != count {
			problems = append(problems, fmt.Sprintf("%s is shard %d of %d, others of %d", paths[i], m.Shard.Index, m.Shard.Count, count))
		}
		if m.RunID != ms[0].RunID {
			problems = append(problems, fmt.Sprintf("%s has run id %s, shard %d has %s: different spec or inputs", paths[i], ShortHash(m.RunID), ms[0].Shard.Index, ShortHash(ms[0].RunID)))
		}
		seen[m.Shard.Index] = m
	}
	var missing []string
	for i := 0; i < count; i++ {
		if seen[i] == nil {
			missing = append(missing, fmt.Sprint(i))
		}
	}
	if len(missing) > 0 {
		problems = append(problems, fmt.Sprintf("shard(s) %s of %d missing or incomplete", strings.Join(missing, ", "), count))
	}
	c := &CombinedManifest{Almanac: ms[0].Almanac, RunID: ms[0].RunID, Spec: ms[0].Spec, Inputs: ms[0].Inputs, Chosen: map[string]int{}}
	tables := map[string]*CombinedTable{}
	var order []string
	for i := 0; i < count; i++ {
		m := seen[i]
		if m == nil {
			continue
		}
		c.Shards = append(c.Shards, CombinedShard{Index: i, Manifest: filepath.ToSlash(filepath.Join(ShardsDir, shardName(i)+".json")), Series: m.Series, Seconds: m.Seconds})
		c.Series += m.Series
		c.Problems.Errors += m.Problems.Errors
		c.Problems.Warnings += m.Problems.Warnings
		if m.Leaderboard != nil {
			for k, v := range m.Leaderboard.Chosen {
				c.Chosen[k] += v
			}
		}
		for _, t := range m.Tables {
			part := filepath.ToSlash(filepath.Join(t.Name, shardName(i), "part.parquet"))
			sum, err := HashFile(filepath.Join(dir, part))
			if err != nil {
				problems = append(problems, fmt.Sprintf("%s: missing", part))
				continue
			}
			if sum != t.SHA256 {
				problems = append(problems, fmt.Sprintf("%s: does not match its shard manifest", part))
				continue
			}
			ct := tables[t.Name]
			if ct == nil {
				ct = &CombinedTable{Name: t.Name}
				tables[t.Name] = ct
				order = append(order, t.Name)
			}
			ct.Rows += t.Rows
			ct.Parts = append(ct.Parts, TableInfo{Name: t.Name, File: part, Rows: t.Rows, Bytes: t.Bytes, SHA256: t.SHA256})
		}
	}
	if len(problems) > 0 {
		for _, p := range problems {
			fmt.Fprintln(w, "combine:", p)
		}
		return nil, fmt.Errorf("%s: %d problem(s); no combined manifest written", dir, len(problems))
	}
	for _, n := range order {
		c.Tables = append(c.Tables, *tables[n])
	}
	b, err := json.MarshalIndent(c, "", "  ")
	if err != nil {
		return nil, err
	}
	tmp := filepath.Join(dir, ".manifest.json.tmp")
	if err := os.WriteFile(tmp, append(b, '\n'), 0o644); err != nil {
		return nil, err
	}
	if err := os.Rename(tmp, filepath.Join(dir, ManifestFile)); err != nil {
		return nil, err
	}
	fmt.Fprintf(w, "combined %d shard(s): %d series, run id %s\n", count, c.Series, ShortHash(c.RunID))
	for _, t := range c.Tables {
		fmt.Fprintf(w, "  %-18s %d part(s), %d rows\n", t.Name, len(t.Parts), t.Rows)
	}
	return c, nil
}

// ShardStaging makes the staging folder of shard index inside the dataset
// folder target, first removing what a killed earlier run of this shard
// may have left.
func ShardStaging(target string, index int) (string, error) {
	// As in MakeStaging: removing a killed run's hidden leftovers is best
	// effort, and Glob fails only on a malformed pattern.
	stale, _ := filepath.Glob(filepath.Join(target, tmpPrefix+shardName(index)+"-*"))
	for _, d := range stale {
		_ = os.RemoveAll(d)
	}
	return os.MkdirTemp(target, tmpPrefix+shardName(index)+"-")
}

// ShortHash is the first 16 hex digits of a hash, for messages.
func ShortHash(h string) string {
	if len(h) > 16 {
		return h[:16]
	}
	return h
}

// readShardManifests reads the shard manifests of a dataset folder, in
// shard file order.
func readShardManifests(dir string) ([]string, []*Manifest, error) {
	paths, _ := filepath.Glob(filepath.Join(dir, ShardsDir, "shard=*.json"))
	sort.Strings(paths)
	if len(paths) == 0 {
		return nil, nil, fmt.Errorf("%s: no shard manifests in %s; is this a sharded run's dataset folder?", dir, ShardsDir)
	}
	var ms []*Manifest
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			return nil, nil, err
		}
		var m Manifest
		if err := json.Unmarshal(b, &m); err != nil {
			return nil, nil, fmt.Errorf("%s: %v", p, err)
		}
		if m.Shard == nil {
			return nil, nil, fmt.Errorf("%s: not a shard manifest", p)
		}
		ms = append(ms, &m)
	}
	return paths, ms, nil
}
