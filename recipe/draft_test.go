package recipe_test

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"polypledger/recipe"
)

// edit is one change a person makes to a drafted recipe: the line holding
// find becomes replace. Every edit must fall on a line the draft marked
// "# check:".
type edit struct{ find, replace string }

// TestDraftOfShippedSources drafts a recipe for each shipped shape, applies
// the few edits a person would make to the lines marked "# check:", and maps
// the file with it: the records must be exactly our CSV files. The number of
// edits each shape needs is part of the contract (docs/recipes.md).
func TestDraftOfShippedSources(t *testing.T) {
	edits := map[string][]edit{
		"wide": nil,
		"room": nil,
		"lab": {
			// No day in the laboratory's file is above 12: the draft will not
			// guess the order, the person knows it.
			{`# date_format = "DD/MM/YYYY"`, `date_format = "DD/MM/YYYY"`},
		},
	}
	for _, s := range shipped {
		t.Run(s.dir, func(t *testing.T) {
			text, err := recipe.DraftFile(s.path(s.file), "")
			if err != nil {
				t.Fatal(err)
			}
			if _, err := recipe.Parse("draft.toml", []byte(text)); err != nil {
				t.Fatalf("the draft does not load: %v\n%s", err, text)
			}
			lines := strings.Split(text, "\n")
			for _, e := range edits[s.dir] {
				hit := false
				for i, l := range lines {
					if strings.Contains(l, e.find) {
						if !strings.Contains(l, "# check:") {
							t.Errorf("edit of a line not marked for checking: %q", l)
						}
						lines[i], hit = e.replace, true
						break
					}
				}
				if !hit {
					t.Errorf("no line holds %q in\n%s", e.find, text)
				}
			}
			edited := strings.Join(lines, "\n")
			r, err := recipe.Parse("draft.toml", []byte(edited))
			if err != nil {
				t.Fatalf("the edited draft does not load: %v\n%s", err, edited)
			}
			checkAgainstOurCSV(t, s, r)
			if t.Failed() {
				t.Logf("draft:\n%s", text)
			}
		})
	}
}

func writeTemp(t *testing.T, name, text string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestDraftGuesses(t *testing.T) {
	tests := []struct {
		name   string
		data   string
		want   []string // lines the draft must hold
		absent []string // text it must not hold
	}{
		{
			name: "month first when a second part is above 12",
			data: "Procedure date,Endoscopist,Age,Sex,Indication\n03/25/2026,E1,60,F,screening\n04/02/2026,E2,61,M,screening\n",
			want: []string{`date_format = "MM/DD/YYYY"`, `kind = "procedures"`},
		},
		{
			name: "day first when a first part is above 12",
			data: "Date,Operator,Age,Gender,Reason\n25.03.2026,E1,60,F,screening\n",
			want: []string{`date_format = "DD.MM.YYYY"`, `performed_on = "Date"`},
		},
		{
			name: "no day above 12: the format is left for a person, commented out",
			data: "Date,Operator,Age,Sex\n03/04/2026,E1,60,F\n",
			want: []string{`# date_format = "DD/MM/YYYY"   # check: no date in the file has a day above 12`},
		},
		{
			name:   "a word that matches no code is listed commented out, naming our codes",
			data:   "Episode,Date,Endoscopist,Indication\nP1,2026-03-05,E1,Bowel scope\nP2,2026-03-06,E1,screening\n",
			want:   []string{`# "Bowel scope" = ""   # check: no code matched; write one of screening, stool_test_positive, surveillance, diagnostic, therapeutic`},
			absent: []string{`"screening" =`},
		},
		{
			name: "repeated procedure ids with lesion columns: combined",
			data: "Exam,Date,Endoscopist,Age,Site,Size\nA1,2026-03-05,E1,60,Rectum,4mm\nA1,2026-03-05,E1,60,Sigmoid,6mm\n",
			want: []string{`kind = "combined"`, `segment = "Site"`, `size_mm = "Size"`, `# lesion_no: no column`},
		},
		{
			name: "repeated ids without lesion columns are questioned",
			data: "Exam,Date,Endoscopist,Age\nA1,2026-03-05,E1,60\nA1,2026-03-05,E1,60\n",
			want: []string{`kind = "procedures"   # check: some procedure ids appear on several rows`},
		},
		{
			name: "a column known only by its values is marked",
			data: "Episode,When,Endoscopist,Age\nP1,2026-03-05,E1,60\nP2,2026-03-06,E1,61\n",
			want: []string{`performed_on = "When"   # check: matched by its values only`},
		},
		{
			name: "a header only partly like a field's names is marked",
			data: "Episode,Date,Endoscopist,Retrieved by nurse\nP1,2026-03-05,E1,Y\n",
			want: []string{`# check: the header is only partly like the usual names of`},
		},
		{
			// Found by FuzzDraft ("Ref,Ref"): the mapper refuses a header
			// that names two columns, so the draft must not propose it.
			name:   "a header two columns share is not proposed, and is named",
			data:   "Episode,Date,Ref,Ref\nP1,2026-03-05,A,B\n",
			want:   []string{`procedure_id = "Episode"`, `# check: headers that more than one column has, which a recipe cannot name`, `"Ref"`},
			absent: []string{`= "Ref"`},
		},
		{
			name: "no procedure id column",
			data: "Date,Endoscopist,Age,Sex\n2026-03-05,E1,60,F\n",
			want: []string{`procedure_id = "Endoscopist"   # check: no column is named like procedure_id`},
		},
		{
			name:   "patient references and free text never appear",
			data:   "Episode,Date,Endoscopist,Hospital number,Comments,Sex\nP1,2026-03-05,E1,RX1234567,seen by Dr Someone,Female\n",
			want:   []string{`patient_ref = "Hospital number"`, `"Female" = "F"`},
			absent: []string{"RX1234567", "Someone"},
		},
		{
			name: "withdrawal unit from the values when the header does not say",
			data: "Episode,Date,Endoscopist,Withdrawal\nP1,2026-03-05,E1,8.5\nP2,2026-03-05,E1,11\n",
			want: []string{`withdrawal = "minutes"   # check: the header does not say; every number is 60 or less`},
		},
		{
			name: "quotes and backslashes in headers are escaped",
			data: "Episode,\"Date \"\"of\"\" test\\x\",Endoscopist\nP1,2026-03-05,E1\n",
			want: []string{`performed_on = "Date \"of\" test\\x"`},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			text, err := recipe.DraftFile(writeTemp(t, "src.csv", tc.data), "")
			if err != nil {
				t.Fatal(err)
			}
			if _, err := recipe.Parse("draft.toml", []byte(text)); err != nil {
				t.Errorf("the draft does not load: %v", err)
			}
			for _, w := range tc.want {
				if !strings.Contains(text, w) {
					t.Errorf("the draft lacks %q", w)
				}
			}
			for _, a := range tc.absent {
				if strings.Contains(text, a) {
					t.Errorf("the draft holds %q", a)
				}
			}
			if t.Failed() {
				t.Logf("draft:\n%s", text)
			}
		})
	}
}

func readBytes(path string) ([]byte, error) { return os.ReadFile(path) }
