package report

import (
	"bytes"
	"strings"
	"testing"
	"time"

	"polypledger/audit"
	"polypledger/internal/fx"
	"polypledger/logbook"
)

// tableOf is the terminal table of the cases' metrics over the first
// quarter of 2026 under profile id.
func tableOf(t *testing.T, id string, cases ...*logbook.Case) (string, audit.MetricsResult) {
	t.Helper()
	m := audit.NewMetrics(testProfile(t, id), audit.MetricsOptions{From: mustDay(t, "2026-01-01"), To: mustDay(t, "2026-03-31")})
	for _, c := range cases {
		m.Add(c)
	}
	r := m.Result()
	var buf bytes.Buffer
	if err := WriteTable(&buf, r); err != nil {
		t.Fatal(err)
	}
	return buf.String(), r
}

func mustDay(t *testing.T, s string) time.Time {
	t.Helper()
	d, err := logbook.ParseDate(s)
	if err != nil {
		t.Fatal(err)
	}
	return d
}

func TestWriteTable(t *testing.T) {
	// 1 adenoma in 3 eligible procedures = 33.3%; one perforation in 3 =
	// 333.3 per 1000; one negative timed procedure of 7.5 minutes.
	out, _ := tableOf(t, "asge-acg-2024",
		fx.Case("P1", fx.Lesion(1, fx.TA, 4, fx.At(logbook.Sigmoid))),
		fx.Tweak(fx.Case("P2"), func(p *logbook.Procedure) { p.AdverseEvent = logbook.Perforation }),
		fx.Tweak(fx.Case("P3"), func(p *logbook.Procedure) { p.WithdrawalSeconds = 450 }),
	)
	for _, want := range []string{
		"2026-01-01 to 2026-03-31", "asge-acg-2024", "Unit", "Operator E01",
		"33.3%", "1/3", "333.3 per 1000", "7.5 min", "too few cases to judge", "reported (no target)",
		"≥ 35.0%", "[", audit.AuditCaution(),
	} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	// Aligned: the adr row's value starts in the same column as the header's.
	var head, adr string
	for _, l := range strings.Split(out, "\n") {
		if strings.HasPrefix(l, "indicator") && head == "" {
			head = l
		}
		if strings.HasPrefix(l, "adr ") && adr == "" {
			adr = l
		}
	}
	if strings.Index(head, "value") != strings.Index(adr, "33.3%") {
		t.Errorf("columns not aligned:\n%s\n%s", head, adr)
	}
}

// TestWriteTableStrictAndNote checks that the terminal table prints a strict
// target's sign and every figure's Note (clinical-reference §2: discomfort
// below 10%, Siau 2023, strict; volume over a quarter reported with a note).
func TestWriteTableStrictAndNote(t *testing.T) {
	var cases []*logbook.Case
	for score := range 6 { // comfort 1 to 5, and one not recorded
		cases = append(cases, fx.Tweak(fx.Case("C"+string(rune('0'+score))), func(p *logbook.Procedure) {
			if score > 0 {
				p.Comfort = score
			}
		}))
	}
	out, r := tableOf(t, "bsg-jag-2016", cases...)
	vol, _ := audit.Find(r.Operators[0].Indicators, "volume")
	for _, want := range []string{"< 10.0%", vol.Note, audit.VolumeUnitNote, audit.CIRPhotoNote} {
		if want == "" || !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
}
