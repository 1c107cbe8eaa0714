package logbook

import (
	"fmt"
	"strconv"
	"unicode"
	"unicode/utf8"
)

// MaxShownValue is how many characters of a refused value a message quotes;
// longer values are cut, so that a message never carries a huge field.
const MaxShownValue = 40

// QuoteValue is how every message quotes a value it refuses: in double
// quotes, cut to MaxShownValue characters (with the full length given), and
// not at all when it looks like a patient reference — letters mixed with
// digits, or a long run of digits such as an NHS number — because such a
// value in the wrong column may be a hospital number, which no message may
// show (clinical-reference §7). Dates, doses, codes and short identifiers
// are shown as they are.
func QuoteValue(s string) string {
	if mayIdentify(s) {
		return fmt.Sprintf("a value of %d characters (not shown, as it may identify a patient)", utf8.RuneCountInString(s))
	}
	if n := utf8.RuneCountInString(s); n > MaxShownValue {
		cut, kept := s, 0
		for i := range s {
			if kept == MaxShownValue-1 {
				cut = s[:i]
				break
			}
			kept++
		}
		return strconv.Quote(cut+"…") + fmt.Sprintf(" (%d characters)", n)
	}
	return strconv.Quote(s)
}

// mayIdentify reports whether s could be a hospital or NHS number: at least
// five characters mixing letters and digits (other than a number written
// with an exponent, such as 1e-400), or nine or more digits in all.
func mayIdentify(s string) bool {
	var letters, digits int
	for _, r := range s {
		switch {
		case unicode.IsLetter(r):
			letters++
		case unicode.IsDigit(r):
			digits++
		}
	}
	if letters > 0 && digits > 0 && utf8.RuneCountInString(s) >= 5 {
		return !decimal(s)
	}
	return digits >= 9
}
