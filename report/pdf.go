package report

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"
	"time"

	"github.com/jung-kurt/gofpdf"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/surveillance"
)

// ReportKind is which PDF report is written.
type ReportKind string

// Report kinds.
const (
	// UnitReport is the unit audit: every endoscopist by name and id.
	UnitReport ReportKind = "unit"
	// PersonalReport is one endoscopist's own report: everyone else appears
	// only as an anonymous peer.
	PersonalReport ReportKind = "personal"
	// TraineeReport is a trainee's logbook: cases by supervision level, the
	// learning curve and the trainee's own indicators.
	TraineeReport ReportKind = "trainee"
)

// ReportFonts are the TrueType bytes of the report's regular and bold
// faces; they must cover ≥, ±, µ and accented letters (the Go fonts do).
type ReportFonts struct {
	Regular, Bold []byte
}

// ReportInput is everything WritePDF prints: the computed figures and the
// context a reader needs to trust them.
type ReportInput struct {
	Kind      ReportKind
	UnitName  string
	Profile   *audit.Profile
	Guideline surveillance.Guideline
	Discard   audit.DiscardSettings
	// From and To are the period asked for, both days included.
	From, To time.Time
	// GeneratedOn is printed on the cover and stored as the PDF's creation
	// date, so that a report can be reproduced byte for byte.
	GeneratedOn time.Time
	// Names maps roster ids to staff names (staff names may be printed;
	// patient names never exist in the data).
	Names map[string]string
	// SubjectID is the endoscopist of a personal report or the trainee of a
	// trainee logbook.
	SubjectID string
	Data      audit.Figures
	Fonts     ReportFonts
}

// WritePDF writes the report to w. A personal report is stripped of every
// other operator's id before anything is drawn (see anonymise), so no
// other operator's id or name can reach the page. A period without
// procedures gives a short report that says so.
func WritePDF(w io.Writer, in ReportInput) error {
	if in.Profile == nil {
		return errors.New("write PDF report: no standard profile")
	}
	if len(in.Fonts.Regular) == 0 || len(in.Fonts.Bold) == 0 {
		return errors.New("write PDF report: no font")
	}
	switch in.Kind {
	case UnitReport:
	case PersonalReport, TraineeReport:
		if in.SubjectID == "" {
			return fmt.Errorf("write PDF report: a %s report needs the id of its subject", in.Kind)
		}
	default:
		return fmt.Errorf("write PDF report: unknown kind %q", in.Kind)
	}
	if in.Kind == PersonalReport {
		in = anonymise(in)
	}
	d := newDoc(in)
	switch in.Kind {
	case UnitReport:
		d.unitReport()
	case PersonalReport:
		d.personalReport()
	case TraineeReport:
		d.traineeReport()
	}
	d.methods()
	if err := d.pdf.Error(); err != nil {
		return fmt.Errorf("write PDF report: %w", err)
	}
	var buf bytes.Buffer
	if err := d.pdf.Output(&buf); err != nil {
		return fmt.Errorf("write PDF report: %w", err)
	}
	if _, err := w.Write(buf.Bytes()); err != nil {
		return fmt.Errorf("write PDF report: %w", err)
	}
	return nil
}

// Page geometry in millimetres (A4 portrait).
const (
	pageW        = 210.0
	pageH        = 297.0
	marginL      = 15.0
	marginR      = 15.0
	marginT      = 16.0
	footerSpace  = 20.0
	contentW     = pageW - marginL - marginR
	contentBotto = pageH - footerSpace
	rowH         = 4.3
)

// footerCaution is printed at the foot of every page.
func footerCaution() string {
	return "These figures support audit and appraisal. Surveillance intervals and eligibility figures are suggestions under the " +
		"named guideline for the responsible clinician to confirm; local policy decides. " + surveillance.NotDevice +
		" No patient identifiers: procedure ids and short codes only."
}

// doc is a report being laid out.
type doc struct {
	pdf    *gofpdf.Fpdf
	in     ReportInput
	title  string
	images int
	// sections are the contents entries: title and alias of its page
	// number.
	sections []section
	// contentsPage is the page reserved for the contents, 0 for none.
	contentsPage int
	// compact tightens tables so that the unit summary fits one page.
	compact bool
	// today is the civil date the report is made on; unfinished is true
	// when the period asked for is not over on it.
	today      time.Time
	unfinished bool
}

type section struct{ title, alias string }

func newDoc(in ReportInput) *doc {
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.SetMargins(marginL, marginT, marginR)
	pdf.SetAutoPageBreak(true, footerSpace)
	pdf.AddUTF8FontFromBytes("go", "", in.Fonts.Regular)
	pdf.AddUTF8FontFromBytes("go", "B", in.Fonts.Bold)
	pdf.AliasNbPages("{nb}")
	pdf.SetCreationDate(in.GeneratedOn)
	pdf.SetModificationDate(in.GeneratedOn)
	pdf.SetCreator("polypledger", true)
	d := &doc{pdf: pdf, in: in}
	if !in.GeneratedOn.IsZero() {
		d.today = logbook.Today(in.GeneratedOn)
		d.unfinished = audit.PeriodUnfinished(in.To, d.today)
	}
	switch in.Kind {
	case UnitReport:
		d.title = "Colonoscopy quality audit"
	case PersonalReport:
		d.title = "Personal colonoscopy audit"
	case TraineeReport:
		d.title = "Trainee colonoscopy logbook"
	}
	pdf.SetTitle(d.title+", "+in.UnitName, true)
	pdf.SetHeaderFuncMode(func() {
		if pdf.PageNo() == 1 {
			return
		}
		pdf.SetFont("go", "", 7)
		pdf.SetTextColor(110, 110, 110)
		pdf.SetXY(marginL, 8)
		pdf.CellFormat(contentW, 4, d.fit(in.UnitName+"  ·  "+d.title+"  ·  "+d.periodText(), contentW), "", 0, "L", false, 0, "")
		pdf.SetDrawColor(200, 200, 200)
		pdf.Line(marginL, 12.5, pageW-marginR, 12.5)
		pdf.SetTextColor(0, 0, 0)
		pdf.SetXY(marginL, marginT)
	}, false)
	pdf.SetFooterFunc(func() {
		pdf.SetDrawColor(200, 200, 200)
		pdf.Line(marginL, pageH-17, pageW-marginR, pageH-17)
		pdf.SetFont("go", "", 6.5)
		pdf.SetTextColor(80, 80, 80)
		pdf.SetXY(marginL, pageH-16)
		pdf.MultiCell(contentW-28, 2.9, footerCaution(), "", "L", false)
		pdf.SetXY(pageW-marginR-28, pageH-16)
		pdf.SetFont("go", "B", 7)
		pdf.CellFormat(28, 3, fmt.Sprintf("page %d of {nb}", pdf.PageNo()), "", 0, "R", false, 0, "")
		pdf.SetTextColor(0, 0, 0)
	})
	return d
}

// periodText is the period as printed.
func (d *doc) periodText() string {
	return formatDay(d.in.From) + " to " + formatDay(d.in.To)
}

// formatDay prints a date as "3 March 2026"; a zero date as "open".
func formatDay(t time.Time) string {
	if t.IsZero() {
		return "open"
	}
	return t.Format("2 January 2006")
}

// name returns "E03, Dr A Name" or the bare id.
func (d *doc) name(id string) string {
	if n := d.in.Names[id]; n != "" {
		return id + ", " + n
	}
	return id
}

// newPage starts a page; a title adds a heading, a bookmark and, with an
// alias, a contents entry.
func (d *doc) newPage(title string, contents bool) {
	d.pdf.AddPage()
	if title == "" {
		return
	}
	if contents {
		alias := fmt.Sprintf("{s%02d}", len(d.sections))
		d.sections = append(d.sections, section{title, alias})
		d.pdf.RegisterAlias(alias, fmt.Sprint(d.pdf.PageNo()))
	}
	d.pdf.Bookmark(title, 0, -1)
	d.heading(title)
}

// heading prints a section heading.
func (d *doc) heading(s string) {
	d.pdf.SetFont("go", "B", 14)
	d.pdf.SetX(marginL)
	d.pdf.MultiCell(contentW, 6.5, s, "", "L", false)
	d.pdf.Ln(1.5)
}

// subheading prints a heading within a section, starting a page when less
// than need millimetres remain.
func (d *doc) subheading(s string, need float64) {
	d.space(need + 8)
	d.pdf.Ln(1.5)
	d.pdf.SetFont("go", "B", 10.5)
	d.pdf.SetX(marginL)
	d.pdf.MultiCell(contentW, 5, s, "", "L", false)
	d.pdf.Ln(0.8)
}

// para prints a paragraph of body text.
func (d *doc) para(s string) {
	d.pdf.SetFont("go", "", 8.5)
	d.pdf.SetX(marginL)
	d.pdf.MultiCell(contentW, 3.9, s, "", "L", false)
	d.pdf.Ln(1.2)
}

// note prints small explanatory text.
func (d *doc) note(s string) { d.noteSized(s, 7.5, 3.4) }

// noteSized prints explanatory text in a font of size points with lines lh
// millimetres apart.
func (d *doc) noteSized(s string, size, lh float64) {
	d.pdf.SetFont("go", "", size)
	d.pdf.SetTextColor(60, 60, 60)
	d.pdf.SetX(marginL)
	d.pdf.MultiCell(contentW, lh, s, "", "L", false)
	d.pdf.SetTextColor(0, 0, 0)
	d.pdf.Ln(1)
}

// boxed prints text in a light frame, for cautions.
func (d *doc) boxed(s string) {
	d.pdf.SetFont("go", "", 8)
	d.pdf.SetFillColor(245, 245, 245)
	d.pdf.SetDrawColor(150, 150, 150)
	d.pdf.SetX(marginL)
	d.pdf.MultiCell(contentW, 3.8, s, "1", "L", true)
	d.pdf.Ln(2)
}

// space starts a new page when less than h millimetres remain.
func (d *doc) space(h float64) {
	if d.pdf.GetY()+h > contentBotto {
		d.pdf.AddPage()
	}
}

// fit trims s with an ellipsis so that it fits w millimetres in the current
// font.
func (d *doc) fit(s string, w float64) string {
	if d.pdf.GetStringWidth(s) <= w {
		return s
	}
	r := []rune(s)
	for len(r) > 1 && d.pdf.GetStringWidth(string(r)+"…") > w {
		r = r[:len(r)-1]
	}
	return string(r) + "…"
}

// column is one column of a table.
type column struct {
	title string
	width float64
	align string // "L", "R" or "C"
}

// Table row markers: a row whose first cell starts with groupMark is a
// group heading spanning the table; one whose first cell starts with
// rowNoteMark is a note in small type spanning the table under the row above.
const (
	groupMark   = "§"
	rowNoteMark = "¶"
)

// fitColumns widens any column whose title holds a word wider than the
// column, taking the room from the widest left-aligned column, so that a
// header never breaks inside a word.
func (d *doc) fitColumns(cols []column, fs float64) []column {
	out := slices.Clone(cols)
	d.pdf.SetFont("go", "B", fs)
	need := make([]float64, len(out))
	deficit := 0.0
	// SplitText leaves a cell margin on both sides of the room it is given.
	pad := cellPad + 2*d.pdf.GetCellMargin() + 0.2
	for i, c := range out {
		for _, w := range strings.Fields(c.title) {
			need[i] = max(need[i], d.pdf.GetStringWidth(w)+pad)
		}
		if need[i] > c.width {
			deficit += need[i] - c.width
		}
	}
	if deficit == 0 {
		return out
	}
	donor := -1
	for i, c := range out {
		if c.align == "L" && c.width-deficit >= need[i] && (donor < 0 || c.width > out[donor].width) {
			donor = i
		}
	}
	if donor < 0 {
		return out
	}
	for i := range out {
		if need[i] > out[i].width {
			out[i].width = need[i]
		}
	}
	out[donor].width -= deficit
	return out
}

// cellPad is the room left between a cell's text and its neighbour.
const cellPad = 1.5

// table prints a table with a bold header (repeated on each new page) and
// light banding. Cells wrap onto as many lines as they need, so nothing is
// cut short; group headings and notes span the table (groupMark,
// rowNoteMark).
func (d *doc) table(cols []column, rows [][]string) {
	lh, fs := rowH, 7.5
	if d.compact {
		lh, fs = 3.72, 7
	}
	cols = d.fitColumns(cols, fs)
	total := 0.0
	for _, c := range cols {
		total += c.width
	}
	header := func() {
		d.pdf.SetFont("go", "B", fs)
		split := make([][]string, len(cols))
		lines := 1
		for i, c := range cols {
			split[i] = d.pdf.SplitText(c.title, c.width-cellPad)
			lines = max(lines, len(split[i]))
		}
		const hl = 3.2
		h := float64(lines)*hl + 1.4
		y0 := d.pdf.GetY()
		d.pdf.SetFillColor(225, 225, 225)
		d.pdf.Rect(marginL, y0, total, h, "F")
		x := marginL
		for i, c := range cols {
			for j, l := range split[i] {
				d.pdf.SetXY(x, y0+0.7+float64(j)*hl)
				d.pdf.CellFormat(c.width, hl, l, "", 0, c.align, false, 0, "")
			}
			x += c.width
		}
		d.pdf.SetXY(marginL, y0+h)
	}
	d.space(2*lh + 8)
	header()
	band := 0
	for _, row := range rows {
		first := ""
		if len(row) > 0 {
			first = row[0]
		}
		switch {
		case strings.HasPrefix(first, groupMark):
			d.pdf.SetFont("go", "B", fs)
			if d.pdf.GetY()+2*lh > contentBotto {
				d.pdf.AddPage()
				header()
			}
			d.pdf.SetX(marginL)
			d.pdf.CellFormat(total, lh, strings.TrimPrefix(first, groupMark), "B", 1, "L", false, 0, "")
			band = 0
			continue
		case strings.HasPrefix(first, rowNoteMark):
			d.pdf.SetFont("go", "", fs-1)
			lines := d.pdf.SplitText(strings.TrimPrefix(first, rowNoteMark), total-6)
			nh := float64(len(lines)) * (lh - 0.6)
			if d.pdf.GetY()+nh > contentBotto {
				d.pdf.AddPage()
				header()
			}
			d.pdf.SetTextColor(70, 70, 70)
			for _, l := range lines {
				d.pdf.SetX(marginL + 6)
				d.pdf.CellFormat(total-6, lh-0.6, l, "", 1, "L", band%2 == 0, 0, "")
			}
			d.pdf.SetTextColor(0, 0, 0)
			continue
		}
		band++
		d.pdf.SetFont("go", "", fs)
		split := make([][]string, len(cols))
		lines := 1
		for j, c := range cols {
			if j < len(row) && row[j] != "" {
				split[j] = d.pdf.SplitText(row[j], c.width-cellPad)
				lines = max(lines, len(split[j]))
			}
		}
		h := float64(lines) * lh
		if d.pdf.GetY()+h > contentBotto {
			d.pdf.AddPage()
			header()
		}
		y0 := d.pdf.GetY()
		fill := band%2 == 0
		if fill {
			d.pdf.SetFillColor(246, 246, 246)
			d.pdf.Rect(marginL, y0, total, h, "F")
		}
		x := marginL
		for j, c := range cols {
			for k, l := range split[j] {
				d.pdf.SetXY(x, y0+float64(k)*lh)
				d.pdf.CellFormat(c.width, lh, l, "", 0, c.align, false, 0, "")
			}
			x += c.width
		}
		d.pdf.SetXY(marginL, y0+h)
	}
	d.pdf.Ln(1.5)
}

// image places a PNG chart of the given printed size at the left margin,
// starting a page when it does not fit.
func (d *doc) image(png []byte, err error, w, h float64) {
	if err != nil {
		d.note("Chart not drawn: " + err.Error())
		return
	}
	d.space(h + 1)
	d.images++
	name := fmt.Sprintf("chart%d", d.images)
	opt := gofpdf.ImageOptions{ImageType: "PNG"}
	d.pdf.RegisterImageOptionsReader(name, opt, bytes.NewReader(png))
	y := d.pdf.GetY()
	d.pdf.ImageOptions(name, marginL+(contentW-w)/2, y, w, h, false, opt, 0, "")
	d.pdf.SetY(y + h + 1.5)
}

// chart renders a chart at full text width and places it.
func (d *doc) chart(h float64, draw func(ChartOptions) ([]byte, error), opt ChartOptions) {
	opt.WidthMM, opt.HeightMM = contentW, h
	png, err := draw(opt)
	d.image(png, err, contentW, h)
}

// keyValues prints aligned label/value lines.
func (d *doc) keyValues(rows [][2]string, labelW float64) {
	for _, r := range rows {
		d.pdf.SetX(marginL)
		d.pdf.SetFont("go", "B", 8.5)
		d.pdf.CellFormat(labelW, 4.4, r[0], "", 0, "L", false, 0, "")
		d.pdf.SetFont("go", "", 8.5)
		d.pdf.MultiCell(contentW-labelW, 4.4, r[1], "", "L", false)
	}
	d.pdf.Ln(1.5)
}

// verdictText prints a verdict with a shape before the words, so that it
// reads without colour (● meets, ▼ below, ○ too few, ■ reported), and says
// "provisional" when it may still change (ProvisionalNote).
func (d *doc) verdictText(ind audit.Indicator) string {
	s := audit.VerdictShape(ind.Status) + " " + ind.Status.Words()
	if (ind.Status == audit.Meets || ind.Status == audit.Below) && d.provisional(ind) != "" {
		s += " (provisional)"
	}
	return s
}

// provisional returns why an indicator's verdict may still change in this
// report's period, or "".
func (d *doc) provisional(ind audit.Indicator) string {
	return audit.ProvisionalNote(ind, d.unfinished)
}

// shortVerdict is a value and verdict shape for dense tables; a figure that
// may still change gets "◊" (provisional) instead of its shape.
func (d *doc) shortVerdict(ind audit.Indicator) string {
	if ind.Value == nil {
		return "–"
	}
	v := notedValue(ind)
	switch {
	case d.provisional(ind) != "":
		return v + " ◊"
	case ind.Status == audit.Reported:
		return v
	}
	return v + " " + audit.VerdictShape(ind.Status)
}

// noteRow returns the note row printed under an indicator's row: cases
// still awaiting histology and a count too small to rely on; nil when it
// has none. The indicator's own Note is marked on its value (notedValue)
// and printed under the table (indicatorNotes). A period not yet over is said
// once above each table (periodNote), not on every row.
func (d *doc) noteRow(ind audit.Indicator) []string {
	var parts []string
	if h := audit.HistologyAwaitedNote(ind); h != "" {
		parts = append(parts, "provisional: "+h)
	}
	if few := fewCasesNote(ind, d.in.Profile.MinCases); few != "" {
		parts = append(parts, few)
	}
	if len(parts) == 0 {
		return nil
	}
	return []string{rowNoteMark + strings.Join(parts, "; ") + "."}
}

// fewCasesNote flags a figure reported without a target on fewer cases
// than the profile's minimum: it is shown, but it is too small to rely on.
func fewCasesNote(ind audit.Indicator, minCases int) string {
	if ind.Status != audit.Reported || ind.Kind == audit.KindPerYear || ind.Denominator == 0 || ind.Denominator >= minCases {
		return ""
	}
	return fmt.Sprintf("only %s %s: too few to rely on (the standard judges from %d)",
		audit.GroupThousands(int64(ind.Denominator)), audit.CountNoun(ind.ID), minCases)
}

// periodNote says, above an indicator table, that the period is not over
// and its verdicts are provisional.
func (d *doc) periodNote() {
	if d.unfinished {
		d.boxed(fmt.Sprintf("The period ends on %s, after the day this report was made (%s): cases are still being added, "+
			"so every figure may change and every verdict is provisional.", formatDay(d.in.To), formatDay(d.today)))
	}
}

// withNotes returns rows for inds, each followed by its note row when it
// has one.
func (d *doc) withNotes(inds []audit.Indicator, row func(audit.Indicator) []string) [][]string {
	var out [][]string
	for _, ind := range inds {
		out = append(out, row(ind))
		if n := d.noteRow(ind); n != nil {
			out = append(out, n)
		}
	}
	return out
}

// indicatorRow is the standard row of an indicator table.
func (d *doc) indicatorRow(ind audit.Indicator) []string {
	return []string{audit.IndicatorTitle(ind.ID), audit.FormatCases(ind), notedValue(ind), audit.FormatInterval(ind), audit.FormatTarget(ind), d.verdictText(ind)}
}

// indicatorColumns are the columns of indicatorRow.
func indicatorColumns() []column {
	return []column{
		{"Indicator", 57, "L"}, {"Cases", 22, "R"}, {"Value", 19, "R"}, {"95% interval", 25, "R"},
		{"Target", 30, "R"}, {"Verdict", 27, "L"},
	}
}
