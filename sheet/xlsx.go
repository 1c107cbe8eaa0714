package sheet

import (
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"time"

	"github.com/xuri/excelize/v2"
	"github.com/xuri/nfp"
)

// How the reader shows each cell: the workbook's own number formats are
// replaced, in memory and for reading only, by these. A date or date-time
// cell is drawn as a marker and its serial number, which the reader turns
// into ISO 8601 itself: excelize's own date drawing costs about a tenth of a
// millisecond a cell, too slow for a sheet of a hundred thousand rows. The
// marker is a private-use character, which no spreadsheet writes, followed
// by a letter; a text cell is never drawn with it (the formats have no text
// section).
const (
	dateMarker     = "\ue000D"
	dateTimeMarker = "\ue000T"
	// rawFormat is no format at all: excelize then returns the cell's own
	// value, a number to 15 significant digits (Excel's precision). No
	// built-in format has this id, and the reader moves every custom
	// format to an id of its own.
	rawFormat = -1
)

// markerFormat draws a number, positive or negative, as marker and value.
func markerFormat(marker string) string {
	const digits = "0.###############"
	return `"` + marker + `"` + digits + `;"` + marker + `"-` + digits
}

// formatClass is what a cell format shows.
type formatClass int

const (
	showsNumber   formatClass = iota // a number, a percentage, text or General
	showsDate                        // a calendar date
	showsDateTime                    // a date with a time of day
	showsTime                        // a time of day or a duration only
)

// builtInClass classifies the built-in formats that show dates or times
// (ECMA-376 part 1, 18.8.30, and the East Asian formats 27–36 and 50–58).
func builtInClass(id int) formatClass {
	switch {
	case id >= 14 && id <= 17, id >= 27 && id <= 31, id == 36, id >= 50 && id <= 51, id == 54, id >= 57 && id <= 58:
		return showsDate
	case id == 22:
		return showsDateTime
	case id >= 18 && id <= 21, id >= 32 && id <= 35, id >= 45 && id <= 47, id >= 52 && id <= 53, id >= 55 && id <= 56:
		return showsTime
	}
	return showsNumber
}

// codeClass classifies a custom format code by its date and time tokens. "m"
// is a month unless the code also has hours or seconds (then minutes), as
// spreadsheets read it.
func codeClass(code string) formatClass {
	p := nfp.NumberFormatParser()
	var date, month, clock bool
	for _, s := range p.Parse(code) {
		for _, tk := range s.Items {
			if tk.TType != nfp.TokenTypeDateTimes && tk.TType != nfp.TokenTypeElapsedDateTimes {
				continue
			}
			v := strings.ToLower(tk.TValue)
			switch {
			case tk.TType == nfp.TokenTypeElapsedDateTimes, strings.HasPrefix(v, "h"), strings.HasPrefix(v, "s"), v == "am/pm", v == "a/p":
				clock = true
			case strings.HasPrefix(v, "y"), strings.HasPrefix(v, "d"), strings.HasPrefix(v, "e"), strings.HasPrefix(v, "g"):
				date = true
			case strings.HasPrefix(v, "m"):
				month = true
				if len(v) >= 3 {
					date = true // "mmm" and longer are month names
				}
			}
		}
	}
	if month && !clock {
		date = true
	}
	switch {
	case date && clock:
		return showsDateTime
	case date:
		return showsDate
	case clock:
		return showsTime
	}
	return showsNumber
}

// retypeFormats rewrites, in memory and for reading only, the number format
// of every cell style: dates and date-times to the markers, numbers and
// text to no format at all (their own value), times left as the workbook
// shows them.
//
// excelize's streaming reader formats each cell by its style but does not
// expose the style, so the styles themselves are changed; excelize keeps
// them in File.Styles, and its formatter reads them from there.
func retypeFormats(f *excelize.File) error {
	if _, err := f.GetStyle(0); err != nil && f.Styles == nil {
		return err // the style sheet cannot be read
	}
	if f.Styles == nil || f.Styles.CellXfs == nil {
		return nil
	}
	ss := f.Styles
	styles := len(ss.CellXfs.Xf)
	// The workbook's own custom formats, before the markers are added.
	custom := map[int]string{}
	var own []int // their indexes in ss.NumFmts.NumFmt
	if ss.NumFmts != nil {
		for i, nf := range ss.NumFmts.NumFmt {
			if nf == nil {
				continue
			}
			code := nf.FormatCode
			if nf.FormatCode16 != "" {
				code = nf.FormatCode16
			}
			if _, dup := custom[nf.NumFmtID]; !dup {
				custom[nf.NumFmtID] = code
			}
			own = append(own, i)
		}
	}
	marker := func(m string) (int, error) {
		code := markerFormat(m)
		id, err := f.NewStyle(&excelize.Style{CustomNumFmt: &code})
		if err != nil || id >= len(f.Styles.CellXfs.Xf) || f.Styles.CellXfs.Xf[id].NumFmtID == nil {
			return 0, fmt.Errorf("cannot add a reading format: %v", err)
		}
		return *f.Styles.CellXfs.Xf[id].NumFmtID, nil
	}
	dateID, err := marker(dateMarker)
	if err != nil {
		return err
	}
	dateTimeID, err := marker(dateTimeMarker)
	if err != nil {
		return err
	}
	// Every custom format of the workbook moves to a fresh negative id, so
	// that none can shadow a built-in one (some writers redefine id 14), a
	// marker or the raw id.
	moved := map[int]int{}
	for _, i := range own {
		nf := ss.NumFmts.NumFmt[i]
		if _, ok := moved[nf.NumFmtID]; !ok {
			moved[nf.NumFmtID] = -2 - i
		}
		nf.NumFmtID = -2 - i
	}
	for i := 0; i < styles; i++ {
		xf := &ss.CellXfs.Xf[i]
		id := 0
		if xf.NumFmtID != nil {
			id = *xf.NumFmtID
		}
		class := builtInClass(id)
		code, isCustom := custom[id]
		if isCustom {
			class = codeClass(code)
		}
		to := rawFormat
		switch class {
		case showsDate:
			to = dateID
		case showsDateTime:
			to = dateTimeID
		case showsTime:
			to = id // as the workbook shows it
			if isCustom {
				to = moved[id]
			}
		}
		xf.NumFmtID = &to
	}
	return nil
}

// typedCell turns a marked date or date-time cell into ISO 8601; any other
// cell is returned as it is.
func typedCell(v string, date1904 bool) string {
	layout := ""
	rest, ok := strings.CutPrefix(v, dateMarker)
	if ok {
		layout = time.DateOnly
	} else if rest, ok = strings.CutPrefix(v, dateTimeMarker); ok {
		layout = "2006-01-02 15:04"
	} else {
		return v
	}
	serial, err := strconv.ParseFloat(rest, 64)
	if err != nil {
		return rest
	}
	t, err := excelize.ExcelDateToTime(serial, date1904)
	if err != nil || t.Year() > 9999 {
		return rest // not a date a spreadsheet can show: the number itself
	}
	if layout != time.DateOnly {
		t = t.Add(30 * time.Second).Truncate(time.Minute) // to the nearest minute
	}
	return t.Format(layout)
}

func openXLSXFile(path, name string, opt Options) (*Table, error) {
	lim := opt.Limits.withDefaults()
	return openXLSX(name, opt, func(o excelize.Options) (*excelize.File, error) {
		return excelize.OpenFile(path, o)
	}, lim)
}

func openXLSXReader(name string, r io.Reader, opt Options) (*Table, error) {
	lim := opt.Limits.withDefaults()
	return openXLSX(name, opt, func(o excelize.Options) (*excelize.File, error) {
		// The zip format needs random access: the workbook is read whole,
		// up to its limit.
		b, err := io.ReadAll(io.LimitReader(r, lim.WorkbookBytes+1))
		if err != nil {
			return nil, err
		}
		if int64(len(b)) > lim.WorkbookBytes {
			return nil, fmt.Errorf("larger than %d bytes", lim.WorkbookBytes)
		}
		return excelize.OpenReader(strings.NewReader(string(b)), o)
	}, lim)
}

// openXLSX opens a workbook, chooses the sheet and reads up to the header.
// excelize is a large library reading untrusted input; a panic inside it
// becomes an error naming the file.
func openXLSX(name string, opt Options, open func(excelize.Options) (*excelize.File, error), lim Limits) (t *Table, err error) {
	var f *excelize.File
	defer func() {
		if p := recover(); p != nil {
			t, err = nil, &Error{File: name, Reason: fmt.Sprintf("the workbook cannot be read (%v)", p)}
		}
		if err != nil && f != nil {
			f.Close()
		}
	}()
	f, err = open(excelize.Options{UnzipSizeLimit: lim.WorkbookBytes})
	if err != nil {
		return nil, &Error{File: name, Reason: "not a workbook this program can read: " + xlsxReason(err)}
	}
	sheets := f.GetSheetList()
	if len(sheets) == 0 {
		return nil, &Error{File: name, Reason: "the workbook has no sheets"}
	}
	sheet := sheets[0]
	if opt.Sheet != "" {
		sheet = ""
		for _, s := range sheets {
			if s == opt.Sheet {
				sheet = s
			}
		}
		if sheet == "" {
			return nil, &Error{File: name, Reason: fmt.Sprintf("the workbook has no sheet %q (its sheets: %s)", opt.Sheet, quoteList(sheets))}
		}
	}
	if err := retypeFormats(f); err != nil {
		return nil, &Error{File: name, Reason: "its cell styles cannot be read: " + xlsxReason(err)}
	}
	date1904 := false
	if p, err := f.GetWorkbookProps(); err == nil && p.Date1904 != nil {
		date1904 = *p.Date1904
	}
	rows, err := f.Rows(sheet)
	if err != nil {
		return nil, &Error{File: name, Reason: fmt.Sprintf("sheet %q cannot be read: %s", sheet, xlsxReason(err))}
	}
	t = &Table{name: name, sheet: sheet, sheets: sheets, limits: lim}
	line := 0
	t.next = func() (n int, cells []string, err error) {
		defer func() {
			if p := recover(); p != nil {
				n, cells, err = 0, nil, &Error{File: t.Label(), Line: line, Reason: fmt.Sprintf("the sheet cannot be read (%v)", p)}
			}
		}()
		if !rows.Next() {
			if err := rows.Error(); err != nil {
				return 0, nil, &Error{File: t.Label(), Line: line + 1, Reason: xlsxReason(err)}
			}
			return 0, nil, io.EOF
		}
		line++
		cells, err = rows.Columns()
		if err != nil {
			return 0, nil, &Error{File: t.Label(), Line: line, Reason: xlsxReason(err)}
		}
		for i, c := range cells {
			cells[i] = typedCell(c, date1904)
		}
		return line, cells, nil
	}
	t.close = func() error {
		rerr := rows.Close()
		ferr := f.Close()
		if ferr != nil {
			return ferr
		}
		if errors.Is(rerr, excelize.ErrMaxRows) {
			return nil // already reported by Next
		}
		return rerr
	}
	if err := t.readHeader(opt); err != nil {
		t.close()
		t.close = nil
		f = nil
		return nil, err
	}
	return t, nil
}

// xlsxReason words an excelize error for a message, without the value of
// any cell.
func xlsxReason(err error) string {
	if errors.Is(err, excelize.ErrMaxRows) {
		return "more rows than a workbook sheet may hold"
	}
	return err.Error()
}

func quoteList(ss []string) string {
	q := make([]string, len(ss))
	for i, s := range ss {
		q[i] = fmt.Sprintf("%q", s)
	}
	return strings.Join(q, ", ")
}
