package recipe_test

import (
	"io"
	"slices"
	"strconv"
	"strings"
	"testing"
	"unicode"

	"polypledger/logbook"
	"polypledger/recipe"
	"polypledger/sheet"
)

// FuzzParse loads arbitrary recipe text: it never panics, a recipe it
// accepts is one the mapper can use, and its Text reads back the same.
func FuzzParse(f *testing.F) {
	for _, s := range shipped {
		f.Add(readFileF(f, s.path("recipe.toml")))
	}
	f.Add(minimal)
	f.Add("kind = \"wide\"\nslots = 2\n[columns]\nprocedure_id = \"R\"\nsize_mm = \"P{n}\"\n")
	f.Add("kind = \"combined\"\ndate_format = \"MMM DD, YYYY\"\n[columns]\nprocedure_id = \"a\"\n[values.x]\n")
	f.Fuzz(func(t *testing.T, text string) {
		r, err := recipe.Parse("f.toml", []byte(text))
		if err != nil {
			if r != nil {
				t.Fatal("a refused recipe was returned")
			}
			return
		}
		if !slices.Contains(recipe.Shapes, r.Shape) || r.HeaderRow < 1 || r.Columns["procedure_id"] == "" {
			t.Fatalf("accepted recipe %+v", r)
		}
		again, err := recipe.Parse("again.toml", []byte(r.Text()))
		if err != nil || again.Text() != r.Text() {
			t.Fatalf("the recipe's text does not read back (%v):\n%s", err, r.Text())
		}
		tb, err := sheet.Open("s.csv", strings.NewReader("a,b,c\n1,2,3\n"), sheet.Options{})
		if err != nil {
			t.Fatal(err)
		}
		defer tb.Close()
		if _, err := r.Map(tb, func(recipe.Record) error { return nil }); err != nil {
			t.Fatal(err)
		}
	})
}

func readFileF(f *testing.F, path string) string {
	f.Helper()
	b, err := readBytes(path)
	if err != nil {
		f.Fatal(err)
	}
	return string(b)
}

// FuzzMap maps arbitrary CSV text through a combined recipe: it never
// panics, every record has our columns, every problem points at a line of
// the file, and no problem shows a patient reference.
func FuzzMap(f *testing.F) {
	f.Add(readFileF(f, sources+"/room/room.csv"))
	f.Add("Exam,Date,MRN,Indication,Site,Size\nX1,2026-03-05,PT-SECRET-1,screening,Rectum,6\nX1,2026-03-06,PT-SECRET-2,x,Sig,7 cm\n")
	f.Add("Exam,MRN\n,\n\"a\nb\",c\n")
	r, err := recipe.Parse("r.toml", []byte(combinedRecipe))
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, data string) {
		tb, err := sheet.Open("s.csv", strings.NewReader(data), r.Options())
		if err != nil {
			return // no header: nothing to map
		}
		defer tb.Close()
		lines := strings.Count(data, "\n") + 1
		res, err := r.Map(tb, func(rec recipe.Record) error {
			if len(rec.Values) != len(logbook.ColumnNames(rec.Kind)) || rec.Line < 1 || rec.Line > lines {
				t.Fatalf("record %+v", rec)
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		secrets := patientValues(t, data, r)
		for _, p := range res.Problems {
			if p.Line < 0 || p.Line > lines {
				t.Errorf("problem on line %d of %d: %s", p.Line, lines, p)
			}
			for _, s := range secrets {
				if strings.Contains(p.String(), s) {
					t.Errorf("problem shows the patient reference %q: %s", s, p)
				}
			}
		}
	})
}

// patientValues returns the patient references of a file that can be told
// from any other text a message may hold: six characters or more, with
// letters and digits, and found in no other cell, header or recipe line.
func patientValues(t *testing.T, data string, r *recipe.Recipe) []string {
	tb, err := sheet.Open("s.csv", strings.NewReader(data), r.Options())
	if err != nil {
		return nil
	}
	defer tb.Close()
	col := -1
	for i, h := range tb.Header() {
		if recipe.Fold(h) == recipe.Fold(r.Columns["patient_ref"]) {
			col = i
		}
	}
	if col < 0 {
		return nil
	}
	var refs []string
	others := map[string]bool{}
	for _, h := range tb.Header() {
		others[h] = true
	}
	for {
		row, err := tb.Next()
		if err == io.EOF {
			break
		}
		if err != nil {
			continue
		}
		for i, c := range row.Cells {
			if i == col {
				if v := strings.TrimSpace(c); len(v) >= 6 && strings.ContainsAny(v, "0123456789") && strings.IndexFunc(v, unicode.IsLetter) >= 0 {
					refs = append(refs, v)
				}
			} else {
				others[c] = true
			}
		}
	}
	var out []string
	for _, v := range refs {
		shared := false
		for o := range others {
			// A message quotes a value as Go does (strconv.Quote), so a
			// reference may appear inside another cell's quoted form
			// ("\x00" then "0A00" shows "000A00").
			if strings.Contains(strconv.Quote(o), v) || strings.Contains(v, o) && len(o) >= 6 {
				shared = true
			}
		}
		if !shared && !strings.Contains(combinedRecipe, v) {
			out = append(out, v)
		}
	}
	return out
}

// FuzzDraft drafts a recipe for arbitrary CSV text: it never panics, and
// the draft always loads.
func FuzzDraft(f *testing.F) {
	f.Add(readFileF(f, sources+"/room/room.csv"))
	f.Add(readFileF(f, sources+"/lab/lab.csv"))
	f.Add("Polyp 1 size,Polyp 2 size,Ref\n6mm,,A\n")
	f.Add("a{n},\"x\"\"y\",Date\n1,2,03/04/2026\n")
	f.Fuzz(func(t *testing.T, data string) {
		text, err := recipe.Draft("s.csv", []byte(data), "")
		if err != nil {
			return // not a table
		}
		if _, err := recipe.Parse("draft.toml", []byte(text)); err != nil {
			t.Fatalf("the draft does not load: %v\n%s", err, text)
		}
	})
}
