package report

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"math"
	"testing"
	"time"

	"polypledger/audit"
	"polypledger/logbook"
	"polypledger/stats"
)

// decodePNG decodes chart bytes and checks the pixel size the options ask
// for: millimetres ÷ 25.4 × dots per inch.
func decodePNG(t *testing.T, name string, b []byte, opt ChartOptions) image.Image {
	t.Helper()
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("%s: not a PNG: %v", name, err)
	}
	wantW := int(math.Round(opt.WidthMM / 25.4 * float64(opt.DPI)))
	wantH := int(math.Round(opt.HeightMM / 25.4 * float64(opt.DPI)))
	if got := img.Bounds().Size(); absInt(got.X-wantW) > 1 || absInt(got.Y-wantH) > 1 {
		t.Errorf("%s: %v pixels, want about %dx%d", name, got, wantW, wantH)
	}
	return img
}

func absInt(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// inkShare is the share of pixels that are not white: a chart that drew
// nothing has none.
func inkShare(img image.Image) float64 {
	b := img.Bounds()
	ink := 0
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bl, _ := img.At(x, y).RGBA()
			if r < 0xF000 || g < 0xF000 || bl < 0xF000 {
				ink++
			}
		}
	}
	return float64(ink) / float64((b.Dx()/2)*(b.Dy()/2))
}

// hasColour reports whether the image holds a pixel close to c.
func hasColour(img image.Image, c color.RGBA) bool {
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if nearByte(r>>8, c.R) && nearByte(g>>8, c.G) && nearByte(bl>>8, c.B) {
				return true
			}
		}
	}
	return false
}

func nearByte(a uint32, b uint8) bool { return math.Abs(float64(a)-float64(b)) <= 6 }

// chartFixtures are small literal figures for every chart function.
func chartFixtures() map[string]func(ChartOptions) ([]byte, error) {
	ind := func(id string, k, n int, target float64) audit.Indicator {
		i := audit.Proportion(id, k, n)
		t := target
		i.Judge(&audit.Target{Minimum: &t}, 30)
		return i
	}
	res := audit.MetricsResult{Unit: audit.PopulationResult{Indicators: []audit.Indicator{ind("adr", 90, 300, 0.35)}}}
	for i, k := range []int{40, 15, 35} {
		res.Operators = append(res.Operators, audit.OperatorResult{OperatorID: []string{"E01", "E02", "E03"}[i], Indicators: []audit.Indicator{ind("adr", k, 100, 0.35)}})
	}
	funnel, err := audit.NewFunnel(res, "adr")
	if err != nil {
		panic(err)
	}
	target := 0.35
	tp := stats.CUSUMParams{P0: 0.1, P1: 0.2, Alpha: 0.1, Beta: 0.1}
	prog, err := audit.NewTraineeProgress(&audit.Profile{ID: "t", MinCases: 30}, tp, audit.MetricsOptions{})
	if err != nil {
		panic(err)
	}
	for i := range 40 {
		c := logbook.Case{Procedure: logbook.NewProcedure()}
		c.ID, c.TraineeID, c.OperatorID = "P"+string(rune('A'+i%26))+string(rune('a'+i/26)), "T01", "E01"
		c.PerformedOn = time.Date(2026, time.Month(1+i/10), 1+i%10, 0, 0, 0, 0, time.UTC)
		c.Supervision = logbook.SupervisedHandsOn
		c.TraineeReachedCaecum = logbook.Yes
		if i%5 == 0 {
			c.TraineeReachedCaecum = logbook.No
		}
		prog.Add(&c)
	}
	tr := prog.Result()[0]
	return map[string]func(ChartOptions) ([]byte, error){
		"funnel": func(o ChartOptions) ([]byte, error) {
			return FunnelChart(FunnelData{Funnel: funnel, Target: &target}, o)
		},
		"trend": func(o ChartOptions) ([]byte, error) {
			return TrendChart(TrendData{IndicatorID: "adr", Name: "E01", Points: []TrendPoint{
				{Label: "2026-Q1", Indicator: ind("adr", 10, 40, 0.35)}, {Label: "2026-Q2", Indicator: ind("adr", 20, 45, 0.35)},
				{Label: "2026-Q3", Indicator: ind("adr", 5, 12, 0.35), Provisional: "provisional: the period is not over yet"},
			}, ComparisonName: "unit", Comparison: []TrendPoint{{Label: "2026-Q1", Indicator: ind("adr", 80, 300, 0.35)}}}, o)
		},
		"cusum":   func(o ChartOptions) ([]byte, error) { return CUSUMChart(tr.CUSUM, o) },
		"trainee": func(o ChartOptions) ([]byte, error) { return TraineeCasesChart(tr.Months, o) },
		"forest": func(o ChartOptions) ([]byte, error) {
			return ForestChart(ForestData{IndicatorID: "adr", Reference: &target, ReferenceLabel: "target", Rows: []ForestRow{
				{"E01", res.Operators[0].Indicators[0]}, {"E02", res.Operators[1].Indicators[0]}, {"E03", res.Operators[2].Indicators[0]},
			}}, o)
		},
	}
}

func TestChartsDrawPNGOfTheAskedSize(t *testing.T) {
	for name, draw := range chartFixtures() {
		for _, opt := range []ChartOptions{{WidthMM: 120, HeightMM: 70, DPI: 100}, {WidthMM: 180, HeightMM: 90, DPI: 150}} {
			b, err := draw(opt)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			img := decodePNG(t, name, b, opt)
			if s := inkShare(img); s < 0.01 {
				t.Errorf("%s: only %.3f of the pixels are drawn; the chart looks empty", name, s)
			}
		}
	}
}

func TestChartDefaultsAndHighlight(t *testing.T) {
	draw := chartFixtures()["funnel"]
	b, err := draw(ChartOptions{})
	if err != nil {
		t.Fatal(err)
	}
	decodePNG(t, "funnel default", b, ChartOptions{WidthMM: defaultChartWidthMM, HeightMM: defaultChartHeightMM, DPI: defaultChartDPI})
	h, err := draw(ChartOptions{Highlight: "E02"})
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Equal(b, h) {
		t.Error("highlighting a point changed nothing in the picture")
	}
}

// The funnel's below-limit point (E02, 15/100 around a pooled 30%) is
// drawn in vermilion and the within-limit ones in blue (Okabe–Ito), and
// the shapes differ too (checked by the verdict and side marks).
func TestFunnelMarksBySide(t *testing.T) {
	b, err := chartFixtures()["funnel"](ChartOptions{DPI: 100})
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	if !hasColour(img, shadeVermilion.rgba()) {
		t.Error("no vermilion mark for the point below the limit")
	}
	marks := map[stats.Side]mark{stats.SideWithin: funnelMark(stats.SideWithin), stats.SideAbove: funnelMark(stats.SideAbove), stats.SideBelow: funnelMark(stats.SideBelow)}
	seen := map[string]stats.Side{}
	for s, m := range marks {
		key := typeName(m.glyph)
		if other, dup := seen[key]; dup {
			t.Errorf("sides %q and %q share the marker shape %s", s, other, key)
		}
		seen[key] = s
	}
}

func TestVerdictMarksDifferInShapeAndWords(t *testing.T) {
	seen := map[string]audit.Status{}
	words := map[string]audit.Status{}
	for _, s := range []audit.Status{audit.Meets, audit.Below, audit.TooFew, audit.Reported} {
		m := verdictMark(s)
		if other, dup := seen[typeName(m.glyph)]; dup {
			t.Errorf("%s and %s share the marker shape %s", s, other, typeName(m.glyph))
		}
		seen[typeName(m.glyph)] = s
		if m.words == "" || words[m.words] != "" {
			t.Errorf("%s: legend words %q empty or shared", s, m.words)
		}
		words[m.words] = s
	}
	if verdictMark(audit.TooFew).words != "too few cases to judge" {
		t.Errorf("too few: legend says %q", verdictMark(audit.TooFew).words)
	}
}

func typeName(v any) string { return fmt.Sprintf("%T", v) }

func TestAxisScale(t *testing.T) {
	cases := []struct {
		id     string
		factor float64
		unit   string
	}{
		{"adr", 100, "%"},
		{"perforation", 1000, "per 1000"},
		{"withdrawal_negative", 1, "minutes"},
		{"sedation_fentanyl_median_under70", 1, "µg"},
		{"adr_aid_difference", 100, "percentage points"},
		{"optical_kappa", 1, ""},
	}
	for _, c := range cases {
		f, u := axisScale(c.id)
		if f != c.factor || u != c.unit {
			t.Errorf("%s: factor %v unit %q, want %v %q", c.id, f, u, c.factor, c.unit)
		}
	}
}

func TestSpanPadded(t *testing.T) {
	cases := []struct {
		name             string
		add              []float64
		min, floor, ceil float64
		lo, hi           float64
	}{
		{"widened to the minimum width", []float64{50, 52}, 10, math.NaN(), math.NaN(), 45.5, 56.5},
		{"padded a twentieth each side", []float64{20, 60}, 10, math.NaN(), math.NaN(), 18, 62},
		// A bound moves the range rather than cutting it: 80–100 padded by 1
		// is 79–101, which passes the ceiling by half a pad and so slides
		// down to 78.5–100.5.
		{"kept near a ceiling of 100", []float64{80, 100}, 10, 0, 100, 78.5, 100.5},
		{"kept near a floor of 0", []float64{0, 40}, 10, 0, 100, -1, 43},
		{"empty", nil, 10, math.NaN(), math.NaN(), -0.5, 10.5},
	}
	for _, c := range cases {
		s := newSpan()
		s.add(c.add...)
		lo, hi := s.padded(c.min, c.floor, c.ceil)
		if math.Abs(lo-c.lo) > 1e-9 || math.Abs(hi-c.hi) > 1e-9 {
			t.Errorf("%s: [%v, %v], want [%v, %v]", c.name, lo, hi, c.lo, c.hi)
		}
	}
}
