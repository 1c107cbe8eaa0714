package audit

import (
	"os/exec"
	"strings"
	"testing"
)

// renderers are the module paths the arithmetic packages must never depend
// on, directly or through another package: PDF, charts, the user interface,
// spreadsheets and SQL (and the project's own packages that hold them).
var renderers = []string{
	"github.com/jung-kurt/gofpdf", "codeberg.org/go-pdf/fpdf", "gonum.org/v1/plot",
	"fyne.io/fyne", "database/sql", "modernc.org/sqlite", "github.com/jackc/pgx", "github.com/xuri/excelize",
	"polypledger/report", "polypledger/app", "polypledger/store", "polypledger/workspace",
}

// forbiddenDeps lists what pkg depends on, its tests included, among
// renderers, as the go command resolves the build.
func forbiddenDeps(t *testing.T, pkg string) []string {
	t.Helper()
	goTool, err := exec.LookPath("go")
	if err != nil {
		t.Fatalf("the go command is needed to list dependencies: %v", err)
	}
	out, err := exec.Command(goTool, "list", "-deps", "-test", pkg).Output()
	if err != nil {
		t.Fatalf("go list -deps %s: %v", pkg, err)
	}
	var bad []string
	for _, dep := range strings.Fields(string(out)) {
		for _, r := range renderers {
			if dep == r || strings.HasPrefix(dep, r+"/") {
				bad = append(bad, dep)
			}
		}
	}
	return bad
}

// TestArithmeticImportsNoRenderer keeps the statistics, the guideline tables
// and the indicator arithmetic free of PDF, chart, UI and SQL packages, so
// that they build and test on their own and anything that needs a Wilson
// interval or a surveillance interval links none of them.
func TestArithmeticImportsNoRenderer(t *testing.T) {
	for _, pkg := range []string{"polypledger/stats", "polypledger/surveillance", "polypledger/audit"} {
		if bad := forbiddenDeps(t, pkg); len(bad) > 0 {
			t.Errorf("%s depends on %s", pkg, strings.Join(bad, ", "))
		}
	}
	// The check itself must see a renderer where there is one.
	if bad := forbiddenDeps(t, "polypledger/report"); len(bad) == 0 {
		t.Error("the dependency check finds no PDF or chart package behind package report")
	}
}
