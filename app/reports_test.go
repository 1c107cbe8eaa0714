package app

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

func TestReportIsSaved(t *testing.T) {
	u := newTestUI(t, 300)
	r := u.reports
	for i, kind := range []string{"unit", "personal", "trainee"} {
		r.kind.SetSelectedIndex(i)
		path := filepath.Join(t.TempDir(), kind+".pdf")
		var err error
		r.makeReport(path, func(e error) { err = e })
		u.jobs.wait()
		if err != nil {
			t.Fatalf("%s report: %v", kind, err)
		}
		b, rerr := os.ReadFile(path)
		if rerr != nil || !bytes.HasPrefix(b, []byte("%PDF")) {
			t.Fatalf("%s report: %s is not a PDF (%v)", kind, path, rerr)
		}
		if r.result.Text != "Saved "+path || r.openBtn.Hidden {
			t.Errorf("%s report: screen says %q, open button hidden %v", kind, r.result.Text, r.openBtn.Hidden)
		}
	}
}
