package report

import (
	"math"

	"polypledger/audit"
	"polypledger/logbook"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TrendPoint is one period of a trend: its label (such as "2026-Q1") and
// the indicator over that period. Provisional, when set, says why the
// point may still change (ProvisionalNote): it is drawn as an open grey
// mark rather than with its verdict, so that a quarter not yet over or
// still waiting for histology does not read as a fall.
type TrendPoint struct {
	Label       string
	Indicator   audit.Indicator
	Provisional string
}

// TrendData is what TrendChart draws: one indicator over consecutive
// periods for a population, and optionally the same for a comparison
// population (the whole unit) over the same periods.
type TrendData struct {
	// IndicatorID names the indicator for the title and axis.
	IndicatorID string
	// Name is the legend name of the population followed (an operator id,
	// "you", or "unit").
	Name   string
	Points []TrendPoint
	// ComparisonName and Comparison are the comparison series; Comparison
	// may be empty. Its labels must match Points' by position.
	ComparisonName string
	Comparison     []TrendPoint
}

// TrendChart draws an indicator period by period: each period's value with
// its 95% interval as a whisker and its verdict as the marker shape (filled
// circle meets, downward triangle below, open circle too few cases), the
// target as a dash-dot reference line, and the comparison series as a
// dashed line with square marks.
func TrendChart(t TrendData, opt ChartOptions) ([]byte, error) {
	opt = opt.withDefaults(80)
	factor, _ := axisScale(t.IndicatorID)
	p := newPlot(opt.title(audit.IndicatorTitle(t.IndicatorID)+" by quarter"), "Quarter", axisUnit(t.IndicatorID))
	labels := make([]string, len(t.Points))
	ys := newSpan()
	var pts []chartPoint
	var line plotter.XYs
	seen := map[audit.Status]bool{}
	provisional := false
	var target *float64
	for i, tp := range t.Points {
		labels[i] = tp.Label
		ind := tp.Indicator
		if ind.Target != nil {
			target = ind.Target
		}
		v := valueOr(ind.Value, factor)
		if math.IsNaN(v) {
			continue
		}
		m := verdictMark(ind.Status)
		if tp.Provisional != "" {
			m = provisionalMark()
			provisional = true
		} else {
			seen[ind.Status] = true
		}
		lo, hi := valueOr(ind.CILow, factor), valueOr(ind.CIHigh, factor)
		pts = append(pts, chartPoint{X: float64(i), Y: v, Lo: lo, Hi: hi, Mark: m})
		line = append(line, plotter.XY{X: float64(i), Y: v})
		ys.add(v, lo, hi)
	}
	var cmpLine plotter.XYs
	var cmpPts []chartPoint
	for i, tp := range t.Comparison {
		if i >= len(t.Points) {
			break
		}
		v := valueOr(tp.Indicator.Value, factor)
		if math.IsNaN(v) {
			continue
		}
		cmpLine = append(cmpLine, plotter.XY{X: float64(i), Y: v})
		cmpPts = append(cmpPts, chartPoint{X: float64(i), Y: v, Lo: math.NaN(), Hi: math.NaN(),
			Mark: mark{draw.SquareGlyph{}, shadeBlack, ""}, Radius: vg.Points(2.6)})
		ys.add(v)
	}
	if target != nil {
		ys.add(*target * factor)
	}
	floor, ceil := axisBounds(t.IndicatorID)
	p.Y.Min, p.Y.Max = ys.padded(10, floor, ceil)
	p.X.Min, p.X.Max = -0.5, math.Max(0.5, float64(len(t.Points))-0.5)
	p.X.Tick.Marker = nominalTicks{labels: labels, max: 12}

	targetSty := lineStyle(shadeOrange, 1.4, dashDot())
	mainSty := lineStyle(shadeBlack, 1, nil)
	cmpSty := lineStyle(shadeGrey, 1, dashed())
	if target != nil {
		p.Add(refLine{at: *target * factor, sty: targetSty, below: true, label: "target " + scaler(t.IndicatorID).Format(*target)})
	}
	p.Add(curve{cmpLine, cmpSty}, &points{pts: cmpPts}, curve{line, mainSty}, &points{pts: pts})

	name := t.Name
	if name == "" {
		name = "this population"
	}
	legend := []legendItem{lineItem(name+" (bars: 95% interval)", mainSty)}
	if len(cmpLine) > 0 {
		legend = append(legend, legendItem{t.ComparisonName, comboThumb{cmpSty, draw.GlyphStyle{Color: shadeBlack.rgba(), Radius: vg.Points(2.6), Shape: draw.SquareGlyph{}}}})
	}
	if target != nil {
		legend = append(legend, lineItem("standard's target", targetSty))
	}
	for _, s := range []audit.Status{audit.Meets, audit.Below, audit.TooFew, audit.Reported} {
		if seen[s] {
			legend = append(legend, markItem(verdictMark(s), ""))
		}
	}
	if provisional {
		legend = append(legend, markItem(provisionalMark(), ""))
	}
	return render(p, legend, opt)
}

// provisionalMark is the mark of a point whose figure may still change.
func provisionalMark() mark {
	return mark{openDiamond{}, shadeGrey, "provisional: not over, or histology awaited"}
}

// openDiamond is an open diamond, the mark of a provisional figure.
type openDiamond struct{}

// DrawGlyph implements draw.GlyphDrawer.
func (openDiamond) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius * 1.3
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1.2)})
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	p.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X - r, Y: pt.Y})
	p.Close()
	c.Stroke(p)
}

// comboThumb is a line sample with a mark on it, for the legend.
type comboThumb struct {
	line  draw.LineStyle
	glyph draw.GlyphStyle
}

// Thumbnail implements plot.Thumbnailer.
func (c comboThumb) Thumbnail(cv *draw.Canvas) {
	lineThumb{c.line}.Thumbnail(cv)
	cv.DrawGlyph(c.glyph, cv.Center())
}

// TraineeCasesChart draws a trainee's cumulative cases month by month: the
// total and each supervision level, told apart by dash pattern and mark.
func TraineeCasesChart(months []audit.MonthCount, opt ChartOptions) ([]byte, error) {
	opt = opt.withDefaults(80)
	p := newPlot(opt.title("Cumulative cases by supervision level"), "Month", "Cumulative cases")
	labels := make([]string, len(months))
	type series struct {
		name  string
		count func(audit.MonthCount) int
		sty   draw.LineStyle
		glyph draw.GlyphDrawer
		col   shade
	}
	all := []series{
		{"all cases", func(m audit.MonthCount) int { return m.Total }, lineStyle(shadeBlack, 1.4, nil), draw.CircleGlyph{}, shadeBlack},
		{logbook.Independent.Words(), func(m audit.MonthCount) int { return m.Independent }, lineStyle(shadeBlue, 1.1, dashed()), draw.BoxGlyph{}, shadeBlue},
		{logbook.SupervisedHandsOn.Words(), func(m audit.MonthCount) int { return m.SupervisedHandsOn }, lineStyle(shadeVermilion, 1.1, dotted()), upTriangle{}, shadeVermilion},
		{logbook.SupervisedObserved.Words(), func(m audit.MonthCount) int { return m.SupervisedObserved }, lineStyle(shadeGreen, 1.1, dashDot()), downTriangle{}, shadeGreen},
		{"supervision not recorded", func(m audit.MonthCount) int { return m.Unrecorded }, lineStyle(shadeGrey, 1, dashed()), thickRing{}, shadeGrey},
	}
	ys := newSpan()
	ys.add(0)
	var legend []legendItem
	for si, s := range all {
		var line plotter.XYs
		var pts []chartPoint
		cum, any := 0, false
		for i, m := range months {
			labels[i] = m.Month
			cum += s.count(m)
			any = any || s.count(m) > 0
			line = append(line, plotter.XY{X: float64(i), Y: float64(cum)})
			pts = append(pts, chartPoint{X: float64(i), Y: float64(cum), Lo: math.NaN(), Hi: math.NaN(),
				Mark: mark{s.glyph, s.col, ""}, Radius: vg.Points(2.4)})
			ys.add(float64(cum))
		}
		if !any && si > 0 {
			continue
		}
		p.Add(curve{line, s.sty}, &points{pts: pts})
		legend = append(legend, legendItem{s.name, comboThumb{s.sty, draw.GlyphStyle{Color: s.col.rgba(), Radius: vg.Points(2.4), Shape: s.glyph}}})
	}
	p.Y.Min, p.Y.Max = ys.padded(10, 0, math.NaN())
	p.X.Min, p.X.Max = -0.5, math.Max(0.5, float64(len(months))-0.5)
	p.X.Tick.Marker = nominalTicks{labels: labels, max: 12}
	return render(p, legend, opt)
}

var _ plot.Thumbnailer = comboThumb{}
