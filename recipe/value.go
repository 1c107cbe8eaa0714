package recipe

import (
	"errors"
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"
)

// dateForm is a compiled date_format: tokens DD, MM, MMM and YYYY with any
// other characters between them, which must appear as written.
type dateForm struct {
	parts []datePart
}

type datePart struct {
	token string // "DD", "MM", "MMM", "YYYY", or "" for a literal
	lit   string
}

// dateTokens in the order they are tried (MMM before MM).
var dateTokens = []string{"YYYY", "MMM", "MM", "DD"}

func parseDateForm(s string) (dateForm, error) {
	var f dateForm
	have := map[string]int{}
	for i := 0; i < len(s); {
		tok := ""
		for _, t := range dateTokens {
			if strings.HasPrefix(s[i:], t) {
				tok = t
				break
			}
		}
		if tok != "" {
			f.parts = append(f.parts, datePart{token: tok})
			have[tok]++
			i += len(tok)
			continue
		}
		r, n := utf8.DecodeRuneInString(s[i:])
		if unicode.IsLetter(r) || unicode.IsDigit(r) {
			return dateForm{}, fmt.Errorf("%q at position %d is not a token (tokens: DD, MM, MMM, YYYY; anything else between them must not be a letter or digit)", s[i:i+n], i+1)
		}
		if k := len(f.parts); k > 0 && f.parts[k-1].token == "" {
			f.parts[k-1].lit += s[i : i+n]
		} else {
			f.parts = append(f.parts, datePart{lit: s[i : i+n]})
		}
		i += n
	}
	day, month, year := have["DD"], have["MM"]+have["MMM"], have["YYYY"]
	if day != 1 || month != 1 || year != 1 {
		return dateForm{}, errors.New("needs DD, MM (or MMM) and YYYY once each")
	}
	return f, nil
}

// parse reads s in the form, returning the date as time.Time at midnight UTC.
// A time of day after the date is allowed and dropped.
func (f dateForm) parse(s string) (time.Time, bool) {
	var y, m, d int
	rest := s
	for i, p := range f.parts {
		nextIsToken := i+1 < len(f.parts) && f.parts[i+1].token != ""
		switch p.token {
		case "":
			if !strings.HasPrefix(rest, p.lit) {
				return time.Time{}, false
			}
			rest = rest[len(p.lit):]
		case "YYYY":
			n, r, ok := digitsOf(rest, 4, 4)
			if !ok {
				return time.Time{}, false
			}
			y, rest = n, r
		case "DD", "MM":
			lo := 1
			if nextIsToken {
				lo = 2
			}
			n, r, ok := digitsOf(rest, lo, 2)
			if !ok {
				return time.Time{}, false
			}
			if p.token == "DD" {
				d = n
			} else {
				m = n
			}
			rest = r
		case "MMM":
			k := 0
			for k < len(rest) && (rest[k] >= 'a' && rest[k] <= 'z' || rest[k] >= 'A' && rest[k] <= 'Z') {
				k++
			}
			word := strings.ToLower(rest[:k])
			m = 0
			for j := range 12 {
				if len(word) >= 3 && strings.HasPrefix(strings.ToLower(time.Month(j+1).String()), word) {
					m = j + 1
				}
			}
			if m == 0 {
				return time.Time{}, false
			}
			rest = rest[k:]
		}
	}
	if !timeOfDay.MatchString(rest) {
		return time.Time{}, false
	}
	return calendarDate(y, m, d)
}

// digitsOf reads lo to hi ASCII digits at the start of s (as many as there
// are, up to hi).
func digitsOf(s string, lo, hi int) (int, string, bool) {
	k := 0
	for k < len(s) && k < hi && s[k] >= '0' && s[k] <= '9' {
		k++
	}
	if k < lo {
		return 0, s, false
	}
	n, _ := strconv.Atoi(s[:k])
	return n, s[k:], true
}

// timeOfDay is what may follow a date: nothing, or a time of day
// ("14:30", "T14:30:00", " 2:30 PM").
var timeOfDay = regexp.MustCompile(`^(?:[ T]\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?(?: ?[AaPp][Mm])?)?$`)

// calendarDate returns the date if it exists in the calendar, from 1900 on.
func calendarDate(y, m, d int) (time.Time, bool) {
	t := time.Date(y, time.Month(m), d, 0, 0, 0, 0, time.UTC)
	if y < 1900 || t.Year() != y || int(t.Month()) != m || t.Day() != d {
		return time.Time{}, false
	}
	return t, true
}

var isoForm, _ = parseDateForm("YYYY-MM-DD")

// isoDate reads an ISO 8601 date, with or without a time of day after it
// (as a workbook's date cells read).
func isoDate(s string) (time.Time, bool) {
	return isoForm.parse(s)
}

// plainDecimal reads a decimal number written with digits, at most one point
// and an optional sign: not "1e5", "inf", "0x10" nor "1,5".
func plainDecimal(s string) (float64, error) {
	body := strings.TrimPrefix(strings.TrimPrefix(s, "-"), "+")
	digits, points := 0, 0
	for i := 0; i < len(body); i++ {
		switch c := body[i]; {
		case c >= '0' && c <= '9':
			digits++
		case c == '.':
			points++
		default:
			return 0, errors.New("not a number")
		}
	}
	if digits == 0 || points > 1 {
		return 0, errors.New("not a number")
	}
	return strconv.ParseFloat(s, 64)
}

// cutUnit removes one of units (matched in any case, with or without a
// space before it) from the end of s.
func cutUnit(s string, units []string) string {
	lower := strings.ToLower(s)
	best := ""
	for _, u := range units {
		if strings.HasSuffix(lower, u) && len(u) > len(best) {
			best = u
		}
	}
	if best == "" {
		return s
	}
	return strings.TrimSpace(s[:len(s)-len(best)])
}

// problem is a source value the recipe cannot turn into ours.
type problem struct {
	reason string
	// section is the recipe section that would map the value when the value
	// is simply not listed ("[values.indication]", "[yes_no]"), else "".
	section string
}

// convert turns a trimmed source value into our form for field f.
func (r *Recipe) convert(f Field, s string) (string, *problem) {
	if s == "" {
		return "", nil
	}
	if m := r.values[f.Name]; m != nil {
		if v, ok := m[Fold(s)]; ok {
			return v, nil
		}
	}
	switch f.Type {
	case Patient:
		return s, nil
	case Text:
		if r.values[f.Name] != nil {
			return "", r.unlisted(f, s, "")
		}
		return s, nil
	case Code:
		k := Fold(s)
		for _, c := range f.Codes {
			if Fold(c) == k {
				return c, nil
			}
		}
		return "", r.unlisted(f, s, " (our codes: "+strings.Join(f.Codes, ", ")+")")
	case YesNo:
		k := Fold(s)
		switch {
		case r.yes[k] || k == "yes":
			return "yes", nil
		case r.no[k] || k == "no":
			return "no", nil
		case r.na[k] || k == "not_applicable" || k == "n/a" || k == "na":
			if f.NA {
				return "not_applicable", nil
			}
			return "", &problem{reason: fmt.Sprintf("%s means not applicable, which %s cannot be (yes or no)", quoteShort(s), f.Name)}
		}
		return "", &problem{reason: fmt.Sprintf("%s is not in the recipe: add it to [yes_no] yes or no (or to [values.%s])", quoteShort(s), f.Name), section: "[yes_no]"}
	case Date:
		return r.date(s)
	case Count:
		v, p := r.number(f, s)
		if p != nil {
			return "", p
		}
		if v != math.Trunc(v) || math.Abs(v) > 1e9 {
			return "", &problem{reason: fmt.Sprintf("%s is not a whole number", quoteShort(s))}
		}
		return strconv.Itoa(int(v)), nil
	case Amount:
		v, p := r.number(f, s)
		if p != nil {
			return "", p
		}
		return strconv.FormatFloat(v, 'f', -1, 64), nil
	case Seconds:
		return r.seconds(s)
	}
	return s, nil
}

func (r *Recipe) unlisted(f Field, s, more string) *problem {
	section := "[values." + f.Name + "]"
	return &problem{reason: fmt.Sprintf("%s is not in the recipe: add it to %s%s", quoteShort(s), section, more), section: section}
}

func (r *Recipe) date(s string) (string, *problem) {
	t, ok := isoDate(s)
	if !ok && len(r.dates.parts) > 0 {
		t, ok = r.dates.parse(s)
	}
	if ok {
		return t.Format(time.DateOnly), nil
	}
	form := "YYYY-MM-DD (set date_format in the recipe if the source writes dates another way)"
	if r.DateFormat != "" {
		form = r.DateFormat + " (date_format)"
	}
	return "", &problem{reason: fmt.Sprintf("%s is not a real date in the form %s", quoteShort(s), form)}
}

func (r *Recipe) number(f Field, s string) (float64, *problem) {
	v, err := plainDecimal(cutUnit(s, f.Units))
	if err != nil {
		unit := ""
		if len(f.Units) > 0 {
			unit = " in " + f.Units[0]
		}
		return 0, &problem{reason: fmt.Sprintf("%s is not a number%s", quoteShort(s), unit)}
	}
	return v, nil
}

var (
	secondUnits = []string{"s", "sec", "secs", "seconds"}
	minuteUnits = []string{"m", "min", "mins", "minutes"}
)

// seconds reads a withdrawal time: "M:SS" or "H:MM:SS" always; a bare number
// in the recipe's unit (seconds unless [units] withdrawal = "minutes").
func (r *Recipe) seconds(s string) (string, *problem) {
	if strings.Contains(s, ":") {
		parts := strings.Split(s, ":")
		if len(parts) > 3 {
			return "", &problem{reason: fmt.Sprintf("%s is not minutes:seconds", quoteShort(s))}
		}
		total := 0
		for i, p := range parts {
			n, rest, ok := digitsOf(p, 1, 6)
			if !ok || rest != "" || (i > 0 && (len(p) != 2 || n > 59)) {
				return "", &problem{reason: fmt.Sprintf("%s is not minutes:seconds", quoteShort(s))}
			}
			total = total*60 + n
		}
		return strconv.Itoa(total), nil
	}
	units, unit, scale := secondUnits, "seconds", 1.0
	if r.WithdrawalMinutes {
		units, unit, scale = minuteUnits, "minutes", 60
	}
	v, err := plainDecimal(cutUnit(s, units))
	if err != nil || v < 0 || v*scale > 1e9 {
		return "", &problem{reason: fmt.Sprintf("%s is not a time in %s ([units] withdrawal)", quoteShort(s), unit)}
	}
	return strconv.Itoa(int(math.Round(v * scale))), nil
}

// quoteShort quotes a value for a message, cut to 40 characters.
func quoteShort(s string) string {
	if utf8.RuneCountInString(s) > 40 {
		rs := []rune(s)
		return strconv.Quote(string(rs[:40])) + "…"
	}
	return strconv.Quote(s)
}
