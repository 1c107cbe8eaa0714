package app

import (
	"image/color"
	"math"
	"polypledger/audit"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
)

// figureRow is one indicator on the figures screen, in one row: its name,
// what it counts and any note; its value with the 95% interval; the value
// as a dot on its interval bar with the target as a tick; and the verdict
// as a shape and in words, with why it is provisional when it may still
// change. Everything is drawn in the theme's neutral colours: the verdict
// reads from its shape and words, never from a colour. A figure on too few
// cases to judge is greyed.
type figureRow struct {
	ind                  audit.Indicator
	title, count, note   *widget.Label
	value, interval      *widget.Label
	target               *widget.Label
	verdict, provisional *widget.Label
	bar                  *intervalBar
	shape                *verdictShape
	content              fyne.CanvasObject
}

// newFigureRow lays out one indicator; unfinished says the period is not
// over yet.
func newFigureRow(ind audit.Indicator, unfinished bool) *figureRow {
	r := &figureRow{ind: ind}
	wrap := func(text string, caption bool) *widget.Label {
		l := widget.NewLabel(text)
		l.Wrapping = fyne.TextWrapWord
		if caption {
			l.SizeName = theme.SizeNameCaptionText
		}
		if text == "" {
			l.Hide()
		}
		return l
	}
	r.title = wrap(audit.IndicatorTitle(ind.ID), false)
	r.title.TextStyle.Bold = true
	r.count = wrap(audit.FormatCount(ind), true)
	r.note = wrap(ind.Note, true)
	r.value = widget.NewLabel(audit.FormatValue(ind))
	r.value.TextStyle.Bold = true
	r.value.Alignment = fyne.TextAlignTrailing
	r.interval = widget.NewLabel(audit.FormatInterval(ind))
	r.interval.SizeName = theme.SizeNameCaptionText
	r.interval.Alignment = fyne.TextAlignTrailing
	target := audit.FormatTarget(ind)
	if target != "" {
		target = "target " + target
	} else {
		target = "no target"
	}
	r.target = widget.NewLabel(target)
	r.target.SizeName = theme.SizeNameCaptionText
	r.target.Alignment = fyne.TextAlignCenter
	r.verdict = wrap(ind.Status.Words(), false)
	prov := audit.ProvisionalNote(ind, unfinished)
	if prov != "" && (ind.Status == audit.Meets || ind.Status == audit.Below) {
		r.verdict.SetText(ind.Status.Words() + " (provisional)")
	}
	r.provisional = wrap(prov, true)
	r.bar = newIntervalBar(ind)
	r.shape = newVerdictShape(ind.Status)
	if ind.Status == audit.TooFew {
		for _, l := range []*widget.Label{r.title, r.count, r.note, r.value, r.interval, r.target, r.verdict, r.provisional} {
			l.Importance = widget.LowImportance
		}
	}
	tight := func(objs ...fyne.CanvasObject) fyne.CanvasObject {
		return container.New(&stackLayout{}, objs...)
	}
	r.content = container.New(&rowLayout{widths: []float32{0, 130, 230, 240}, minFirst: 240, flex: 2},
		tight(r.title, r.count, r.note),
		tight(r.value, r.interval),
		tight(r.bar, r.target),
		container.NewBorder(nil, nil, container.NewVBox(container.NewPadded(r.shape)), nil, tight(r.verdict, r.provisional)),
	)
	return r
}

// rowLayout lays out a row of cells at their widths; the first cell and
// the cell at flex share what the others leave, the first never narrower
// than minFirst and the flex cell never narrower than its width. The row
// is as tall as its tallest cell.
type rowLayout struct {
	widths   []float32
	minFirst float32
	flex     int
}

// cellWidths returns each cell's width in a row width wide.
func (l *rowLayout) cellWidths(width float32) []float32 {
	out := append([]float32(nil), l.widths...)
	out[0] = l.minFirst
	used := float32(0)
	for _, w := range out {
		used += w
	}
	used += float32(len(out)-1) * theme.Padding()
	if spare := width - used; spare > 0 {
		out[0] += spare / 2
		out[l.flex] += spare / 2
	}
	return out
}

// Layout implements fyne.Layout.
func (l *rowLayout) Layout(objs []fyne.CanvasObject, size fyne.Size) {
	x := float32(0)
	for i, w := range l.cellWidths(size.Width) {
		if i >= len(objs) {
			break
		}
		objs[i].Move(fyne.NewPos(x, 0))
		objs[i].Resize(fyne.NewSize(w, size.Height))
		x += w + theme.Padding()
	}
}

// MinSize implements fyne.Layout.
func (l *rowLayout) MinSize(objs []fyne.CanvasObject) fyne.Size {
	w := l.minFirst
	var h float32
	for i, o := range objs {
		if i > 0 {
			w += l.widths[i] + theme.Padding()
		}
		h = max(h, o.MinSize().Height)
	}
	return fyne.NewSize(w, h)
}

// stackLayout puts its visible objects one under another with no padding
// between them, each as tall as it needs: a cell of a figure row.
type stackLayout struct{}

// Layout implements fyne.Layout.
func (stackLayout) Layout(objs []fyne.CanvasObject, size fyne.Size) {
	y := float32(0)
	for _, o := range objs {
		if !o.Visible() {
			continue
		}
		o.Resize(fyne.NewSize(size.Width, o.MinSize().Height))
		// A wrapping label knows its height only once it has its width.
		h := o.MinSize().Height
		o.Resize(fyne.NewSize(size.Width, h))
		o.Move(fyne.NewPos(0, y))
		y += h
	}
}

// MinSize implements fyne.Layout.
func (stackLayout) MinSize(objs []fyne.CanvasObject) fyne.Size {
	var s fyne.Size
	for _, o := range objs {
		if !o.Visible() {
			continue
		}
		m := o.MinSize()
		s.Width = max(s.Width, m.Width)
		s.Height += m.Height
	}
	return s
}

// intervalBar draws an indicator on its scale: a thin track over the
// scale, the 95% interval as a bar, the value as a dot and the target as a
// tick (the aspirational aim as a shorter tick), all in neutral colours.
type intervalBar struct {
	widget.BaseWidget
	ind audit.Indicator
}

func newIntervalBar(ind audit.Indicator) *intervalBar {
	b := &intervalBar{ind: ind}
	b.ExtendBaseWidget(b)
	return b
}

// scale returns the range the bar spans: 0–100% for rates, otherwise from
// 0 (or the lowest value, when negative) to a little beyond the highest of
// value, interval and target.
func (b *intervalBar) scale() (lo, hi float64) {
	ind := b.ind
	if def, _ := audit.Lookup(ind.ID); def.Percent() {
		return 0, 1
	}
	lo, hi = 0, 0
	for _, v := range []*float64{ind.Value, ind.CILow, ind.CIHigh, ind.Target, ind.Aspirational} {
		if v != nil && !math.IsNaN(*v) {
			lo, hi = math.Min(lo, *v), math.Max(hi, *v)
		}
	}
	if hi-lo == 0 {
		hi = lo + 1
	}
	pad := (hi - lo) * 0.1
	if lo < 0 {
		lo -= pad
	}
	return lo, hi + pad
}

// CreateRenderer implements fyne.Widget.
func (b *intervalBar) CreateRenderer() fyne.WidgetRenderer {
	r := &barRenderer{b: b,
		track:  canvas.NewRectangle(color.Transparent),
		span:   canvas.NewRectangle(color.Transparent),
		dot:    canvas.NewCircle(color.Transparent),
		target: canvas.NewRectangle(color.Transparent),
		aim:    canvas.NewRectangle(color.Transparent),
	}
	r.Refresh()
	return r
}

type barRenderer struct {
	b                        *intervalBar
	track, span, target, aim *canvas.Rectangle
	dot                      *canvas.Circle
}

func (r *barRenderer) Objects() []fyne.CanvasObject {
	return []fyne.CanvasObject{r.track, r.span, r.target, r.aim, r.dot}
}
func (r *barRenderer) Destroy()           {}
func (r *barRenderer) MinSize() fyne.Size { return fyne.NewSize(120, 22) }

func (r *barRenderer) Refresh() {
	fg := theme.Color(theme.ColorNameForeground)
	mid := theme.Color(theme.ColorNamePlaceHolder)
	if r.b.ind.Status == audit.TooFew {
		fg = theme.Color(theme.ColorNameDisabled)
	}
	r.track.FillColor = theme.Color(theme.ColorNameSeparator)
	r.span.FillColor = mid
	r.span.CornerRadius = 3
	r.dot.FillColor = fg
	r.dot.StrokeColor = theme.Color(theme.ColorNameBackground)
	r.dot.StrokeWidth = 1.5
	r.target.FillColor = fg
	r.aim.FillColor = fg
	r.Layout(r.b.Size())
	for _, o := range r.Objects() {
		o.Refresh()
	}
}

func (r *barRenderer) Layout(size fyne.Size) {
	ind := r.b.ind
	lo, hi := r.b.scale()
	const inset = 8
	w := size.Width - 2*inset
	x := func(v float64) float32 {
		f := (v - lo) / (hi - lo)
		return inset + w*float32(math.Max(0, math.Min(1, f)))
	}
	mid := size.Height / 2
	r.track.Move(fyne.NewPos(inset, mid-1))
	r.track.Resize(fyne.NewSize(w, 2))
	show := func(o fyne.CanvasObject, ok bool) {
		if ok {
			o.Show()
		} else {
			o.Hide()
		}
	}
	show(r.span, ind.CILow != nil && ind.CIHigh != nil)
	if ind.CILow != nil && ind.CIHigh != nil {
		a, b := x(*ind.CILow), x(*ind.CIHigh)
		r.span.Move(fyne.NewPos(a, mid-4))
		r.span.Resize(fyne.NewSize(max(b-a, 2), 8))
	}
	show(r.target, ind.Target != nil)
	if ind.Target != nil {
		t := x(*ind.Target)
		r.target.Move(fyne.NewPos(t-1, mid-10))
		r.target.Resize(fyne.NewSize(2, 20))
	}
	show(r.aim, ind.Aspirational != nil)
	if ind.Aspirational != nil {
		t := x(*ind.Aspirational)
		r.aim.Move(fyne.NewPos(t-1, mid-6))
		r.aim.Resize(fyne.NewSize(2, 12))
	}
	show(r.dot, ind.Value != nil)
	if ind.Value != nil {
		v := x(*ind.Value)
		const d = 11
		r.dot.Move(fyne.NewPos(v-d/2, mid-d/2))
		r.dot.Resize(fyne.NewSize(d, d))
	}
}

// verdictShape draws a verdict's shape in the foreground colour, as the
// PDF prints it: a filled circle meets the target, a downward triangle is
// below it, an open circle has too few cases to judge and a filled square
// is reported without a target.
type verdictShape struct {
	widget.BaseWidget
	status audit.Status
}

func newVerdictShape(s audit.Status) *verdictShape {
	v := &verdictShape{status: s}
	v.ExtendBaseWidget(v)
	return v
}

// CreateRenderer implements fyne.Widget.
func (v *verdictShape) CreateRenderer() fyne.WidgetRenderer {
	fg := theme.Color(theme.ColorNameForeground)
	var o fyne.CanvasObject
	switch v.status {
	case audit.Meets:
		o = &canvas.Circle{FillColor: fg}
	case audit.Below:
		o = &canvas.Polygon{FillColor: fg, Sides: 3, Angle: 180}
	case audit.TooFew:
		o = &canvas.Circle{StrokeColor: theme.Color(theme.ColorNameDisabled), StrokeWidth: 2}
	default:
		o = &canvas.Rectangle{FillColor: fg}
	}
	return &shapeRenderer{o: o}
}

type shapeRenderer struct{ o fyne.CanvasObject }

func (r *shapeRenderer) Objects() []fyne.CanvasObject { return []fyne.CanvasObject{r.o} }
func (r *shapeRenderer) Destroy()                     {}
func (r *shapeRenderer) MinSize() fyne.Size           { return fyne.NewSize(16, 16) }
func (r *shapeRenderer) Refresh()                     { r.o.Refresh() }
func (r *shapeRenderer) Layout(size fyne.Size) {
	const d = 12
	r.o.Move(fyne.NewPos((size.Width-d)/2, (size.Height-d)/2))
	r.o.Resize(fyne.NewSize(d, d))
}
