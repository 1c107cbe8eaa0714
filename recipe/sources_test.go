package recipe_test

// The three invented source shapes of testdata/sources, each mapped through
// its recipe and compared with the same records written by hand in our own
// CSV dialect (the storecheck package imports those records into a real
// store, which proves they are records the program accepts).

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"

	"polypledger/recipe"
	"polypledger/sheet"
)

var update = flag.Bool("update", false, "rewrite testdata/sources/wide/audit.xlsx from its generator")

const sources = "../testdata/sources"

// source is one shipped shape: its file, its recipe, our CSV files it must
// map to, and the source columns no recipe of it uses.
type source struct {
	dir, file string
	want      map[recipe.Kind]string // kind → our CSV file name
	unused    []string
}

var shipped = []source{
	{"wide", "audit.xlsx", map[recipe.Kind]string{recipe.Procedures: "procedures.csv", recipe.Lesions: "lesions.csv"}, []string{"Comments"}},
	{"room", "room.csv", map[recipe.Kind]string{recipe.Procedures: "procedures.csv", recipe.Lesions: "lesions.csv"}, nil},
	{"lab", "lab.csv", map[recipe.Kind]string{recipe.Histology: "histology.csv"}, []string{"Lab no", "Pathologist"}},
}

func (s source) path(name string) string { return filepath.Join(sources, s.dir, name) }

func (s source) open(t *testing.T, r *recipe.Recipe) *sheet.Table {
	t.Helper()
	tb, err := sheet.OpenFile(s.path(s.file), r.Options())
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { tb.Close() })
	return tb
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// checkAgainstOurCSV maps a source through a recipe and compares each kind
// with our CSV files exactly.
func checkAgainstOurCSV(t *testing.T, s source, r *recipe.Recipe) {
	t.Helper()
	got, res := collect(t, r, s.open(t, r))
	if len(res.Problems) > 0 {
		t.Fatalf("problems:\n%s", strings.Join(problems(res), "\n"))
	}
	for k, file := range s.want {
		if want := readFile(t, s.path(file)); got[k] != want {
			t.Errorf("%s mapped to\n%s\nwant (%s)\n%s", k, got[k], file, want)
		}
	}
	if len(got) != len(s.want) {
		t.Errorf("kinds mapped: %d, want %d", len(got), len(s.want))
	}
	if !reflect.DeepEqual(res.Unused, s.unused) {
		t.Errorf("unused columns %q, want %q", res.Unused, s.unused)
	}
}

func TestShippedSourcesMapToOurCSV(t *testing.T) {
	for _, s := range shipped {
		t.Run(s.dir, func(t *testing.T) {
			r, err := recipe.Load(s.path("recipe.toml"))
			if err != nil {
				t.Fatal(err)
			}
			if len(r.Warnings) > 0 {
				t.Errorf("recipe warnings: %q", r.Warnings)
			}
			checkAgainstOurCSV(t, s, r)
		})
	}
}

// writeAuditWorkbook is the generator of testdata/sources/wide/audit.xlsx:
// the audit lead's spreadsheet, built as a spreadsheet program would keep
// it (run go generate in this package, or go test -run
// TestSourceWorkbook -update, to rebuild it).
func writeAuditWorkbook(t *testing.T) []byte {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	must := func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	must(f.SetSheetName("Sheet1", "Audit"))
	_, err := f.NewSheet("Codes")
	must(err)
	ddmm := "dd/mm/yyyy"
	dateStyle, err := f.NewStyle(&excelize.Style{CustomNumFmt: &ddmm})
	must(err)
	bold, err := f.NewStyle(&excelize.Style{Font: &excelize.Font{Bold: true}})
	must(err)
	day := func(d, m int) time.Time { return time.Date(2026, time.Month(m), d, 0, 0, 0, 0, time.UTC) }
	header := []any{"Episode", "Date of test", "Endoscopist", "Trainee", "Hospital no", "Age", "Sex", "Indication",
		"Extent reached", "Photo", "Withdrawal (min)", "BBPS R", "BBPS T", "BBPS L", "Retroflexion", "Midazolam (mg)", "Fentanyl (mcg)"}
	for n := 1; n <= 3; n++ {
		for _, c := range []string{"size", "site", "retrieved", "to lab", "histology"} {
			header = append(header, "Polyp "+string(rune('0'+n))+" "+c)
		}
	}
	header = append(header, "Comments")
	none := []any{"", "", "", "", ""}
	polyp := func(size any, site, retrieved, lab, hist string) []any {
		return []any{size, site, retrieved, lab, hist}
	}
	rows := [][]any{
		{"LK-26-0001", day(2, 3), "RKA", "", "ZZ900101", 67, "F", "Bowel screening", "Caecum", "Y", "8:30", 3, 3, 3, "Y", 2.5, 50},
		{"LK-26-0002", day(3, 3), "JMB", "", "ZZ900102", 54, "M", "FIT+", "TI", "Y", 9, 2, 3, 3, "Y", 2, 50},
		{"LK-26-0003", "14/03/2026", "RKA", "SLC", "ZZ900103", 71, "F", "Surveillance", "Incomplete", "N", "", 1, 1, 2, "Y", 3, 75},
		{"LK-26-0004", day(16, 3), "TPW", "", "ZZ900104", 48, "M", "Symptomatic", "Caecum", "Y", "10:15", 3, 2, 3, "N", 1, ""},
		{"LK-26-0005", "20/03/2026", "JMB", "SLC", "ZZ900105", 62, "F", "Bowel screening", "Caecum", "Y", 7.5, 3, 3, 3, "Y", 2, 50},
		{"LK-26-0006", day(1, 4), "TPW", "", "ZZ900106", 77, "M", "Surveillance", "Caecum", "Y", "11:00", 2, 2, 2, "Y", 2.5, 50},
	}
	polyps := [][][]any{
		{polyp("6 mm", "Sigmoid", "Y", "Y", "TA LGD"), polyp("3mm", "Rectum", "Y", "Y", "HP"), none},
		{polyp("12 mm", "Asc colon", "Y", "Y", "TVA LGD"), polyp("4 mm", "Transverse", "Y", "Y", "SSL"), polyp("2 mm", "Rectum", "N", "N", "")},
		{none, none, none},
		{polyp(5, "Caecum", "Y", "Y", "Pending"), none, none},
		{polyp("8 mm", "Desc colon", "Y", "Y", "TA HGD"), none, polyp("3 mm", "Hep flexure", "Y", "Y", "HP")},
		{none, none, none},
	}
	comments := []string{"", "", "poor prep, rebook", "", "", ""}
	must(f.SetCellValue("Audit", "A1", "Larkfield Endoscopy Unit - colonoscopy audit 2026 (invented data)"))
	must(f.SetSheetRow("Audit", "A3", &header))
	must(f.SetRowStyle("Audit", 3, 3, bold))
	for i, r := range rows {
		for _, p := range polyps[i] {
			r = append(r, p...)
		}
		r = append(r, comments[i])
		cell, _ := excelize.CoordinatesToCellName(1, i+4)
		must(f.SetSheetRow("Audit", cell, &r))
		if _, isDate := r[1].(time.Time); isDate {
			ref, _ := excelize.CoordinatesToCellName(2, i+4)
			must(f.SetCellStyle("Audit", ref, ref, dateStyle))
		}
	}
	must(f.SetPanes("Audit", &excelize.Panes{Freeze: true, YSplit: 3, TopLeftCell: "A4", ActivePane: "bottomLeft"}))
	codes := [][]any{{"Indication words"}, {"Bowel screening"}, {"FIT+"}, {"Surveillance"}, {"Symptomatic"}}
	for i, c := range codes {
		cell, _ := excelize.CoordinatesToCellName(1, i+1)
		must(f.SetSheetRow("Codes", cell, &c))
	}
	var b bytes.Buffer
	if _, err := f.WriteTo(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestSourceWorkbook keeps the committed workbook what its generator makes:
// the same cells, with the same values and formats, in every sheet.
func TestSourceWorkbook(t *testing.T) {
	path := filepath.Join(sources, "wide", "audit.xlsx")
	fresh := writeAuditWorkbook(t)
	if *update {
		if err := os.WriteFile(path, fresh, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	cells := func(data []byte) map[string][][]string {
		f, err := excelize.OpenReader(bytes.NewReader(data))
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		out := map[string][][]string{}
		for _, name := range f.GetSheetList() {
			raw, err := f.GetRows(name, excelize.Options{RawCellValue: true})
			if err != nil {
				t.Fatal(err)
			}
			shown, err := f.GetRows(name)
			if err != nil {
				t.Fatal(err)
			}
			out[name+" raw"], out[name+" shown"] = raw, shown
		}
		return out
	}
	committed, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := cells(committed), cells(fresh); !reflect.DeepEqual(got, want) {
		t.Errorf("%s differs from its generator; rebuild it with go generate ./recipe", path)
	}
}
