package app

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"polypledger/report"
)

// tile shows one indicator: its name, value, 95% interval, target, the
// verdict in words (with a mark, so colour is never needed to read it) and
// the cases behind it. A figure on too few cases is greyed.
type tile struct {
	ind                            report.Indicator
	title, value, interval, target *widget.Label
	verdict, cases                 *widget.Label
	content                        fyne.CanvasObject
}

// tileSize is the size of every indicator tile.
var tileSize = fyne.NewSize(310, 180)

// verdictMark is the sign shown before the verdict words.
func verdictMark(s report.Status) string {
	switch s {
	case report.Meets:
		return "✓ "
	case report.Below:
		return "✗ "
	case report.TooFew:
		return "… "
	}
	return "· "
}

func newTile(ind report.Indicator) *tile {
	t := &tile{ind: ind}
	t.title = widget.NewLabel(report.IndicatorTitle(ind.ID))
	t.title.Wrapping = fyne.TextWrapWord
	t.title.TextStyle.Bold = true
	t.value = widget.NewLabelWithStyle(report.FormatValue(ind), fyne.TextAlignLeading, fyne.TextStyle{Bold: true})
	t.value.SizeName = theme.SizeNameSubHeadingText
	t.interval = widget.NewLabel(report.FormatInterval(ind))
	target := report.FormatTarget(ind)
	if target != "" {
		target = "target " + target
	}
	t.target = widget.NewLabel(target)
	t.verdict = widget.NewLabel(verdictMark(ind.Status) + report.FormatVerdict(ind))
	t.verdict.Wrapping = fyne.TextWrapWord
	t.cases = widget.NewLabel("cases " + report.FormatCases(ind))
	switch ind.Status {
	case report.Meets:
		t.verdict.Importance = widget.SuccessImportance
	case report.Below:
		t.verdict.Importance = widget.DangerImportance
	case report.TooFew:
		for _, l := range []*widget.Label{t.title, t.value, t.interval, t.target, t.verdict, t.cases} {
			l.Importance = widget.LowImportance
		}
	}
	bg := canvas.NewRectangle(theme.Color(theme.ColorNameInputBackground))
	bg.CornerRadius = 6
	t.content = container.NewStack(bg, container.NewPadded(container.NewVBox(
		t.title,
		container.NewHBox(t.value, t.interval),
		container.NewHBox(t.target, t.cases),
		t.verdict)))
	return t
}
