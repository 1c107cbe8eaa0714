package audit

import (
	"testing"
)

// TestPrintedFiguresShowTheirVerdict checks that value, target and count
// print so that the verdict can be read from them.
func TestPrintedFiguresShowTheirVerdict(t *testing.T) {
	v := func(x float64) *float64 { return &x }
	cases := []struct {
		name                 string
		ind                  Indicator
		value, target, count string
		cases                string
	}{
		// 9497/10000 against the ASGE/ACG 2024 caecal intubation target of
		// 95% (Rex 2024): one decimal would print "95.0%" beside "below".
		{"just below", Indicator{ID: "cir", Numerator: 9497, Denominator: 10000, Value: v(0.9497), Target: v(0.95), Status: Below},
			"94.97%", "≥ 95.0%", "9,497 of 10,000 procedures", "9,497/10,000"},
		{"just above", Indicator{ID: "cir", Value: v(0.95004), Target: v(0.95), Status: Meets},
			"95.004%", "≥ 95.0%", "0 of 0 procedures", "0/0"},
		{"on the target", Indicator{ID: "cir", Value: v(0.95), Target: v(0.95), Status: Meets},
			"95.0%", "≥ 95.0%", "0 of 0 procedures", "0/0"},
		{"far from it", Indicator{ID: "adr", Numerator: 208, Denominator: 668, Value: v(0.3114), Target: v(0.35), Status: Below},
			"31.1%", "≥ 35.0%", "208 of 668 procedures", "208/668"},
		// Discomfort must stay below 10% (JAG certification KPI, Siau 2023):
		// a strict maximum prints "<", so 10.0% reads as not meeting it.
		{"strict maximum", Indicator{ID: "comfort_discomfort", Value: v(0.10), Target: v(0.10), Maximum: true, Strict: true, Status: Below},
			"10.0%", "< 10.0%", "0 of 0 procedures", "0/0"},
		{"maximum", Indicator{ID: "perforation", Scale: 1000, Value: v(0.0005), Target: v(0.001), Maximum: true},
			"0.5 per 1000", "≤ 1.0 per 1000", "0 of 0 procedures", "0/0"},
		{"lesions", Indicator{ID: "pivi2_npv", Numerator: 99, Denominator: 101, Value: v(0.980)},
			"98.0%", "", "99 of 101 lesions", "99/101"},
		{"adenomas per procedure", Indicator{ID: "apc", Kind: KindRatio, Numerator: 1332, Denominator: 2668, Value: v(0.4993)},
			"0.50", "", "1,332 adenomas in 2,668 procedures", "1,332 in 2,668"},
		{"volume", Indicator{ID: "volume", Kind: KindPerYear, Numerator: 1000, Denominator: 365, Value: v(1000)},
			"1,000 per year", "", "1,000 procedures in 365 days", "1,000 in 365 days"},
		{"mean minutes", Indicator{ID: "withdrawal_negative", Kind: KindMean, Numerator: 1960, Denominator: 245, Value: v(7.996), Target: v(8), Status: Below},
			"7.996 min", "≥ 8.0 min", "245 procedures", "245"},
	}
	for _, c := range cases {
		if got := FormatValue(c.ind); got != c.value {
			t.Errorf("%s: value %q, want %q", c.name, got, c.value)
		}
		if got := FormatTarget(c.ind); got != c.target {
			t.Errorf("%s: target %q, want %q", c.name, got, c.target)
		}
		if got := FormatCount(c.ind); got != c.count {
			t.Errorf("%s: count %q, want %q", c.name, got, c.count)
		}
		if got := FormatCases(c.ind); got != c.cases {
			t.Errorf("%s: cases %q, want %q", c.name, got, c.cases)
		}
	}
}

func TestGroupThousands(t *testing.T) {
	for n, want := range map[int64]string{0: "0", 999: "999", 1000: "1,000", 1234567: "1,234,567", -4500: "-4,500"} {
		if got := GroupThousands(n); got != want {
			t.Errorf("GroupThousands(%d) = %q, want %q", n, got, want)
		}
	}
}

func TestFormatValueUnits(t *testing.T) {
	v := func(x float64) *float64 { return &x }
	cases := []struct {
		ind  Indicator
		want string
	}{
		{Indicator{ID: "adr", Value: v(0.3126)}, "31.3%"},
		{Indicator{ID: "perforation", Scale: 1000, Value: v(0.0005)}, "0.5 per 1000"},
		{Indicator{ID: "sedation_fentanyl_median_70plus", Kind: KindMedian, Value: v(50)}, "50 µg"},
		{Indicator{ID: "sedation_midazolam_median_under70", Kind: KindMedian, Value: v(2.5)}, "2.5 mg"},
		{Indicator{ID: "withdrawal_negative", Kind: KindMean, Value: v(8.04)}, "8.0 min"},
		{Indicator{ID: "adr"}, "–"},
	}
	for _, c := range cases {
		if got := FormatValue(c.ind); got != c.want {
			t.Errorf("%s: %q, want %q", c.ind.ID, got, c.want)
		}
	}
}
