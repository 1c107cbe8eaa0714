package stats

import (
	"encoding/json"
	"math"
	"testing"
)

func near4(a, b float64) bool { return math.Abs(a-b) < 1e-4 }

// TestCohenKappa checks kappa on literal tables.
func TestCohenKappa(t *testing.T) {
	tests := []struct {
		name            string
		table           [][]int
		po, pe, kappa   float64
		se, low, high   float64
		agreements, nOK int
	}{
		// Cohen J, Educ Psychol Meas 1960;20:37–46, as given in
		// clinical-reference §6: 20, 5 / 10, 15 gives po 0.70, pe 0.50,
		// κ 0.40; the Fleiss–Cohen–Everitt 1969 standard error is 0.1270 and
		// the interval 0.151 to 0.649 (clinical-reference §6 check value,
		// reproduced there by a reference statistics library). By hand:
		// A = 0.4·0.34² + 0.3·0.46² = 0.10972, B = 0.36·(0.1·1.21 + 0.2·0.81)
		// = 0.10188, C = 0.1² = 0.01; SE = √(0.2016/12.5) = 0.126996.
		{"reference check", [][]int{{20, 5}, {10, 15}}, 0.70, 0.50, 0.40, 0.126996, 0.151092, 0.648908, 35, 50},
		// Hand count: n 30, agreements 24 (po 0.8); rows 12, 10, 8 and
		// columns 11, 12, 7 give pe = (132+120+56)/900 = 0.342222;
		// κ = 0.457778/0.657778 = 0.695946; Fleiss–Cohen–Everitt SE 0.110630
		// (the same formula worked in a second form, with po, by script).
		{"three classes", [][]int{{10, 2, 0}, {1, 8, 1}, {0, 2, 6}}, 0.8, 0.342222, 0.695946, 0.110630, 0.479116, 0.912776, 24, 30},
		// Hand count: po 19/20, pe (9·10+11·10)/400 = 0.5, κ 0.9, SE
		// 0.096979; 0.9 + 1.96·SE passes 1 and is clamped to the range of
		// kappa (clinical-reference §6).
		{"upper limit clamped to 1", [][]int{{9, 0}, {1, 10}}, 0.95, 0.5, 0.9, 0.096979, 0.709924, 1, 19, 20},
		// Hand count: po 0.1, pe 0.5, κ −0.8, SE 0.134164; the lower limit
		// is clamped to −1.
		{"lower limit clamped to −1", [][]int{{1, 9}, {9, 1}}, 0.1, 0.5, -0.8, 0.134164, -1, -0.537043, 2, 20},
		// Perfect agreement on two categories: κ 1, SE 0.
		{"perfect", [][]int{{4, 0}, {0, 6}}, 1, 0.52, 1, 0, 1, 1, 10, 10},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			k := CohenKappa(tc.table)
			if k.Agreements != tc.agreements || k.N != tc.nOK || !near4(k.Po, tc.po) || !near4(k.Pe, tc.pe) ||
				!near4(k.Kappa, tc.kappa) || !near4(k.SE, tc.se) || !near4(k.CI.Low, tc.low) || !near4(k.CI.High, tc.high) {
				t.Fatalf("got %+v", k)
			}
		})
	}
	// Undefined: every item in one category for both ratings (pe = 1), or none.
	for _, table := range [][][]int{{{5, 0}, {0, 0}}, {{0, 0}, {0, 0}}} {
		k := CohenKappa(table)
		if !math.IsNaN(k.Kappa) || !math.IsNaN(k.SE) || !math.IsNaN(k.CI.Low) || !math.IsNaN(k.CI.High) {
			t.Errorf("%v: kappa %v should be undefined", table, k.Kappa)
		}
	}
}

// TestKappaJSON checks that an undefined kappa is written with null for
// every undefined number, since JSON has no NaN.
func TestKappaJSON(t *testing.T) {
	b, _ := json.Marshal(CohenKappa([][]int{{5, 0}, {0, 0}}))
	if string(b) != `{"agreements":5,"n":5,"po":1,"pe":1,"kappa":null,"se":null,"ci_low":null,"ci_high":null}` {
		t.Errorf("undefined kappa: %s", b)
	}
}
