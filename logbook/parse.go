package logbook

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"
)

// DateLayout is the ISO 8601 calendar date used in every file and screen.
const DateLayout = "2006-01-02"

// ParseDate reads an ISO 8601 date (YYYY-MM-DD) that exists in the calendar.
// The empty string gives the zero time and no error (not recorded).
func ParseDate(s string) (time.Time, error) {
	if s == "" {
		return time.Time{}, nil
	}
	if len(s) != len(DateLayout) {
		return time.Time{}, fmt.Errorf("%s is not a date in the form YYYY-MM-DD", QuoteValue(s))
	}
	d, err := time.Parse(DateLayout, s)
	if err != nil {
		return time.Time{}, fmt.Errorf("%s is not a real calendar date (YYYY-MM-DD)", QuoteValue(s))
	}
	if d.Year() < 1900 {
		return time.Time{}, fmt.Errorf("%s is before 1900", QuoteValue(s))
	}
	return d, nil
}

// FormatDate writes a date as YYYY-MM-DD, or "" for the zero time.
func FormatDate(d time.Time) string {
	if d.IsZero() {
		return ""
	}
	return d.Format(DateLayout)
}

// Today returns the civil date of t (in t's location) as midnight UTC, the
// form every stored date takes.
func Today(t time.Time) time.Time {
	y, m, d := t.Date()
	return time.Date(y, m, d, 0, 0, 0, 0, time.UTC)
}

// ParseYesNo reads "yes" or "no" (any case); "" is not recorded. When allowNA
// is set, "not_applicable" (also "na", "n/a") is accepted.
func ParseYesNo(s string, allowNA bool) (YesNo, error) {
	switch strings.ToLower(s) {
	case "":
		return Unrecorded, nil
	case "yes":
		return Yes, nil
	case "no":
		return No, nil
	case "not_applicable", "na", "n/a":
		if allowNA {
			return NotApplicable, nil
		}
	}
	if allowNA {
		return Unrecorded, fmt.Errorf("%s is not yes, no or not_applicable", QuoteValue(s))
	}
	return Unrecorded, fmt.Errorf("%s is not yes or no", QuoteValue(s))
}

// ParseCount reads a whole number; "" gives NotRecorded.
func ParseCount(s string) (int, error) {
	if s == "" {
		return NotRecorded, nil
	}
	n, err := strconv.Atoi(s)
	if err != nil || n < 0 {
		return NotRecorded, fmt.Errorf("%s is not a whole number of zero or more", QuoteValue(s))
	}
	return n, nil
}

// ParseDose reads a non-negative decimal amount such as "2.5"; "" gives
// NotRecorded. An amount too small to be held ("1e-400", which would
// become 0) is refused rather than recorded as zero.
func ParseDose(s string) (float64, error) {
	if s == "" {
		return NotRecorded, nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || !decimal(s) || v < 0 || math.IsInf(v, 0) || math.IsNaN(v) {
		return NotRecorded, fmt.Errorf("%s is not an amount of zero or more", QuoteValue(s))
	}
	if v == 0 && nonZeroMantissa(s) {
		return NotRecorded, fmt.Errorf("%s is too small to record (it would be stored as 0)", QuoteValue(s))
	}
	return v, nil
}

// nonZeroMantissa reports whether the digits before any exponent of a
// decimal number include one that is not zero.
func nonZeroMantissa(s string) bool {
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c == 'e' || c == 'E':
			return false
		case c >= '1' && c <= '9':
			return true
		}
	}
	return false
}

// decimal reports whether s is written with decimal digits, a point and an
// exponent only: strconv.ParseFloat also reads hex floats ("0x10"), digit
// separators and "inf", which no record should carry.
func decimal(s string) bool {
	for i := 0; i < len(s); i++ {
		switch c := s[i]; {
		case c >= '0' && c <= '9', c == '.', c == 'e', c == 'E', c == '+', c == '-':
		default:
			return false
		}
	}
	return true
}

// digits reports whether s is one or more ASCII digits.
func digits(s string) bool {
	if s == "" {
		return false
	}
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

// FormatCount writes a whole number, or "" for NotRecorded.
func FormatCount(n int) string {
	if n == NotRecorded {
		return ""
	}
	return strconv.Itoa(n)
}

// FormatDose writes an amount in its shortest exact form, or "" for
// NotRecorded.
func FormatDose(v float64) string {
	if v == NotRecorded {
		return ""
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// ParseCode reads a code of one set exactly as written ("" is not recorded);
// an unknown code is an error listing the allowed ones.
func ParseCode[T ~string](s string, set []T) (T, error) {
	if s == "" || IsOneOf(T(s), set) {
		return T(s), nil
	}
	names := make([]string, len(set))
	for i, c := range set {
		names[i] = string(c)
	}
	return "", fmt.Errorf("%s is not one of %s", QuoteValue(s), strings.Join(names, ", "))
}

// ParseMinSec reads a withdrawal time typed as minutes:seconds ("7:30") or as
// whole minutes ("8") and returns seconds; "" gives NotRecorded.
func ParseMinSec(s string) (int, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return NotRecorded, nil
	}
	m, sec, found := strings.Cut(s, ":")
	mins, err := strconv.Atoi(m)
	if err != nil || !digits(m) || mins > MaxWithdrawalSeconds/60 {
		return NotRecorded, fmt.Errorf("%s is not minutes:seconds", QuoteValue(s))
	}
	secs := 0
	if found {
		secs, err = strconv.Atoi(sec)
		if err != nil || !digits(sec) || secs > 59 || len(sec) != 2 {
			return NotRecorded, fmt.Errorf("%s is not minutes:seconds (seconds 00–59)", QuoteValue(s))
		}
	}
	if mins*60+secs > MaxWithdrawalSeconds {
		return NotRecorded, fmt.Errorf("%s is longer than %d minutes", QuoteValue(s), MaxWithdrawalSeconds/60)
	}
	return mins*60 + secs, nil
}

// FormatMinSec writes seconds as minutes:seconds, or "" for NotRecorded.
func FormatMinSec(secs int) string {
	if secs == NotRecorded {
		return ""
	}
	return fmt.Sprintf("%d:%02d", secs/60, secs%60)
}

// pseudonymPrefix marks a patient reference that is already a pseudonym (as
// written by export), so that re-importing an export does not hash twice.
const pseudonymPrefix = "psn:"

// ErrNoKey is returned when a patient reference must be pseudonymised but no
// unit key is available.
var ErrNoKey = errors.New("no unit key to pseudonymise patient references")

// Pseudonymise turns a patient reference as typed or imported (for example a
// hospital number) into the stored pseudonym: HMAC-SHA-256 under the unit
// key, hex encoded (clinical-reference §7). A reference that is already a
// pseudonym in export form ("psn:" and 64 hex digits, in either letter
// case, as a spreadsheet may have upper-cased it) is kept as it is, never
// hashed again. Surrounding spaces and letter case of the reference are
// ignored so that "ab123" and "AB123 " give the same pseudonym.
func Pseudonymise(key []byte, ref string) (string, error) {
	ref = strings.TrimSpace(ref)
	if ref == "" {
		return "", nil
	}
	if h, ok := exportedKey(ref); ok {
		return h, nil
	}
	if len(key) == 0 {
		return "", ErrNoKey
	}
	m := hmac.New(sha256.New, key)
	m.Write([]byte(strings.ToUpper(ref)))
	return hex.EncodeToString(m.Sum(nil)), nil
}

// IsExportPseudonym reports whether a patient reference as typed or
// imported is already a pseudonym in export form, which Pseudonymise keeps.
func IsExportPseudonym(ref string) bool {
	_, ok := exportedKey(strings.TrimSpace(ref))
	return ok
}

// exportedKey returns the stored pseudonym that ref carries in export form
// ("psn:" and 64 hex digits, either letter case), in the stored lower case.
func exportedKey(ref string) (string, bool) {
	if len(ref) != len(pseudonymPrefix)+64 || !strings.EqualFold(ref[:len(pseudonymPrefix)], pseudonymPrefix) {
		return "", false
	}
	h := strings.ToLower(ref[len(pseudonymPrefix):])
	return h, IsPatientKey(h)
}

// IsPatientKey reports whether s has the stored pseudonym's form: 64
// lower-case hex digits.
func IsPatientKey(s string) bool {
	if len(s) != 64 {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f') {
			return false
		}
	}
	return true
}

// ExportPseudonym is the form a pseudonym takes in an exported CSV file.
func ExportPseudonym(patientKey string) string {
	if patientKey == "" {
		return ""
	}
	return pseudonymPrefix + patientKey
}

// ShortCode is the display code of a pseudonym shown on screens and reports:
// "PT-" and its first ten hex digits in capitals. It cannot be turned back
// into the hospital number.
func ShortCode(patientKey string) string {
	if len(patientKey) < 10 {
		return ""
	}
	return "PT-" + strings.ToUpper(patientKey[:10])
}
