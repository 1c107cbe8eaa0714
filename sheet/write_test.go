package sheet_test

import (
	"bytes"
	"fmt"
	"io"
	"reflect"
	"runtime"
	"strconv"
	"testing"

	"github.com/xuri/excelize/v2"

	"polypledger/sheet"
)

var (
	wideHeader = []string{"procedure_id", "performed_on", "midazolam_mg", "age", "note"}
	wideTypes  = []sheet.ColumnType{sheet.Text, sheet.Date, sheet.Number, sheet.Number, sheet.Text}
	wideRows   = [][]string{
		{"P-0001", "2026-03-05", "2.5", "67", "plain"},
		{"=HYPERLINK(\"x\")", "2026-12-31", "", "", "+1"},
		{"00123", "", "0", "110", "-A1"},
		{"-12", "1900-01-01", "-0.5", "-3", "@sum"},
		{"12345678901234567", "05/03/2026", "1e5", "007", "\tindent"},
		{"lead space ", "2026-02-30", "0.1", "1.50", "\r"},
	}
	narrowHeader = []string{"procedure_id", "lesion_no"}
	narrowRows   = [][]string{{"P-0001", "1"}, {"P-0001", "2"}}
)

func writeWorkbook(t testing.TB) []byte {
	t.Helper()
	var b bytes.Buffer
	w, err := sheet.NewWriter(&b)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []struct {
		name   string
		header []string
		types  []sheet.ColumnType
		rows   [][]string
	}{{"procedures", wideHeader, wideTypes, wideRows}, {"lesions", narrowHeader, []sheet.ColumnType{sheet.Text, sheet.Number}, narrowRows}} {
		if err := w.AddSheet(s.name, s.header, s.types); err != nil {
			t.Fatal(err)
		}
		for _, r := range s.rows {
			if err := w.WriteRow(r); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestWriterRoundTrip reads the writer's workbook back: every value comes
// back exactly as written, formula-like text included.
func TestWriterRoundTrip(t *testing.T) {
	data := writeWorkbook(t)
	for _, s := range []struct {
		name   string
		header []string
		rows   [][]string
	}{{"procedures", wideHeader, wideRows}, {"lesions", narrowHeader, narrowRows}} {
		tb, err := sheet.Open("export.xlsx", bytes.NewReader(data), sheet.Options{Sheet: s.name})
		if err != nil {
			t.Fatal(err)
		}
		rows, faults, end := readAll(t, tb)
		tb.Close()
		if end != nil || len(faults) > 0 {
			t.Fatalf("%s: end %v, faults %v", s.name, end, faults)
		}
		if !reflect.DeepEqual(tb.Header(), s.header) {
			t.Errorf("%s: header %q", s.name, tb.Header())
		}
		var got [][]string
		for i, r := range rows {
			if r.Line != i+2 {
				t.Errorf("%s: row %d on line %d", s.name, i, r.Line)
			}
			got = append(got, r.Cells)
		}
		if !reflect.DeepEqual(got, s.rows) {
			t.Errorf("%s: read back\n%q\nwant\n%q", s.name, got, s.rows)
		}
	}
}

// TestWriterTypesAndLayout opens the workbook with excelize itself: dates
// and numbers are stored as such, text as text, the header is frozen.
func TestWriterTypesAndLayout(t *testing.T) {
	f, err := excelize.OpenReader(bytes.NewReader(writeWorkbook(t)))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if got := f.GetSheetList(); !reflect.DeepEqual(got, []string{"procedures", "lesions"}) {
		t.Errorf("sheets %q", got)
	}
	for _, name := range f.GetSheetList() {
		p, err := f.GetPanes(name)
		if err != nil || !p.Freeze || p.YSplit != 1 || p.TopLeftCell != "A2" {
			t.Errorf("%s: panes %+v, %v", name, p, err)
		}
	}
	tests := []struct {
		cell string
		typ  excelize.CellType
		raw  string
	}{
		{"B2", excelize.CellTypeUnset, "46086"}, // 2026-03-05 as a date serial (a number)
		{"C2", excelize.CellTypeUnset, "2.5"},
		{"D2", excelize.CellTypeUnset, "67"},
		{"A2", excelize.CellTypeInlineString, "P-0001"},
		{"A3", excelize.CellTypeInlineString, `=HYPERLINK("x")`}, // text, not a formula
		{"A4", excelize.CellTypeInlineString, "00123"},           // leading zeros kept as text
		{"B6", excelize.CellTypeInlineString, "05/03/2026"},      // not an ISO date: text
		{"C6", excelize.CellTypeInlineString, "1e5"},             // not in shortest form: text
		{"D6", excelize.CellTypeInlineString, "007"},
		{"B7", excelize.CellTypeInlineString, "2026-02-30"}, // not a calendar date: text
	}
	for _, tc := range tests {
		typ, err := f.GetCellType("procedures", tc.cell)
		if err != nil {
			t.Fatal(err)
		}
		raw, _ := f.GetCellValue("procedures", tc.cell, excelize.Options{RawCellValue: true})
		if typ != tc.typ || raw != tc.raw {
			t.Errorf("%s: type %v value %q, want %v %q", tc.cell, typ, raw, tc.typ, tc.raw)
		}
		if formula, _ := f.GetCellFormula("procedures", tc.cell); formula != "" {
			t.Errorf("%s holds a formula %q", tc.cell, formula)
		}
	}
	// The formula-like cells carry the text format with the quote prefix;
	// plain text does not.
	quoted := map[string]bool{"A3": true, "E3": true, "E4": true, "E5": true, "E6": true, "E7": true, "E2": false, "A2": false, "A5": false}
	for cell, want := range quoted {
		id, err := f.GetCellStyle("procedures", cell)
		if err != nil {
			t.Fatal(err)
		}
		xf := f.Styles.CellXfs.Xf[id]
		got := xf.QuotePrefix != nil && *xf.QuotePrefix && xf.NumFmtID != nil && *xf.NumFmtID == 49
		if got != want {
			t.Errorf("%s quoted = %v, want %v", cell, got, want)
		}
	}
	if id, _ := f.GetCellStyle("procedures", "A1"); id == 0 {
		t.Error("the header has no style")
	} else if st, _ := f.GetStyle(id); st.Font == nil || !st.Font.Bold {
		t.Errorf("header style %+v is not bold", st)
	}
}

func TestWriterMisuse(t *testing.T) {
	w, err := sheet.NewWriter(io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if err := w.WriteRow([]string{"x"}); err == nil {
		t.Error("a row before any sheet was accepted")
	}
	if err := w.Close(); err == nil {
		t.Error("a failed workbook closed without error")
	}
	w, _ = sheet.NewWriter(io.Discard)
	if err := w.AddSheet("s", []string{"a"}, nil); err != nil {
		t.Fatal(err)
	}
	if err := w.WriteRow([]string{"1", "2"}); err == nil {
		t.Error("a row wider than the header was accepted")
	}
	if err := w.Close(); err == nil {
		t.Error("a failed workbook closed without error")
	}
}

// BenchmarkWorkbook100k writes and reads back a sheet of 100,000 rows and
// reports the largest heap seen, which stays bounded by the streaming
// writer and reader rather than growing with the rows.
func BenchmarkWorkbook100k(b *testing.B) {
	const n = 100000
	row := make([]string, len(wideHeader))
	var peak uint64
	sample := func() {
		var ms runtime.MemStats
		runtime.ReadMemStats(&ms)
		if ms.HeapInuse > peak {
			peak = ms.HeapInuse
		}
	}
	for b.Loop() {
		var buf bytes.Buffer
		w, err := sheet.NewWriter(&buf)
		if err != nil {
			b.Fatal(err)
		}
		if err := w.AddSheet("procedures", wideHeader, wideTypes); err != nil {
			b.Fatal(err)
		}
		for i := range n {
			row[0], row[1], row[2], row[3], row[4] = "P"+strconv.Itoa(i), "2026-03-05", "2.5", strconv.Itoa(i%90+18), fmt.Sprintf("note %d", i)
			if err := w.WriteRow(row); err != nil {
				b.Fatal(err)
			}
			if i%20000 == 0 {
				sample()
			}
		}
		if err := w.Close(); err != nil {
			b.Fatal(err)
		}
		tb, err := sheet.Open("big.xlsx", &buf, sheet.Options{})
		if err != nil {
			b.Fatal(err)
		}
		rows := 0
		for {
			if _, err := tb.Next(); err == io.EOF {
				break
			} else if err != nil {
				b.Fatal(err)
			}
			rows++
			if rows%20000 == 0 {
				sample()
			}
		}
		tb.Close()
		if rows != n {
			b.Fatalf("read %d rows", rows)
		}
		b.ReportMetric(float64(buf.Len())/(1<<20), "MB-file")
	}
	b.ReportMetric(float64(peak)/(1<<20), "MB-peak-heap")
}
