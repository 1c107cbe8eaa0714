package audit

// Fuzz target for the standard-profile loader: any bytes give either a
// profile that passes its own rules and survives a JSON round trip
// unchanged, or ProfileErrors naming the file — never a panic. Run briefly
// by scripts/fuzz-smoke; the shipped profiles and the corpus in
// testdata/fuzz are the seeds.

import (
	"encoding/json"
	"errors"
	"io/fs"
	"reflect"
	"testing"

	"polypledger/assets"
)

func FuzzParseProfile(f *testing.F) {
	names, err := fs.Glob(assets.Standards, "*.json")
	if err != nil || len(names) == 0 {
		f.Fatalf("no shipped profiles to seed from (%v)", err)
	}
	for _, n := range names {
		b, err := fs.ReadFile(assets.Standards, n)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	for _, s := range []string{"", "null", "{}", "[]", `{"id":"x"}`, `{"id":"x","title":"t","source":"s","detection_eligible":{"indications":["screening"],"exclusions":["none"]},"stool_test_positive":{"exclusions":["none"]},"targets":{"adr":{"minimum":0.25}}}`, `{"ID":"x","Targets":{"adr":{"minimum":1e400}}}`, `{"targets":{"adr":{"minimum":0.3,"maximum":0.2}}}`, "{\"id\":\"a\"} trailing"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		p, err := ParseProfile("fuzz.json", data)
		if err != nil {
			var pe ProfileErrors
			if !errors.As(err, &pe) || len(pe) == 0 {
				t.Fatalf("error %v is not a non-empty ProfileErrors", err)
			}
			for _, e := range pe {
				if e.File != "fuzz.json" || e.Reason == "" {
					t.Fatalf("problem %+v does not name the file and a reason", e)
				}
			}
			if p != nil {
				t.Fatalf("a refused profile was returned too")
			}
			return
		}
		if p == nil {
			t.Fatal("no error and no profile")
		}
		if errs := p.validate("fuzz.json"); len(errs) > 0 {
			t.Fatalf("an accepted profile breaks its rules: %v", errs)
		}
		again, err := json.Marshal(p)
		if err != nil {
			t.Fatalf("an accepted profile does not encode: %v", err)
		}
		q, err := ParseProfile("again.json", again)
		if err != nil {
			t.Fatalf("an accepted profile, written back, is refused: %v\n%s", err, again)
		}
		if !reflect.DeepEqual(p, q) {
			t.Fatalf("round trip changed the profile:\n%+v\n%+v", p, q)
		}
	})
}
