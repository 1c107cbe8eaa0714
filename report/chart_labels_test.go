package report

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
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
		if got := groupThousands(n); got != want {
			t.Errorf("groupThousands(%d) = %q, want %q", n, got, want)
		}
	}
}

// TestLabelsDoNotCollide places labels for points crowded together and
// checks that no label covers another label or a mark.
func TestLabelsDoNotCollide(t *testing.T) {
	area := vg.Rectangle{Max: vg.Point{X: 400, Y: 300}}
	marks := []vg.Point{{X: 100, Y: 100}, {X: 104, Y: 102}, {X: 108, Y: 98}, {X: 100, Y: 108}, {X: 395, Y: 150}}
	var taken []vg.Rectangle
	for _, m := range marks {
		taken = append(taken, vg.Rectangle{Min: vg.Point{X: m.X - 3, Y: m.Y - 3}, Max: vg.Point{X: m.X + 3, Y: m.Y + 3}})
	}
	var labels []vg.Rectangle
	for _, m := range marks {
		box := placeLabel(area, taken, m, 5, 20, 8)
		for i, l := range labels {
			if overlaps(box, l) {
				t.Errorf("label at %v covers label %d at %v", box, i, l)
			}
		}
		for i, o := range taken[:len(marks)] {
			if overlaps(box, o) {
				t.Errorf("label at %v covers mark %d", box, i)
			}
		}
		if box.Max.X > area.Max.X {
			t.Errorf("label at %v runs off the chart", box)
		}
		taken = append(taken, box)
		labels = append(labels, box)
	}
}

func TestCountTicksAreWholeNumbers(t *testing.T) {
	for _, r := range [][2]float64{{0, 250}, {0, 12}, {0, 4500}} {
		for _, tk := range (countTicks{}).Ticks(r[0], r[1]) {
			if tk.Value != math.Trunc(tk.Value) || strings.Contains(tk.Label, ".") {
				t.Errorf("range %v: tick %v labelled %q", r, tk.Value, tk.Label)
			}
		}
	}
	ticks := (countTicks{}).Ticks(0, 4500)
	found := false
	for _, tk := range ticks {
		found = found || tk.Label == "4,000"
	}
	if !found {
		t.Errorf("ticks over 0–4500 do not read 4,000: %v", ticks)
	}
}
