package recipe_test

import (
	"reflect"
	"strings"
	"testing"

	"polypledger/recipe"
	"polypledger/sheet"
)

// TestMapCombinedRefusedProcedure: a procedure whose first row cannot be
// mapped is not handed over, and neither are its lesions on later rows,
// so that a store does not report them again as having no procedure.
func TestMapCombinedRefusedProcedure(t *testing.T) {
	data := "Exam,Date,MRN,Indication,Site,Size\n" +
		"X1,2026-03-05,ZZ900001,Bowel scope,Rectum,6\n" +
		"X1,2026-03-05,ZZ900001,screening,Rectum,4\n" +
		"X2,2026-03-06,ZZ900002,screening,Rectum,3\n"
	got, res := mapText(t, combinedRecipe, data)
	if want := []string{`src.csv:2: Indication: "Bowel scope" is not in the recipe: add it to [values.indication] (our codes: screening, stool_test_positive, surveillance, diagnostic, therapeutic)`}; !reflect.DeepEqual(problems(res), want) {
		t.Errorf("problems\n%s\nwant\n%s", strings.Join(problems(res), "\n"), strings.Join(want, "\n"))
	}
	wantL := header(recipe.Lesions) + row(recipe.Lesions, map[string]string{"procedure_id": "X2", "lesion_no": "1", "segment": "rectum", "size_mm": "3"})
	if got[recipe.Lesions] != wantL {
		t.Errorf("lesions\n%s\nwant\n%s", got[recipe.Lesions], wantL)
	}
}

// TestPreview keeps the first rows with their records and every problem
// on each, and lists the whole file's unmapped values once.
func TestPreview(t *testing.T) {
	r, err := recipe.Parse("r.toml", []byte(combinedRecipe))
	if err != nil {
		t.Fatal(err)
	}
	data := "Exam,Date,MRN,Indication,Site,Size\n" +
		"X1,2026-03-05,ZZ900001,screening,Caecum pole,6mm\n" +
		"X2,2026-03-06,ZZ900002,screening,Caecum pole,3\n" +
		"X3,2026-03-07,ZZ900003,screening,Rectum,3\n" +
		"X4,2026-03-07,ZZ900004,Bowel scope,Ileum,3\n"
	tb, err := sheet.Open("src.csv", strings.NewReader(data), r.Options())
	if err != nil {
		t.Fatal(err)
	}
	defer tb.Close()
	rows, res, err := r.Preview(tb, 3)
	if err != nil {
		t.Fatal(err)
	}
	type shown struct {
		line     int
		records  int
		problems []string
	}
	var got []shown
	for _, pr := range rows {
		s := shown{line: pr.Line, records: len(pr.Records)}
		for _, p := range pr.Problems {
			s.problems = append(s.problems, p.Column+": "+p.Reason)
		}
		got = append(got, s)
	}
	unlisted := `"Caecum pole" is not in the recipe: add it to [values.segment] (our codes: caecum, ascending, hepatic_flexure, transverse, splenic_flexure, descending, sigmoid, rectum)`
	want := []shown{
		{2, 1, []string{"Site (segment): " + unlisted}},
		{3, 1, []string{"Site (segment): " + unlisted}},
		{4, 2, nil},
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("preview\n%+v\nwant\n%+v", got, want)
	}
	if res.Rows != 4 || len(res.Problems) != 3 {
		t.Errorf("the whole file: %d rows, problems %q", res.Rows, problems(res))
	}
	wantU := map[string][]string{"segment": {"Caecum pole", "Ileum"}, "indication": {"Bowel scope"}}
	if !reflect.DeepEqual(res.Unlisted, wantU) {
		t.Errorf("unlisted %q, want %q", res.Unlisted, wantU)
	}
	if labels := rows[2].Records[1].Origin.Labels(); labels[2] != "Site (segment)" || labels[1] != "lesion_no" {
		t.Errorf("labels %q", labels)
	}
}

// TestEditReadsBack edits a recipe as the import screen does — a column, a
// value, a yes/no word — and reads its Text back.
func TestEditReadsBack(t *testing.T) {
	r, err := recipe.Parse("r.toml", []byte(combinedRecipe+"[yes_no]\nyes = [\"Y\"]\nno = [\"N\"]\n"))
	if err != nil {
		t.Fatal(err)
	}
	r.Columns["retrieved"] = "Got it"
	delete(r.Columns, "size_mm")
	r.SetValue("segment", " Caecum pole ", "caecum")
	r.SetValue("segment", "rectum", "rectum") // replaces "Rectum"
	r.RemoveValue("segment", "none")
	r.SetValue("indication", "Bowel scope", "screening")
	r.SetYesNo("y", "no") // moves "Y"
	r.SetYesNo("Ja", "yes")
	back, err := recipe.Parse("r.toml", []byte(r.Text()))
	if err != nil {
		t.Fatalf("%v\n%s", err, r.Text())
	}
	wantSeg := []recipe.ValuePair{{"Caecum pole", "caecum"}, {"rectum", "rectum"}, {"Sigmoid colon", "sigmoid"}}
	if got := back.ValueList("segment"); !reflect.DeepEqual(got, wantSeg) {
		t.Errorf("segment values %q, want %q", got, wantSeg)
	}
	if got := back.ValueList("indication"); !reflect.DeepEqual(got, []recipe.ValuePair{{"Bowel scope", "screening"}}) {
		t.Errorf("indication values %q", got)
	}
	if y, n := back.YesNoWords("yes"), back.YesNoWords("no"); !reflect.DeepEqual(y, []string{"Ja"}) || !reflect.DeepEqual(n, []string{"N", "y"}) {
		t.Errorf("yes %q, no %q", y, n)
	}
	if back.Columns["retrieved"] != "Got it" || back.Columns["size_mm"] != "" {
		t.Errorf("columns %q", back.Columns)
	}
}

// TestOriginMissing: a column the recipe maps nothing to is missing, but a
// lesion's number the mapping counts is not.
func TestOriginMissing(t *testing.T) {
	r, err := recipe.Parse("r.toml", []byte(combinedRecipe))
	if err != nil {
		t.Fatal(err)
	}
	tb, err := sheet.Open("src.csv", strings.NewReader("Exam,Date,MRN,Indication,Site,Size\nX1,2026-03-05,ZZ900001,screening,Rectum,6\n"), r.Options())
	if err != nil {
		t.Fatal(err)
	}
	defer tb.Close()
	rows, _, err := r.Preview(tb, 1)
	if err != nil || len(rows) != 1 || len(rows[0].Records) != 2 {
		t.Fatalf("preview %+v, %v", rows, err)
	}
	for _, rec := range rows[0].Records {
		missing := rec.Origin.Missing()
		for i, f := range recipe.Fields(rec.Kind) {
			_, mapped := r.Columns[f.Name]
			want := !mapped && !(rec.Kind == recipe.Lesions && f.Name == "lesion_no")
			if missing[i] != want {
				t.Errorf("%s %s: missing %v, want %v", rec.Kind, f.Name, missing[i], want)
			}
		}
	}
}
