package logbook

import "testing"

func TestKindCount(t *testing.T) {
	tests := []struct {
		kind Kind
		n    int
		want string
	}{
		{KindProcedures, 1, "1 procedure"},
		{KindProcedures, 0, "0 procedures"},
		{KindLesions, 7, "7 lesions"},
		{KindHistology, 1, "1 histology result"},
		{KindHistology, 5, "5 histology results"},
	}
	for _, tt := range tests {
		if got := tt.kind.Count(tt.n); got != tt.want {
			t.Errorf("%s.Count(%d) = %q, want %q", tt.kind, tt.n, got, tt.want)
		}
	}
}

// TestColumnsOfEveryKind: every kind has its columns, each named once,
// the first the procedure id, and every code column its codes.
func TestColumnsOfEveryKind(t *testing.T) {
	for _, k := range Kinds {
		cs := Columns(k)
		if len(cs) == 0 || cs[0].Name != "procedure_id" {
			t.Errorf("%s: columns %v", k, ColumnNames(k))
		}
		seen := map[string]bool{}
		for _, c := range cs {
			if seen[c.Name] {
				t.Errorf("%s: %s twice", k, c.Name)
			}
			seen[c.Name] = true
			if (c.Type == CodeColumn) != (len(c.Codes) > 0) {
				t.Errorf("%s.%s: type %d with %d codes", k, c.Name, c.Type, len(c.Codes))
			}
		}
	}
	if Columns("patients") != nil {
		t.Error("an unknown kind has columns")
	}
}
