package network

import "slices"

// compressed builds a compressed sparse pattern (CSR or CSC) with n rows
// (or columns) from the entries (major[k], minor[k]): ptr[i]:ptr[i+1]
// indexes idx, the minor indices of row i, increasing and without
// repeats. With diag, every (i, i) is included. The work is linear in the
// number of entries (a counting sort by row, then a sort within each row)
// and no map is built.
func compressed(n int, major, minor []int, diag bool) (ptr, idx []int) {
	ptr = make([]int, n+1)
	for _, i := range major {
		ptr[i+1]++
	}
	if diag {
		for i := range n {
			ptr[i+1]++
		}
	}
	for i := range n {
		ptr[i+1] += ptr[i]
	}
	idx = make([]int, ptr[n])
	next := slices.Clone(ptr[:n])
	for k, i := range major {
		idx[next[i]] = minor[k]
		next[i]++
	}
	if diag {
		for i := range n {
			idx[next[i]] = i
			next[i]++
		}
	}
	// Sort each row and squeeze out repeats, in place.
	out := 0
	for i := range n {
		row := idx[ptr[i]:ptr[i+1]]
		slices.Sort(row)
		row = slices.Compact(row)
		ptr[i] = out
		out += copy(idx[out:], row)
	}
	ptr[n] = out
	return ptr, idx[:out:out]
}
