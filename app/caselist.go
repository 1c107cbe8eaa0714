package app

import (
	"fmt"
	"strings"
	"sync"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/layout"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
	"polypledger/store"
)

// listPageSize is how many procedures one query of the case list reads.
const listPageSize = 100

// listPagesKept is how many pages the case list keeps; the rest are read
// again when scrolled back to, so memory stays small on any database.
const listPagesKept = 12

// listColumn is one column of the case list.
type listColumn struct {
	title string
	sort  string // store.ListQuery.SortBy, "" when not sortable
	width float32
	text  func(r *store.ProcedureRow) string
}

var listColumns = []listColumn{
	{"Date", "performed_on", 100, func(r *store.ProcedureRow) string { return logbook.FormatDate(r.Procedure.PerformedOn) }},
	{"Case", "id", 110, func(r *store.ProcedureRow) string { return r.Procedure.ID }},
	{"Endoscopist", "operator_id", 110, func(r *store.ProcedureRow) string { return r.Procedure.OperatorID }},
	{"Trainee", "", 80, func(r *store.ProcedureRow) string { return r.Procedure.TraineeID }},
	{"Patient", "", 130, func(r *store.ProcedureRow) string { return logbook.ShortCode(r.Procedure.PatientKey) }},
	{"Age", "age", 55, func(r *store.ProcedureRow) string { return logbook.FormatCount(r.Procedure.Age) }},
	{"Sex", "", 45, func(r *store.ProcedureRow) string { return string(r.Procedure.Sex) }},
	{"Reason", "indication", 220, func(r *store.ProcedureRow) string { return indicationWords[r.Procedure.Indication] }},
	{"Reached", "extent", 170, func(r *store.ProcedureRow) string { return extentWords[r.Procedure.Extent] }},
	{"Withdrawal", "", 90, func(r *store.ProcedureRow) string { return logbook.FormatMinSec(r.Procedure.WithdrawalSeconds) }},
	{"Boston", "", 65, func(r *store.ProcedureRow) string {
		if !r.Procedure.BBPSRecorded() {
			return ""
		}
		return fmt.Sprint(r.Procedure.BBPSTotal())
	}},
	{"Lesions", "", 65, func(r *store.ProcedureRow) string { return fmt.Sprint(r.Lesions) }},
	{"Histology awaited", "", 150, func(r *store.ProcedureRow) string {
		if r.AwaitingHist == 0 {
			return ""
		}
		return fmt.Sprintf("%d lesion(s)", r.AwaitingHist)
	}},
}

// caseList is the "Cases" screen: every procedure in a table that reads one
// page at a time, with filters and sortable columns.
type caseList struct {
	u *ui

	from, to    *entry
	operator    *keySelect
	operatorIDs []string
	indication  *choice[logbook.Indication]
	pending     *widget.Check
	countLabel  *widget.Label
	hint        *widget.Label
	table       *widget.Table
	content     fyne.CanvasObject

	mu    sync.Mutex // guards query, pages, shown, loading, gen and count
	query store.ListQuery
	pages map[int][]store.ProcedureRow
	// shown are the pages read before the last change of records, kept
	// on screen until each is read again (see refresh).
	shown   map[int][]store.ProcedureRow
	loading map[int]bool
	gen     int
	count   int
}

func newCaseList(u *ui) *caseList {
	l := &caseList{u: u, pages: map[int][]store.ProcedureRow{}, loading: map[int]bool{}}
	l.query.SortBy, l.query.Descending = "performed_on", true
	apply := func() { l.applyFilters() }
	l.from = submitEntry("from YYYY-MM-DD", apply, nil)
	l.to = submitEntry("to YYYY-MM-DD", apply, nil)
	l.operator = newKeySelect(nil, func(string) { apply() })
	l.indication = newChoice(logbook.Indications, indicationWords, false, apply)
	l.indication.PlaceHolder = "any reason"
	clearReason := newButton("Any reason", func() { l.indication.ClearSelected(); apply() })
	l.pending = widget.NewCheck("Only cases awaiting histology", func(bool) { apply() })
	l.countLabel = widget.NewLabel("")
	l.refreshRoster()
	u.name(l.operator, "Endoscopist")
	u.name(l.indication, "Reason")

	l.table = widget.NewTableWithHeaders(
		func() (int, int) {
			l.mu.Lock()
			defer l.mu.Unlock()
			return l.count, len(listColumns)
		},
		func() fyne.CanvasObject {
			t := widget.NewLabel("")
			t.Truncation = fyne.TextTruncateEllipsis
			return t
		},
		func(id widget.TableCellID, o fyne.CanvasObject) { o.(*widget.Label).SetText(l.cellText(id)) })
	l.table.ShowHeaderColumn = false
	l.table.CreateHeader = func() fyne.CanvasObject { return widget.NewButton("", nil) }
	l.table.UpdateHeader = func(id widget.TableCellID, o fyne.CanvasObject) {
		b := o.(*widget.Button)
		if id.Col < 0 || id.Col >= len(listColumns) {
			return
		}
		c := listColumns[id.Col]
		b.SetText(l.headerText(c))
		b.OnTapped = func() { l.sortBy(c.sort) }
		if c.sort == "" {
			b.Disable()
		} else {
			b.Enable()
		}
	}
	for i, c := range listColumns {
		l.table.SetColumnWidth(i, c.width)
	}
	l.table.OnSelected = func(id widget.TableCellID) {
		l.table.UnselectAll()
		if r, ok := l.rowAt(id.Row); ok {
			l.open(r.Procedure.ID)
		}
	}
	help := widget.NewLabel("Click a case to open it; click a column title to sort.")
	l.hint = widget.NewLabel("")
	l.hint.Wrapping = fyne.TextWrapWord
	l.hint.Alignment = fyne.TextAlignCenter
	l.hint.Hide()
	filters := container.NewVBox(
		container.NewHBox(widget.NewLabel("Period"), sized(l.from, 130), sized(l.to, 130),
			widget.NewLabel("Endoscopist"), sized(l.operator, 240)),
		container.NewHBox(widget.NewLabel("Reason"), sized(l.indication, 240), clearReason, l.pending),
		container.NewHBox(l.countLabel, help))
	l.content = container.NewBorder(filters, nil, nil, nil,
		container.NewStack(l.table, container.NewVBox(layout.NewSpacer(), l.hint, layout.NewSpacer())))
	return l
}

func (l *caseList) headerText(c listColumn) string {
	l.mu.Lock()
	q := l.query
	l.mu.Unlock()
	if c.sort != "" && c.sort == q.SortBy {
		if q.Descending {
			return c.title + " ▼"
		}
		return c.title + " ▲"
	}
	return c.title
}

// refreshRoster offers the roster's endoscopists and trainees as filters.
func (l *caseList) refreshRoster() {
	opts := []string{"Everyone"}
	l.operatorIDs = []string{""}
	for _, r := range l.u.roster {
		if r.Role == logbook.RoleEndoscopist {
			opts = append(opts, l.u.rosterLabel(r.ID))
			l.operatorIDs = append(l.operatorIDs, r.ID)
		}
	}
	sel := l.operator.SelectedIndex()
	l.operator.Options = opts
	if sel < 0 || sel >= len(opts) {
		sel = 0
	}
	l.operator.SetSelectedIndex(sel)
}

// applyFilters reads the filter widgets into the query; bad dates are
// pointed out and not applied.
func (l *caseList) applyFilters() {
	if l.countLabel == nil || l.table == nil {
		return
	}
	from, err1 := logbook.ParseDate(strings.TrimSpace(l.from.Text))
	to, err2 := logbook.ParseDate(strings.TrimSpace(l.to.Text))
	if err1 != nil || err2 != nil {
		l.countLabel.SetText("Dates are written YYYY-MM-DD.")
		return
	}
	l.mu.Lock()
	q := l.query
	q.From, q.To = from, to
	q.OperatorID = ""
	if i := l.operator.SelectedIndex(); i > 0 && i < len(l.operatorIDs) {
		q.OperatorID = l.operatorIDs[i]
	}
	q.Indication = l.indication.Value()
	q.HistologyPending = l.pending.Checked
	l.query = q
	l.mu.Unlock()
	l.invalidate()
	l.reload()
}

func (l *caseList) sortBy(col string) {
	if col == "" {
		return
	}
	l.mu.Lock()
	if l.query.SortBy == col {
		l.query.Descending = !l.query.Descending
	} else {
		l.query.SortBy, l.query.Descending = col, false
	}
	l.mu.Unlock()
	l.invalidate()
	l.reload()
}

// invalidate forgets every page read so far: the list now selects or
// orders other cases.
func (l *caseList) invalidate() {
	l.mu.Lock()
	l.gen++
	l.pages, l.shown = map[int][]store.ProcedureRow{}, nil
	l.loading = map[int]bool{}
	l.mu.Unlock()
}

// refresh reads every page again after records changed (stored here or by
// a colleague), keeping the rows read before on screen until their page
// has been read again, so the list does not blank while it is read — a
// page deep in a long list on a server can take a fifth of a second just
// after a change.
func (l *caseList) refresh() {
	l.mu.Lock()
	l.gen++
	if l.shown == nil {
		l.shown = map[int][]store.ProcedureRow{}
	}
	for k, rows := range l.pages {
		l.shown[k] = rows
	}
	// At most listPagesKept, the pages just read kept first.
	for k := range l.shown {
		if len(l.shown) <= listPagesKept {
			break
		}
		if _, read := l.pages[k]; !read {
			delete(l.shown, k)
		}
	}
	l.pages = map[int][]store.ProcedureRow{}
	l.loading = map[int]bool{}
	l.mu.Unlock()
}

// reload counts the selected procedures again and redraws the table.
func (l *caseList) reload() {
	l.mu.Lock()
	q, gen := l.query, l.gen
	l.mu.Unlock()
	var n int
	l.u.jobs.background(func() (err error) {
		n, err = l.u.st.CountProcedures(l.u.ctx, q)
		return err
	}, func(err error) {
		if err != nil {
			l.countLabel.SetText("The list could not be read: " + err.Error())
			return
		}
		l.mu.Lock()
		if gen != l.gen {
			l.mu.Unlock()
			return
		}
		l.count = n
		filtered := !q.From.IsZero() || !q.To.IsZero() || q.OperatorID != "" || q.Indication != "" || q.HistologyPending
		l.mu.Unlock()
		l.countLabel.SetText(countOf(n, "case", "cases") + ".")
		switch {
		case n > 0:
			l.hint.Hide()
		case filtered:
			l.hint.SetText("No case matches these filters. Clear the dates, choose Everyone or Any reason to see more.")
			l.hint.Show()
		default:
			l.hint.SetText("No cases yet. Enter one under Enter a case (Alt+2), or import a file of procedures " +
				"(File ▸ Import records from a CSV file, Ctrl+I).")
			l.hint.Show()
		}
		l.table.Refresh()
	})
}

// rowAt returns row i if its page has been read.
func (l *caseList) rowAt(i int) (store.ProcedureRow, bool) {
	r, _, ok := l.rowShown(i)
	return r, ok
}

// rowShown returns row i as read since the last change (current), or as
// read before it while its page is read again, if either.
func (l *caseList) rowShown(i int) (r store.ProcedureRow, current, ok bool) {
	l.mu.Lock()
	defer l.mu.Unlock()
	k := i % listPageSize
	if p, read := l.pages[i/listPageSize]; read {
		if k < len(p) {
			return p[k], true, true
		}
		return store.ProcedureRow{}, true, false
	}
	if p := l.shown[i/listPageSize]; k < len(p) {
		return p[k], false, true
	}
	return store.ProcedureRow{}, false, false
}

// cellText returns a cell's text, asking for its page when not yet read.
func (l *caseList) cellText(id widget.TableCellID) string {
	r, current, ok := l.rowShown(id.Row)
	if !current {
		l.request(id.Row / listPageSize)
	}
	if !ok {
		return "…"
	}
	return listColumns[id.Col].text(&r)
}

// request reads a page in the background, once.
func (l *caseList) request(page int) {
	l.mu.Lock()
	if l.loading[page] {
		l.mu.Unlock()
		return
	}
	l.loading[page] = true
	q, gen := l.query, l.gen
	l.mu.Unlock()
	q.Limit, q.Offset = listPageSize, page*listPageSize
	var rows []store.ProcedureRow
	l.u.jobs.background(func() (err error) {
		rows, err = l.u.st.ListProcedures(l.u.ctx, q)
		return err
	}, func(err error) {
		l.mu.Lock()
		if gen != l.gen {
			l.mu.Unlock()
			return
		}
		if err != nil {
			delete(l.loading, page)
			l.mu.Unlock()
			l.countLabel.SetText("The list could not be read: " + err.Error())
			return
		}
		l.pages[page] = rows
		delete(l.shown, page)
		for len(l.pages) > listPagesKept {
			far, dist := -1, -1
			for k := range l.pages {
				if d := abs(k - page); d > dist {
					far, dist = k, d
				}
			}
			delete(l.pages, far)
			delete(l.loading, far)
		}
		l.mu.Unlock()
		l.table.Refresh()
	})
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// open loads a case into the entry screen.
func (l *caseList) open(id string) {
	c, err := l.u.st.Case(l.u.ctx, id)
	if err != nil {
		dialog.ShowError(err, l.u.win)
		return
	}
	l.u.form.edit(c)
	l.u.tabs.SelectIndex(1)
}

// visibleIDs returns the procedure ids of the rows read so far, in order
// (tests).
func (l *caseList) visibleIDs() []string {
	l.mu.Lock()
	defer l.mu.Unlock()
	var ids []string
	for p := 0; ; p++ {
		rows, ok := l.pages[p]
		if !ok {
			return ids
		}
		for _, r := range rows {
			ids = append(ids, r.Procedure.ID)
		}
	}
}
