package workspace

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"polypledger/internal/safefile"
)

// TestOutputWrite: a write that fails leaves nothing; a file that appears
// at the target while the output is being made is left as it is (unless
// Replace is set); a successful write leaves the whole file and no
// temporary.
func TestOutputWrite(t *testing.T) {
	failed := errors.New("the report could not be drawn")
	for _, tc := range []struct {
		name     string
		replace  bool
		write    func(target string) func(io.Writer) error
		wantErr  string
		wantFile string // "" for no file
	}{
		{"a whole file", false, func(string) func(io.Writer) error {
			return func(w io.Writer) error { _, err := io.WriteString(w, "all of it"); return err }
		}, "", "all of it"},
		{"a failed write", false, func(string) func(io.Writer) error {
			return func(w io.Writer) error { io.WriteString(w, "half"); return failed }
		}, "the report could not be drawn", ""},
		{"a file appears meanwhile", false, func(target string) func(io.Writer) error {
			return func(w io.Writer) error {
				os.WriteFile(target, []byte("somebody else's"), 0o600)
				_, err := io.WriteString(w, "ours")
				return err
			}
		}, "appeared while it was being written", "somebody else's"},
		{"a file appears meanwhile, replace allowed", true, func(target string) func(io.Writer) error {
			return func(w io.Writer) error {
				os.WriteFile(target, []byte("somebody else's"), 0o600)
				_, err := io.WriteString(w, "ours")
				return err
			}
		}, "", "ours"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			target := filepath.Join(dir, "out.csv")
			err := Output{Path: target, Replace: tc.replace}.Write(tc.write(target))
			if (err == nil) != (tc.wantErr == "") || err != nil && !strings.Contains(err.Error(), tc.wantErr) {
				t.Errorf("Write: %v, want an error saying %q", err, tc.wantErr)
			}
			b, rerr := os.ReadFile(target)
			if tc.wantFile == "" && rerr == nil || tc.wantFile != "" && string(b) != tc.wantFile {
				t.Errorf("the target holds %q (%v), want %q", b, rerr, tc.wantFile)
			}
			entries, _ := os.ReadDir(dir)
			for _, e := range entries {
				if safefile.IsTemp(e.Name()) {
					t.Errorf("temporary file %s left behind", e.Name())
				}
			}
		})
	}
}

// TestPageCounter counts page objects however the PDF is cut into writes,
// and not the page tree ("/Type /Pages").
func TestPageCounter(t *testing.T) {
	pdf := []byte("%PDF-1.3\n1 0 obj\n<</Type /Pages\n/Kids [3 0 R 5 0 R]\n/Count 2>>\nendobj\n3 0 obj\n<</Type /Page\n/Parent 1 0 R>>\nendobj\n5 0 obj\n<</Type /Page\n/Parent 1 0 R>>\nendobj\n")
	for size := 1; size <= len(pdf); size++ {
		var out bytes.Buffer
		c := &PageCounter{W: &out}
		for i := 0; i < len(pdf); i += size {
			c.Write(pdf[i:min(i+size, len(pdf))])
		}
		if c.Pages != 2 || !bytes.Equal(out.Bytes(), pdf) {
			t.Fatalf("writes of %d bytes: %d pages counted, want 2 (output intact %v)", size, c.Pages, bytes.Equal(out.Bytes(), pdf))
		}
	}
}
