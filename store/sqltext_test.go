package store

import (
	"bytes"
	"testing"
)

// TestCopyTextRoundTrip: every value the program writes with COPY comes
// back the same when the server's COPY text is read (tabs, line ends,
// backslashes and control characters escaped; NULL as \N), and the escapes
// the server may send — octal and hexadecimal among them — are undone.
func TestCopyTextRoundTrip(t *testing.T) {
	values := []any{"plain", "tab\there", "line\nend", "back\\slash", "\\N", "cr\rlf", nil, "", 12, int64(-3), 2.5, "ünïcödé ≥ µg"}
	var line []byte
	for i, v := range values {
		if i > 0 {
			line = append(line, '\t')
		}
		line = appendCopyValue(line, v)
	}
	src := rowSource{sep: '\t', copyText: true}
	var scratch []byte
	var got []string
	cols := make([]column[[]string], len(values))
	for i := range cols {
		cols[i] = column[[]string]{name: "c", set: func(r *[]string, s string, _ *codec) error { *r = append(*r, s); return nil }}
	}
	var r []string
	if err := unpack(cols, &src, line, &scratch, &r, nil, nil); err != nil {
		t.Fatal(err)
	}
	got = r
	want := []string{"plain", "tab\there", "line\nend", "back\\slash", "\\N", "cr\rlf", "12", "-3", "2.5", "ünïcödé ≥ µg"}
	// NULL and the empty string are both "not recorded" and left out.
	if len(got) != len(want) {
		t.Fatalf("got %q, want %q", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("value %d: %q, want %q", i, got[i], want[i])
		}
	}
	for _, tc := range []struct{ in, want string }{
		{`a\bb\fc\vd`, "a\bb\fc\vd"}, {`\101\x42\x4g`, "AB\x04g"}, {`end\`, `end\`}, {`\q`, "q"},
	} {
		if got := unescapeCopy(nil, []byte(tc.in)); !bytes.Equal(got, []byte(tc.want)) {
			t.Errorf("unescapeCopy(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// TestRebind: placeholders are numbered for the server, and a "?" inside
// quoted text or a quoted name is left alone; SQLite keeps "?".
func TestRebind(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"SELECT 1", "SELECT 1"},
		{"SELECT * FROM t WHERE a = ? AND b = ?", "SELECT * FROM t WHERE a = $1 AND b = $2"},
		{"SELECT '?', \"q?\" FROM t WHERE a = ? AND b LIKE ? || '%'", "SELECT '?', \"q?\" FROM t WHERE a = $1 AND b LIKE $2 || '%'"},
		{"UPDATE t SET a = 'it''s ?' WHERE id = ?", "UPDATE t SET a = 'it''s ?' WHERE id = $1"},
	} {
		if got := rebind(tc.in, true); got != tc.want {
			t.Errorf("rebind(%q) = %q, want %q", tc.in, got, tc.want)
		}
		if got := rebind(tc.in, false); got != tc.in {
			t.Errorf("rebind for SQLite changed %q to %q", tc.in, got)
		}
	}
}
