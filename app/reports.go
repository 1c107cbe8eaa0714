package app

import (
	"context"
	"fmt"
	"net/url"
	"path/filepath"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/report"
	"polypledger/workspace"
)

// reportKinds are the reports offered, in plain words.
var reportKinds = []struct {
	kind  report.ReportKind
	words string
}{
	{report.UnitReport, "Unit audit (every endoscopist)"},
	{report.PersonalReport, "Personal report for one endoscopist"},
	{report.TraineeReport, "Trainee logbook"},
}

// reportScreen is the "Reports" screen: choose the kind, period, standard
// and person, then where to save; the report is made off the UI thread and
// its path shown with a button to open it.
type reportScreen struct {
	u        *ui
	kind     *keySelect
	period   *periodPicker
	standard *keySelect
	person   *keySelect
	personID []string
	make     *button
	result   *widget.Label
	openBtn  *button
	saved    string
	content  fyne.CanvasObject
}

func newReportScreen(u *ui) *reportScreen {
	r := &reportScreen{u: u}
	var kinds []string
	for _, k := range reportKinds {
		kinds = append(kinds, k.words)
	}
	r.kind = newKeySelect(kinds, func(string) { r.refreshPeople() })
	r.period = newPeriodPicker(u)
	r.standard = newKeySelect(nil, nil)
	r.person = newKeySelect(nil, nil)
	r.make = newButton("Make the report…", r.chooseFile)
	r.make.Importance = widget.HighImportance
	r.result = widget.NewLabel("")
	r.result.Wrapping = fyne.TextWrapWord
	r.result.Hide()
	r.openBtn = newButton("Open the report", r.openSaved)
	r.openBtn.Hide()
	r.refreshChoices()
	r.kind.SetSelectedIndex(0)
	form := widget.NewForm(
		widget.NewFormItem("Kind of report", r.kind),
		widget.NewFormItem("Period", r.period.content),
		widget.NewFormItem("Standard", r.standard),
		widget.NewFormItem("For", r.person),
	)
	note := widget.NewLabel("A personal report shows everyone else only as anonymous peers. A trainee's logbook counts " +
		"from the trainee's first case. Reports of a period not yet over say that their verdicts are provisional.")
	note.Wrapping = fyne.TextWrapWord
	body := container.NewVBox(heading("Make a PDF report"), form, container.NewHBox(r.make), r.result,
		container.NewHBox(r.openBtn), note, cautionBox(audit.AuditCaution()))
	r.content = container.NewVScroll(container.NewPadded(body))
	return r
}

// shown is called when the screen is opened.
func (r *reportScreen) shown() {}

func (r *reportScreen) kindValue() report.ReportKind {
	if i := r.kind.SelectedIndex(); i >= 0 {
		return reportKinds[i].kind
	}
	return report.UnitReport
}

// refreshChoices offers the profiles and the people.
func (r *reportScreen) refreshChoices() {
	r.u.offerStandards(r.standard)
	r.refreshPeople()
}

// refreshPeople offers endoscopists or trainees as the kind needs.
func (r *reportScreen) refreshPeople() {
	if r.person == nil {
		return
	}
	want := logbook.RoleEndoscopist
	switch r.kindValue() {
	case report.UnitReport:
		r.person.SetOptions([]string{"The whole unit"})
		r.personID = []string{""}
		r.person.SetSelectedIndex(0)
		r.person.Disable()
		return
	case report.TraineeReport:
		want = logbook.RoleTrainee
	}
	r.person.Enable()
	var opts []string
	r.personID = nil
	for _, p := range r.u.roster {
		if p.Role == want {
			opts = append(opts, r.u.rosterLabel(p.ID))
			r.personID = append(r.personID, p.ID)
		}
	}
	r.person.SetOptions(opts)
	if len(opts) > 0 {
		r.person.SetSelectedIndex(0)
	} else {
		r.person.ClearSelected()
	}
}

// request reads the screen's choices.
func (r *reportScreen) request() (workspace.Request, *audit.Profile, error) {
	from, to, err := r.period.read()
	if err != nil {
		return workspace.Request{}, nil, err
	}
	i := r.standard.SelectedIndex()
	if i < 0 || i >= len(r.u.profiles) {
		return workspace.Request{}, nil, fmt.Errorf("choose a standard")
	}
	req := workspace.Request{From: from, To: to, Now: r.u.now()}
	if kind := r.kindValue(); kind != report.UnitReport {
		j := r.person.SelectedIndex()
		if j < 0 || j >= len(r.personID) {
			return req, nil, fmt.Errorf("choose who the report is for")
		}
		if kind == report.TraineeReport {
			req.Whose.TraineeID = r.personID[j]
		} else {
			req.Whose.OperatorID = r.personID[j]
		}
	}
	return req, r.u.profiles[i], nil
}

// fileName suggests a file name for the report.
func fileName(req workspace.Request) string {
	who := "unit"
	if id := req.Whose.OperatorID + req.Whose.TraineeID; id != "" {
		who = id
	}
	return fmt.Sprintf("audit-%s-%s-to-%s.pdf", strings.ToLower(who), logbook.FormatDate(req.From), logbook.FormatDate(req.To))
}

func (r *reportScreen) chooseFile() {
	req, _, err := r.request()
	if err != nil {
		showText(r.result, err.Error())
		return
	}
	r.u.saveFile(fileName(req), func(path string) { r.makeReport(path, nil) })
}

// makeReport writes the chosen report to path off the UI thread; done,
// when set, is called afterwards (tests).
func (r *reportScreen) makeReport(path string, done func(error)) {
	req, prof, err := r.request()
	if err != nil {
		showText(r.result, err.Error())
		return
	}
	ws := &workspace.Audit{Store: r.u.st, Settings: r.u.settings, Profile: prof}
	r.openBtn.Hide()
	r.make.Disable()
	showText(r.result, "Making the report…")
	r.u.jobs.run("Making the report", func(ctx context.Context, progress progressFunc) error {
		return ws.WriteReportFile(ctx, path, req, func(n int) { progress(-1, countOf(n, "case", "cases")+" read") })
	}, func(err error) {
		r.make.Enable()
		switch {
		case cancelled(err):
			showText(r.result, "Stopped; no report was saved.")
		case err != nil:
			showText(r.result, "The report could not be made: "+err.Error())
		default:
			r.saved = path
			showText(r.result, "Saved "+path)
			r.openBtn.Show()
		}
		if done != nil {
			done(err)
		}
	})
}

// openSaved opens the saved report in the system's PDF viewer.
func (r *reportScreen) openSaved() {
	if r.saved == "" {
		return
	}
	abs, err := filepath.Abs(r.saved)
	if err != nil {
		abs = r.saved
	}
	if err := r.u.app.OpenURL(&url.URL{Scheme: "file", Path: abs}); err != nil {
		showText(r.result, "Saved "+r.saved+" (it could not be opened here: "+err.Error()+")")
	}
}
