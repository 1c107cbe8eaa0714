package recipe_test

import (
	"encoding/csv"
	"fmt"
	"reflect"
	"strings"
	"testing"

	"polypledger/logbook"
	"polypledger/recipe"
	"polypledger/sheet"
)

// mapText maps CSV text through a recipe and returns the records of each
// kind as CSV text in our dialect (with the header), the result and any
// error.
func mapText(t *testing.T, rcp, data string) (map[recipe.Kind]string, *recipe.Result) {
	t.Helper()
	r, err := recipe.Parse("r.toml", []byte(rcp))
	if err != nil {
		t.Fatal(err)
	}
	tb, err := sheet.Open("src.csv", strings.NewReader(data), r.Options())
	if err != nil {
		t.Fatal(err)
	}
	defer tb.Close()
	out, res := collect(t, r, tb)
	return out, res
}

// collect maps a table and writes each kind's records as our CSV.
func collect(t *testing.T, r *recipe.Recipe, tb *sheet.Table) (map[recipe.Kind]string, *recipe.Result) {
	t.Helper()
	bufs := map[recipe.Kind]*strings.Builder{}
	writers := map[recipe.Kind]*csv.Writer{}
	res, err := r.Map(tb, func(rec recipe.Record) error {
		w := writers[rec.Kind]
		if w == nil {
			bufs[rec.Kind] = &strings.Builder{}
			w = csv.NewWriter(bufs[rec.Kind])
			writers[rec.Kind] = w
			if err := w.Write(logbook.ColumnNames(rec.Kind)); err != nil {
				return err
			}
		}
		if len(rec.Values) != len(logbook.ColumnNames(rec.Kind)) {
			t.Errorf("line %d: %d values for %d columns", rec.Line, len(rec.Values), len(logbook.ColumnNames(rec.Kind)))
		}
		return w.Write(rec.Values)
	})
	if err != nil {
		t.Fatal(err)
	}
	out := map[recipe.Kind]string{}
	for k, w := range writers {
		w.Flush()
		out[k] = bufs[k].String()
	}
	return out, res
}

func problems(res *recipe.Result) []string {
	var out []string
	for _, p := range res.Problems {
		out = append(out, p.String())
	}
	return out
}

// row writes our CSV line for the named columns of a kind, the others empty.
func row(k recipe.Kind, vals map[string]string) string {
	cells := logbook.ColumnNames(k)
	for i, c := range cells {
		cells[i] = vals[c]
	}
	var b strings.Builder
	w := csv.NewWriter(&b)
	w.Write(cells)
	w.Flush()
	return b.String()
}

func header(k recipe.Kind) string { return strings.Join(logbook.ColumnNames(k), ",") + "\n" }

func TestMapValues(t *testing.T) {
	rcp := `kind = "procedures"
date_format = "DD/MM/YYYY"
[columns]
procedure_id = "Episode"
performed_on = "Date of test"
operator_id = "Endoscopist"
patient_ref = "Hospital no"
age = "Age"
sex = "Sex"
indication = "Reason"
caecal_photo = "Photo"
retroversion = "Retroflexion"
withdrawal_seconds = "Withdrawal (min)"
midazolam_mg = "Midazolam"
fentanyl_ug = "Fentanyl"
[values.indication]
"Bowel screening" = "screening"
"FIT+" = "stool_test_positive"
"-" = ""
[values.sex]
Female = "F"
Male = "M"
[yes_no]
yes = ["Y"]
no = ["N"]
not_applicable = ["NA"]
[units]
withdrawal = "minutes"
`
	data := "Episode,Date of test,Endoscopist,Hospital no,Age,Sex,Reason,Photo,Retroflexion,Withdrawal (min),Midazolam,Fentanyl,Comments\n" +
		"E1,05/03/2026,E01,ZZ900001,67 years,female,bowel  SCREENING,Y,NA,8:30,2.5 mg,50 mcg,invented\n" +
		"E2,2026-03-06,E02,ZZ900002,45,M,FIT+,yes,n,8.5,2,100µg,\n" +
		"E3,6/3/2026 14:30,E02,,,,-,,,12 min,,,\n" +
		"E4,06/03/2026,E01,ZZ900003,,X,Surveillance,N,Y,0:10:05,0,0,\n"
	got, res := mapText(t, rcp, data)
	want := header(recipe.Procedures) +
		row(recipe.Procedures, map[string]string{"procedure_id": "E1", "performed_on": "2026-03-05", "operator_id": "E01", "patient_ref": "ZZ900001", "age": "67", "sex": "F", "indication": "screening", "caecal_photo": "yes", "retroversion": "not_applicable", "withdrawal_seconds": "510", "midazolam_mg": "2.5", "fentanyl_ug": "50"}) +
		row(recipe.Procedures, map[string]string{"procedure_id": "E2", "performed_on": "2026-03-06", "operator_id": "E02", "patient_ref": "ZZ900002", "age": "45", "sex": "M", "indication": "stool_test_positive", "caecal_photo": "yes", "retroversion": "no", "withdrawal_seconds": "510", "midazolam_mg": "2", "fentanyl_ug": "100"}) +
		row(recipe.Procedures, map[string]string{"procedure_id": "E3", "performed_on": "2026-03-06", "operator_id": "E02", "withdrawal_seconds": "720"}) +
		row(recipe.Procedures, map[string]string{"procedure_id": "E4", "performed_on": "2026-03-06", "operator_id": "E01", "patient_ref": "ZZ900003", "sex": "X", "indication": "surveillance", "caecal_photo": "no", "retroversion": "yes", "withdrawal_seconds": "605", "midazolam_mg": "0", "fentanyl_ug": "0"})
	if len(res.Problems) > 0 {
		t.Fatalf("problems:\n%s", strings.Join(problems(res), "\n"))
	}
	if got[recipe.Procedures] != want {
		t.Errorf("got\n%s\nwant\n%s", got[recipe.Procedures], want)
	}
	if !reflect.DeepEqual(res.Unused, []string{"Comments"}) || res.Rows != 4 || res.Records[recipe.Procedures] != 4 {
		t.Errorf("unused %q, rows %d, records %v", res.Unused, res.Rows, res.Records)
	}
}

func TestMapProblems(t *testing.T) {
	rcp := `kind = "procedures"
date_format = "DD/MM/YYYY"
[columns]
procedure_id = "Episode"
performed_on = "Date"
patient_ref = "Hospital no"
age = "Age"
indication = "Reason"
caecal_photo = "Photo"
withdrawal_seconds = "Withdrawal"
[values.indication]
"Bowel screening" = "screening"
`
	data := "Episode,Date,Hospital no,Age,Reason,Photo,Withdrawal\n" +
		"E1,31/02/2026,ZZ900001,67.5,Bowel scope,Y,8:75\n" +
		"E2,2026/03/05,ZZ900002,6 mm,bowel scope,n/a,9 min\n" +
		"E3,05/03/2026,ZZ900003,70,Bowel Scope,yes,510\n" +
		"E4,05/03/2026,ZZ900004,70,Symptoms,no,-5\n"
	got, res := mapText(t, rcp, data)
	want := []string{
		`src.csv:2: Date (performed_on): "31/02/2026" is not a real date in the form DD/MM/YYYY (date_format)`,
		`src.csv:2: Age: "67.5" is not a whole number`,
		`src.csv:2: Reason (indication): "Bowel scope" is not in the recipe: add it to [values.indication] (our codes: screening, stool_test_positive, surveillance, diagnostic, therapeutic) (also on 2 more rows)`,
		`src.csv:2: Photo (caecal_photo): "Y" is not in the recipe: add it to [yes_no] yes or no (or to [values.caecal_photo])`,
		`src.csv:2: Withdrawal (withdrawal_seconds): "8:75" is not minutes:seconds`,
		`src.csv:3: Date (performed_on): "2026/03/05" is not a real date in the form DD/MM/YYYY (date_format)`,
		`src.csv:3: Age: "6 mm" is not a number in years`,
		`src.csv:3: Photo (caecal_photo): "n/a" means not applicable, which caecal_photo cannot be (yes or no)`,
		`src.csv:3: Withdrawal (withdrawal_seconds): "9 min" is not a time in seconds ([units] withdrawal)`,
		`src.csv:5: Reason (indication): "Symptoms" is not in the recipe: add it to [values.indication] (our codes: screening, stool_test_positive, surveillance, diagnostic, therapeutic)`,
		`src.csv:5: Withdrawal (withdrawal_seconds): "-5" is not a time in seconds ([units] withdrawal)`,
	}
	if g := problems(res); !reflect.DeepEqual(g, want) {
		t.Errorf("problems\n%s\nwant\n%s", strings.Join(g, "\n"), strings.Join(want, "\n"))
	}
	for _, p := range res.Problems {
		if strings.Contains(p.String(), "ZZ9") {
			t.Errorf("a problem echoes a patient reference: %s", p)
		}
	}
	if len(got) != 0 || res.Records[recipe.Procedures] != 0 {
		t.Errorf("records handed over from rows with problems: %v", got)
	}
	err := res.Err()
	if err == nil || !strings.HasSuffix(err.Error(), "src.csv: 11 problems in 4 rows") {
		t.Errorf("Err() = %v", err)
	}
}

func TestMapHeaderProblems(t *testing.T) {
	rcp := "kind = \"procedures\"\n[columns]\nprocedure_id = \"Episode\"\nperformed_on = \"Date of test\"\nage = \"Age\"\n"
	_, res := mapText(t, rcp, "episode,Age,age,Notes\nE1,60,60,x\n")
	want := []string{
		`src.csv:1: Date of test: the file has no such column (the recipe's [columns] performed_on = "Date of test")`,
		`src.csv:1: Age: appears 2 times in the header, so the recipe's [columns] age cannot tell which to read`,
	}
	if g := problems(res); !reflect.DeepEqual(g, want) {
		t.Errorf("problems\n%s\nwant\n%s", strings.Join(g, "\n"), strings.Join(want, "\n"))
	}
	if res.Rows != 0 {
		t.Errorf("%d rows read after a header problem", res.Rows)
	}
}

const combinedRecipe = `kind = "combined"
[columns]
procedure_id = "Exam"
performed_on = "Date"
patient_ref = "MRN"
indication = "Indication"
segment = "Site"
size_mm = "Size"
[values.segment]
"Sigmoid colon" = "sigmoid"
"Rectum" = "rectum"
"None" = ""
`

func TestMapCombined(t *testing.T) {
	data := "Exam,Date,MRN,Indication,Site,Size\n" +
		"X1,2026-03-05,ZZ900001,screening,Sigmoid colon,6mm\n" +
		"X1,2026-03-05,ZZ900001,screening,Rectum,3 mm\n" +
		"X2,2026-03-06,ZZ900002,surveillance,,\n" +
		"X3,2026-03-06,ZZ900003,diagnostic,None,\n" +
		"X2,2026-03-06,ZZ900002,surveillance,rectum,12\n"
	got, res := mapText(t, combinedRecipe, data)
	if len(res.Problems) > 0 {
		t.Fatalf("problems:\n%s", strings.Join(problems(res), "\n"))
	}
	wantP := header(recipe.Procedures) +
		row(recipe.Procedures, map[string]string{"procedure_id": "X1", "performed_on": "2026-03-05", "patient_ref": "ZZ900001", "indication": "screening"}) +
		row(recipe.Procedures, map[string]string{"procedure_id": "X2", "performed_on": "2026-03-06", "patient_ref": "ZZ900002", "indication": "surveillance"}) +
		row(recipe.Procedures, map[string]string{"procedure_id": "X3", "performed_on": "2026-03-06", "patient_ref": "ZZ900003", "indication": "diagnostic"})
	wantL := header(recipe.Lesions) +
		row(recipe.Lesions, map[string]string{"procedure_id": "X1", "lesion_no": "1", "segment": "sigmoid", "size_mm": "6"}) +
		row(recipe.Lesions, map[string]string{"procedure_id": "X1", "lesion_no": "2", "segment": "rectum", "size_mm": "3"}) +
		row(recipe.Lesions, map[string]string{"procedure_id": "X2", "lesion_no": "1", "segment": "rectum", "size_mm": "12"})
	if got[recipe.Procedures] != wantP || got[recipe.Lesions] != wantL {
		t.Errorf("got\n%s%s\nwant\n%s%s", got[recipe.Procedures], got[recipe.Lesions], wantP, wantL)
	}
}

func TestMapCombinedDisagreement(t *testing.T) {
	data := "Exam,Date,MRN,Indication,Site,Size\n" +
		"X1,2026-03-05,ZZ900001,screening,Rectum,6\n" +
		",2026-03-05,ZZ900001,screening,Rectum,6\n" +
		"X1,2026-03-07,ZZ900009,screening,Rectum,4\n"
	_, res := mapText(t, combinedRecipe, data)
	want := []string{
		"src.csv:3: Exam (procedure_id): is empty, so the row cannot be joined to its procedure",
		`src.csv:4: Date (performed_on): "2026-03-07" here but "2026-03-05" on line 2 of the same procedure (a procedure's columns must agree on all its rows)`,
		"src.csv:4: MRN (patient_ref): differs from line 2 of the same procedure",
	}
	if g := problems(res); !reflect.DeepEqual(g, want) {
		t.Errorf("problems\n%s\nwant\n%s", strings.Join(g, "\n"), strings.Join(want, "\n"))
	}
}

func TestMapWide(t *testing.T) {
	rcp := `kind = "wide"
slots = 3
[columns]
procedure_id = "Ref"
size_mm = "Polyp {n} size"
segment = "Polyp {n} site"
[values.segment]
"Sig" = "sigmoid"
"Asc" = "ascending"
`
	data := "Ref,Polyp 1 size,Polyp 1 site,Polyp 2 size,Polyp 2 site,Polyp 3 size,Polyp 3 site\n" +
		"W1,6 mm,Sig,,,4mm,Asc\n" +
		"W2,,,,,,\n"
	got, res := mapText(t, rcp, data)
	if len(res.Problems) > 0 {
		t.Fatalf("problems:\n%s", strings.Join(problems(res), "\n"))
	}
	wantL := header(recipe.Lesions) +
		row(recipe.Lesions, map[string]string{"procedure_id": "W1", "lesion_no": "1", "segment": "sigmoid", "size_mm": "6"}) +
		row(recipe.Lesions, map[string]string{"procedure_id": "W1", "lesion_no": "3", "segment": "ascending", "size_mm": "4"})
	if got[recipe.Lesions] != wantL || res.Records[recipe.Procedures] != 2 {
		t.Errorf("lesions\n%s\nwant\n%s\nrecords %v", got[recipe.Lesions], wantL, res.Records)
	}
	// A problem in a slot names the slot's own column.
	_, res = mapText(t, rcp, "Ref,Polyp 1 size,Polyp 1 site,Polyp 2 size,Polyp 2 site,Polyp 3 size,Polyp 3 site\nW1,,,7 cm,Sig,,\n")
	want := []string{`src.csv:2: Polyp 2 size (size_mm): "7 cm" is not a number in mm`}
	if g := problems(res); !reflect.DeepEqual(g, want) {
		t.Errorf("problems %q, want %q", g, want)
	}
}

func TestRecordProvenance(t *testing.T) {
	r, err := recipe.Parse("r.toml", []byte(combinedRecipe))
	if err != nil {
		t.Fatal(err)
	}
	tb, err := sheet.Open("room.csv", strings.NewReader("Exam,Date,MRN,Indication,Site,Size,Extra\n\nX1,2026-03-05,ZZ900001,screening,Rectum,6,\n"), r.Options())
	if err != nil {
		t.Fatal(err)
	}
	defer tb.Close()
	var recs []recipe.Record
	if _, err := r.Map(tb, func(rec recipe.Record) error { recs = append(recs, rec); return nil }); err != nil {
		t.Fatal(err)
	}
	if len(recs) != 2 {
		t.Fatalf("%d records", len(recs))
	}
	l := recs[1]
	if l.Kind != recipe.Lesions || l.Line != 3 || l.Value("size_mm") != "6" || l.Header("size_mm") != "Size" || l.Header("lesion_no") != "" {
		t.Errorf("lesion record %+v", l)
	}
	if got := l.Problem("size_mm", "is above 150").String(); got != "room.csv:3: Size (size_mm): is above 150" {
		t.Errorf("problem %q", got)
	}
	if got := l.Problem("lesion_no", "clashes").String(); got != "room.csv:3: lesion_no: clashes" {
		t.Errorf("problem %q", got)
	}
}

// TestMapManyProblems lists MaxProblems problems and counts the rest, a value
// repeated past the cap included.
func TestMapManyProblems(t *testing.T) {
	rcp := "kind = \"procedures\"\n[columns]\nprocedure_id = \"Episode\"\nindication = \"Reason\"\n"
	var b strings.Builder
	b.WriteString("Episode,Reason\n")
	n := recipe.MaxProblems + 10
	for i := range n {
		fmt.Fprintf(&b, "P%d,word %d\n", i, i)
	}
	b.WriteString("P-last,word 1\nP-after,word 1005\n")
	_, res := mapText(t, rcp, b.String())
	if len(res.Problems) != recipe.MaxProblems || res.More != 10 || res.Rows != n+2 {
		t.Fatalf("%d problems listed, %d more, %d rows", len(res.Problems), res.More, res.Rows)
	}
	if !strings.HasSuffix(res.Problems[1].Reason, "(also on 1 more row)") {
		t.Errorf("a repeated value is not counted: %s", res.Problems[1])
	}
}

// BenchmarkMapCombined maps a combined file of 100,000 rows (two lesions
// per procedure) held in memory.
func BenchmarkMapCombined(b *testing.B) {
	r, err := recipe.Parse("r.toml", []byte(combinedRecipe))
	if err != nil {
		b.Fatal(err)
	}
	var src strings.Builder
	src.WriteString("Exam,Date,MRN,Indication,Site,Size\n")
	for i := range 100000 {
		fmt.Fprintf(&src, "X%d,2026-03-05,ZZ%07d,screening,Sigmoid colon,%dmm\n", i/2, i/2, i%20+1)
	}
	data := src.String()
	for b.Loop() {
		tb, err := sheet.Open("big.csv", strings.NewReader(data), r.Options())
		if err != nil {
			b.Fatal(err)
		}
		res, err := r.Map(tb, func(recipe.Record) error { return nil })
		if err != nil || len(res.Problems) > 0 || res.Records[recipe.Lesions] != 100000 {
			b.Fatalf("%v %v %v", err, res.Problems, res.Records)
		}
		tb.Close()
	}
}
