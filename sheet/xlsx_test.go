package sheet_test

import (
	"bytes"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"

	"polypledger/sheet"
)

// foreignWorkbook builds a workbook the way another program would: the
// unit's own date formats, number formats that round or decorate the value,
// a duration typed as a time, and rows with gaps.
func foreignWorkbook(t *testing.T) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	style := func(s excelize.Style) int {
		id, err := f.NewStyle(&s)
		if err != nil {
			t.Fatal(err)
		}
		return id
	}
	custom := func(code string) int { return style(excelize.Style{CustomNumFmt: &code}) }
	day := time.Date(2026, 3, 5, 0, 0, 0, 0, time.UTC)
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	must(f.SetSheetName("Sheet1", "Notes"))
	must(f.SetCellValue("Notes", "A1", "not this one"))
	_, err := f.NewSheet("Audit")
	must(err)
	set := func(cell string, v any, styleID int) {
		t.Helper()
		must(f.SetCellValue("Audit", cell, v))
		if styleID != 0 {
			must(f.SetCellStyle("Audit", cell, cell, styleID))
		}
	}
	set("A1", "Larkfield colonoscopy audit (invented)", 0)
	header := []string{"dd/mm/yyyy", "short date", "date and time", "d-mmm-yy", "0.00", "percent", "mm suffix", "h:mm", "noise", "big", "text", "flag", "typed text date"}
	for i, h := range header {
		c, _ := excelize.CoordinatesToCellName(i+1, 3)
		set(c, h, 0)
	}
	set("A4", day, custom("dd/mm/yyyy"))
	set("B4", day, style(excelize.Style{NumFmt: 14}))
	set("C4", day.Add(14*time.Hour+30*time.Minute), style(excelize.Style{NumFmt: 22}))
	set("D4", day, custom("[$-409]d-mmm-yy;@"))
	set("E4", 8.5, style(excelize.Style{NumFmt: 2}))
	set("F4", 0.45, style(excelize.Style{NumFmt: 9}))
	set("G4", 6, custom(`0 "mm"`))
	set("H4", 8.5/24, custom("h:mm"))
	set("I4", 0.1+0.2, 0)
	set("J4", 123456789012.5, style(excelize.Style{NumFmt: 2}))
	set("K4", "00123", 0)
	set("L4", true, 0)
	set("M4", "05/03/2026", custom("dd/mm/yyyy"))
	// Row 5 is left out; row 6 has a gap in its cells.
	set("A6", day.AddDate(0, 0, 10), custom("dd/mm/yyyy"))
	set("K6", "last", 0)
	var b bytes.Buffer
	if _, err := f.WriteTo(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestXLSXTypedCells(t *testing.T) {
	data := foreignWorkbook(t)
	tb, err := sheet.Open("audit.xlsx", bytes.NewReader(data), sheet.Options{Sheet: "Audit", HeaderRow: 3})
	if err != nil {
		t.Fatal(err)
	}
	defer tb.Close()
	if tb.Sheet() != "Audit" || !reflect.DeepEqual(tb.Sheets(), []string{"Notes", "Audit"}) || tb.Label() != "audit.xlsx[Audit]" {
		t.Errorf("sheet %q of %q, label %q", tb.Sheet(), tb.Sheets(), tb.Label())
	}
	if tb.HeaderLine() != 3 || len(tb.Header()) != 13 || tb.Header()[0] != "dd/mm/yyyy" {
		t.Errorf("header %q on line %d", tb.Header(), tb.HeaderLine())
	}
	rows, faults, end := readAll(t, tb)
	if end != nil || len(faults) > 0 {
		t.Fatalf("end %v, faults %v", end, faults)
	}
	want := []sheet.Row{
		{Line: 4, Cells: []string{
			"2026-03-05",       // a date in the unit's own format comes back ISO
			"2026-03-05",       // the built-in short date (m/d/yy in excelize) too
			"2026-03-05 14:30", // a date with a time of day
			"2026-03-05",       // month names
			"8.5",              // the value, not "8.50"
			"0.45",             // the value, not "45%"
			"6",                // the value, not "6 mm"
			"8:30",             // a time-only format shows as the workbook shows it
			"0.3",              // 0.30000000000000004 to Excel's 15 digits
			"123456789012.5",   // not 1.23456789E+11
			"00123",            // text stays text
			"TRUE",
			"05/03/2026", // a date typed as text stays text
		}},
		{Line: 6, Cells: []string{"2026-03-15", "", "", "", "", "", "", "", "", "", "last", "", ""}},
	}
	if !reflect.DeepEqual(rows, want) {
		t.Errorf("rows\n%+v\nwant\n%+v", rows, want)
	}
}

func TestXLSXSheetChoice(t *testing.T) {
	data := foreignWorkbook(t)
	t.Run("first sheet by default", func(t *testing.T) {
		tb, err := sheet.Open("audit.xlsx", bytes.NewReader(data), sheet.Options{})
		if err != nil {
			t.Fatal(err)
		}
		defer tb.Close()
		if tb.Sheet() != "Notes" || !reflect.DeepEqual(tb.Header(), []string{"not this one"}) {
			t.Errorf("sheet %q header %q", tb.Sheet(), tb.Header())
		}
	})
	t.Run("an unknown sheet lists the sheets", func(t *testing.T) {
		_, err := sheet.Open("audit.xlsx", bytes.NewReader(data), sheet.Options{Sheet: "2025"})
		want := `audit.xlsx: the workbook has no sheet "2025" (its sheets: "Notes", "Audit")`
		if err == nil || err.Error() != want {
			t.Errorf("got %v, want %s", err, want)
		}
	})
	t.Run("not a workbook", func(t *testing.T) {
		_, err := sheet.Open("audit.xlsx", strings.NewReader("Episode,Date\n"), sheet.Options{})
		if err == nil || !strings.HasPrefix(err.Error(), "audit.xlsx: not a workbook this program can read") {
			t.Errorf("got %v", err)
		}
	})
	t.Run("header row past the end", func(t *testing.T) {
		_, err := sheet.Open("audit.xlsx", bytes.NewReader(data), sheet.Options{Sheet: "Audit", HeaderRow: 40})
		if err == nil || err.Error() != "audit.xlsx[Audit]:40: the file ends before its header row" {
			t.Errorf("got %v", err)
		}
	})
	t.Run("empty header row", func(t *testing.T) {
		_, err := sheet.Open("audit.xlsx", bytes.NewReader(data), sheet.Options{Sheet: "Audit", HeaderRow: 2})
		if err == nil || err.Error() != "audit.xlsx[Audit]:2: the header row is empty" {
			t.Errorf("got %v", err)
		}
	})
	t.Run("a cell over the limit is named, not echoed", func(t *testing.T) {
		tb, err := sheet.Open("audit.xlsx", bytes.NewReader(data), sheet.Options{Sheet: "Audit", HeaderRow: 3, Limits: sheet.Limits{FieldBytes: 15}})
		if err != nil {
			t.Fatal(err)
		}
		defer tb.Close()
		_, faults, _ := readAll(t, tb)
		if len(faults) != 1 || faults[0].Error() != "audit.xlsx[Audit]:4: date and time: a value longer than 15 bytes" {
			t.Errorf("faults %v", faults)
		}
	})
}
