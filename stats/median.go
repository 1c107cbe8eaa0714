package stats

import "slices"

// MedianOfCounts returns the median of n values held as value → count; with
// an even n, the mean of the two middle values.
func MedianOfCounts(m map[float64]int, n int) float64 {
	vals := make([]float64, 0, len(m))
	for v := range m {
		vals = append(vals, v)
	}
	slices.Sort(vals)
	// 0-based ranks of the middle value(s).
	lo, hi := (n-1)/2, n/2
	var atLo, atHi float64
	seen := 0
	for _, v := range vals {
		next := seen + m[v]
		if lo >= seen && lo < next {
			atLo = v
		}
		if hi >= seen && hi < next {
			atHi = v
			break
		}
		seen = next
	}
	return (atLo + atHi) / 2
}
