package app

import (
	"errors"
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
	"polypledger/store"
	"polypledger/workspace"
)

// inboxPageSize is how many waiting lesions the inbox shows at once.
const inboxPageSize = 30

// inbox is the "Pathology results" screen: lesions still waiting for
// histology, oldest case first and grouped by case, each with the result
// entered in place; and the import of a results file.
type inbox struct {
	u       *ui
	page    int
	total   int
	stale   bool
	rows    []*inboxRow
	summary *widget.Label
	list    *fyne.Container
	prev    *button
	next    *button
	scroll  *container.Scroll
	content fyne.CanvasObject
}

// inboxRow is one waiting lesion with its result pickers.
type inboxRow struct {
	item      store.AwaitingLesion
	histology *choice[logbook.Histology]
	dysplasia *choice[logbook.Dysplasia]
	reported  *entry
	save      *button
	message   *widget.Label
}

func newInbox(u *ui) *inbox {
	b := &inbox{u: u, stale: true}
	b.summary = widget.NewLabel("")
	b.list = container.NewVBox()
	b.prev = newButton("◀ Older", func() { b.page--; b.reload() })
	b.next = newButton("Newer ▶", func() { b.page++; b.reload() })
	imp := newButton("Import a results file (CSV or .xlsx)…", b.chooseImport)
	help := widget.NewLabel("Choose the histology and dysplasia from the report and press Save (or Enter in the date). A file from the laboratory needs the columns procedure_id, lesion_no, histology, dysplasia, reported_on.")
	help.Wrapping = fyne.TextWrapWord
	top := container.NewVBox(container.NewHBox(b.prev, b.next, imp), b.summary, help)
	b.scroll = container.NewVScroll(b.list)
	b.content = container.NewBorder(top, nil, nil, nil, b.scroll)
	return b
}

// reload reads the current page of waiting lesions.
func (b *inbox) reload() {
	b.stale = false
	ctx := b.u.ctx
	n, err := b.u.st.CountAwaitingHistology(ctx)
	if err != nil {
		b.summary.SetText("The waiting list could not be read: " + err.Error())
		return
	}
	b.total = n
	last := max(0, (n-1)/inboxPageSize)
	b.page = min(max(b.page, 0), last)
	items, err := b.u.st.AwaitingHistology(ctx, inboxPageSize, b.page*inboxPageSize)
	if err != nil {
		b.summary.SetText("The waiting list could not be read: " + err.Error())
		return
	}
	if n == 0 {
		b.summary.SetText("No lesions are waiting for histology.")
	} else {
		b.summary.SetText(fmt.Sprintf("%d lesions are waiting for histology. Showing %d–%d, oldest first.",
			n, b.page*inboxPageSize+1, b.page*inboxPageSize+len(items)))
	}
	b.prev.Disable()
	b.next.Disable()
	if b.page > 0 {
		b.prev.Enable()
	}
	if b.page < last {
		b.next.Enable()
	}
	b.list.RemoveAll()
	b.rows = nil
	lastCase := ""
	for _, it := range items {
		if it.Lesion.ProcedureID != lastCase {
			lastCase = it.Lesion.ProcedureID
			days := int(b.u.today().Sub(it.PerformedOn).Hours() / 24)
			head := widget.NewLabelWithStyle(fmt.Sprintf("Case %s  ·  %s  ·  %s  ·  waiting %d days",
				it.Lesion.ProcedureID, logbook.FormatDate(it.PerformedOn), b.u.rosterLabel(it.OperatorID), days),
				fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
			b.list.Add(widget.NewSeparator())
			b.list.Add(head)
		}
		r := b.newRow(it)
		b.rows = append(b.rows, r)
		pickers := container.NewGridWithColumns(4, r.histology, r.dysplasia, r.reported, r.save)
		b.list.Add(container.NewVBox(widget.NewLabel(lesionSummary(it.Lesion)), pickers, r.message))
	}
}

func (b *inbox) newRow(it store.AwaitingLesion) *inboxRow {
	r := &inboxRow{item: it}
	var finals []logbook.Histology
	for _, h := range logbook.Histologies {
		if h.IsFinal() {
			finals = append(finals, h)
		}
	}
	r.histology = newChoice(finals, histologyWords, false, nil)
	r.histology.PlaceHolder = "histology…"
	r.dysplasia = newChoice(logbook.Dysplasias, dysplasiaWords, true, nil)
	r.dysplasia.PlaceHolder = "dysplasia…"
	r.reported = newEntry("reported on, YYYY-MM-DD")
	r.reported.SetText(logbook.FormatDate(b.u.today()))
	r.message = widget.NewLabel("")
	r.message.Importance = widget.DangerImportance
	r.message.Hide()
	r.save = newButton("Save result", func() { b.record(r) })
	r.reported.OnSubmitted = func(string) { b.record(r) }
	r.histology.OnSubmit = func() { b.record(r) }
	r.dysplasia.OnSubmit = func() { b.record(r) }
	return r
}

// record stores the result entered in a row, off the UI thread; the
// lesion then leaves the list.
func (b *inbox) record(r *inboxRow) {
	d, err := logbook.ParseDate(strings.TrimSpace(r.reported.Text))
	if err != nil {
		r.message.SetText("reported on: " + err.Error())
		r.message.Show()
		return
	}
	h := logbook.HistologyResult{ProcedureID: r.item.Lesion.ProcedureID, LesionNo: r.item.Lesion.LesionNo,
		Histology: r.histology.Value(), Dysplasia: r.dysplasia.Value(), ReportedOn: d}
	if ps := logbook.ValidateHistologyResult(h, b.u.today()); len(ps) > 0 {
		r.message.SetText(resultProblems(ps))
		r.message.Show()
		return
	}
	r.save.Disable()
	r.message.SetText("Saving…")
	r.message.Show()
	b.u.jobs.background(func() error {
		return b.u.st.RecordHistology(b.u.ctx, h, false)
	}, func(err error) {
		r.save.Enable()
		var ve *store.ValidationError
		switch {
		case errors.As(err, &ve):
			r.message.SetText(resultProblems(ve.Problems))
		case err != nil:
			r.message.SetText("Not saved: " + err.Error())
		default:
			b.u.recordsChanged()
			b.reload()
		}
	})
}

// resultProblems words a result's problems for the row.
func resultProblems(ps logbook.Problems) string {
	var lines []string
	for _, p := range ps {
		field := strings.ReplaceAll(p.Field, "_", " ")
		lines = append(lines, field+": "+p.Reason)
	}
	return strings.Join(lines, "\n")
}

// chooseImport asks for a results file and imports it.
func (b *inbox) chooseImport() {
	b.u.openFile([]string{".csv", ".xlsx"}, func(path string) { b.importFile(path, nil) })
}

// importFile imports a histology file of ours, CSV or workbook
// (ui.runImport); done, when set, is called afterwards with the result
// (tests).
func (b *inbox) importFile(path string, done func(workspace.ImportReport, error)) {
	b.u.runImport(workspace.ImportRequest{Path: path, Kind: store.Histology}, done)
}
