package audit

import (
	"fmt"
	"testing"

	"polypledger/logbook"
	"polypledger/stats"
)

// TestTraineeProgressRefusesBadCUSUM checks that a trainee pass refuses
// CUSUM parameters out of range (0 < p0 < p1 < 1, α and β in (0, 1)).
func TestTraineeProgressRefusesBadCUSUM(t *testing.T) {
	for _, bad := range []stats.CUSUMParams{{P0: 0.2, P1: 0.1, Alpha: 0.1, Beta: 0.1}, {P0: 0.1, P1: 0.2, Alpha: 0, Beta: 0.1}} {
		if _, err := NewTraineeProgress(shipped(t, "bsg-jag-2016"), bad, MetricsOptions{}); err == nil {
			t.Errorf("params %+v accepted", bad)
		}
	}
}

// traineeCase is a case held by trainee T1 under operator E01.
func traineeCase(t *testing.T, id, date string, sup logbook.Supervision, reached logbook.YesNo, edits ...func(*logbook.Case)) logbook.Case {
	return mkCase(append([]func(*logbook.Case){eID(id), eOn(t, date), func(c *logbook.Case) {
		c.TraineeID, c.Supervision, c.TraineeReachedCaecum = "T1", sup, reached
	}}, edits...)...)
}

func TestCUSUMSeries(t *testing.T) {
	// 19 successes: 18·0.1452 = 2.61 has not reached h0 = 2.7095, 19·0.1452
	// = 2.76 has → acceptable at the 19th case. Cases are added out of order
	// and sorted by date, then id.
	tp, err := NewTraineeProgress(shipped(t, "bsg-jag-2016"), stats.DefaultCUSUM(), MetricsOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for i := 19; i >= 1; i-- {
		c := traineeCase(t, fmt.Sprintf("P%02d", i), "2026-03-01", logbook.Independent, logbook.Yes)
		tp.Add(&c)
	}
	cus := tp.Result()[0].CUSUM
	if len(cus.Points) != 19 || cus.Points[0].ProcedureID != "P01" || cus.Points[18].ProcedureID != "P19" {
		t.Fatalf("points out of order: %+v", cus.Points)
	}
	if cus.AcceptableAt != 19 || cus.UnacceptableAt != 0 || !near(cus.Points[18].Value, -19*cus.S, 1e-12) {
		t.Errorf("acceptable at %d, value %v", cus.AcceptableAt, cus.Points[18].Value)
	}
	if cus.Params != stats.DefaultCUSUM() || cus.Note == "" {
		t.Errorf("params %+v note %q", cus.Params, cus.Note)
	}

	// Failures add 1 − s = 0.8548: 3 give 2.56, 4 give 3.42 ≥ h1 → unacceptable
	// at the 4th. Unrecorded outcomes are left out of the series.
	tp, _ = NewTraineeProgress(shipped(t, "bsg-jag-2016"), stats.DefaultCUSUM(), MetricsOptions{})
	for i, d := range []string{"2026-01-05", "2026-01-06", "2026-01-07", "2026-01-08"} {
		c := traineeCase(t, fmt.Sprintf("F%d", i), d, logbook.SupervisedHandsOn, logbook.No, eIncomplete(logbook.ReasonLooping))
		tp.Add(&c)
	}
	c := traineeCase(t, "U1", "2026-01-09", logbook.SupervisedHandsOn, logbook.Unrecorded)
	tp.Add(&c)
	cus = tp.Result()[0].CUSUM
	if len(cus.Points) != 4 || cus.UnacceptableAt != 4 || cus.AcceptableAt != 0 {
		t.Errorf("unacceptable at %d of %d points", cus.UnacceptableAt, len(cus.Points))
	}
}

func TestTraineeProgress(t *testing.T) {
	// T1: January 2 cases (independent, hands-on), February none, March 1
	// observed; reached caecum yes, yes, no → 2/3. ADR over T1's eligible
	// cases: 1 of 3. Another trainee T2 and a case with no trainee.
	tp, err := NewTraineeProgress(shipped(t, "bsg-jag-2016"), stats.DefaultCUSUM(), MetricsOptions{})
	if err != nil {
		t.Fatal(err)
	}
	cases := []logbook.Case{
		traineeCase(t, "A", "2026-01-10", logbook.Independent, logbook.Yes, withLesions(mkLesion()), eWithdrawal(480), eComfort(2)),
		traineeCase(t, "B", "2026-01-20", logbook.SupervisedHandsOn, logbook.Yes, eWithdrawal(600), eComfort(4)),
		traineeCase(t, "C", "2026-03-02", logbook.SupervisedObserved, logbook.No, eIncomplete(logbook.ReasonLooping)),
		mkCase(eID("D")),
		mkCase(eID("E"), func(c *logbook.Case) { c.TraineeID, c.Supervision = "T2", logbook.Independent }),
	}
	for i := range cases {
		tp.Add(&cases[i])
	}
	res := tp.Result()
	if len(res) != 2 || res[0].TraineeID != "T1" || res[1].TraineeID != "T2" {
		t.Fatalf("trainees %+v", res)
	}
	months := res[0].Months
	want := []MonthCount{
		{Month: "2026-01", Independent: 1, SupervisedHandsOn: 1, Total: 2, Cumulative: 2},
		{Month: "2026-02", Cumulative: 2},
		{Month: "2026-03", SupervisedObserved: 1, Total: 1, Cumulative: 3},
	}
	if len(months) != len(want) {
		t.Fatalf("months %+v", months)
	}
	for i := range want {
		if months[i] != want[i] {
			t.Errorf("month %d = %+v, want %+v", i, months[i], want[i])
		}
	}
	checks := []struct {
		id       string
		num      float64
		den      int
		wantKind Kind
	}{
		{"unassisted_caecal_intubation", 2, 3, KindProportion},
		{"adr", 1, 3, KindProportion},
		{"withdrawal_negative", 10, 1, KindMean}, // only B: A had a polypectomy, C incomplete
		{"comfort_discomfort", 1, 2, KindProportion},
		{"comfort_recorded", 2, 3, KindProportion},
	}
	for _, c := range checks {
		ind := mustFind(t, res[0].Indicators, c.id)
		if ind.Numerator != c.num || ind.Denominator != c.den || ind.Kind != c.wantKind {
			t.Errorf("%s = %v/%d kind %v, want %v/%d", c.id, ind.Numerator, ind.Denominator, ind.Kind, c.num, c.den)
		}
	}
}

// TestLearningCurveRunsFromTheFirstCase feeds cases before the period: they
// count in the months, the running total and the CUSUM (a learning curve
// runs from the trainee's first case), but not in the trainee's indicators
// for the period. A case after the period and a trainee with earlier cases
// only are left out.
func TestLearningCurveRunsFromTheFirstCase(t *testing.T) {
	from, to := mkDate(t, "2026-03-01"), mkDate(t, "2026-03-31")
	tp, err := NewTraineeProgress(shipped(t, "bsg-jag-2016"), stats.DefaultCUSUM(), MetricsOptions{From: from, To: to})
	if err != nil {
		t.Fatal(err)
	}
	var cases []logbook.Case
	// 15 successes in January and February, then 5 in March: 19 successes
	// reach −h0 (s = 0.1452, h0 = 2.7095, clinical-reference §5), so the
	// curve crosses at the 19th case, counted from the first.
	for i := 1; i <= 15; i++ {
		cases = append(cases, traineeCase(t, fmt.Sprintf("P%02d", i), fmt.Sprintf("2026-0%d-%02d", 1+i/8, 1+i%8), logbook.Independent, logbook.Yes))
	}
	for i := 16; i <= 20; i++ {
		cases = append(cases, traineeCase(t, fmt.Sprintf("P%02d", i), fmt.Sprintf("2026-03-%02d", i), logbook.Independent, logbook.Yes))
	}
	cases = append(cases,
		traineeCase(t, "LATE", "2026-04-02", logbook.Independent, logbook.No),
		mkCase(eID("OTHER"), eOn(t, "2026-01-05"), func(c *logbook.Case) { c.TraineeID = "T9" }))
	for i := range cases {
		tp.Add(&cases[i])
	}
	res := tp.Result()
	if len(res) != 1 || res[0].TraineeID != "T1" {
		t.Fatalf("trainees %+v", res)
	}
	r := res[0]
	if r.CasesBefore != 15 || r.CasesInPeriod != 5 {
		t.Errorf("cases before %d, in period %d; want 15 and 5", r.CasesBefore, r.CasesInPeriod)
	}
	last := r.Months[len(r.Months)-1]
	if r.Months[0].Month != "2026-01" || last.Month != "2026-03" || last.Cumulative != 20 {
		t.Errorf("months %+v, want January to March with a running total of 20", r.Months)
	}
	c := r.CUSUM
	if len(c.Points) != 20 || c.AcceptableAt != 19 || c.Points[14].InPeriod || !c.Points[15].InPeriod {
		t.Errorf("CUSUM of %d points, acceptable at %d, in period from %v", len(c.Points), c.AcceptableAt, c.Points[15].InPeriod)
	}
	if ind := mustFind(t, r.Indicators, "unassisted_caecal_intubation"); ind.Numerator != 5 || ind.Denominator != 5 {
		t.Errorf("unassisted caecal intubation over %v/%d, want the period's 5/5", ind.Numerator, ind.Denominator)
	}
}
