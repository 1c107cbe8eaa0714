package sheet_test

import (
	"errors"
	"io"
	"reflect"
	"strings"
	"testing"

	"polypledger/sheet"
)

// readAll reads every row of a table, collecting row faults; it fails the
// test on a fault that ends the reading unless wantEnd is set, and returns
// that one too.
func readAll(t *testing.T, tb *sheet.Table) (rows []sheet.Row, faults []*sheet.Error, end error) {
	t.Helper()
	for {
		r, err := tb.Next()
		if err == io.EOF {
			return rows, faults, nil
		}
		var e *sheet.Error
		if errors.As(err, &e) && e.RowOnly {
			faults = append(faults, e)
			continue
		}
		if err != nil {
			return rows, faults, err
		}
		rows = append(rows, r)
	}
}

func TestCSVReading(t *testing.T) {
	tests := []struct {
		name       string
		text       string
		opt        sheet.Options
		header     []string
		headerLine int
		rows       []sheet.Row
		faults     []string // Error() of each row fault
	}{
		{
			name:       "byte-order mark and spaces around names are dropped",
			text:       "\ufeff Episode ,Date\nP1,05/03/2026\n",
			header:     []string{"Episode", "Date"},
			headerLine: 1,
			rows:       []sheet.Row{{Line: 2, Cells: []string{"P1", "05/03/2026"}}},
		},
		{
			name:       "rows above the header row are skipped",
			text:       "Larkfield audit export\nrun 2026-04-01\nRef,Size\nP1,6 mm\n",
			opt:        sheet.Options{HeaderRow: 3},
			header:     []string{"Ref", "Size"},
			headerLine: 3,
			rows:       []sheet.Row{{Line: 4, Cells: []string{"P1", "6 mm"}}},
		},
		{
			name:       "short rows are padded, blank rows skipped, lines counted across quoted newlines",
			text:       "a,b,c\n1,\"two\nlines\",3\n,,\n4\n",
			header:     []string{"a", "b", "c"},
			headerLine: 1,
			rows: []sheet.Row{
				{Line: 2, Cells: []string{"1", "two\nlines", "3"}},
				{Line: 5, Cells: []string{"4", "", ""}},
			},
		},
		{
			name:       "trailing unnamed header columns are dropped; empty cells under them are fine",
			text:       "a,b,,\n1,2,,\n",
			header:     []string{"a", "b"},
			headerLine: 1,
			rows:       []sheet.Row{{Line: 2, Cells: []string{"1", "2"}}},
		},
		{
			name:       "a value beyond the header is a row fault",
			text:       "a,b\n1,2,SECRET-REF\n3,4\n",
			header:     []string{"a", "b"},
			headerLine: 1,
			rows:       []sheet.Row{{Line: 3, Cells: []string{"3", "4"}}},
			faults:     []string{"f.csv:2: column 3: a value beyond the header's 2 columns"},
		},
		{
			name:       "a bad quote spoils its row only",
			text:       "a,b\n1,x\"y\n3,4\n",
			header:     []string{"a", "b"},
			headerLine: 1,
			rows:       []sheet.Row{{Line: 3, Cells: []string{"3", "4"}}},
			faults:     []string{`f.csv:2: not valid CSV: bare " in non-quoted-field`},
		},
		{
			name:       "text that is not UTF-8 is named, not echoed",
			text:       "a,b\n1,caf\xe9\n",
			header:     []string{"a", "b"},
			headerLine: 1,
			faults:     []string{"f.csv:2: b: not UTF-8 text (save the file as CSV UTF-8)"},
		},
		{
			name:       "a cell over the byte limit is named, not echoed",
			text:       "ref,b\nSECRET-REF-" + strings.Repeat("9", 40) + ",1\n2,3\n",
			opt:        sheet.Options{Limits: sheet.Limits{FieldBytes: 32}},
			header:     []string{"ref", "b"},
			headerLine: 1,
			rows:       []sheet.Row{{Line: 3, Cells: []string{"2", "3"}}},
			faults:     []string{"f.csv:2: ref: a value longer than 32 bytes"},
		},
		{
			name:       "a row over the cell limit is a row fault",
			text:       "a,b\n1,2,,,,\n",
			opt:        sheet.Options{Limits: sheet.Limits{Fields: 4}},
			header:     []string{"a", "b"},
			headerLine: 1,
			faults:     []string{"f.csv:2: has 6 cells, more than the limit of 4"},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			tb, err := sheet.Open("f.csv", strings.NewReader(tc.text), tc.opt)
			if err != nil {
				t.Fatal(err)
			}
			defer tb.Close()
			if !reflect.DeepEqual(tb.Header(), tc.header) || tb.HeaderLine() != tc.headerLine {
				t.Errorf("header %q on line %d, want %q on line %d", tb.Header(), tb.HeaderLine(), tc.header, tc.headerLine)
			}
			rows, faults, end := readAll(t, tb)
			if end != nil {
				t.Fatalf("reading ended: %v", end)
			}
			if !reflect.DeepEqual(rows, tc.rows) {
				t.Errorf("rows\n%+v\nwant\n%+v", rows, tc.rows)
			}
			var got []string
			for _, f := range faults {
				got = append(got, f.Error())
				if strings.Contains(f.Error(), "SECRET") {
					t.Errorf("fault echoes a value: %s", f)
				}
			}
			if !reflect.DeepEqual(got, tc.faults) {
				t.Errorf("faults %q, want %q", got, tc.faults)
			}
			if tb.Label() != "f.csv" || tb.Sheet() != "" || tb.Sheets() != nil {
				t.Errorf("label %q, sheet %q, sheets %q for a CSV file", tb.Label(), tb.Sheet(), tb.Sheets())
			}
		})
	}
}

func TestCSVFaultsThatEndTheReading(t *testing.T) {
	tests := []struct {
		name string
		text string
		opt  sheet.Options
		want string
	}{
		{"empty file", "", sheet.Options{}, "f.csv:1: the file ends before its header row"},
		{"header row past the end", "a\n1\n", sheet.Options{HeaderRow: 5}, "f.csv:5: the file ends before its header row"},
		{"blank header row", "a\n\nb\n", sheet.Options{HeaderRow: 2}, "f.csv:2: the header row is empty"},
		{"empty header", ",,\n1,2,3\n", sheet.Options{}, "f.csv:1: the header row is empty"},
		{"a header cell over the limit", strings.Repeat("h", 40) + "\n", sheet.Options{Limits: sheet.Limits{FieldBytes: 32}}, "f.csv:1: column 1: a column name longer than 32 bytes"},
		{"a bad header", "a,\"b\n", sheet.Options{}, "f.csv:1: not valid CSV: extraneous or missing \" in quoted-field"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := sheet.Open("f.csv", strings.NewReader(tc.text), tc.opt)
			if err == nil || err.Error() != tc.want {
				t.Fatalf("got %v, want %s", err, tc.want)
			}
		})
	}
}

func TestCSVLimitsThatEndTheReading(t *testing.T) {
	t.Run("rows", func(t *testing.T) {
		tb, err := sheet.Open("f.csv", strings.NewReader("a\n1\n2\n3\n"), sheet.Options{Limits: sheet.Limits{Rows: 2}})
		if err != nil {
			t.Fatal(err)
		}
		rows, _, end := readAll(t, tb)
		if len(rows) != 2 || end == nil || end.Error() != "f.csv:4: more than 2 data rows; split the file" {
			t.Fatalf("%d rows, end %v", len(rows), end)
		}
	})
	t.Run("a line too long", func(t *testing.T) {
		text := "a,b\n1," + strings.Repeat("x", 200000) + "\n2,3\n"
		tb, err := sheet.Open("f.csv", strings.NewReader(text), sheet.Options{Limits: sheet.Limits{RowBytes: 1 << 10}})
		if err != nil {
			t.Fatal(err)
		}
		rows, _, end := readAll(t, tb)
		if len(rows) != 0 || end == nil || !strings.HasPrefix(end.Error(), "f.csv:2: a record longer than 1 KiB") {
			t.Fatalf("rows %v, end %v", rows, end)
		}
	})
	t.Run("an unterminated quote does not read the whole file into one cell", func(t *testing.T) {
		text := "a,b\n1,\"" + strings.Repeat("x,y\n", 200000)
		tb, err := sheet.Open("f.csv", strings.NewReader(text), sheet.Options{Limits: sheet.Limits{RowBytes: 1 << 10}})
		if err != nil {
			t.Fatal(err)
		}
		_, _, end := readAll(t, tb)
		if end == nil || !strings.HasPrefix(end.Error(), "f.csv:2: a record longer than 1 KiB") {
			t.Fatalf("end %v", end)
		}
	})
}

func TestCSVWithoutHeader(t *testing.T) {
	tb, err := sheet.Open("f.csv", strings.NewReader("Title\n\na,b,c\n1,2\n"), sheet.Options{NoHeader: true})
	if err != nil {
		t.Fatal(err)
	}
	defer tb.Close()
	rows, faults, end := readAll(t, tb)
	want := []sheet.Row{{Line: 1, Cells: []string{"Title"}}, {Line: 3, Cells: []string{"a", "b", "c"}}, {Line: 4, Cells: []string{"1", "2"}}}
	if !reflect.DeepEqual(rows, want) || len(faults) > 0 || end != nil || tb.Header() != nil {
		t.Errorf("rows %+v, faults %v, end %v, header %q", rows, faults, end, tb.Header())
	}
}

func TestFormatOf(t *testing.T) {
	for name, want := range map[string]sheet.Format{"a.xlsx": sheet.XLSX, "B.XLSX": sheet.XLSX, "a.csv": sheet.CSV, "a.txt": sheet.CSV, "xlsx": sheet.CSV} {
		if got := sheet.FormatOf(name); got != want {
			t.Errorf("FormatOf(%q) = %v, want %v", name, got, want)
		}
	}
}

// FuzzCSV reads arbitrary text as CSV: it never panics, every row has the
// header's width, and lines only grow.
func FuzzCSV(f *testing.F) {
	f.Add("a,b\n1,2\n")
	f.Add("\ufeffx\n\"q\nq\",1\n,,\n")
	f.Add("a\n1,\"2\n")
	f.Fuzz(func(t *testing.T, text string) {
		for _, opt := range []sheet.Options{{}, {HeaderRow: 2}, {NoHeader: true}, {Limits: sheet.Limits{FieldBytes: 4, Fields: 3, Rows: 5, RowBytes: 16}}} {
			tb, err := sheet.Open("f.csv", strings.NewReader(text), opt)
			if err != nil {
				continue
			}
			last := tb.HeaderLine()
			for {
				r, err := tb.Next()
				if err == io.EOF {
					break
				}
				var e *sheet.Error
				if errors.As(err, &e) && e.RowOnly {
					continue
				}
				if err != nil {
					break
				}
				if r.Line <= last || (!opt.NoHeader && len(r.Cells) != len(tb.Header())) {
					t.Fatalf("row %+v after line %d, header %q", r, last, tb.Header())
				}
				last = r.Line
			}
			tb.Close()
		}
	})
}
