package logbook

import "testing"

// TestHistologyGroups checks every histology code against the derived groups
// of clinical-reference §1: adenoma = tubular, tubulovillous, villous or
// adenocarcinoma (cancer counted with adenomas is common practice for ADR);
// SSL = ssl or ssl_dysplasia (not TSA); final = anything but pending/empty.
func TestHistologyGroups(t *testing.T) {
	tests := []struct {
		h                     Histology
		adenoma, ssl, isFinal bool
	}{
		{"", false, false, false},
		{HistPending, false, false, false},
		{TubularAdenoma, true, false, true},
		{TubulovillousAdeno, true, false, true},
		{VillousAdenoma, true, false, true},
		{Adenocarcinoma, true, false, true},
		{HistSSL, false, true, true},
		{HistSSLDysplasia, false, true, true},
		{HistTSA, false, false, true},
		{HistHyperplastic, false, false, true},
		{HistNormal, false, false, true},
		{HistInflammatory, false, false, true},
		{HistOther, false, false, true},
	}
	if len(tests) != len(Histologies)+1 {
		t.Fatalf("table has %d rows; every histology code and empty need one (%d)", len(tests), len(Histologies)+1)
	}
	for _, tt := range tests {
		if got := tt.h.IsAdenoma(); got != tt.adenoma {
			t.Errorf("%q.IsAdenoma() = %v, want %v", tt.h, got, tt.adenoma)
		}
		if got := tt.h.IsSSL(); got != tt.ssl {
			t.Errorf("%q.IsSSL() = %v, want %v", tt.h, got, tt.ssl)
		}
		if got := tt.h.IsFinal(); got != tt.isFinal {
			t.Errorf("%q.IsFinal() = %v, want %v", tt.h, got, tt.isFinal)
		}
	}
}

// TestPolypectomy: every resection but none and biopsy only
// (clinical-reference §1, "polypectomy").
func TestPolypectomy(t *testing.T) {
	want := map[Resection]bool{
		"": false, ResectionNone: false, BiopsyOnly: false,
		ColdSnare: true, HotSnare: true, ColdForceps: true, EMREnBloc: true, EMRPiecemeal: true, ESD: true,
	}
	if len(want) != len(Resections)+1 {
		t.Fatalf("table covers %d resections, want %d", len(want)-1, len(Resections))
	}
	for r, w := range want {
		if got := r.IsPolypectomy(); got != w {
			t.Errorf("%q.IsPolypectomy() = %v, want %v", r, got, w)
		}
	}
}

// TestSegments: proximal = caecum to splenic flexure; rectosigmoid = rectum
// or sigmoid (common practice, clinical-reference §1).
func TestSegments(t *testing.T) {
	tests := []struct {
		s                      Segment
		proximal, rectosigmoid bool
	}{
		{Caecum, true, false},
		{Ascending, true, false},
		{HepaticFlexure, true, false},
		{Transverse, true, false},
		{SplenicFlexure, true, false},
		{Descending, false, false},
		{Sigmoid, false, true},
		{Rectum, false, true},
		{"", false, false},
	}
	if len(tests) != len(Segments)+1 {
		t.Fatalf("table covers %d segments, want %d", len(tests)-1, len(Segments))
	}
	for _, tt := range tests {
		if got := tt.s.IsProximal(); got != tt.proximal {
			t.Errorf("%q.IsProximal() = %v, want %v", tt.s, got, tt.proximal)
		}
		if got := tt.s.IsRectosigmoid(); got != tt.rectosigmoid {
			t.Errorf("%q.IsRectosigmoid() = %v, want %v", tt.s, got, tt.rectosigmoid)
		}
	}
}

// TestExtentComplete: complete = caecum, terminal ileum or anastomosis
// (clinical-reference §2, counting rules).
func TestExtentComplete(t *testing.T) {
	want := map[Extent]bool{ExtentCaecum: true, ExtentTerminalIleum: true, ExtentAnastomosis: true, ExtentIncomplete: false, "": false}
	for e, w := range want {
		if got := e.IsComplete(); got != w {
			t.Errorf("%q.IsComplete() = %v, want %v", e, got, w)
		}
	}
}

// TestLesionSize: diminutive ≤5 mm, large ≥10 mm (common practice); a size
// not recorded is neither.
func TestLesionSize(t *testing.T) {
	tests := []struct {
		mm                int
		diminutive, large bool
	}{
		{NotRecorded, false, false},
		{1, true, false},
		{5, true, false},
		{6, false, false},
		{9, false, false},
		{10, false, true},
		{150, false, true},
	}
	for _, tt := range tests {
		l := Lesion{SizeMM: tt.mm}
		if got := l.IsDiminutive(); got != tt.diminutive {
			t.Errorf("%d mm: IsDiminutive() = %v, want %v", tt.mm, got, tt.diminutive)
		}
		if got := l.IsLarge(); got != tt.large {
			t.Errorf("%d mm: IsLarge() = %v, want %v", tt.mm, got, tt.large)
		}
	}
}

// TestAdvancedAdenoma: adenoma ≥10 mm, or tubulovillous/villous, or
// high-grade dysplasia, or adenocarcinoma (clinical-reference §1).
func TestAdvancedAdenoma(t *testing.T) {
	tests := []struct {
		name string
		l    Lesion
		want bool
	}{
		{"small tubular low grade", Lesion{Histology: TubularAdenoma, SizeMM: 9, Dysplasia: DysplasiaLow}, false},
		{"tubular 10 mm", Lesion{Histology: TubularAdenoma, SizeMM: 10, Dysplasia: DysplasiaLow}, true},
		{"small tubular high grade", Lesion{Histology: TubularAdenoma, SizeMM: 4, Dysplasia: DysplasiaHigh}, true},
		{"small tubulovillous", Lesion{Histology: TubulovillousAdeno, SizeMM: 4, Dysplasia: DysplasiaLow}, true},
		{"small villous", Lesion{Histology: VillousAdenoma, SizeMM: 3, Dysplasia: DysplasiaLow}, true},
		{"small adenocarcinoma", Lesion{Histology: Adenocarcinoma, SizeMM: 3}, true},
		{"large SSL is not an adenoma", Lesion{Histology: HistSSL, SizeMM: 25, Dysplasia: DysplasiaNone}, false},
		{"SSL with high-grade dysplasia is not an adenoma", Lesion{Histology: HistSSLDysplasia, SizeMM: 8, Dysplasia: DysplasiaHigh}, false},
		{"large TSA is not an adenoma", Lesion{Histology: HistTSA, SizeMM: 15}, false},
		{"large pending lesion", Lesion{Histology: HistPending, SizeMM: 30}, false},
	}
	for _, tt := range tests {
		if got := tt.l.IsAdvancedAdenoma(); got != tt.want {
			t.Errorf("%s: IsAdvancedAdenoma() = %v, want %v", tt.name, got, tt.want)
		}
	}
}

// TestBBPS: Boston Bowel Preparation Scale (Lai EJ et al., Gastrointest
// Endosc 2009;69:620–625): total 0–9; adequate = every segment ≥2 (US
// Multi-Society Task Force, Johnson DA et al., Gastroenterology
// 2014;147:903–924), so a total of 7 with one segment at 1 is inadequate.
// The surveillance exam gate fails on any recorded segment below 2.
func TestBBPS(t *testing.T) {
	const nr = NotRecorded
	tests := []struct {
		r, tr, l  int
		recorded  bool
		total     int
		adequate  bool
		anyBelow2 bool
	}{
		{2, 2, 2, true, 6, true, false},
		{3, 3, 3, true, 9, true, false},
		{3, 3, 1, true, 7, false, true},
		{1, 2, 3, true, 6, false, true},
		{0, 0, 0, true, 0, false, true},
		{3, 3, nr, false, nr, false, false},
		{1, nr, nr, false, nr, false, true},
		{nr, nr, nr, false, nr, false, false},
	}
	for _, tt := range tests {
		p := NewProcedure()
		p.BBPSRight, p.BBPSTransverse, p.BBPSLeft = tt.r, tt.tr, tt.l
		if got := p.BBPSRecorded(); got != tt.recorded {
			t.Errorf("%d/%d/%d: BBPSRecorded() = %v, want %v", tt.r, tt.tr, tt.l, got, tt.recorded)
		}
		if got := p.BBPSTotal(); got != tt.total {
			t.Errorf("%d/%d/%d: BBPSTotal() = %d, want %d", tt.r, tt.tr, tt.l, got, tt.total)
		}
		if got := p.BBPSAdequate(); got != tt.adequate {
			t.Errorf("%d/%d/%d: BBPSAdequate() = %v, want %v", tt.r, tt.tr, tt.l, got, tt.adequate)
		}
		if got := p.AnyBBPSBelow2(); got != tt.anyBelow2 {
			t.Errorf("%d/%d/%d: AnyBBPSBelow2() = %v, want %v", tt.r, tt.tr, tt.l, got, tt.anyBelow2)
		}
	}
}

func TestNewRecordsStartNotRecorded(t *testing.T) {
	p := NewProcedure()
	for name, v := range map[string]float64{
		"age": float64(p.Age), "withdrawal": float64(p.WithdrawalSeconds), "bbps_right": float64(p.BBPSRight),
		"bbps_transverse": float64(p.BBPSTransverse), "bbps_left": float64(p.BBPSLeft), "comfort": float64(p.Comfort),
		"midazolam": p.MidazolamMg, "fentanyl": p.FentanylUg, "pethidine": p.PethidineMg,
	} {
		if v != NotRecorded {
			t.Errorf("NewProcedure().%s = %g, want NotRecorded", name, v)
		}
	}
	if l := NewLesion(); l.SizeMM != NotRecorded {
		t.Errorf("NewLesion().SizeMM = %d, want NotRecorded", l.SizeMM)
	}
}

// TestHistologyTableGroups checks the groups the guideline tables and the
// optical-diagnosis audit read, histology by histology (clinical-reference
// §1, §3 and §4): the adenomas the tables count leave cancer out; SSL with
// or without dysplasia; SSL or TSA; the serrated umbrella adds hyperplastic
// polyps.
func TestHistologyTableGroups(t *testing.T) {
	for _, c := range []struct {
		h                                  Histology
		adenomaNotCancer, ssl, sslTSA, srr bool
	}{
		{HistPending, false, false, false, false},
		{TubularAdenoma, true, false, false, false},
		{TubulovillousAdeno, true, false, false, false},
		{VillousAdenoma, true, false, false, false},
		{HistSSL, false, true, true, true},
		{HistSSLDysplasia, false, true, true, true},
		{HistTSA, false, false, true, true},
		{HistHyperplastic, false, false, false, true},
		{Adenocarcinoma, false, false, false, false},
		{HistNormal, false, false, false, false},
		{HistInflammatory, false, false, false, false},
		{HistOther, false, false, false, false},
	} {
		if c.h.IsAdenomaNotCancer() != c.adenomaNotCancer || c.h.IsSSL() != c.ssl || c.h.IsSSLOrTSA() != c.sslTSA || c.h.IsSerrated() != c.srr {
			t.Errorf("%s: IsAdenomaNotCancer %v IsSSL %v IsSSLOrTSA %v IsSerrated %v", c.h,
				c.h.IsAdenomaNotCancer(), c.h.IsSSL(), c.h.IsSSLOrTSA(), c.h.IsSerrated())
		}
	}
}

// TestSpecimenRules checks which lesions will never have histology and
// which still await it (clinical-reference §4 step 1): not retrieved, not
// sent, or left in place without being sent means no specimen; a lesion
// with a specimen and no final histology awaits it.
func TestSpecimenRules(t *testing.T) {
	for _, c := range []struct {
		name                string
		retrieved, sent     YesNo
		resection           Resection
		histology           Histology
		noSpecimen, awaited bool
	}{
		{"sent, pending", Yes, Yes, ColdSnare, HistPending, false, true},
		{"sent, reported", Yes, Yes, ColdSnare, TubularAdenoma, false, false},
		{"sending not recorded", Unrecorded, Unrecorded, ColdSnare, "", false, true},
		{"not retrieved", No, No, ColdSnare, "", true, false},
		{"not sent", Yes, No, ColdSnare, "", true, false},
		{"not sent, pending written anyway", Yes, No, ColdSnare, HistPending, true, false},
		{"left in place", Unrecorded, Unrecorded, ResectionNone, "", true, false},
		{"left in place, biopsy sent", Unrecorded, Yes, ResectionNone, HistPending, false, true},
	} {
		l := Lesion{Retrieved: c.retrieved, SentToPathology: c.sent, Resection: c.resection, Histology: c.histology}
		if l.HasNoSpecimen() != c.noSpecimen || l.AwaitsHistology() != c.awaited {
			t.Errorf("%s: no specimen %v, awaits %v", c.name, l.HasNoSpecimen(), l.AwaitsHistology())
		}
	}
}
