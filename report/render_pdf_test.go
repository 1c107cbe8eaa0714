package report

import (
	"io"
	"polypledger/audit"
	"testing"
	"time"
)

// The speed the README promises for the report: a 4,000-procedure unit
// report in under 3 s and a 1,000,000-procedure one in under 30 s. These
// benchmarks cover the part of the report that is this package's: the one
// streaming pass over in-memory invented cases and the PDF with its charts
// (the database read is the store's). Run them with
// go test ./report -run X -bench Report -benchtime 1x.

var benchPeriod = [2]time.Time{time.Date(2024, 11, 1, 0, 0, 0, 0, time.UTC), time.Date(2026, 10, 31, 0, 0, 0, 0, time.UTC)}

func benchReport(b *testing.B, n int, withPass bool) {
	p := testProfile(b, "asge-acg-2024")
	var data audit.Figures
	if !withPass {
		data = demoReportData(b, p, n, benchPeriod[0], benchPeriod[1], nil)
	}
	b.ResetTimer()
	for b.Loop() {
		if withPass {
			data = demoReportData(b, p, n, benchPeriod[0], benchPeriod[1], nil)
		}
		in := testInput(UnitReport, p, "", benchPeriod[0], benchPeriod[1], data)
		if err := WritePDF(io.Discard, in); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkReportRender4000 draws the unit report (every chart, every page)
// from figures already counted over 4,000 procedures.
func BenchmarkReportRender4000(b *testing.B) { benchReport(b, 4000, false) }

// BenchmarkReport4000 counts 4,000 invented procedures and draws the report.
func BenchmarkReport4000(b *testing.B) { benchReport(b, 4000, true) }

// BenchmarkReport1M counts 1,000,000 invented procedures in one pass
// (generated as they are counted, none kept) and draws the report.
func BenchmarkReport1M(b *testing.B) { benchReport(b, 1_000_000, true) }
