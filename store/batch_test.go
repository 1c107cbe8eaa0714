package store

import "testing"

// TestInListWidth: an IN list has the smallest power of two of places that
// holds its ids, never more than a batch.
func TestInListWidth(t *testing.T) {
	for n, want := range map[int]int{1: 1, 2: 2, 3: 4, 4: 4, 5: 8, 255: 256, 256: 256, 257: importBatch, importBatch: importBatch} {
		if got := inListWidth(n); got != want {
			t.Errorf("inListWidth(%d) = %d, want %d", n, got, want)
		}
	}
}
