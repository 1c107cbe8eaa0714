package logbook

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"strings"
	"testing"
	"time"
)

func TestParseDate(t *testing.T) {
	tests := []struct {
		in      string
		want    string // FormatDate of the result; "" for the zero time
		wantErr string // part of the error message; "" for no error
	}{
		{"", "", ""},
		{"2026-06-15", "2026-06-15", ""},
		{"2024-02-29", "2024-02-29", ""}, // 2024 is a leap year
		{"2000-02-29", "2000-02-29", ""}, // divisible by 400: leap
		{"2025-02-29", "", "not a real calendar date"},
		{"1900-02-29", "", "not a real calendar date"}, // divisible by 100, not 400: not leap
		{"2025-04-31", "", "not a real calendar date"},
		{"2025-13-01", "", "not a real calendar date"},
		{"2025-00-10", "", "not a real calendar date"},
		{"2025-1-1", "", "not a date in the form YYYY-MM-DD"},
		{"15/06/2026", "", "(YYYY-MM-DD)"},
		{"2026-06-15T10:00", "", "not a date in the form YYYY-MM-DD"},
		{"1899-12-31", "", "before 1900"},
		{"abcd-ef-gh", "", "not a real calendar date"},
	}
	for _, tt := range tests {
		t.Run(tt.in, func(t *testing.T) {
			d, err := ParseDate(tt.in)
			if tt.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tt.wantErr) {
					t.Fatalf("ParseDate(%q) error = %v, want one saying %q", tt.in, err, tt.wantErr)
				}
				if !d.IsZero() {
					t.Errorf("ParseDate(%q) returned %v with its error, want the zero time", tt.in, d)
				}
				return
			}
			if err != nil {
				t.Fatalf("ParseDate(%q): %v", tt.in, err)
			}
			if got := FormatDate(d); got != tt.want {
				t.Errorf("FormatDate(ParseDate(%q)) = %q, want %q", tt.in, got, tt.want)
			}
			if !d.IsZero() && (d.Location() != time.UTC || d.Hour() != 0) {
				t.Errorf("ParseDate(%q) = %v, want midnight UTC", tt.in, d)
			}
		})
	}
}

func TestToday(t *testing.T) {
	// 23:30 on 14 June in New York is already 15 June in UTC; the civil date
	// is the one of the clock's own location.
	ny := time.FixedZone("UTC-4", -4*3600)
	got := Today(time.Date(2026, 6, 14, 23, 30, 0, 0, ny))
	if want := time.Date(2026, 6, 14, 0, 0, 0, 0, time.UTC); !got.Equal(want) || got.Location() != time.UTC {
		t.Errorf("Today = %v, want %v", got, want)
	}
}

func TestParseYesNo(t *testing.T) {
	tests := []struct {
		in      string
		allowNA bool
		want    YesNo
		wantErr string
	}{
		{"", false, Unrecorded, ""},
		{"yes", false, Yes, ""},
		{"YES", false, Yes, ""},
		{"No", false, No, ""},
		{"not_applicable", true, NotApplicable, ""},
		{"n/a", true, NotApplicable, ""},
		{"NA", true, NotApplicable, ""},
		{"not_applicable", false, Unrecorded, `"not_applicable" is not yes or no`},
		{"y", false, Unrecorded, `"y" is not yes or no`},
		{"1", true, Unrecorded, `"1" is not yes, no or not_applicable`},
	}
	for _, tt := range tests {
		got, err := ParseYesNo(tt.in, tt.allowNA)
		if tt.wantErr != "" {
			if err == nil || err.Error() != tt.wantErr {
				t.Errorf("ParseYesNo(%q, %v) error = %v, want %q", tt.in, tt.allowNA, err, tt.wantErr)
			}
			continue
		}
		if err != nil || got != tt.want {
			t.Errorf("ParseYesNo(%q, %v) = %v, %v; want %v", tt.in, tt.allowNA, got, err, tt.want)
		}
		if got.String() != strings.ToLower(tt.in) && got != NotApplicable {
			t.Errorf("%v.String() = %q, want %q", got, got.String(), strings.ToLower(tt.in))
		}
	}
	if NotApplicable.String() != "not_applicable" {
		t.Errorf("NotApplicable.String() = %q", NotApplicable.String())
	}
}

func TestParseCount(t *testing.T) {
	tests := []struct {
		in   string
		want int
		ok   bool
	}{
		{"", NotRecorded, true},
		{"0", 0, true},
		{"42", 42, true},
		{"-1", NotRecorded, false},
		{"3.5", NotRecorded, false},
		{"12a", NotRecorded, false},
		{"99999999999999999999999", NotRecorded, false},
	}
	for _, tt := range tests {
		got, err := ParseCount(tt.in)
		if (err == nil) != tt.ok || got != tt.want {
			t.Errorf("ParseCount(%q) = %d, %v; want %d (ok=%v)", tt.in, got, err, tt.want, tt.ok)
		}
		if err != nil && !strings.Contains(err.Error(), "not a whole number of zero or more") {
			t.Errorf("ParseCount(%q) error %q does not say what is expected", tt.in, err)
		}
	}
	for _, n := range []int{NotRecorded, 0, 7, 7200} {
		back, err := ParseCount(FormatCount(n))
		if err != nil || back != n {
			t.Errorf("ParseCount(FormatCount(%d)) = %d, %v", n, back, err)
		}
	}
}

func TestParseDose(t *testing.T) {
	tests := []struct {
		in   string
		want float64
		ok   bool
	}{
		{"", NotRecorded, true},
		{"0", 0, true},
		{"2.5", 2.5, true},
		{"100", 100, true},
		{"-1", NotRecorded, false},
		{"NaN", NotRecorded, false},
		{"Inf", NotRecorded, false},
		{"1e400", NotRecorded, false},
		{"1e-400", NotRecorded, false}, // underflows to 0: refused, not stored as 0
		{"0.5e-330", NotRecorded, false},
		{"0e5", 0, true},
		{"0.000", 0, true},
		{"2,5", NotRecorded, false},
	}
	for _, tt := range tests {
		got, err := ParseDose(tt.in)
		if (err == nil) != tt.ok || got != tt.want {
			t.Errorf("ParseDose(%q) = %g, %v; want %g (ok=%v)", tt.in, got, err, tt.want, tt.ok)
		}
	}
	for _, v := range []float64{NotRecorded, 0, 2.5, 0.125, 75} {
		back, err := ParseDose(FormatDose(v))
		if err != nil || back != v {
			t.Errorf("ParseDose(FormatDose(%g)) = %g, %v", v, back, err)
		}
	}
	if got := FormatDose(2.5); got != "2.5" {
		t.Errorf("FormatDose(2.5) = %q", got)
	}
}

func TestParseCode(t *testing.T) {
	got, err := ParseCode("surveillance", Indications)
	if err != nil || got != Surveillance {
		t.Errorf("ParseCode(surveillance) = %q, %v", got, err)
	}
	if got, err := ParseCode("", Indications); err != nil || got != "" {
		t.Errorf(`ParseCode("") = %q, %v; want "" (not recorded)`, got, err)
	}
	// Codes are read exactly as written: no case folding.
	_, err = ParseCode("Screening", Indications)
	want := `"Screening" is not one of screening, stool_test_positive, surveillance, diagnostic, therapeutic`
	if err == nil || err.Error() != want {
		t.Errorf("ParseCode(Screening) error = %v, want %q", err, want)
	}
}

func TestParseMinSec(t *testing.T) {
	tests := []struct {
		in   string
		want int
		ok   bool
	}{
		{"", NotRecorded, true},
		{"7:30", 450, true},
		{"8", 480, true},
		{" 6:05 ", 365, true},
		{"0:00", 0, true},
		{"120:00", 7200, true},
		{"121:00", NotRecorded, false},
		{"7:5", NotRecorded, false},
		{"7:60", NotRecorded, false},
		{"-1:00", NotRecorded, false},
		{"7.5", NotRecorded, false},
		{"7:30:00", NotRecorded, false},
	}
	for _, tt := range tests {
		got, err := ParseMinSec(tt.in)
		if (err == nil) != tt.ok || got != tt.want {
			t.Errorf("ParseMinSec(%q) = %d, %v; want %d (ok=%v)", tt.in, got, err, tt.want, tt.ok)
		}
	}
	for _, s := range []int{0, 59, 60, 450, 7200} {
		back, err := ParseMinSec(FormatMinSec(s))
		if err != nil || back != s {
			t.Errorf("ParseMinSec(FormatMinSec(%d) = %q) = %d, %v", s, FormatMinSec(s), back, err)
		}
	}
	if got := FormatMinSec(NotRecorded); got != "" {
		t.Errorf("FormatMinSec(NotRecorded) = %q", got)
	}
}

func TestPseudonymise(t *testing.T) {
	key := []byte("unit key for tests")
	// The contract (clinical-reference §7): HMAC-SHA-256 of the reference
	// under the unit key, hex encoded; the reference is compared without
	// case or surrounding spaces. Recomputed here with the standard library.
	m := hmac.New(sha256.New, key)
	m.Write([]byte("RXH1234567"))
	want := hex.EncodeToString(m.Sum(nil))

	for _, ref := range []string{"RXH1234567", "rxh1234567", "  RXH1234567 "} {
		got, err := Pseudonymise(key, ref)
		if err != nil || got != want {
			t.Errorf("Pseudonymise(%q) = %q, %v; want %q", ref, got, err, want)
		}
	}
	if !IsPatientKey(want) {
		t.Errorf("IsPatientKey(%q) = false", want)
	}
	if strings.Contains(want, "1234567") {
		t.Errorf("pseudonym %q shows the hospital number", want)
	}
	other, _ := Pseudonymise([]byte("another unit"), "RXH1234567")
	if other == want {
		t.Error("two unit keys give the same pseudonym")
	}
	// An exported pseudonym is kept as it is, with or without a key.
	for _, k := range [][]byte{key, nil} {
		got, err := Pseudonymise(k, ExportPseudonym(want))
		if err != nil || got != want {
			t.Errorf("Pseudonymise(export form) = %q, %v; want %q", got, err, want)
		}
	}
	if got, err := Pseudonymise(nil, ""); err != nil || got != "" {
		t.Errorf(`Pseudonymise(nil, "") = %q, %v`, got, err)
	}
	if _, err := Pseudonymise(nil, "RXH1234567"); !errors.Is(err, ErrNoKey) {
		t.Errorf("Pseudonymise without a key: error %v, want ErrNoKey", err)
	}
	// An exported pseudonym that a spreadsheet upper-cased is still the
	// same pseudonym, never hashed again as if it were a hospital number.
	for _, ref := range []string{"PSN:" + strings.ToUpper(want), "Psn:" + want, " psn:" + strings.ToUpper(want) + " "} {
		got, err := Pseudonymise(key, ref)
		if err != nil || got != want {
			t.Errorf("Pseudonymise(%q) = %q, %v; want the pseudonym it carries, %q", ref, got, err, want)
		}
		if !IsExportPseudonym(ref) {
			t.Errorf("IsExportPseudonym(%q) = false", ref)
		}
	}
	// "psn:" followed by something that is not a pseudonym is hashed like
	// any other reference.
	got, err := Pseudonymise(key, "psn:RXH1")
	if err != nil || got == "psn:RXH1" || !IsPatientKey(got) {
		t.Errorf(`Pseudonymise("psn:RXH1") = %q, %v; want a fresh pseudonym`, got, err)
	}
}

func TestPatientKeyForms(t *testing.T) {
	k := "0123456789abcdef" + strings.Repeat("0", 48)
	tests := []struct {
		s    string
		want bool
	}{
		{k, true},
		{strings.ToUpper(k), false},
		{k[:63], false},
		{k + "0", false},
		{strings.Repeat("g", 64), false},
		{"", false},
	}
	for _, tt := range tests {
		if got := IsPatientKey(tt.s); got != tt.want {
			t.Errorf("IsPatientKey(%q) = %v, want %v", tt.s, got, tt.want)
		}
	}
	if got := ShortCode(k); got != "PT-0123456789" {
		t.Errorf("ShortCode = %q, want PT-0123456789", got)
	}
	if got := ShortCode("abcdef0123"); got != "PT-ABCDEF0123" {
		t.Errorf("ShortCode upper-cases: got %q", got)
	}
	if got := ShortCode("abc"); got != "" {
		t.Errorf("ShortCode of a short value = %q, want empty", got)
	}
	if got := ExportPseudonym(k); got != "psn:"+k {
		t.Errorf("ExportPseudonym = %q", got)
	}
	if got := ExportPseudonym(""); got != "" {
		t.Errorf(`ExportPseudonym("") = %q`, got)
	}
}

func TestQuoteValue(t *testing.T) {
	long := strings.Repeat("x", 100_000)
	tests := []struct {
		in, want string
	}{
		{"", `""`},
		{"2025-02-29", `"2025-02-29"`},
		{"screenning", `"screenning"`},
		{"E01", `"E01"`},
		{"1e-400", `"1e-400"`},
		{"3y", `"3y"`},
		{"\xff\xfe", `"\xff\xfe"`},
		// Possible patient references are never shown.
		{"RXH1234567", "a value of 10 characters (not shown, as it may identify a patient)"},
		{"9434765919", "a value of 10 characters (not shown, as it may identify a patient)"},
		{"943 476 5919", "a value of 12 characters (not shown, as it may identify a patient)"},
		{"AB123", "a value of 5 characters (not shown, as it may identify a patient)"},
		// A huge value is cut.
		{long, `"` + strings.Repeat("x", MaxShownValue-1) + `…" (100000 characters)`},
	}
	for _, tt := range tests {
		if got := QuoteValue(tt.in); got != tt.want {
			t.Errorf("QuoteValue(%.50q) = %q, want %q", tt.in, got, tt.want)
		}
	}
	// Every parser quotes through QuoteValue: a hospital number in a column
	// of another kind is not echoed.
	for name, parse := range map[string]func(string) error{
		"date":   func(s string) error { _, err := ParseDate(s); return err },
		"count":  func(s string) error { _, err := ParseCount(s); return err },
		"dose":   func(s string) error { _, err := ParseDose(s); return err },
		"yes/no": func(s string) error { _, err := ParseYesNo(s, true); return err },
		"code":   func(s string) error { _, err := ParseCode(s, Sexes); return err },
		"min:s":  func(s string) error { _, err := ParseMinSec(s); return err },
	} {
		err := parse("RXH1234567")
		if err == nil || strings.Contains(err.Error(), "1234567") {
			t.Errorf("%s parser: %v; want a refusal that does not show the value", name, err)
		}
		err = parse(long)
		if err == nil || len(err.Error()) > 300 {
			t.Errorf("%s parser: a %d-byte value gives a message of %d bytes", name, len(long), len(err.Error()))
		}
	}
}

func TestIntervalWords(t *testing.T) {
	for _, iv := range Intervals {
		if w := iv.Words(); w == "" || w == string(iv) {
			t.Errorf("interval %s has no words of its own (%q)", iv, w)
		}
	}
	if got := Interval3y.Words(); got != "3 years" {
		t.Errorf("3y reads %q, want \"3 years\"", got)
	}
}
