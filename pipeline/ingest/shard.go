package ingest

// Shard selects the part of a run one task of a cluster's batch scheduler
// does: series whose key hashes to Index modulo Count. Count ≤ 1 means the
// whole run.
type Shard struct {
	Index, Count int
}

// ShardOf assigns a series to a shard by the FNV-1a 64-bit hash of its key
// (the key columns' values joined by a zero byte) modulo count. The hash is
// fixed forever: a series stays on its shard across runs and versions.
func ShardOf(key []byte, count int) uint64 {
	const offset, prime = 14695981039346656037, 1099511628211
	h := uint64(offset)
	for _, b := range key {
		h ^= uint64(b)
		h *= prime
	}
	return h % uint64(count)
}
