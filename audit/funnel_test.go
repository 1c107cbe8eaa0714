package audit

import (
	"polypledger/stats"
	"testing"
)

func TestFunnelFlags(t *testing.T) {
	// Unit pooled rate 300/1000 = 0.3. At n = 100: 30 inside; 40 above the
	// 95% limit (≈0.39) but inside 99.8% (≈0.44); 45 above both; 15 below
	// both (lower 99.8% ≈ 0.16).
	pt := func(k, n int) Indicator { return Proportion("adr", k, n) }
	r := MetricsResult{
		Unit: PopulationResult{Indicators: []Indicator{pt(300, 1000)}},
		Operators: []OperatorResult{
			{OperatorID: "A", Indicators: []Indicator{pt(30, 100)}},
			{OperatorID: "B", Indicators: []Indicator{pt(40, 100)}},
			{OperatorID: "C", Indicators: []Indicator{pt(45, 100)}},
			{OperatorID: "D", Indicators: []Indicator{pt(15, 100)}},
			{OperatorID: "E", Indicators: []Indicator{pt(0, 0)}},
		},
	}
	f, err := NewFunnel(r, "adr")
	if err != nil {
		t.Fatal(err)
	}
	if f.Target != 0.3 || len(f.Points) != 4 {
		t.Fatalf("funnel target %v points %d", f.Target, len(f.Points))
	}
	want := []struct{ s95, s998 stats.Side }{
		{stats.SideWithin, stats.SideWithin}, {stats.SideAbove, stats.SideWithin}, {stats.SideAbove, stats.SideAbove}, {stats.SideBelow, stats.SideBelow},
	}
	for i, w := range want {
		if f.Points[i].Outside95 != w.s95 || f.Points[i].Outside998 != w.s998 {
			t.Errorf("%s: %q/%q, want %q/%q", f.Points[i].OperatorID, f.Points[i].Outside95, f.Points[i].Outside998, w.s95, w.s998)
		}
	}
	// The curve runs from 1 to beyond the largest operator and narrows.
	first, last := f.Limits[0], f.Limits[len(f.Limits)-1]
	if first.N != 1 || last.N < 110 || !(last.High998-last.Low998 < first.High998-first.Low998) {
		t.Errorf("curve from %+v to %+v", first, last)
	}
	if _, err := NewFunnel(r, "apc"); err == nil {
		t.Error("funnel of a missing indicator did not fail")
	}
	if got := Funnels(r); len(got) != 1 || got[0].IndicatorID != "adr" {
		t.Errorf("Funnels gave %d plots", len(got))
	}
}
