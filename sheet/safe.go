package sheet

import (
	"strconv"
	"unicode/utf8"
)

// FormulaLike reports whether a spreadsheet would take the text v for a
// formula if it were typed into a cell: it begins with "=", "+", "@", a tab
// or a carriage return, or with "-" without being a plain decimal number
// ("-12", "-2.5", "-1e5" are numbers; "-inf", "-0x10" and "-A1" are not),
// or with the full-width "＝", "＋", "－" or "＠", which some spreadsheets
// read as the plain ones. It is the one rule of formula safety: the CSV
// export puts an apostrophe before such a cell (store.SafeCell) and the
// workbook writer stores it as quoted text.
func FormulaLike(v string) bool {
	r, _ := utf8.DecodeRuneInString(v)
	switch r {
	case '=', '+', '@', '\t', '\r', '＝', '＋', '－', '＠':
		return true
	case '-':
		return !plainNumber(v)
	}
	return false
}

// plainNumber reports whether v is a decimal number as a spreadsheet reads
// one; strconv also accepts "inf", "nan" and hex floats, which a
// spreadsheet would take as a formula.
func plainNumber(v string) bool {
	if _, err := strconv.ParseFloat(v, 64); err != nil {
		return false
	}
	for i := 0; i < len(v); i++ {
		switch c := v[i]; {
		case c >= '0' && c <= '9', c == '.', c == 'e', c == 'E', c == '+', c == '-':
		default:
			return false
		}
	}
	return true
}
