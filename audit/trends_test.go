package audit

import (
	"fmt"
	"strings"
	"testing"

	"polypledger/logbook"
)

func TestTrendsQuarters(t *testing.T) {
	// Period 2026-02-01 to 2026-04-30: Q1 holds 2026-02-01 and 2026-03-31
	// (the case of 2026-01-15 is outside the period), Q2 holds 2026-04-01.
	// Quarter bounds are clipped to the period.
	opt := MetricsOptions{From: mkDate(t, "2026-02-01"), To: mkDate(t, "2026-04-30")}
	tr := NewTrends(shipped(t, "asge-acg-2024"), opt)
	for _, d := range []string{"2026-01-15", "2026-02-01", "2026-03-31", "2026-04-01"} {
		c := mkCase(eOn(t, d))
		tr.Add(&c)
	}
	r := tr.Result()
	want := []struct {
		q, from, to string
		n           int
	}{{"2026-Q1", "2026-02-01", "2026-03-31", 2}, {"2026-Q2", "2026-04-01", "2026-04-30", 1}}
	if len(r.Quarters) != len(want) {
		t.Fatalf("quarters %+v", r.Quarters)
	}
	for i, w := range want {
		q := r.Quarters[i]
		if q.Quarter != w.q || q.Metrics.From != w.from || q.Metrics.To != w.to || mustFind(t, q.Metrics.Unit.Indicators, "cir").Denominator != w.n {
			t.Errorf("quarter %d = %s %s–%s", i, q.Quarter, q.Metrics.From, q.Metrics.To)
		}
		if len(q.Metrics.Operators) != 1 {
			t.Errorf("quarter %s operators %d", q.Quarter, len(q.Metrics.Operators))
		}
	}
}

// TestTrendsVolume checks that a quarter's volume is never judged, however
// many procedures it holds: the BSG/JAG 100 per year (Rees 2016) is judged
// only over a year or more (clinical-reference §2, volume), while the same
// cases over the whole year are judged.
func TestTrendsVolume(t *testing.T) {
	opt := MetricsOptions{From: mkDate(t, "2026-01-01"), To: mkDate(t, "2026-12-31")}
	prof := shipped(t, "bsg-jag-2016")
	tr := NewTrends(prof, opt)
	m := NewMetrics(prof, opt)
	for i := range 120 {
		c := mkCase(eOn(t, fmt.Sprintf("2026-%02d-10", i%12+1)))
		tr.Add(&c)
		m.Add(&c)
	}
	r := tr.Result()
	if len(r.Quarters) != 4 {
		t.Fatalf("quarters %d", len(r.Quarters))
	}
	for _, q := range r.Quarters {
		ind := mustFind(t, q.Metrics.Operators[0].Indicators, "volume")
		// 30 procedures in a quarter of 90–92 days: about 120 per year.
		if ind.Numerator != 30 || ind.Status != Reported || !strings.Contains(ind.Note, "a year or more") {
			t.Errorf("%s volume %v %s note %q: want 30, reported with a note", q.Quarter, ind.Numerator, ind.Status, ind.Note)
		}
	}
	if ind := mustFind(t, m.Result().Operators[0].Indicators, "volume"); ind.Status != Meets || ind.Note != "" {
		t.Errorf("year volume %v %s note %q: want meets", ind.Numerator, ind.Status, ind.Note)
	}
}

func TestRollingADR(t *testing.T) {
	// One eligible case on the 15th of each month, 2025-01 to 2026-02, with
	// an adenoma in 2025-01, 2025-02 and 2026-02. The 12 months ending
	// 2025-12-31 hold 12 cases and 2 adenomas; ending 2026-01-31 (Feb 2025 –
	// Jan 2026) 1 of 12; ending 2026-02-28 (Mar 2025 – Feb 2026) 1 of 12; the
	// first point covers one month (1 of 1).
	opt := MetricsOptions{From: mkDate(t, "2025-01-01"), To: mkDate(t, "2026-02-28")}
	tr := NewTrends(shipped(t, "asge-acg-2024"), opt)
	for m := 0; m < 14; m++ {
		d := fmt.Sprintf("%d-%02d-15", 2025+m/12, m%12+1)
		var edits []func(*logbook.Case)
		edits = append(edits, eOn(t, d))
		if m == 0 || m == 1 || m == 13 {
			edits = append(edits, withLesions(mkLesion()))
		}
		c := mkCase(edits...)
		tr.Add(&c)
	}
	r := tr.Result()
	if len(r.RollingADR) != 2 || r.RollingADR[0].OperatorID != "" || r.RollingADR[1].OperatorID != "E01" {
		t.Fatalf("series %+v", r.RollingADR)
	}
	pts := r.RollingADR[0].Points
	if len(pts) != 14 {
		t.Fatalf("%d points, want 14", len(pts))
	}
	checks := []struct {
		i        int
		end      string
		months   int
		num, den float64
	}{{0, "2025-01-31", 1, 1, 1}, {11, "2025-12-31", 12, 2, 12}, {12, "2026-01-31", 12, 1, 12}, {13, "2026-02-28", 12, 1, 12}}
	for _, c := range checks {
		p := pts[c.i]
		if p.MonthEnd != c.end || p.Months != c.months || p.Indicator.Numerator != c.num || float64(p.Indicator.Denominator) != c.den {
			t.Errorf("point %d = %s months %d %v/%d, want %s %d %v/%v", c.i, p.MonthEnd, p.Months, p.Indicator.Numerator, p.Indicator.Denominator, c.end, c.months, c.num, c.den)
		}
	}
}
