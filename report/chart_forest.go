package report

import (
	"math"
	"polypledger/audit"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// ForestRow is one row of a forest chart: a label (an operator, "unit",
// "peer 3") and its figure.
type ForestRow struct {
	Label     string
	Indicator audit.Indicator
}

// ForestData is what ForestChart draws: one figure per row with its 95%
// interval, and an optional vertical reference line.
type ForestData struct {
	// IndicatorID names the figure for the axis.
	IndicatorID string
	Rows        []ForestRow
	// Reference draws a vertical line at this value (in the figure's own
	// terms: 0.9 for 90%, 0 for no difference); nil draws none.
	Reference      *float64
	ReferenceLabel string
}

// ForestChart draws one row per population, top to bottom in the order
// given: the value as a mark whose shape tells the verdict, the 95%
// interval as a horizontal bar, and the reference line. A row whose label
// is opt.Highlight is ringed. Rows without a value show no mark.
func ForestChart(f ForestData, opt ChartOptions) ([]byte, error) {
	opt = opt.withDefaults(30 + 6.5*float64(len(f.Rows)))
	factor, _ := axisScale(f.IndicatorID)
	p := newPlot(opt.title(audit.IndicatorTitle(f.IndicatorID)), axisTitle(f.IndicatorID), "")
	n := len(f.Rows)
	labels := make([]string, n)
	xs := newSpan()
	var pts []chartPoint
	seen := map[audit.Status]bool{}
	for i, r := range f.Rows {
		y := float64(n - 1 - i)
		labels[n-1-i] = r.Label
		ind := r.Indicator
		v := valueOr(ind.Value, factor)
		if math.IsNaN(v) {
			continue
		}
		lo, hi := valueOr(ind.CILow, factor), valueOr(ind.CIHigh, factor)
		m := verdictMark(ind.Status)
		seen[ind.Status] = true
		cp := chartPoint{X: v, Y: y, Lo: lo, Hi: hi, Mark: m}
		if opt.Highlight != "" && r.Label == opt.Highlight {
			cp.Ring, cp.Radius = true, vg.Points(3.6)
		}
		pts = append(pts, cp)
		xs.add(v, lo, hi)
	}
	if f.Reference != nil {
		xs.add(*f.Reference * factor)
	}
	floor, ceil := axisBounds(f.IndicatorID)
	p.X.Min, p.X.Max = xs.padded(10, floor, ceil)
	p.Y.Min, p.Y.Max = -0.6, float64(n)-0.4
	p.Y.Tick.Marker = nominalTicks{labels: labels}
	p.Y.Tick.Length = 0
	refSty := lineStyle(shadeOrange, 1.4, dashDot())
	if f.Reference != nil {
		p.Add(refLine{at: *f.Reference * factor, vertical: true, sty: refSty, label: f.ReferenceLabel})
	}
	p.Add(&points{pts: pts, horizontal: true})
	var legend []legendItem
	for _, s := range []audit.Status{audit.Meets, audit.Below, audit.TooFew, audit.Reported} {
		if seen[s] {
			legend = append(legend, markItem(verdictMark(s), ""))
		}
	}
	if f.Reference != nil && f.ReferenceLabel != "" {
		legend = append(legend, lineItem(f.ReferenceLabel, refSty))
	}
	legend = append(legend, lineItem("bar: 95% interval", lineStyle(shadeBlack, 0.8, nil)))
	return render(p, legend, opt)
}

var _ plot.Ticker = nominalTicks{}
var _ draw.GlyphDrawer = downTriangle{}
