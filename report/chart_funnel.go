package report

import (
	"fmt"
	"math"
	"polypledger/audit"
	"polypledger/stats"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
)

// FunnelData is what FunnelChart draws: a funnel plot and, optionally, the
// standard's target for the same indicator as a reference line. Point
// labels are the points' OperatorID, so a caller that must not name others
// (the personal report) relabels the points first.
type FunnelData struct {
	Funnel audit.Funnel
	// Target is the standard profile's target, drawn as a reference line;
	// nil draws none.
	Target *float64
}

// funnel point marks: a circle within the 95% limits, an upward triangle
// above them and a downward triangle below; a point beyond the 99.8% limit
// is ringed as well.
func funnelMark(s stats.Side) mark {
	switch s {
	case stats.SideAbove:
		return mark{upTriangle{}, shadeGreen, "above the 95% limit"}
	case stats.SideBelow:
		return mark{downTriangle{}, shadeVermilion, "below the 95% limit"}
	}
	return mark{thickRing{}, shadeBlue, "within the 95% limits"}
}

// FunnelChart draws a funnel plot (Spiegelhalter, Stat Med 2005): each
// operator's rate against the number of cases in its denominator, the
// unit's pooled rate, the 95% (dashed) and 99.8% (dotted) exact binomial
// control limits, and the standard's target (dash-dot) when given. The
// point named by opt.Highlight is drawn larger with a bold label.
func FunnelChart(f FunnelData, opt ChartOptions) ([]byte, error) {
	opt = opt.withDefaults(defaultChartHeightMM)
	fn := f.Funnel
	title := opt.title("Funnel plot: " + audit.IndicatorTitle(fn.IndicatorID))
	p := newPlot(title, "Cases in the denominator (procedures)", audit.IndicatorTitle(fn.IndicatorID)+" (%)")

	maxN, minN := 10, math.MaxInt
	for _, pt := range fn.Points {
		maxN = max(maxN, pt.N)
		minN = min(minN, pt.N)
	}
	if minN == math.MaxInt {
		minN = maxN
	}
	xMax := float64(maxN) * 1.1
	if len(fn.Limits) > 0 {
		xMax = float64(fn.Limits[len(fn.Limits)-1].N)
	}
	// The y range shows every point, the pooled rate, the target and the
	// limits from a third of the smallest volume on; the widest part of the
	// funnel at very small volumes is clipped rather than squeezing the rest.
	ys := newSpan()
	ys.add(100 * fn.Target)
	if f.Target != nil {
		ys.add(100 * *f.Target)
	}
	visible := max(3, minN/3)
	var lo95, hi95, lo998, hi998 plotter.XYs
	for _, l := range fn.Limits {
		x := float64(l.N)
		lo95 = append(lo95, plotter.XY{X: x, Y: 100 * l.Low95})
		hi95 = append(hi95, plotter.XY{X: x, Y: 100 * l.High95})
		lo998 = append(lo998, plotter.XY{X: x, Y: 100 * l.Low998})
		hi998 = append(hi998, plotter.XY{X: x, Y: 100 * l.High998})
		if l.N >= visible && x <= xMax {
			ys.add(100*l.Low998, 100*l.High998)
		}
	}
	var pts []chartPoint
	for _, pt := range fn.Points {
		m := funnelMark(pt.Outside95)
		cp := chartPoint{X: float64(pt.N), Y: 100 * pt.Rate, Lo: math.NaN(), Hi: math.NaN(), Mark: m,
			Ring: pt.Outside998 != stats.SideWithin, Label: pt.OperatorID}
		if opt.Highlight != "" && pt.OperatorID == opt.Highlight {
			cp.Radius, cp.Bold = vg.Points(4.5), true
		}
		pts = append(pts, cp)
		ys.add(100 * pt.Rate)
	}
	p.Y.Min, p.Y.Max = ys.padded(10, 0, 100)
	p.X.Min, p.X.Max = 0, xMax
	p.X.Tick.Marker = countTicks{}

	limit95 := lineStyle(shadeBlue, 1, dashed())
	limit998 := lineStyle(shadeBlack, 1, dotted())
	pooled := lineStyle(shadeBlack, 1.2, nil)
	target := lineStyle(shadeOrange, 1.4, dashDot())
	// The two lines are named with their values in the legend, not on the
	// chart, where the points and each other's labels would crowd them.
	p.Add(curve{lo998, limit998}, curve{hi998, limit998}, curve{lo95, limit95}, curve{hi95, limit95})
	if f.Target != nil {
		p.Add(refLine{at: 100 * *f.Target, sty: target})
	}
	p.Add(refLine{at: 100 * fn.Target, sty: pooled})
	p.Add(&points{pts: pts})

	legend := []legendItem{
		lineItem(fmt.Sprintf("unit's pooled rate %.1f%%", 100*fn.Target), pooled),
		lineItem("95% control limits", limit95),
		lineItem("99.8% control limits", limit998),
	}
	if f.Target != nil {
		legend = append(legend, lineItem(fmt.Sprintf("standard's target %.1f%%", 100**f.Target), target))
	}
	legend = append(legend,
		markItem(funnelMark(stats.SideWithin), ""), markItem(funnelMark(stats.SideAbove), ""), markItem(funnelMark(stats.SideBelow), ""),
		legendItem{"ringed: beyond the 99.8% limit", glyphThumb{ringStyle()}},
	)
	return render(p, legend, opt)
}
