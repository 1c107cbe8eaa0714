package store

import (
	"testing"

	"polypledger/logbook"
)

// TestColumnTablesFollowTheCatalogue keeps the store's column tables —
// which read and write each column — the same as the logbook's one
// catalogue of our columns, name for name, in order, optional where it is.
func TestColumnTablesFollowTheCatalogue(t *testing.T) {
	check := func(kind Kind, got []string, optional []bool) {
		want := logbook.Columns(kind)
		if len(got) != len(want) {
			t.Fatalf("%s: the store has %d columns, the catalogue %d", kind, len(got), len(want))
		}
		for i, c := range want {
			if got[i] != c.Name || optional[i] != c.Optional {
				t.Errorf("%s column %d: the store has %q (optional %v), the catalogue %q (optional %v)", kind, i+1, got[i], optional[i], c.Name, c.Optional)
			}
		}
	}
	check(Procedures, names(procedureColumns), optionals(procedureColumns))
	check(Lesions, names(lesionColumns), optionals(lesionColumns))
	check(Histology, names(histologyColumns), optionals(histologyColumns))
}

func optionals[T any](cols []column[T]) []bool {
	out := make([]bool, len(cols))
	for i, c := range cols {
		out[i] = c.optional
	}
	return out
}
