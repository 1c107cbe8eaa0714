package recipe_test

import (
	"errors"
	"reflect"
	"strings"
	"testing"

	"polypledger/recipe"
)

const minimal = `kind = "procedures"
[columns]
procedure_id = "Episode"
`

// withTop puts top-level keys above minimal's [columns].
func withTop(keys string) string {
	return strings.Replace(minimal, "[columns]", keys+"[columns]", 1)
}

func TestParseRefuses(t *testing.T) {
	tests := []struct {
		name string
		text string
		want []string // every problem, in order
	}{
		{"not TOML", "kind = \n", []string{`r.toml: line 1: not valid TOML: expected value but found '\n' instead`}},
		{"unknown top-level key", withTop("delimiter = \";\"\n"), []string{
			`r.toml: unknown key "delimiter" (a recipe has: name, kind, sheet, header_row, date_format, slots, columns, values, yes_no, units)`}},
		{"no kind", "[columns]\nprocedure_id = \"Episode\"\n", []string{
			"r.toml: kind is missing (one of procedures, lesions, histology, combined, wide)"}},
		{"unknown kind", "kind = \"polyps\"\n[columns]\nprocedure_id = \"E\"\n", []string{
			`r.toml: kind "polyps" is not one of procedures, lesions, histology, combined, wide`}},
		{"no columns", "kind = \"lesions\"\n", []string{
			"r.toml: [columns] is missing: it names the source column of each of our fields"}},
		{"unknown field, missing procedure id", "kind = \"histology\"\n[columns]\nlesion_no = \"Specimen\"\nhistology_code = \"Dx\"\n", []string{
			`r.toml: [columns] "histology_code" is not one of our fields for kind "histology" (fields: procedure_id, lesion_no, histology, dysplasia, reported_on)`,
			"r.toml: [columns] procedure_id is missing: every row needs it"}},
		{"histology needs the lesion number", "kind = \"histology\"\n[columns]\nprocedure_id = \"Ref\"\n", []string{
			"r.toml: [columns] lesion_no is missing: every row needs it"}},
		{"bad header row and date format", withTop("header_row = 0\ndate_format = \"DD/MM/YY\"\n"), []string{
			"r.toml: header_row must be a row number (1 or more), not 0",
			`r.toml: date_format "DD/MM/YY": "Y" at position 7 is not a token (tokens: DD, MM, MMM, YYYY; anything else between them must not be a letter or digit)`}},
		{"date format without a day", withTop("date_format = \"MM/YYYY\"\n"), []string{
			`r.toml: date_format "MM/YYYY": needs DD, MM (or MMM) and YYYY once each`}},
		{"slots outside a wide recipe", withTop("slots = 3\n"), []string{
			`r.toml: slots belongs to a wide recipe (kind = "wide"), not to kind "procedures"`}},
		{"wide without slots or lesion columns", "kind = \"wide\"\n[columns]\nprocedure_id = \"Ref\"\n", []string{
			`r.toml: slots is missing: a wide recipe says how many lesions a row can hold (slots = 3 for "Polyp 1 …" to "Polyp 3 …")`,
			`r.toml: [columns] names no lesion column: a wide recipe maps at least one ("Polyp {n} size")`}},
		{"wide slot marks", "kind = \"wide\"\nslots = 99\n[columns]\nprocedure_id = \"Ref {n}\"\nsize_mm = \"Polyp size\"\n", []string{
			"r.toml: slots must be a whole number from 1 to 50, not 99",
			`r.toml: [columns] procedure_id = "Ref {n}": {n} belongs in lesion columns only`,
			`r.toml: [columns] size_mm = "Polyp size": a lesion column of a wide recipe has {n} where the lesion's number goes ("Polyp {n} size")`}},
		{"slot mark outside a wide recipe", "kind = \"combined\"\n[columns]\nprocedure_id = \"Ref\"\nsize_mm = \"Polyp {n} size\"\n", []string{
			`r.toml: [columns] size_mm = "Polyp {n} size": {n} belongs to a wide recipe (kind = "wide")`}},
		{"values that are not our codes", minimal + "indication = \"Reason\"\n[values.indication]\n\"Bowel screening\" = \"screen\"\n\"FIT+\" = 7\n", []string{
			`r.toml: [values.indication] "Bowel screening": "screen" is not one of our indication codes (screening, stool_test_positive, surveillance, diagnostic, therapeutic)`,
			`r.toml: [values.indication] "FIT+": must be text (one of our codes), not the number 7`}},
		{"values for patient references", minimal + "patient_ref = \"MRN\"\n[values.patient_ref]\n\"123\" = \"x\"\n", []string{
			"r.toml: [values.patient_ref]: a recipe never lists patient references"}},
		{"a top-level key below [columns]", minimal + "date_format = \"DD/MM/YYYY\"\n", []string{
			`r.toml: [columns] "date_format": date_format belongs above the first [section] (TOML puts every key after [columns] into it)`}},
		{"the same source value twice", minimal + "sex = \"Sex\"\n[values.sex]\n\"Female\" = \"F\"\n\" FEMALE\" = \"M\"\n", []string{
			`r.toml: [values.sex] " FEMALE" and "Female" are the same value (case and spaces are ignored) mapped to different codes`}},
		{"yes_no", minimal + "[yes_no]\nyes = [\"Y\", \"1\"]\nno = [\"N\", \"y\"]\nmaybe = [\"?\"]\n", []string{
			`r.toml: [yes_no] unknown key "maybe" (allowed: yes, no, not_applicable)`,
			`r.toml: [yes_no] "y" is listed for two answers`}},
		{"units", minimal + "[units]\nwithdrawal = \"hours\"\nsize = \"cm\"\n", []string{
			`r.toml: [units] unknown key "size" (allowed: withdrawal)`,
			`r.toml: [units] withdrawal must be "minutes" or "seconds", not "hours"`}},
		{"the patient column feeds nothing else", minimal + "patient_ref = \"Hospital no\"\ntrainee_id = \"hospital NO\"\n", []string{
			`r.toml: [columns] trainee_id = "hospital NO": the patient reference's column feeds no other field (its values are never shown in messages)`}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := recipe.Parse("r.toml", []byte(tc.text))
			var le *recipe.LoadError
			if !errors.As(err, &le) {
				t.Fatalf("got %v, want a LoadError", err)
			}
			if got := strings.Split(le.Error(), "\n"); !reflect.DeepEqual(got, tc.want) {
				t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(tc.want, "\n"))
			}
		})
	}
}

func TestParseContractExample(t *testing.T) {
	// The example of the recipe contract (issue "Bring the unit's own data").
	text := `kind = "combined"
sheet = "Audit"
header_row = 1
date_format = "DD/MM/YYYY"
[columns]
procedure_id = "Episode"
performed_on = "Date of test"
[values.indication]
"Bowel screening" = "screening"
[yes_no]
yes = ["Y", "Yes", "1"]
no = ["N", "No", "0"]
[units]
withdrawal = "minutes"
`
	r, err := recipe.Parse("audit.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if r.Shape != recipe.ShapeCombined || r.Sheet != "Audit" || r.HeaderRow != 1 || r.DateFormat != "DD/MM/YYYY" || !r.WithdrawalMinutes {
		t.Errorf("recipe %+v", r)
	}
	if r.Columns["performed_on"] != "Date of test" || r.Values("indication")["bowel screening"] != "screening" {
		t.Errorf("columns %v, indication values %v", r.Columns, r.Values("indication"))
	}
	if o := r.Options(); o.Sheet != "Audit" || o.HeaderRow != 1 {
		t.Errorf("options %+v", o)
	}
	want := []string{"[values.indication] is not used: the recipe maps no column to indication (add it to [columns])"}
	if !reflect.DeepEqual(r.Warnings, want) {
		t.Errorf("warnings %q, want %q", r.Warnings, want)
	}
}

// TestTextReadsBack writes each shipped recipe as text and reads it again:
// the same recipe, which maps its source to the same records.
func TestTextReadsBack(t *testing.T) {
	for _, s := range shipped {
		t.Run(s.dir, func(t *testing.T) {
			r, err := recipe.Load(s.path("recipe.toml"))
			if err != nil {
				t.Fatal(err)
			}
			again, err := recipe.Parse("again.toml", []byte(r.Text()))
			if err != nil {
				t.Fatalf("%v\n%s", err, r.Text())
			}
			if again.Shape != r.Shape || again.Name != r.Name || again.Sheet != r.Sheet || again.HeaderRow != r.HeaderRow ||
				again.DateFormat != r.DateFormat || again.Slots != r.Slots || again.WithdrawalMinutes != r.WithdrawalMinutes ||
				!reflect.DeepEqual(again.Columns, r.Columns) {
				t.Errorf("read back %+v\nwas %+v", again, r)
			}
			for f := range r.Columns {
				if !reflect.DeepEqual(again.Values(f), r.Values(f)) {
					t.Errorf("[values.%s] read back %v, was %v", f, again.Values(f), r.Values(f))
				}
			}
			if again.Text() != r.Text() {
				t.Errorf("text changed:\n%s\nwas\n%s", again.Text(), r.Text())
			}
			checkAgainstOurCSV(t, s, again)
		})
	}
}

func TestMissing(t *testing.T) {
	r, err := recipe.Parse("w.toml", []byte("kind = \"wide\"\nslots = 2\n[columns]\nprocedure_id = \"Ref\"\nsize_mm = \"Polyp {n} size\"\nsegment = \"Polyp {n} site\"\n"))
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		header []string
		want   []string
	}{
		{[]string{"ref", "Polyp 1 size", "polyp 2  SIZE", "Polyp 1 site", "Polyp 2 site", "Other"}, nil},
		{[]string{"Polyp 1 size", "Polyp 1 site"}, []string{"Ref", "Polyp 2 site", "Polyp 2 size"}},
	}
	for _, tc := range tests {
		if got := r.Missing(tc.header); !reflect.DeepEqual(got, tc.want) {
			t.Errorf("Missing(%q) = %q, want %q", tc.header, got, tc.want)
		}
	}
}

// TestFold: Fold gives the same as lower-casing the space-separated words,
// whether or not the value was folded already (a value already folded is
// returned as it is).
func TestFold(t *testing.T) {
	for _, s := range []string{"", " ", "a", "ab c", "Ab c", "ab  c", " ab", "ab ", "a\tb", "a\u00a0b", "Ä b", "ä b", "x\r\n", "positive fit", "Positive FIT"} {
		want := strings.ToLower(strings.Join(strings.Fields(s), " "))
		if got := recipe.Fold(s); got != want {
			t.Errorf("Fold(%q) = %q, want %q", s, got, want)
		}
	}
}
