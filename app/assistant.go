package app

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"polypledger/logbook"
	"polypledger/recipe"
	"polypledger/sheet"
	"polypledger/store"
	"polypledger/workspace"
)

// The import assistant takes any records file: one of our own (CSV or
// workbook) is imported as it is; another system's is mapped onto our
// records through a recipe — a saved one that fits the file's columns, or
// one proposed from the file — shown as our field ← source column and
// source value → our code, each with a picker, then previewed row by row
// with the problems found, saved under a name in the recipes folder and
// imported with progress, all or nothing.

// Limits of what the assistant reads to show a file.
const (
	// previewRows is how many of the file's first rows the preview shows.
	previewRows = 20
	// surveyRows and surveyValues bound the values offered for mapping:
	// the different values of each column in the first surveyRows rows.
	surveyRows   = 5000
	surveyValues = 60
)

// Words of the pickers.
const (
	notInFile       = "(not in the file)"
	notRecordedCode = "(not recorded)"
	isoDates        = "YYYY-MM-DD (ISO 8601)"
)

// dateFormats are the date forms offered; a recipe's other form is added.
var dateFormats = []string{isoDates, "DD/MM/YYYY", "MM/DD/YYYY", "DD.MM.YYYY", "DD-MM-YYYY", "DD-MMM-YYYY", "DD MMM YYYY"}

// shapeWords say what each row of a file of each shape holds.
var shapeWords = map[recipe.Shape]string{
	recipe.ShapeProcedures: "One procedure a row",
	recipe.ShapeLesions:    "One lesion a row",
	recipe.ShapeHistology:  "One histology result a row",
	recipe.ShapeCombined:   "One lesion a row, its procedure's columns repeated",
	recipe.ShapeWide:       "One procedure a row, its polyps side by side",
}

// assistant is one run of the import assistant.
type assistant struct {
	u    *ui
	d    dialog.Dialog
	body *fyne.Container
	// step 1: the file
	path  *entry
	sheet *keySelect
	note  *widget.Label
	// what the file holds
	file    string
	sheets  []string
	own     store.Kind // a file of ours: its kind
	ownAll  bool       // a workbook of ours with a sheet per kind
	columns []recipe.SourceColumn
	// the mapping
	rcp      *recipe.Recipe // being edited; loads when problems is empty
	problems []string       // why the recipe does not load
	savedAt  string         // the saved recipe it came from
	drafted  bool
	name     *entry
	update   *widget.Check
	scroll   *container.Scroll
	// pageNames are the pickers of the mapping page named for the layout
	// file.
	pageNames []fyne.CanvasObject
	// done, when set, is called after an import (tests).
	done func(workspace.ImportReport, error)
}

// chooseImport opens the import assistant.
func (u *ui) chooseImport() { u.openAssistant() }

// openAssistant opens the import assistant on its first step.
func (u *ui) openAssistant() *assistant {
	a := &assistant{u: u}
	a.path = newEntry("a CSV file or an .xlsx workbook")
	a.path.OnSubmitted = func(string) { a.read() }
	a.sheet = newKeySelect(nil, func(string) { a.read() })
	a.note = widget.NewLabel("")
	a.note.Wrapping = fyne.TextWrapWord
	a.name = newEntry("a name for this source's files")
	a.update = widget.NewCheck("Records already stored may be replaced by the file's", nil)
	u.name(a.path, "File")
	u.name(a.sheet, "Sheet")
	u.name(a.name, "Recipe name")
	a.body = container.NewStack()
	a.d = dialog.NewCustomWithoutButtons("Import records from a file", a.body, u.win)
	a.d.SetOnClosed(func() {
		for _, o := range append([]fyne.CanvasObject{a.path, a.sheet, a.name}, a.pageNames...) {
			delete(u.names, o)
		}
	})
	a.showFile()
	size := u.win.Canvas().Size()
	a.d.Resize(fyne.NewSize(min(900, size.Width-40), min(600, size.Height-100)))
	a.d.Show()
	u.win.Canvas().Focus(a.path)
	return a
}

// page shows one step: its content above a row of buttons.
func (a *assistant) page(content fyne.CanvasObject, buttons ...fyne.CanvasObject) {
	row := container.NewHBox(append([]fyne.CanvasObject{a.closeButton()}, buttons...)...)
	a.body.Objects = []fyne.CanvasObject{container.NewBorder(nil, container.NewBorder(nil, nil, nil, row), nil, nil, content)}
	a.body.Refresh()
}

func (a *assistant) closeButton() fyne.CanvasObject {
	return newButton("Cancel", a.d.Hide)
}

// showFile is the first step: which file, and which sheet of a workbook.
func (a *assistant) showFile() {
	pick := newButton("Choose…", func() {
		a.u.openFile([]string{".csv", ".xlsx"}, func(path string) {
			a.path.SetText(path)
			a.sheets = nil
			a.read()
		})
	})
	help := widget.NewLabel("Choose a file of records: one exported by this program (imported as it is), " +
		"or another system's — a unit's spreadsheet, a reporting system's export, a laboratory's results — " +
		"which is mapped onto our records once, and the mapping kept for the next file from the same source. " +
		"Nothing is stored until the last step, and then the whole file or nothing.")
	help.Wrapping = fyne.TextWrapWord
	form := widget.NewForm(widget.NewFormItem("File", container.NewBorder(nil, nil, nil, pick, a.path)))
	if len(a.sheets) > 1 {
		form.Append("Sheet", a.sheet)
	}
	read := newButton("Read the file", a.read)
	read.Importance = widget.HighImportance
	a.page(container.NewVBox(help, form, a.note), read)
}

// read reads the chosen file off the UI thread: its sheets and header, and
// whether it is a file of ours; otherwise the recipe that fits it (a saved
// one, or one proposed from it) and its columns' values.
func (a *assistant) read() {
	path := strings.TrimSpace(a.path.Text)
	if path == "" {
		a.note.SetText("Choose a file first.")
		return
	}
	if path != a.file {
		a.sheets = nil
	}
	sheetName := ""
	if len(a.sheets) > 1 {
		sheetName = a.sheet.Selected
	}
	a.note.SetText("Reading " + filepath.Base(path) + "…")
	var (
		sheets   []string
		own      store.Kind
		isOwn    bool
		ownAll   bool
		rcp      *recipe.Recipe
		savedAt  string
		drafted  bool
		surveyed []recipe.SourceColumn
	)
	a.u.jobs.background(func() error {
		t, err := sheet.OpenFile(path, sheet.Options{Sheet: sheetName})
		if err != nil {
			return err
		}
		sheets = t.Sheets()
		own, isOwn = workspace.OwnKind(t.Header())
		t.Close()
		if isOwn {
			ownAll = sheetName == "" && len(sheets) > 1 && slices.Contains(sheets, string(own))
			return nil
		}
		if saved, ok := workspace.RecipeFor(path, sheetName); ok {
			rcp, savedAt = saved.Recipe, saved.Path
		} else {
			text, err := recipe.DraftFile(path, sheetName)
			if err != nil {
				return err
			}
			if rcp, err = recipe.Parse(filepath.Base(path), []byte(text)); err != nil {
				return err
			}
			drafted = true
		}
		surveyed, err = surveyFile(path, rcp, sheetName)
		return err
	}, func(err error) {
		if err != nil {
			a.note.SetText("The file cannot be read: " + err.Error())
			return
		}
		a.file, a.sheets = path, sheets
		a.sheet.Options = sheets
		if sheetName == "" && len(sheets) > 0 {
			a.sheet.Selected = sheets[0]
		}
		a.sheet.Refresh()
		a.note.SetText("")
		if isOwn {
			a.own, a.ownAll = own, ownAll
			a.showOwn()
			return
		}
		a.own = ""
		a.rcp, a.savedAt, a.drafted, a.columns = rcp, savedAt, drafted, surveyed
		if len(sheets) > 1 && rcp.Sheet == "" {
			rcp.Sheet = a.sheet.Selected
		}
		a.problems = nil
		a.name.SetText(rcp.Name)
		a.showMapping()
	})
}

// surveyFile reads the different values of each column of a file, as the
// recipe reads the file (its sheet and header row).
func surveyFile(path string, r *recipe.Recipe, sheetName string) ([]recipe.SourceColumn, error) {
	opt := r.Options()
	if sheetName != "" {
		opt.Sheet = sheetName
	}
	t, err := sheet.OpenFile(path, opt)
	if err != nil {
		return nil, err
	}
	defer t.Close()
	return recipe.Survey(t, surveyRows, surveyValues)
}

// showOwn is the step for a file of ours: it is imported as it is.
func (a *assistant) showOwn() {
	what := fmt.Sprintf("%s is a %s file of this program's own, with every column named as the README lists them. It is imported as it is.", filepath.Base(a.file), a.own)
	if a.ownAll {
		what = fmt.Sprintf("%s is a workbook of this program's own, a sheet for each kind of record. Its sheets named procedures, lesions and histology are imported as they are, in one go.", filepath.Base(a.file))
	}
	text := widget.NewLabel(what)
	text.Wrapping = fyne.TextWrapWord
	a.update.OnChanged = nil
	back := newButton("Back", a.showFile)
	imp := newButton("Import", func() {
		req := workspace.ImportRequest{Path: a.file, Kind: a.own, Update: a.update.Checked}
		if sheet.FormatOf(a.file) == sheet.XLSX {
			if a.ownAll {
				req.Kind = ""
			} else if len(a.sheets) > 1 {
				req.Sheet = a.sheet.Selected
			}
		}
		a.d.Hide()
		a.u.runImport(req, a.done)
	})
	imp.Importance = widget.HighImportance
	a.page(container.NewVBox(text, a.update), back, imp)
}

// changed reads the edited recipe back and shows the mapping again.
func (a *assistant) changed() {
	a.reparse()
	a.showMapping()
}

// ready reads the edited recipe back and reports whether it loads; when it
// does not, the mapping is shown again with its problems.
func (a *assistant) ready() bool {
	a.reparse()
	if len(a.problems) > 0 {
		a.showMapping()
		return false
	}
	return true
}

// reparse reads the edited recipe back, as it will be saved; its problems,
// if any, are shown and keep the next steps closed.
func (a *assistant) reparse() {
	a.rcp.Name = strings.TrimSpace(a.name.Text)
	r, err := recipe.Parse(a.rcp.File, []byte(a.rcp.Text()))
	a.problems = nil
	var le *recipe.LoadError
	switch {
	case errors.As(err, &le):
		a.problems = le.Problems
	case err != nil:
		a.problems = []string{err.Error()}
	default:
		a.rcp = r
	}
}

// showMapping is the second step: the recipe's choices, our field ← source
// column, and source value → our code, each with a picker. It is built
// again after every change, at the same scroll position.
func (a *assistant) showMapping() {
	a.update.OnChanged = nil
	var offset fyne.Position
	if a.scroll != nil {
		offset = a.scroll.Offset
	}
	sections, layout := newColumns(420, a.columnPickers(), a.valuePickers())
	a.scroll = container.NewVScroll(container.NewVBox(append(a.mappingIntro(), a.mappingSettings(), sections)...))
	layout.onChange = a.scroll.Refresh
	a.scroll.Offset = offset
	next := newButton("Preview…", a.preview)
	next.Importance = widget.HighImportance
	if len(a.problems) > 0 {
		next.Disable()
	}
	a.page(a.scroll, newButton("Back", a.showFile), next)
	a.scroll.Refresh()
}

// mappingIntro says where the mapping came from, and why the recipe cannot
// be used yet.
func (a *assistant) mappingIntro() []fyne.CanvasObject {
	intro := "Proposed from the file's columns and values: check each line, and choose where a picker is empty."
	switch {
	case a.savedAt != "":
		intro = fmt.Sprintf("The saved recipe %q fits this file's columns (%s). Check it, or start from a proposal.", a.rcp.Name, a.savedAt)
	case !a.drafted:
		intro = "Check each line, and choose where a picker is empty."
	}
	head := widget.NewLabel(intro)
	head.Wrapping = fyne.TextWrapWord
	out := []fyne.CanvasObject{head}
	if a.savedAt != "" {
		out = append(out, container.NewHBox(newButton("Start from a proposal instead", a.redraft)))
	}
	if len(a.problems) > 0 {
		p := widget.NewLabel("The recipe cannot be used yet:\n" + strings.Join(a.problems, "\n"))
		p.Wrapping = fyne.TextWrapWord
		p.Importance = widget.DangerImportance
		out = append(out, p)
	}
	return out
}

// named records the name of a picker of the mapping page for the layout
// file; the names of the page before are forgotten when it is built again.
func (a *assistant) named(o fyne.CanvasObject, name string) {
	a.u.name(o, name)
	a.pageNames = append(a.pageNames, o)
}

// mappingSettings are the recipe's choices for the whole file: its name,
// what each row holds, the date form, the lesion slots of a wide file and
// the withdrawal time's unit.
func (a *assistant) mappingSettings() fyne.CanvasObject {
	r := a.rcp
	for _, o := range a.pageNames {
		delete(a.u.names, o)
	}
	a.pageNames = nil
	shapes := make([]string, len(recipe.Shapes))
	for i, s := range recipe.Shapes {
		shapes[i] = shapeWords[s]
	}
	kind := newKeySelect(shapes, nil)
	kind.SetSelected(shapeWords[r.Shape])
	kind.OnChanged = func(string) { a.setShape(recipe.Shapes[kind.SelectedIndex()]) }
	a.named(kind, "Each row holds")
	dates := slices.Clone(dateFormats)
	if r.DateFormat != "" && !slices.Contains(dates, r.DateFormat) {
		dates = append(dates, r.DateFormat)
	}
	date := newKeySelect(dates, nil)
	date.SetSelected(cmp.Or(r.DateFormat, isoDates))
	date.OnChanged = func(s string) {
		a.rcp.DateFormat = s
		if s == isoDates {
			a.rcp.DateFormat = ""
		}
		a.changed()
	}
	a.named(date, "Dates in the file")
	settings := widget.NewForm(
		widget.NewFormItem("Recipe name", a.name),
		widget.NewFormItem("Each row holds", kind),
		widget.NewFormItem("Dates in the file", date),
	)
	a.name.OnSubmitted = func(string) { a.changed() }
	if r.Shape == recipe.ShapeWide {
		var slots []string
		for n := 1; n <= 10; n++ {
			slots = append(slots, strconv.Itoa(n))
		}
		sl := newKeySelect(slots, nil)
		sl.SetSelected(strconv.Itoa(r.Slots))
		sl.OnChanged = func(s string) { a.rcp.Slots, _ = strconv.Atoi(s); a.changed() }
		settings.Append("Polyps a row can hold", sl)
	}
	if slices.Contains(r.Shape.Kinds(), recipe.Procedures) {
		unit := newKeySelect([]string{"seconds", "minutes (8.5 or 8:30)"}, nil)
		if r.WithdrawalMinutes {
			unit.SetSelectedIndex(1)
		} else {
			unit.SetSelectedIndex(0)
		}
		unit.OnChanged = func(string) { a.rcp.WithdrawalMinutes = unit.SelectedIndex() == 1; a.changed() }
		settings.Append("Withdrawal time in", unit)
	}
	return settings
}

// columnPickers lists our fields, each with the file's column it is read
// from.
func (a *assistant) columnPickers() fyne.CanvasObject {
	r := a.rcp
	grid := container.NewGridWithColumns(2)
	headers, templates := a.headerChoices(false), a.headerChoices(true)
	for _, f := range r.Shape.Fields() {
		options := headers
		if r.Shape == recipe.ShapeWide && recipe.LesionOnly(f.Name) {
			options = templates
		}
		pick := newKeySelect(append([]string{notInFile}, options...), nil)
		if h, ok := r.Columns[f.Name]; ok {
			if !slices.Contains(pick.Options, h) {
				pick.Options = append(pick.Options, h)
			}
			pick.SetSelected(h)
		} else {
			pick.SetSelected(notInFile)
		}
		pick.OnChanged = func(h string) {
			if h == notInFile {
				delete(a.rcp.Columns, f.Name)
			} else {
				a.rcp.Columns[f.Name] = h
			}
			a.changed()
		}
		label := widget.NewLabel(f.Name)
		label.TextStyle.Monospace = true
		grid.Add(label)
		grid.Add(pick)
	}
	return container.NewVBox(heading("Our field ← the file's column"), grid)
}

// valuePickers lists, for each mapped field of codes or yes/no answers,
// the values its column holds, each with our code.
func (a *assistant) valuePickers() fyne.CanvasObject {
	r := a.rcp
	values := container.NewVBox(heading("The file's value → our code"))
	shown := 0
	for _, f := range r.Shape.Fields() {
		h, ok := r.Columns[f.Name]
		if !ok || f.Type != recipe.Code && f.Type != recipe.YesNo {
			continue
		}
		vals, many := a.valuesOf(h, r.Shape == recipe.ShapeWide && recipe.LesionOnly(f.Name))
		if len(vals) == 0 && !many {
			continue
		}
		shown++
		title := widget.NewLabel(fmt.Sprintf("%s (column %q)", f.Name, h))
		title.TextStyle.Bold = true
		values.Add(title)
		if many {
			l := widget.NewLabel(fmt.Sprintf("The column holds more than %d different values: it is not a column of codes. Map it to another field, or write its values in the recipe file.", surveyValues))
			l.Wrapping = fyne.TextWrapWord
			values.Add(l)
		}
		grid := container.NewGridWithColumns(2)
		for _, v := range vals {
			grid.Add(widget.NewLabel(shownValue(v)))
			grid.Add(a.valuePicker(f, v))
		}
		values.Add(grid)
	}
	if shown == 0 {
		values.Add(widget.NewLabel("No column of codes or yes/no answers is mapped yet."))
	}
	return values
}

// slotDigits finds a lesion's number in a wide file's column header.
var slotDigits = regexp.MustCompile(`\d+`)

// headerChoices lists the file's columns, or for lesion fields of a wide
// file the column names with the lesion's number replaced by {n}.
func (a *assistant) headerChoices(templates bool) []string {
	var out []string
	for _, c := range a.columns {
		h := c.Header
		if h == "" {
			continue
		}
		if templates {
			loc := slotDigits.FindStringIndex(h)
			if loc == nil {
				continue
			}
			h = h[:loc[0]] + recipe.SlotMark + h[loc[1]:]
		}
		if !slices.Contains(out, h) {
			out = append(out, h)
		}
	}
	return out
}

// valuesOf returns the different values of a column (of every slot's column
// for a wide file's template), and whether it holds too many to be codes.
func (a *assistant) valuesOf(header string, template bool) (vals []string, many bool) {
	seen := map[string]bool{}
	for _, c := range a.columns {
		match := recipe.Fold(c.Header) == recipe.Fold(header)
		if template {
			if loc := slotDigits.FindStringIndex(c.Header); loc != nil {
				match = recipe.Fold(c.Header[:loc[0]]+recipe.SlotMark+c.Header[loc[1]:]) == recipe.Fold(header)
			}
		}
		if !match {
			continue
		}
		many = many || c.Many
		for _, v := range c.Values {
			if !seen[recipe.Fold(v)] {
				seen[recipe.Fold(v)] = true
				vals = append(vals, v)
			}
		}
	}
	return vals, many
}

// shownValue shows a source value on screen, as messages quote values: a
// value that may be a hospital number is not shown.
func shownValue(v string) string { return logbook.QuoteValue(v) }

// valuePicker is the picker of our value for one source value of a field:
// our codes (yes, no, not applicable for a yes/no field) or not recorded.
// It shows what the recipe makes of the value now; empty when the recipe
// does not map it.
func (a *assistant) valuePicker(f recipe.Field, v string) fyne.CanvasObject {
	options := append([]string(nil), f.Codes...)
	if f.Type == recipe.YesNo {
		options = []string{"yes", "no"}
		if f.NA {
			options = append(options, "not_applicable")
		}
	}
	options = append(options, notRecordedCode)
	pick := newKeySelect(options, nil)
	if ours, ok := a.ourValue(f, v); ok {
		pick.SetSelected(cmp.Or(ours, notRecordedCode))
	}
	pick.OnChanged = func(s string) {
		ours := s
		if s == notRecordedCode {
			ours = ""
		}
		if f.Type == recipe.YesNo && ours != "" {
			a.rcp.RemoveValue(f.Name, v)
			a.rcp.SetYesNo(v, ours) // the file's yes/no words hold for all its yes/no columns
		} else {
			a.rcp.SetValue(f.Name, v, ours)
		}
		a.changed()
	}
	return pick
}

// ourValue returns what the recipe makes of a source value of a field, and
// whether it maps the value at all.
func (a *assistant) ourValue(f recipe.Field, v string) (string, bool) {
	k := recipe.Fold(v)
	for _, p := range a.rcp.ValueList(f.Name) {
		if recipe.Fold(p.Source) == k {
			return p.Ours, true
		}
	}
	switch f.Type {
	case recipe.Code:
		for _, c := range f.Codes {
			if recipe.Fold(c) == k {
				return c, true
			}
		}
	case recipe.YesNo:
		for _, answer := range []string{"yes", "no", "not_applicable"} {
			for _, w := range a.rcp.YesNoWords(answer) {
				if recipe.Fold(w) == k && (answer != "not_applicable" || f.NA) {
					return answer, true
				}
			}
		}
		switch k {
		case "yes", "no":
			return k, true
		case "not_applicable", "n/a", "na":
			if f.NA {
				return "not_applicable", true
			}
		}
	}
	return "", false
}

// setShape changes what each row holds, keeping the columns the new shape
// has.
func (a *assistant) setShape(s recipe.Shape) {
	r := a.rcp
	if s == r.Shape {
		return
	}
	keep := map[string]bool{}
	for _, f := range s.Fields() {
		keep[f.Name] = true
	}
	for f, h := range r.Columns {
		wideOnly := strings.Contains(h, recipe.SlotMark)
		if !keep[f] || wideOnly != (s == recipe.ShapeWide && recipe.LesionOnly(f)) {
			delete(r.Columns, f)
		}
	}
	r.Shape = s
	if s == recipe.ShapeWide && r.Slots == 0 {
		r.Slots = 3
	}
	if s != recipe.ShapeWide {
		r.Slots = 0
	}
	a.changed()
}

// redraft leaves the saved recipe and proposes one from the file.
func (a *assistant) redraft() {
	path, sheetName := a.file, a.rcp.Sheet
	var rcp *recipe.Recipe
	a.u.jobs.background(func() error {
		text, err := recipe.DraftFile(path, sheetName)
		if err != nil {
			return err
		}
		rcp, err = recipe.Parse(filepath.Base(path), []byte(text))
		return err
	}, func(err error) {
		if err != nil {
			dialog.ShowError(err, a.u.win)
			return
		}
		a.rcp, a.savedAt, a.drafted, a.problems = rcp, "", true, nil
		a.name.SetText(rcp.Name)
		a.showMapping()
	})
}

// preview is the third step: the file mapped through the recipe and
// checked as the import will check it (store nothing), off the UI thread;
// then its first rows with the records they give and every problem found
// on them, the rest of the problems, and what would be stored.
func (a *assistant) preview() {
	if !a.ready() {
		return
	}
	r := a.rcp
	req := workspace.ImportRequest{Path: a.file, Recipe: r, Update: a.update.Checked, Check: true}
	var (
		rows    []recipe.PreviewRow
		res     *recipe.Result
		rep     workspace.ImportReport
		refused *store.ImportError
	)
	a.u.jobs.run("Checking "+filepath.Base(a.file), func(ctx context.Context, report progressFunc) error {
		t, err := sheet.OpenFile(req.Path, r.Options())
		if err != nil {
			return err
		}
		rows, res, err = r.Preview(t, previewRows)
		t.Close()
		if err != nil {
			return err
		}
		req.Progress = func(n int, f float64) { report(f, fmt.Sprintf("%d rows checked", n)) }
		rep, err = workspace.ImportFile(ctx, a.u.st, req)
		if errors.As(err, &refused) {
			return nil
		}
		return err
	}, func(err error) {
		if err != nil {
			if !cancelled(err) {
				dialog.ShowError(fmt.Errorf("the file cannot be checked: %w", err), a.u.win)
			}
			a.showMapping()
			return
		}
		a.showPreview(rows, res, rep, refused)
	})
}

// showPreview shows what the check found (preview).
func (a *assistant) showPreview(rows []recipe.PreviewRow, res *recipe.Result, rep workspace.ImportReport, refused *store.ImportError) {
	var found []store.RowError
	more := 0
	if refused != nil {
		found, more = refused.Errors, refused.More
	}
	var stored []string
	clashing := 0
	for _, k := range recipe.Kinds {
		c := rep.Kinds[k]
		if n := c.New + c.Replacing; n > 0 {
			stored = append(stored, k.Count(n))
		}
		clashing += c.Clashing
	}
	summary := fmt.Sprintf("The whole file, %d rows, was read and checked: it gives %s", res.Rows, strings.Join(stored, " and "))
	if len(stored) == 0 {
		summary = fmt.Sprintf("The whole file, %d rows, was read and checked: it gives no records that pass", res.Rows)
	}
	if clashing > 0 {
		summary += fmt.Sprintf("; %d already in the logbook", clashing)
	}
	if total := len(found) + more; total == 0 {
		summary += ". No problem: it is ready to import."
	} else {
		summary += fmt.Sprintf(". %d problems, listed below with their rows, would refuse the whole file: go back and map what is missing, or correct the file.", total)
	}
	if len(rep.RosterAdded) > 0 {
		var ids []string
		for _, e := range rep.RosterAdded {
			ids = append(ids, e.ID)
		}
		summary += " New on the roster: " + strings.Join(ids, ", ") + "."
	}
	top := widget.NewLabel(summary)
	top.Wrapping = fyne.TextWrapWord
	list := container.NewVBox()
	problem := func(text string) {
		l := widget.NewLabel(text)
		l.Wrapping = fyne.TextWrapWord
		l.Importance = widget.DangerImportance
		list.Add(l)
	}
	for _, p := range found {
		if !previewed(rows, p.Line) {
			problem(p.String())
		}
	}
	if more > 0 {
		problem(fmt.Sprintf("… and %d more problems", more))
	}
	if len(res.Unused) > 0 {
		u := widget.NewLabel(fmt.Sprintf("Columns the recipe does not read: %s.", strings.Join(res.Unused, ", ")))
		u.Wrapping = fyne.TextWrapWord
		list.Add(u)
	}
	list.Add(heading(fmt.Sprintf("The first %d rows", len(rows))))
	for _, row := range rows {
		lines := container.NewVBox()
		for _, rec := range row.Records {
			l := widget.NewLabel(recordLine(rec))
			l.Wrapping = fyne.TextWrapWord
			lines.Add(l)
		}
		seen := map[string]bool{}
		shown := func(column, reason string) {
			text := column + ": " + reason
			if seen[text] {
				return
			}
			seen[text] = true
			l := widget.NewLabel(text)
			l.Wrapping = fyne.TextWrapWord
			l.Importance = widget.DangerImportance
			lines.Add(l)
		}
		for _, p := range row.Problems {
			shown(p.Column, p.Reason)
		}
		for _, p := range found {
			if p.Line == row.Line {
				shown(p.Column, p.Reason)
			}
		}
		list.Add(container.NewBorder(nil, nil, widget.NewLabel(fmt.Sprintf("Line %d", row.Line)), nil, lines))
	}
	note := widget.NewLabel("Importing saves the recipe under its name in the recipes folder, to be offered for the next file with these columns.")
	note.Wrapping = fyne.TextWrapWord
	imp := newButton("Save the recipe and import", a.importMapped)
	imp.Importance = widget.HighImportance
	if len(found)+more > 0 {
		imp.Disable()
	}
	if strings.TrimSpace(a.name.Text) == "" {
		a.name.SetText(strings.TrimSuffix(filepath.Base(a.file), filepath.Ext(a.file)))
	}
	a.update.OnChanged = func(bool) { a.preview() }
	form := widget.NewForm(widget.NewFormItem("Recipe name", a.name))
	scroll := container.NewVScroll(container.NewVBox(top, list))
	a.page(container.NewBorder(nil, container.NewVBox(form, a.update, note), nil, nil, scroll), newButton("Back", a.showMapping), imp)
}

// previewed reports whether a line is among the preview's rows.
func previewed(rows []recipe.PreviewRow, line int) bool {
	for _, r := range rows {
		if r.Line == line {
			return true
		}
	}
	return false
}

// recordLine shows a mapped record in a line: its kind and the values it
// holds in our form — codes, dates, numbers and the procedure and staff
// ids, which messages name as they are —, the patient reference left out.
func recordLine(rec recipe.Record) string {
	var parts []string
	for i, f := range recipe.Fields(rec.Kind) {
		if v := rec.Values[i]; v != "" && f.Type != recipe.Patient {
			parts = append(parts, f.Name+" "+v)
		}
	}
	word := map[recipe.Kind]string{recipe.Procedures: "Procedure", recipe.Lesions: "Lesion", recipe.Histology: "Result"}[rec.Kind]
	return word + ": " + strings.Join(parts, " · ")
}

// importMapped saves the recipe under its name and imports the file
// through it. A saved recipe of the same name, other than the one the
// mapping came from, is replaced only when the person says so.
func (a *assistant) importMapped() {
	if !a.ready() {
		return
	}
	r := a.rcp
	save := func(replace bool) {
		path, err := workspace.SaveRecipe(r, replace)
		if errors.Is(err, store.ErrExists) {
			dialog.ShowConfirm("Replace the saved recipe?",
				fmt.Sprintf("A recipe named %q is saved already (%s). Replace it with this one?", r.Name, path),
				func(yes bool) {
					if yes {
						a.savedAt = path
						a.importMapped()
					}
				}, a.u.win)
			return
		}
		if err != nil {
			dialog.ShowError(fmt.Errorf("the recipe was not saved, and nothing was imported: %w", err), a.u.win)
			return
		}
		a.d.Hide()
		a.u.runImport(workspace.ImportRequest{Path: a.file, Recipe: r, Update: a.update.Checked}, a.done)
	}
	dir, _ := workspace.RecipeDir()
	save(a.savedAt != "" && a.savedAt == filepath.Join(dir, workspace.RecipeFileName(r.Name)))
}
