package logbook_test

// Fuzz targets for the parsers every CSV value and typed field passes
// through. Each checks the parser's contract on any input: no panic, the
// empty string means "not recorded", a value accepted is one the matching
// Format function writes back to the same value, and nothing outside the
// documented range gets through. Run briefly by scripts/fuzz-smoke; seed
// corpora are in testdata/fuzz.

import (
	"math"
	"strings"
	"testing"
	"time"

	"polypledger/logbook"
)

func FuzzParseDate(f *testing.F) {
	for _, s := range []string{"", "2026-06-15", "2024-02-29", "2023-02-29", "1899-12-31", "1900-01-01", "9999-12-31", "2026-6-15", "15/06/2026", "2026-06-15T00:00:00Z", "+002026-06-15"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		d, err := logbook.ParseDate(s)
		if err != nil {
			if !d.IsZero() {
				t.Errorf("ParseDate(%q) failed but returned %v", s, d)
			}
			return
		}
		if s == "" {
			if !d.IsZero() {
				t.Errorf(`ParseDate("") = %v, want the zero time`, d)
			}
			return
		}
		if got := logbook.FormatDate(d); got != s {
			t.Errorf("ParseDate(%q) = %v, written back as %q", s, d, got)
		}
		if d.Year() < 1900 {
			t.Errorf("ParseDate(%q) accepted a year before 1900", s)
		}
		if d.Location() != time.UTC || d != logbook.Today(d) {
			t.Errorf("ParseDate(%q) = %v, not midnight UTC", s, d)
		}
	})
}

func FuzzParseCount(f *testing.F) {
	for _, s := range []string{"", "0", "7", "007", "-1", "+5", "1.5", "9223372036854775808", " 3"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		n, err := logbook.ParseCount(s)
		if err != nil {
			if n != logbook.NotRecorded {
				t.Errorf("ParseCount(%q) failed but returned %d", s, n)
			}
			return
		}
		if (s == "") != (n == logbook.NotRecorded) {
			t.Errorf("ParseCount(%q) = %d: only the empty string is not recorded", s, n)
		}
		if s != "" && n < 0 {
			t.Errorf("ParseCount(%q) = %d, a negative count", s, n)
		}
		if back, err := logbook.ParseCount(logbook.FormatCount(n)); err != nil || back != n {
			t.Errorf("ParseCount(FormatCount(%d)) = %d, %v", n, back, err)
		}
	})
}

func FuzzParseDose(f *testing.F) {
	for _, s := range []string{"", "0", "2.5", "-0", "-1", "1e3", "1e400", "NaN", "Inf", "0x10", "1_0", "2,5", ".5", "5."} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := logbook.ParseDose(s)
		if err != nil {
			if v != logbook.NotRecorded {
				t.Errorf("ParseDose(%q) failed but returned %g", s, v)
			}
			return
		}
		if (s == "") != (v == logbook.NotRecorded) {
			t.Errorf("ParseDose(%q) = %g: only the empty string is not recorded", s, v)
		}
		if s == "" {
			return
		}
		if v < 0 || math.IsInf(v, 0) || math.IsNaN(v) {
			t.Errorf("ParseDose(%q) = %g, not an amount of zero or more", s, v)
		}
		if strings.ContainsAny(strings.ToLower(s), "xnip_") {
			t.Errorf("ParseDose(%q) accepted a value that is not written in decimal", s)
		}
		if back, err := logbook.ParseDose(logbook.FormatDose(v)); err != nil || back != v {
			t.Errorf("ParseDose(FormatDose(%g)) = %g, %v", v, back, err)
		}
	})
}

func FuzzParseYesNo(f *testing.F) {
	for _, s := range []string{"", "yes", "no", "YES", "No", "na", "n/a", "not_applicable", "y", "true"} {
		f.Add(s, false)
		f.Add(s, true)
	}
	f.Fuzz(func(t *testing.T, s string, allowNA bool) {
		v, err := logbook.ParseYesNo(s, allowNA)
		if err != nil {
			if v != logbook.Unrecorded {
				t.Errorf("ParseYesNo(%q) failed but returned %v", s, v)
			}
			return
		}
		if (s == "") != (v == logbook.Unrecorded) {
			t.Errorf("ParseYesNo(%q) = %v: only the empty string is not recorded", s, v)
		}
		if v == logbook.NotApplicable && !allowNA {
			t.Errorf("ParseYesNo(%q, false) = not applicable", s)
		}
		if back, err := logbook.ParseYesNo(v.String(), allowNA); err != nil || back != v {
			t.Errorf("ParseYesNo(%q) = %v, read back as %v (%v)", s, v, back, err)
		}
	})
}

func FuzzParseCode(f *testing.F) {
	for _, s := range []string{"", "screening", "Screening", "surveillance ", "stool_test_positive", "caecum", "0-Is", "tubular_adenoma"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		// Two code sets of different shapes: indications and Paris classes.
		if v, err := logbook.ParseCode(s, logbook.Indications); err == nil {
			if string(v) != s || (s != "" && !logbook.IsOneOf(v, logbook.Indications)) {
				t.Errorf("ParseCode(%q, indications) = %q", s, v)
			}
		} else if v != "" {
			t.Errorf("ParseCode(%q, indications) failed but returned %q", s, v)
		}
		if v, err := logbook.ParseCode(s, logbook.ParisClasses); err == nil {
			if string(v) != s || (s != "" && !logbook.IsOneOf(v, logbook.ParisClasses)) {
				t.Errorf("ParseCode(%q, paris) = %q", s, v)
			}
		} else if v != "" {
			t.Errorf("ParseCode(%q, paris) failed but returned %q", s, v)
		}
	})
}

func FuzzParseMinSec(f *testing.F) {
	for _, s := range []string{"", "7:30", "8", " 6:05 ", "0:00", "120:00", "120:59", "121:00", "7:5", "7:60", "-1:00", "1:+5", "+5", "7.5", "7:30:00", ":30"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		v, err := logbook.ParseMinSec(s)
		if err != nil {
			if v != logbook.NotRecorded {
				t.Errorf("ParseMinSec(%q) failed but returned %d", s, v)
			}
			return
		}
		trimmed := strings.TrimSpace(s)
		if (trimmed == "") != (v == logbook.NotRecorded) {
			t.Errorf("ParseMinSec(%q) = %d: only a blank is not recorded", s, v)
		}
		if trimmed == "" {
			return
		}
		if v < 0 || v > logbook.MaxWithdrawalSeconds {
			t.Errorf("ParseMinSec(%q) = %d, outside 0–%d seconds", s, v, logbook.MaxWithdrawalSeconds)
		}
		if strings.ContainsAny(trimmed, "+- ") {
			t.Errorf("ParseMinSec(%q) accepted a sign or inner space", s)
		}
		if back, err := logbook.ParseMinSec(logbook.FormatMinSec(v)); err != nil || back != v {
			t.Errorf("ParseMinSec(FormatMinSec(%d)) = %d, %v", v, back, err)
		}
	})
}
