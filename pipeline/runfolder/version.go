package runfolder

import "sort"

// Version is almanac's version. It is recorded in every table's metadata and
// in the manifest; outputs are reproducible for the same version.
const Version = "0.1.0"

func sortedKeys[V any](m map[string]V) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}
