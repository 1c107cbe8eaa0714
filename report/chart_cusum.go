package report

import (
	"fmt"
	"math"
	"polypledger/audit"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// CUSUMChart draws a trainee's learning curve (Bolsin and Colson, Int J
// Qual Health Care 2000): the CUSUM after each case with a recorded
// outcome, failures marked with a cross, the decision limits +h1
// (unacceptable, dashed) and −h0 (acceptable, dotted) and the zero line.
// The parameters are printed in the axis label, since they are a local
// choice.
func CUSUMChart(c audit.CUSUMResult, opt ChartOptions) ([]byte, error) {
	opt = opt.withDefaults(85)
	pr := c.Params
	yLabel := fmt.Sprintf("CUSUM (success −%.3f, failure +%.3f)", c.S, 1-c.S)
	xLabel := fmt.Sprintf("Cases with a recorded outcome, in date order   [p0 %.2f, p1 %.2f, α %.2f, β %.2f]",
		pr.P0, pr.P1, pr.Alpha, pr.Beta)
	p := newPlot(opt.title("Learning curve (CUSUM): unassisted caecal intubation"), xLabel, yLabel)
	line := plotter.XYs{{X: 0, Y: 0}}
	var fails []chartPoint
	ys := newSpan()
	ys.add(0, c.H1, -c.H0)
	for i, pt := range c.Points {
		x := float64(i + 1)
		line = append(line, plotter.XY{X: x, Y: pt.Value})
		ys.add(pt.Value)
		if !pt.Success {
			fails = append(fails, chartPoint{X: x, Y: pt.Value, Lo: math.NaN(), Hi: math.NaN(),
				Mark: mark{draw.CrossGlyph{}, shadeVermilion, ""}, Radius: vg.Points(3)})
		}
	}
	p.Y.Min, p.Y.Max = ys.padded(2, math.NaN(), math.NaN())
	p.X.Min, p.X.Max = 0, math.Max(10, float64(len(c.Points))*1.02)

	curveSty := lineStyle(shadeBlack, 1.2, nil)
	h1Sty := lineStyle(shadeVermilion, 1.3, dashed())
	h0Sty := lineStyle(shadeBlue, 1.3, dotted())
	zero := lineStyle(shadeGrey, 0.8, nil)
	// A curve that starts before the period marks where the period begins.
	for i, pt := range c.Points {
		if pt.InPeriod {
			if i > 0 {
				p.Add(refLine{at: float64(i) + 0.5, vertical: true, sty: lineStyle(shadeGrey, 1, dashed()), label: "period starts"})
			}
			break
		}
	}
	p.Add(refLine{at: 0, sty: zero},
		refLine{at: c.H1, sty: h1Sty, label: fmt.Sprintf("+h1 = %.2f", c.H1)},
		refLine{at: -c.H0, sty: h0Sty, label: fmt.Sprintf("−h0 = −%.2f", c.H0)},
		curve{line, curveSty}, &points{pts: fails})
	legend := []legendItem{
		lineItem("CUSUM", curveSty),
		markItem(mark{crossMark(), shadeVermilion, ""}, "failure (trainer took over)"),
		lineItem("zero", zero),
		lineItem("+h1: crossing suggests unacceptable", h1Sty),
		lineItem("−h0: crossing suggests acceptable", h0Sty),
	}
	return render(p, legend, opt)
}

func crossMark() draw.GlyphDrawer { return draw.CrossGlyph{} }
