package stats

import "testing"

func TestMedianOfCounts(t *testing.T) {
	tests := []struct {
		vals []float64
		want float64
	}{
		{[]float64{4}, 4},
		{[]float64{1, 2, 3}, 2},
		{[]float64{1, 2, 3, 4}, 2.5},
		{[]float64{2, 2, 2, 5}, 2},
		{[]float64{1, 1, 5, 5}, 3},
		{[]float64{7, 1, 3, 3, 3, 9}, 3},
	}
	for _, tc := range tests {
		m := map[float64]int{}
		for _, v := range tc.vals {
			m[v]++
		}
		if got := MedianOfCounts(m, len(tc.vals)); got != tc.want {
			t.Errorf("median %v = %v, want %v", tc.vals, got, tc.want)
		}
	}
}
