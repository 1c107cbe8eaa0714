package recipe

import (
	"errors"
	"io"
	"strings"

	"polypledger/sheet"
)

// SourceColumn is what one column of a source file holds, for a screen
// that maps it: its header and its different values.
type SourceColumn struct {
	Header string
	// Values are the column's different values (trimmed; empty ones left
	// out; compared as Fold compares), in the order first seen.
	Values []string
	// Many is set when the column holds more different values than were
	// kept: it is not a column of codes.
	Many bool
}

// Survey reads up to rows data rows of a table and returns, for each column
// of its header, its different values, at most distinct of them. Rows that
// cannot be read are passed over; a fault that ends the reading is
// returned with what was read before it.
func Survey(t *sheet.Table, rows, distinct int) ([]SourceColumn, error) {
	head := t.Header()
	out := make([]SourceColumn, len(head))
	seen := make([]map[string]bool, len(head))
	for i, h := range head {
		out[i].Header = h
		seen[i] = map[string]bool{}
	}
	for n := 0; n < rows; n++ {
		row, err := t.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		var se *sheet.Error
		if errors.As(err, &se) && se.RowOnly {
			continue
		}
		if err != nil {
			return out, err
		}
		for i, c := range row.Cells {
			v := strings.TrimSpace(c)
			k := Fold(v)
			if i >= len(out) || v == "" || seen[i][k] || out[i].Many {
				continue
			}
			if len(out[i].Values) == distinct {
				out[i].Many = true
				continue
			}
			seen[i][k] = true
			out[i].Values = append(out[i].Values, v)
		}
	}
	return out, nil
}

// Fields returns our fields that a recipe of the shape may map, in the
// order of our files (procedures first, then lesions; procedure_id once).
func (s Shape) Fields() []Field {
	byName := shapeFields(s)
	var out []Field
	for _, name := range fieldNames(s) {
		out = append(out, byName[name])
	}
	return out
}

// LesionOnly reports whether a field belongs to lesions and not to
// procedures: in a wide recipe its column has SlotMark where the lesion's
// number goes.
func LesionOnly(field string) bool { return lesionOnly(field) }
