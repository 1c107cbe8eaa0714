package report

import (
	"bytes"
	"fmt"
	"image/color"
	"image/png"
	"math"
	"polypledger/audit"

	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// Charts are drawn with gonum.org/v1/plot into PNG bytes, once per figure,
// so that the PDF report and the desktop app show the same picture. Every
// chart is readable without colour: verdicts and positions are told by
// marker shape and by words in the legend, lines by their dash pattern, and
// colours come from the Okabe–Ito palette, which colour-blind readers can
// tell apart.

// ChartOptions sets the size and resolution of a chart and what it
// emphasises. The zero value gives a chart 170 mm × 95 mm at 150 dots per
// inch with its default title.
type ChartOptions struct {
	// WidthMM and HeightMM are the printed size in millimetres.
	WidthMM, HeightMM float64
	// DPI is the resolution of the PNG; width in pixels is WidthMM/25.4·DPI.
	DPI int
	// Title replaces the chart's default title when not empty.
	Title string
	// Highlight is the label of a point or row drawn larger and ringed, such
	// as the endoscopist a page is about.
	Highlight string
}

// Default chart size and resolution.
const (
	defaultChartWidthMM  = 170
	defaultChartHeightMM = 95
	defaultChartDPI      = 150
)

func (o ChartOptions) withDefaults(heightMM float64) ChartOptions {
	if o.WidthMM <= 0 {
		o.WidthMM = defaultChartWidthMM
	}
	if o.HeightMM <= 0 {
		o.HeightMM = heightMM
	}
	if o.DPI <= 0 {
		o.DPI = defaultChartDPI
	}
	return o
}

func (o ChartOptions) title(def string) string {
	if o.Title != "" {
		return o.Title
	}
	return def
}

// shade is a colour of the Okabe–Ito palette (Okabe M, Ito K, "Color
// universal design", 2002), with a neutral grey for figures not judged.
type shade int

const (
	shadeBlack shade = iota
	shadeOrange
	shadeSkyBlue
	shadeGreen
	shadeBlue
	shadeVermilion
	shadePurple
	shadeGrey
	shadeLightGrey
)

// shades are the colours of the shades, in their order: black, then the
// Okabe–Ito orange, sky blue, bluish green, blue, vermilion and reddish
// purple, then two greys.
var shades = [...]color.RGBA{
	{0x00, 0x00, 0x00, 0xFF},
	{0xE6, 0x9F, 0x00, 0xFF},
	{0x56, 0xB4, 0xE9, 0xFF},
	{0x00, 0x9E, 0x73, 0xFF},
	{0x00, 0x72, 0xB2, 0xFF},
	{0xD5, 0x5E, 0x00, 0xFF},
	{0xCC, 0x79, 0xA7, 0xFF},
	{0x88, 0x88, 0x88, 0xFF},
	{0xE2, 0xE2, 0xE2, 0xFF},
}

func (s shade) rgba() color.RGBA {
	if s < 0 || int(s) >= len(shades) {
		return shades[shadeBlack]
	}
	return shades[s]
}

// Line dash patterns, so that lines differ without colour.
func dashed() []vg.Length { return []vg.Length{vg.Points(5), vg.Points(3)} }
func dotted() []vg.Length { return []vg.Length{vg.Points(1.2), vg.Points(2)} }
func dashDot() []vg.Length {
	return []vg.Length{vg.Points(6), vg.Points(2), vg.Points(1.2), vg.Points(2)}
}

func lineStyle(s shade, width float64, dashes []vg.Length) draw.LineStyle {
	return draw.LineStyle{Color: s.rgba(), Width: vg.Points(width), Dashes: dashes}
}

// downTriangle is a filled triangle pointing down, the mark of a figure
// below its target or a point below a control limit.
type downTriangle struct{}

// DrawGlyph implements draw.GlyphDrawer.
func (downTriangle) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius * 1.25
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X - r*0.866, Y: pt.Y + r*0.5})
	p.Line(vg.Point{X: pt.X + r*0.866, Y: pt.Y + r*0.5})
	p.Close()
	c.Fill(p)
}

// upTriangle is a filled triangle pointing up, the mark of a point above
// a control limit.
type upTriangle struct{}

// DrawGlyph implements draw.GlyphDrawer.
func (upTriangle) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius * 1.25
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	p.Line(vg.Point{X: pt.X - r*0.866, Y: pt.Y - r*0.5})
	p.Line(vg.Point{X: pt.X + r*0.866, Y: pt.Y - r*0.5})
	p.Close()
	c.Fill(p)
}

// thickRing is an open circle with a line heavy enough to read in print.
type thickRing struct{}

// DrawGlyph implements draw.GlyphDrawer.
func (thickRing) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1.1)})
	var p vg.Path
	p.Move(vg.Point{X: pt.X + sty.Radius, Y: pt.Y})
	p.Arc(pt, sty.Radius, 0, 2*math.Pi)
	p.Close()
	c.Stroke(p)
}

// mark is how one point is drawn and what the legend calls it.
type mark struct {
	glyph  draw.GlyphDrawer
	colour shade
	words  string
}

// verdictMark is the mark of a verdict: a filled circle meets the target, a
// downward triangle is below it, an open circle has too few cases to judge
// and a filled square is reported without a target.
func verdictMark(s audit.Status) mark {
	switch s {
	case audit.Meets:
		return mark{draw.CircleGlyph{}, shadeBlue, s.Words()}
	case audit.Below:
		return mark{downTriangle{}, shadeVermilion, s.Words()}
	case audit.TooFew:
		return mark{thickRing{}, shadeGrey, s.Words()}
	}
	return mark{draw.BoxGlyph{}, shadeBlack, audit.Reported.Words()}
}

// chartFont is the chart typeface (Liberation Sans, shipped with the
// plotting library) at a size in points.
func chartFont(size float64, bold bool) font.Font {
	f := font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Points(size)}
	if bold {
		f.Weight = xfont.WeightBold
	}
	return f
}

// newPlot starts a plot with the report's fonts, a white background and a
// light grid.
func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = chartFont(11, true)
	p.Title.Padding = vg.Points(6)
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = chartFont(9, false)
		a.Tick.Label.Font = chartFont(8, false)
		a.Padding = vg.Points(2)
	}
	grid := plotter.NewGrid()
	grid.Vertical = lineStyle(shadeLightGrey, 0.5, nil)
	grid.Horizontal = lineStyle(shadeLightGrey, 0.5, nil)
	p.Add(grid)
	return p
}

// legendItem is one entry of the legend strip under a chart.
type legendItem struct {
	name  string
	thumb plot.Thumbnailer
}

// glyphThumb draws a mark in the legend.
type glyphThumb struct{ sty draw.GlyphStyle }

// Thumbnail implements plot.Thumbnailer.
func (g glyphThumb) Thumbnail(c *draw.Canvas) { c.DrawGlyph(g.sty, c.Center()) }

// lineThumb draws a line sample in the legend.
type lineThumb struct{ sty draw.LineStyle }

// Thumbnail implements plot.Thumbnailer.
func (l lineThumb) Thumbnail(c *draw.Canvas) {
	y := c.Center().Y
	c.StrokeLine2(l.sty, c.Min.X, y, c.Max.X, y)
}

func markItem(m mark, words string) legendItem {
	if words == "" {
		words = m.words
	}
	return legendItem{words, glyphThumb{draw.GlyphStyle{Color: m.colour.rgba(), Radius: vg.Points(3.2), Shape: m.glyph}}}
}

func lineItem(name string, sty draw.LineStyle) legendItem {
	return legendItem{name, lineThumb{sty}}
}

// render draws p with its legend strip underneath into a PNG of the
// options' size. The legend sits below the data so that it never hides a
// point.
func render(p *plot.Plot, legend []legendItem, o ChartOptions) ([]byte, error) {
	w, h := vg.Length(o.WidthMM)*vg.Millimeter, vg.Length(o.HeightMM)*vg.Millimeter
	img := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(o.DPI), vgimg.UseBackgroundColor(color.White))
	dc := draw.New(img)
	if len(legend) > 0 {
		const cols = 3
		rows := (len(legend) + cols - 1) / cols
		rowH := vg.Points(12)
		stripH := vg.Length(rows)*rowH + vg.Points(6)
		p.Draw(draw.Crop(dc, 0, 0, stripH, 0))
		colW := (dc.Max.X - dc.Min.X - vg.Points(10)) / cols
		for c := 0; c < cols; c++ {
			l := plot.NewLegend()
			l.TextStyle.Font = chartFont(8, false)
			l.Left, l.Top = true, true
			l.ThumbnailWidth = vg.Points(18)
			for r := 0; r < rows; r++ {
				if i := c*rows + r; i < len(legend) {
					l.Add(legend[i].name, legend[i].thumb)
				}
			}
			cell := dc
			cell.Min.X = dc.Min.X + vg.Points(10) + vg.Length(c)*colW
			cell.Max.X = cell.Min.X + colW
			cell.Max.Y = dc.Min.Y + stripH - vg.Points(3)
			cell.Min.Y = dc.Min.Y
			l.Draw(cell)
		}
	} else {
		p.Draw(dc)
	}
	var buf bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.BestSpeed}
	if err := enc.Encode(&buf, img.Image()); err != nil {
		return nil, fmt.Errorf("encode chart %q as PNG: %w", p.Title.Text, err)
	}
	return buf.Bytes(), nil
}

// chartPoint is one marked point, with an optional whisker (its 95%
// interval) and label.
type chartPoint struct {
	X, Y   float64
	Lo, Hi float64 // whisker ends; NaN for none
	Mark   mark
	Radius vg.Length
	Ring   bool // an extra ring around the mark
	Label  string
	Bold   bool
}

// points draws chartPoints; Horizontal whiskers run along x (a forest
// plot), otherwise along y.
type points struct {
	pts        []chartPoint
	horizontal bool
}

// Plot implements plot.Plotter. Labels are placed beside their point
// where they overlap no other point or label: right, left, above or below,
// in that order of preference.
func (pp *points) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	whisker := lineStyle(shadeBlack, 0.8, nil)
	labelStyle := text.Style{Font: chartFont(7.5, false), Handler: plot.DefaultTextHandler, Color: color.Black,
		XAlign: draw.XLeft, YAlign: draw.YBottom}
	cap := vg.Points(2.5)
	radius := func(pt chartPoint) vg.Length {
		if pt.Radius == 0 {
			return vg.Points(3.2)
		}
		return pt.Radius
	}
	// Every mark is an obstacle for every label.
	var taken []vg.Rectangle
	for _, pt := range pp.pts {
		at := vg.Point{X: tx(pt.X), Y: ty(pt.Y)}
		r := radius(pt)
		if pt.Ring {
			r *= 2
		}
		taken = append(taken, vg.Rectangle{Min: vg.Point{X: at.X - r, Y: at.Y - r}, Max: vg.Point{X: at.X + r, Y: at.Y + r}})
	}
	for _, pt := range pp.pts {
		if !math.IsNaN(pt.Lo) && !math.IsNaN(pt.Hi) {
			var line, c1, c2 []vg.Point
			if pp.horizontal {
				y := ty(pt.Y)
				line = []vg.Point{{X: tx(pt.Lo), Y: y}, {X: tx(pt.Hi), Y: y}}
				c1 = []vg.Point{{X: tx(pt.Lo), Y: y - cap}, {X: tx(pt.Lo), Y: y + cap}}
				c2 = []vg.Point{{X: tx(pt.Hi), Y: y - cap}, {X: tx(pt.Hi), Y: y + cap}}
			} else {
				x := tx(pt.X)
				line = []vg.Point{{X: x, Y: ty(pt.Lo)}, {X: x, Y: ty(pt.Hi)}}
				c1 = []vg.Point{{X: x - cap, Y: ty(pt.Lo)}, {X: x + cap, Y: ty(pt.Lo)}}
				c2 = []vg.Point{{X: x - cap, Y: ty(pt.Hi)}, {X: x + cap, Y: ty(pt.Hi)}}
			}
			c.StrokeLines(whisker, c.ClipLinesXY(line, c1, c2)...)
		}
		at := vg.Point{X: tx(pt.X), Y: ty(pt.Y)}
		r := radius(pt)
		c.DrawGlyph(draw.GlyphStyle{Color: pt.Mark.colour.rgba(), Radius: r, Shape: pt.Mark.glyph}, at)
		if pt.Ring {
			c.DrawGlyph(draw.GlyphStyle{Color: shadeBlack.rgba(), Radius: r * 2, Shape: thickRing{}}, at)
		}
		if pt.Label == "" || !c.Contains(at) {
			continue
		}
		ls := labelStyle
		if pt.Bold {
			ls.Font = chartFont(8.5, true)
		}
		box := placeLabel(c.Rectangle, taken, at, r+vg.Points(2), ls.Width(pt.Label), ls.Height(pt.Label))
		taken = append(taken, box)
		c.FillText(ls, box.Min, pt.Label)
	}
}

// placeLabel returns where a label of size w × h goes beside a mark at
// at with room gap around it: the first of right, left, above, below,
// upper right and lower right that stays inside area and overlaps nothing
// taken, else the right.
func placeLabel(area vg.Rectangle, taken []vg.Rectangle, at vg.Point, gap, w, h vg.Length) vg.Rectangle {
	candidates := []vg.Point{
		{X: at.X + gap, Y: at.Y - h/2},
		{X: at.X - gap - w, Y: at.Y - h/2},
		{X: at.X - w/2, Y: at.Y + gap},
		{X: at.X - w/2, Y: at.Y - gap - h},
		{X: at.X + gap, Y: at.Y + gap},
		{X: at.X + gap, Y: at.Y - gap - h},
	}
	for _, min := range candidates {
		box := vg.Rectangle{Min: min, Max: vg.Point{X: min.X + w, Y: min.Y + h}}
		if box.Min.X < area.Min.X || box.Max.X > area.Max.X || box.Min.Y < area.Min.Y || box.Max.Y > area.Max.Y {
			continue
		}
		free := true
		for _, t := range taken {
			if overlaps(box, t) {
				free = false
				break
			}
		}
		if free {
			return box
		}
	}
	min := candidates[0]
	return vg.Rectangle{Min: min, Max: vg.Point{X: min.X + w, Y: min.Y + h}}
}

// overlaps reports whether two rectangles share any area.
func overlaps(a, b vg.Rectangle) bool {
	return a.Min.X < b.Max.X && b.Min.X < a.Max.X && a.Min.Y < b.Max.Y && b.Min.Y < a.Max.Y
}

// refLine is a horizontal (or, with vertical set, vertical) reference line
// across the data area, such as a target, with a short label at its end.
type refLine struct {
	at       float64
	vertical bool
	sty      draw.LineStyle
	label    string
	// below puts the label under the line, so that two close lines keep
	// their labels apart.
	below bool
}

// Plot implements plot.Plotter.
func (r refLine) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	ls := text.Style{Font: chartFont(7.5, false), Handler: plot.DefaultTextHandler, Color: color.Black}
	if r.vertical {
		x := tx(r.at)
		if !c.ContainsX(x) {
			return
		}
		c.StrokeLine2(r.sty, x, c.Min.Y, x, c.Max.Y)
		if r.label != "" {
			ls.XAlign, ls.YAlign = draw.XLeft, draw.YTop
			c.FillText(ls, vg.Point{X: x + vg.Points(2), Y: c.Max.Y - vg.Points(1)}, r.label)
		}
		return
	}
	y := ty(r.at)
	if !c.ContainsY(y) {
		return
	}
	c.StrokeLine2(r.sty, c.Min.X, y, c.Max.X, y)
	if r.label != "" {
		ls.XAlign, ls.YAlign = draw.XLeft, draw.YBottom
		at := vg.Point{X: c.Min.X + vg.Points(3), Y: y + vg.Points(1)}
		if r.below {
			ls.YAlign = draw.YTop
			at.Y = y - vg.Points(1.5)
		}
		c.FillText(ls, at, r.label)
	}
}

// countTicks are axis ticks for counts: whole numbers with thousands
// separated, never "250.00".
type countTicks struct{}

// Ticks implements plot.Ticker.
func (countTicks) Ticks(lo, hi float64) []plot.Tick {
	ticks := plot.DefaultTicks{}.Ticks(lo, hi)
	out := ticks[:0]
	for _, t := range ticks {
		if t.Value != math.Trunc(t.Value) {
			continue
		}
		if t.Label != "" {
			t.Label = audit.GroupThousands(int64(t.Value))
		}
		out = append(out, t)
	}
	return out
}

// curve is a polyline clipped to the data area.
type curve struct {
	pts plotter.XYs
	sty draw.LineStyle
}

// Plot implements plot.Plotter.
func (cv curve) Plot(c draw.Canvas, p *plot.Plot) {
	if len(cv.pts) < 2 {
		return
	}
	tx, ty := p.Transforms(&c)
	line := make([]vg.Point, len(cv.pts))
	for i, pt := range cv.pts {
		line[i] = vg.Point{X: tx(pt.X), Y: ty(pt.Y)}
	}
	c.StrokeLines(cv.sty, c.ClipLinesXY(line)...)
}

// axisScale is how an indicator's values are drawn: the factor from the
// stored value to the axis and the axis unit, as the catalogue's Scaler
// prints them.
func axisScale(id string) (factor float64, unit string) {
	s := scaler(id)
	return s.Factor, s.Axis
}

// scaler is how the values of indicator id print.
func scaler(id string) audit.Scaler {
	d, _ := audit.Lookup(id)
	return d.Scaler()
}

// axisBounds are the ends an axis of an indicator's values may not pass:
// 0 and 100 for a percentage, 0 below a mean; NaN where there is none.
func axisBounds(id string) (floor, ceil float64) {
	d, _ := audit.Lookup(id)
	switch {
	case d.Percent():
		return 0, 100
	case d.Kind == audit.KindMean:
		return 0, math.NaN()
	}
	return math.NaN(), math.NaN()
}

// axisUnit is a short axis label naming only the unit of an indicator's
// values ("per cent", "minutes"), for a vertical axis whose chart title
// already names the indicator: a long rotated label would squeeze the
// data area of a short chart.
func axisUnit(id string) string {
	_, unit := axisScale(id)
	switch unit {
	case "%":
		return "per cent"
	case "":
		return "value"
	}
	return unit
}

// axisTitle is an indicator's axis label with its unit.
func axisTitle(id string) string {
	_, unit := axisScale(id)
	if unit == "" {
		return audit.IndicatorTitle(id)
	}
	return audit.IndicatorTitle(id) + " (" + unit + ")"
}

// span tracks the range of values a chart must show.
type span struct{ lo, hi float64 }

func newSpan() span { return span{math.Inf(1), math.Inf(-1)} }

func (s *span) add(vs ...float64) {
	for _, v := range vs {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			s.lo, s.hi = math.Min(s.lo, v), math.Max(s.hi, v)
		}
	}
}

// padded returns the range widened by a twentieth on each side (at least
// minWidth in all), kept within [floor, ceil] when those are not NaN.
func (s span) padded(minWidth, floor, ceil float64) (lo, hi float64) {
	lo, hi = s.lo, s.hi
	if math.IsInf(lo, 0) || math.IsInf(hi, 0) {
		lo, hi = 0, minWidth
	}
	if hi-lo < minWidth {
		mid := (lo + hi) / 2
		lo, hi = mid-minWidth/2, mid+minWidth/2
	}
	pad := (hi - lo) / 20
	lo, hi = lo-pad, hi+pad
	// A mark on a bound (a rate of 100%) keeps half a pad of room so that
	// it is not cut in half by the frame.
	if !math.IsNaN(floor) && lo < floor-pad/2 {
		hi += floor - pad/2 - lo
		lo = floor - pad/2
	}
	if !math.IsNaN(ceil) && hi > ceil+pad/2 {
		lo = math.Max(lo-(hi-ceil-pad/2), floorOr(floor)-pad/2)
		hi = ceil + pad/2
	}
	return lo, hi
}

func floorOr(f float64) float64 {
	if math.IsNaN(f) {
		return math.Inf(-1)
	}
	return f
}

// valueOr returns *v scaled, or NaN when v is nil.
func valueOr(v *float64, factor float64) float64 {
	if v == nil {
		return math.NaN()
	}
	return *v * factor
}

// nominalTicks labels whole positions 0…n−1 with labels, showing at most
// about max of them so that they do not run together.
type nominalTicks struct {
	labels []string
	max    int
}

// Ticks implements plot.Ticker.
func (t nominalTicks) Ticks(lo, hi float64) []plot.Tick {
	step := 1
	if t.max > 0 && len(t.labels) > t.max {
		step = (len(t.labels) + t.max - 1) / t.max
	}
	var out []plot.Tick
	for i, l := range t.labels {
		if float64(i) < lo-1e-9 || float64(i) > hi+1e-9 {
			continue
		}
		if i%step != 0 {
			l = ""
		}
		out = append(out, plot.Tick{Value: float64(i), Label: l})
	}
	return out
}

// ringStyle is the large ring drawn around a point beyond a 99.8% limit or
// a highlighted row, for the legend.
func ringStyle() draw.GlyphStyle {
	return draw.GlyphStyle{Color: shadeBlack.rgba(), Radius: vg.Points(5), Shape: thickRing{}}
}
