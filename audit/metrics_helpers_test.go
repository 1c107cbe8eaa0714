package audit

import (
	"math"
	"testing"
	"time"

	"polypledger/assets"
	"polypledger/logbook"
)

// Test helpers for the indicator tests. Every population in these tests is
// invented and written out by hand.

// mkDate parses a test date.
func mkDate(t testing.TB, s string) time.Time {
	t.Helper()
	d, err := logbook.ParseDate(s)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// mkCase returns a plain procedure that is detection-eligible under every
// shipped profile (age 60, male, screening, outpatient, no exclusion,
// caecum reached with photo, nothing else recorded, no lesions) by operator
// E01 on 2026-02-10, changed by the edits.
func mkCase(edits ...func(*logbook.Case)) logbook.Case {
	c := logbook.Case{Procedure: logbook.NewProcedure()}
	p := &c.Procedure
	p.ID = "P1"
	p.PerformedOn = time.Date(2026, 2, 10, 0, 0, 0, 0, time.UTC)
	p.OperatorID = "E01"
	p.Age = 60
	p.Sex = logbook.SexMale
	p.Indication = logbook.Screening
	p.Setting = logbook.Outpatient
	p.Exclusion = logbook.ExclusionNone
	p.Extent = logbook.ExtentCaecum
	p.CaecalPhoto = logbook.Yes
	p.AdverseEvent = logbook.AdverseNone
	for _, e := range edits {
		e(&c)
	}
	return c
}

// mkLesion returns a 4 mm sigmoid tubular adenoma with low-grade dysplasia,
// removed by cold snare, retrieved and reported, changed by the edits.
func mkLesion(edits ...func(*logbook.Lesion)) logbook.Lesion {
	l := logbook.NewLesion()
	l.LesionNo = 1
	l.Segment = logbook.Sigmoid
	l.SizeMM = 4
	l.Resection = logbook.ColdSnare
	l.Retrieved = logbook.Yes
	l.SentToPathology = logbook.Yes
	l.Histology = logbook.TubularAdenoma
	l.Dysplasia = logbook.DysplasiaLow
	for _, e := range edits {
		e(&l)
	}
	return l
}

// withLesions gives a case its lesions.
func withLesions(ls ...logbook.Lesion) func(*logbook.Case) {
	return func(c *logbook.Case) { c.Lesions = ls }
}

// histology sets a lesion's histology and a dysplasia grade fitting it.
func histology(h logbook.Histology) func(*logbook.Lesion) {
	return func(l *logbook.Lesion) {
		l.Histology = h
		switch h {
		case logbook.TubularAdenoma, logbook.TubulovillousAdeno, logbook.VillousAdenoma, logbook.HistSSLDysplasia:
			l.Dysplasia = logbook.DysplasiaLow
		case logbook.HistPending, "":
			l.Dysplasia = ""
		default:
			l.Dysplasia = logbook.DysplasiaNone
		}
	}
}

// shipped loads the shipped profile with the id.
func shipped(t testing.TB, id string) *Profile {
	t.Helper()
	ps, err := LoadProfiles(assets.Standards, nil)
	if err != nil {
		t.Fatal(err)
	}
	p, err := FindProfile(ps, id)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// unitResult runs the cases through a Metrics over an open period and
// returns the result.
func unitResult(p *Profile, cases []logbook.Case) MetricsResult {
	m := NewMetrics(p, MetricsOptions{})
	for i := range cases {
		m.Add(&cases[i])
	}
	return m.Result()
}

// mustFind returns the indicator or fails the test.
func mustFind(t testing.TB, inds []Indicator, id string) Indicator {
	t.Helper()
	ind, ok := Find(inds, id)
	if !ok {
		t.Fatalf("no indicator %q", id)
	}
	return ind
}

// repeat returns n copies of c.
func repeat(n int, c logbook.Case) []logbook.Case {
	out := make([]logbook.Case, n)
	for i := range out {
		out[i] = c
	}
	return out
}

// concat joins case lists.
func concat(lists ...[]logbook.Case) []logbook.Case {
	var out []logbook.Case
	for _, l := range lists {
		out = append(out, l...)
	}
	return out
}

// Case edits.

func eAge(n int) func(*logbook.Case) { return func(c *logbook.Case) { c.Age = n } }
func eSex(s logbook.Sex) func(*logbook.Case) {
	return func(c *logbook.Case) { c.Sex = s }
}
func eInd(i logbook.Indication) func(*logbook.Case) {
	return func(c *logbook.Case) { c.Indication = i }
}
func eExcl(x logbook.Exclusion) func(*logbook.Case) {
	return func(c *logbook.Case) { c.Exclusion = x }
}
func eIncomplete(r logbook.IncompleteReason) func(*logbook.Case) {
	return func(c *logbook.Case) {
		c.Extent, c.IncompleteReason, c.CaecalPhoto = logbook.ExtentIncomplete, r, logbook.No
	}
}
func eExtent(x logbook.Extent) func(*logbook.Case) {
	return func(c *logbook.Case) { c.Extent = x }
}
func ePhoto(y logbook.YesNo) func(*logbook.Case) {
	return func(c *logbook.Case) { c.CaecalPhoto = y }
}
func eSetting(s logbook.Setting) func(*logbook.Case) {
	return func(c *logbook.Case) { c.Setting = s }
}
func eBBPS(r, t, l int) func(*logbook.Case) {
	return func(c *logbook.Case) { c.BBPSRight, c.BBPSTransverse, c.BBPSLeft = r, t, l }
}
func eWithdrawal(sec int) func(*logbook.Case) {
	return func(c *logbook.Case) { c.WithdrawalSeconds = sec }
}
func eRetro(y logbook.YesNo) func(*logbook.Case) {
	return func(c *logbook.Case) { c.Retroversion = y }
}
func eComfort(n int) func(*logbook.Case) { return func(c *logbook.Case) { c.Comfort = n } }
func eAdverse(a logbook.AdverseEvent) func(*logbook.Case) {
	return func(c *logbook.Case) { c.AdverseEvent = a }
}
func eAid(y logbook.YesNo) func(*logbook.Case) {
	return func(c *logbook.Case) { c.DetectionAid = y }
}
func eOp(id string) func(*logbook.Case) { return func(c *logbook.Case) { c.OperatorID = id } }
func eID(id string) func(*logbook.Case) { return func(c *logbook.Case) { c.ID = id } }
func eOn(t testing.TB, s string) func(*logbook.Case) {
	d := mkDate(t, s)
	return func(c *logbook.Case) { c.PerformedOn = d }
}
func eDoses(mid, fen, pet float64) func(*logbook.Case) {
	return func(c *logbook.Case) { c.MidazolamMg, c.FentanylUg, c.PethidineMg = mid, fen, pet }
}

// Lesion edits.

func lSize(n int) func(*logbook.Lesion) { return func(l *logbook.Lesion) { l.SizeMM = n } }
func lSeg(s logbook.Segment) func(*logbook.Lesion) {
	return func(l *logbook.Lesion) { l.Segment = s }
}
func lRes(r logbook.Resection) func(*logbook.Lesion) {
	return func(l *logbook.Lesion) { l.Resection = r }
}
func lHigh(l *logbook.Lesion) { l.Dysplasia = logbook.DysplasiaHigh }

// lNotSent is a lesion left in place or discarded: not retrieved, not sent,
// no histology.
func lNotSent(l *logbook.Lesion) {
	l.Retrieved, l.SentToPathology, l.Histology, l.Dysplasia = logbook.No, logbook.No, "", ""
}
func lTattoo(y logbook.YesNo) func(*logbook.Lesion) {
	return func(l *logbook.Lesion) { l.Tattoo = y }
}
func lOptical(o logbook.OpticalClass) func(*logbook.Lesion) {
	return func(l *logbook.Lesion) { l.OpticalClass, l.Confidence = o, logbook.HighConfidence }
}

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }
