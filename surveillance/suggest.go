package surveillance

import (
	"fmt"
	"strings"

	"polypledger/logbook"
)

// Guideline names a published post-polypectomy surveillance guideline whose
// table the program applies (clinical-reference §4).
type Guideline string

// The guidelines the program can apply.
const (
	USMSTF2020 Guideline = "usmstf-2020"
	ESGE2020   Guideline = "esge-2020"
	BSG2020    Guideline = "bsg-2020"
)

// DefaultGuideline is used when the unit's settings name none.
const DefaultGuideline = USMSTF2020

// Guidelines lists every guideline the program applies, in the order the app
// offers them.
var Guidelines = []Guideline{USMSTF2020, ESGE2020, BSG2020}

// Title returns the guideline's short printed name.
func (g Guideline) Title() string {
	switch g {
	case USMSTF2020:
		return "US Multi-Society Task Force 2020"
	case ESGE2020:
		return "ESGE 2020"
	case BSG2020:
		return "BSG/ACPGBI/PHE 2020"
	}
	return string(g)
}

// Source returns the full published reference of the guideline, printed on
// methods pages and beside every interval.
func (g Guideline) Source() string {
	switch g {
	case USMSTF2020:
		return "Gupta S et al. Recommendations for follow-up after colonoscopy and polypectomy: a consensus update by the US Multi-Society Task Force on Colorectal Cancer. Gastroenterology 2020;158:1131–1153 (also Am J Gastroenterol 2020;115:415–434)."
	case ESGE2020:
		return "Hassan C et al. Post-polypectomy colonoscopy surveillance: European Society of Gastrointestinal Endoscopy (ESGE) Guideline – Update 2020. Endoscopy 2020;52:687–700."
	case BSG2020:
		return "Rutter MD et al. British Society of Gastroenterology/Association of Coloproctology of Great Britain and Ireland/Public Health England post-polypectomy and post-colorectal cancer resection surveillance guidelines. Gut 2020;69:201–223."
	}
	return ""
}

// ParseGuideline returns the guideline named by its code, such as
// "usmstf-2020".
func ParseGuideline(s string) (Guideline, error) {
	for _, g := range Guidelines {
		if string(g) == s {
			return g, nil
		}
	}
	names := make([]string, len(Guidelines))
	for i, g := range Guidelines {
		names[i] = string(g)
	}
	return "", fmt.Errorf("guideline %q is not one of %s", s, strings.Join(names, ", "))
}

// Suggestion is the surveillance interval the program suggests for one
// procedure under one guideline, with the findings that set it.
type Suggestion struct {
	Guideline Guideline        `json:"guideline"`
	Interval  logbook.Interval `json:"interval"`
	Reasons   []string         `json:"reasons"` // the findings that set it, plain English
	Caution   string           `json:"caution"`
}

// IntervalRank orders the interval codes from shortest to longest, for
// "shortest wins" and for the PIVI 1 shorter/longer split. The order is by
// lower bound, then upper bound (clinical-reference §4):
//
//	2-6m < 3-6m < 6m < 1y < 3y < 3-5y < 5-10y < 7-10y < 10y < screening
//
// "screening" (no surveillance; back to the screening programme, or a 10-year
// colonoscopy where there is none) is placed after 10y because it is at least
// as long and, where the programme's age limit has passed, means no further
// examination at all. The two never meet within one guideline (USMSTF uses
// 10y, ESGE and BSG use screening), so the choice only gives every code a
// distinct rank. The codes repeat, outside and pending are not intervals and
// have no rank (ok is false).
func IntervalRank(iv logbook.Interval) (rank int, ok bool) {
	switch iv {
	case logbook.Interval2to6m:
		return 1, true
	case logbook.Interval3to6m:
		return 2, true
	case logbook.Interval6m:
		return 3, true
	case logbook.Interval1y:
		return 4, true
	case logbook.Interval3y:
		return 5, true
	case logbook.Interval3to5y:
		return 6, true
	case logbook.Interval5to10y:
		return 7, true
	case logbook.Interval7to10y:
		return 8, true
	case logbook.Interval10y:
		return 9, true
	case logbook.IntervalScreening:
		return 10, true
	}
	return 0, false
}

// LesionReading says how a procedure's lesions are read before a guideline
// table is applied. The two modes share one code path so that the PIVI 1
// intervals A and B differ only in this switch.
type LesionReading int

// Lesion reading modes.
const (
	// HistologyFirst reads every lesion by its final histology; a lesion
	// without one is read by its optical call when that call may stand in
	// for histology (clinical-reference §4 step 1). This is how Suggest
	// reads, and it is PIVI 1's interval B when every lesion has histology.
	HistologyFirst LesionReading = iota
	// OpticalFirst reads every lesion whose optical call may stand in for
	// histology by that call, even when histology exists, and every other
	// lesion by histology: PIVI 1's interval A (clinical-reference §3).
	OpticalFirst
)

// ReadLesion is one lesion as the guideline tables see it: its place, size,
// shape and resection, and the histology it is read as.
type ReadLesion struct {
	LesionNo  int
	Segment   logbook.Segment
	SizeMM    int
	Paris     logbook.Paris
	Resection logbook.Resection
	Histology logbook.Histology
	Dysplasia logbook.Dysplasia
	// FromOptical is true when Histology and Dysplasia come from the
	// optical call rather than from pathology.
	FromOptical bool
	// NoSpecimen is true when the lesion will never have histology (see
	// logbook.Lesion.HasNoSpecimen) and no optical call may stand in for it, so that it is
	// read as a tubular adenoma with low-grade dysplasia of its recorded
	// size: the conservative reading (common practice; no guideline table
	// covers a polyp without histology; clinical-reference §4 step 1).
	NoSpecimen bool
}

// Reading is a procedure's lesions as read under one LesionReading.
type Reading struct {
	// Lesions are the lesions read: by final histology, by an optical call
	// standing in for it, or, with no specimen, as a tubular adenoma.
	Lesions []ReadLesion
	// Awaiting are the lesions sent to pathology whose histology is still to
	// come, with no optical call to stand in (Histology empty). They make the
	// interval pending, unless a finding among the lesions already read, or
	// a large lesion not removed, puts the procedure outside the guideline.
	Awaiting []ReadLesion
}

// OpticalStandIn returns the histology and dysplasia an optical call stands
// for when it may replace pathology: a diminutive lesion called adenoma,
// hyperplastic or SSL with high confidence (adenoma → tubular adenoma with
// low-grade dysplasia; hyperplastic → hyperplastic; SSL → SSL without
// dysplasia; clinical-reference §3 PIVI 1 and §4 step 1). ok is false for
// every other lesion.
func OpticalStandIn(l *logbook.Lesion) (h logbook.Histology, d logbook.Dysplasia, ok bool) {
	if !l.IsDiminutive() || l.Confidence != logbook.HighConfidence {
		return "", "", false
	}
	switch l.OpticalClass {
	case logbook.OpticalAdenoma:
		return logbook.TubularAdenoma, logbook.DysplasiaLow, true
	case logbook.OpticalHyperplastic:
		return logbook.HistHyperplastic, logbook.DysplasiaNone, true
	case logbook.OpticalSSL:
		return logbook.HistSSL, logbook.DysplasiaNone, true
	}
	return "", "", false
}

// ReadLesions reads c's lesions under mode (see LesionReading), in the
// order of clinical-reference §4 step 1: final histology (or, under
// OpticalFirst, an optical call that may stand in, first); else an optical
// call that may stand in; else, for a lesion sent to pathology, awaiting;
// else, for a lesion with no specimen, a tubular adenoma with low-grade
// dysplasia of its recorded size.
func ReadLesions(c *logbook.Case, mode LesionReading) Reading {
	r := Reading{Lesions: make([]ReadLesion, 0, len(c.Lesions))}
	for i := range c.Lesions {
		l := &c.Lesions[i]
		rl := ReadLesion{LesionNo: l.LesionNo, Segment: l.Segment, SizeMM: l.SizeMM, Paris: l.Paris, Resection: l.Resection}
		h, d, standIn := OpticalStandIn(l)
		switch {
		case standIn && (mode == OpticalFirst || !l.Histology.IsFinal()):
			rl.Histology, rl.Dysplasia, rl.FromOptical = h, d, true
		case l.Histology.IsFinal():
			rl.Histology, rl.Dysplasia = l.Histology, l.Dysplasia
		case l.HasNoSpecimen():
			rl.Histology, rl.Dysplasia, rl.NoSpecimen = logbook.TubularAdenoma, logbook.DysplasiaLow, true
		default:
			r.Awaiting = append(r.Awaiting, rl)
			continue
		}
		r.Lesions = append(r.Lesions, rl)
	}
	return r
}

// Suggest returns the surveillance interval for c under guideline g, applying
// clinical-reference §4 "How the program applies the table" step by step:
// the exam gate (repeat), the exclusions (outside), the lesions read
// (histology, an optical call standing in, or with no specimen the
// conservative tubular-adenoma reading), findings outside the tables
// (outside: checked before awaiting, so a known cancer is never shown as
// awaiting histology), lesions still awaiting histology (pending), then the
// guideline's table with the shortest candidate winning. An unknown
// guideline is read as the default.
func Suggest(g Guideline, c *logbook.Case) Suggestion {
	return SuggestReading(g, c, HistologyFirst)
}

// SuggestReading is Suggest with the lesions read under mode; PIVI 1 calls it
// with OpticalFirst for its interval A.
func SuggestReading(g Guideline, c *logbook.Case, mode LesionReading) Suggestion {
	return suggest(g, c, mode, true)
}

// SuggestedInterval is the interval Suggest would give, without the
// findings written out: the figures that compare intervals over every
// procedure (adherence, PIVI 1) need only the code.
func SuggestedInterval(g Guideline, c *logbook.Case, mode LesionReading) logbook.Interval {
	return suggest(g, c, mode, false).Interval
}

// SuggestBrief is SuggestReading without the caution and without the
// findings of the guideline's table written out (a procedure outside the
// guideline keeps its reasons): PIVI 1 compares two intervals for every
// procedure of a period and needs their codes, not their wording.
func SuggestBrief(g Guideline, c *logbook.Case, mode LesionReading) Suggestion {
	return suggest(g, c, mode, false)
}

// suggest applies the guideline; withReasons writes out the findings behind
// the interval, which only a person reading one suggestion needs.
func suggest(g Guideline, c *logbook.Case, mode LesionReading, withReasons bool) Suggestion {
	if _, err := ParseGuideline(string(g)); err != nil {
		g = DefaultGuideline
	}
	s := Suggestion{Guideline: g}
	if withReasons {
		s.Caution = IntervalCaution(g)
	}
	if FailsExamGate(&c.Procedure) {
		s.Interval = logbook.IntervalRepeat
		if withReasons {
			s.Reasons = examGate(&c.Procedure)
		}
		return s
	}
	switch c.Exclusion {
	case logbook.IBD:
		s.Interval = logbook.IntervalOutside
		s.Reasons = []string{"inflammatory bowel disease is recorded; its surveillance follows its own guidance"}
		return s
	case logbook.HereditarySyndrome:
		s.Interval = logbook.IntervalOutside
		s.Reasons = []string{"a hereditary cancer syndrome is recorded; its surveillance follows its own guidance"}
		return s
	}
	rd := ReadLesions(c, mode)
	if reasons := outsideFindings(rd); len(reasons) > 0 {
		s.Interval, s.Reasons = logbook.IntervalOutside, reasons
		return s
	}
	if len(rd.Awaiting) > 0 {
		s.Interval = logbook.IntervalPending
		if withReasons {
			for _, l := range rd.Awaiting {
				s.Reasons = append(s.Reasons, fmt.Sprintf("lesion %d was sent to pathology and its histology is still awaited; no high-confidence optical call of a diminutive polyp stands in for it", l.LesionNo))
			}
		}
		return s
	}
	var cs candidates
	switch g {
	case ESGE2020:
		cs = esgeCandidates(rd.Lesions)
	case BSG2020:
		cs = bsgCandidates(rd.Lesions)
	default:
		cs = usmstfCandidates(rd.Lesions)
	}
	if !withReasons {
		s.Interval = cs.shortestInterval()
		return s
	}
	s.Interval, s.Reasons = cs.shortest()
	for i := range rd.Lesions {
		l := &rd.Lesions[i]
		switch {
		case l.FromOptical:
			s.Reasons = append(s.Reasons, fmt.Sprintf("lesion %d read by its high-confidence optical call (%s, %d mm) in place of histology", l.LesionNo, opticalWord(l.Histology), l.SizeMM))
		case l.NoSpecimen:
			s.Reasons = append(s.Reasons, noSpecimenReason(c, l))
		}
	}
	return s
}

// noSpecimenReason says why a lesion with no specimen was read as a tubular
// adenoma with low-grade dysplasia of its size.
func noSpecimenReason(c *logbook.Case, rl *ReadLesion) string {
	why := "was not sent to pathology"
	for i := range c.Lesions {
		if l := &c.Lesions[i]; l.LesionNo == rl.LesionNo {
			switch {
			case l.Resection == logbook.ResectionNone:
				why = "was left in place"
			case l.Retrieved == logbook.No:
				why = "was not retrieved"
			}
			break
		}
	}
	return fmt.Sprintf("lesion %d %s, so it will have no histology: read as a tubular adenoma with low-grade dysplasia of its recorded %d mm "+
		"(the conservative reading; no guideline table covers a polyp without histology)", rl.LesionNo, why, rl.SizeMM)
}

// FailsExamGate reports what examGate explains: an incomplete extent or a
// recorded Boston segment below 2.
func FailsExamGate(p *logbook.Procedure) bool {
	return p.Extent == logbook.ExtentIncomplete || p.AnyBBPSBelow2()
}

// examGate returns why the examination cannot carry an interval: an
// incomplete extent, or a recorded Boston segment below 2. Missing Boston
// scores pass (clinical-reference §4 step 1).
func examGate(p *logbook.Procedure) []string {
	var rs []string
	if p.Extent == logbook.ExtentIncomplete {
		rs = append(rs, "the examination was incomplete")
	}
	for _, seg := range []struct {
		name  string
		score int
	}{{"right", p.BBPSRight}, {"transverse", p.BBPSTransverse}, {"left", p.BBPSLeft}} {
		if seg.score >= 0 && seg.score < 2 {
			rs = append(rs, fmt.Sprintf("bowel preparation in the %s colon scored %d on the Boston scale (below 2)", seg.name, seg.score))
		}
	}
	return rs
}

// outsideFindings returns the findings that put the procedure outside every
// guideline's table (clinical-reference §4 step 2), checked before any
// lesion awaiting histology can make the interval pending: adenocarcinoma;
// a lesion of 10 mm or more not removed (resection none or biopsy only,
// whether or not its histology has come: the tables assume complete
// removal); more than 10 SSLs; more than 20 hyperplastic polyps; or the WHO
// 2019 serrated polyposis criteria. The counts use the lesions read.
func outsideFindings(rd Reading) []string {
	var rs []string
	for _, list := range [][]ReadLesion{rd.Lesions, rd.Awaiting} {
		for _, l := range list {
			if l.SizeMM >= 10 && (l.Resection == logbook.ResectionNone || l.Resection == logbook.BiopsyOnly) {
				how := "was not removed"
				if l.Resection == logbook.BiopsyOnly {
					how = "was only biopsied"
				}
				rs = append(rs, fmt.Sprintf("lesion %d of %d mm %s; the guideline tables assume complete removal, so its removal is planned first", l.LesionNo, l.SizeMM, how))
			}
		}
	}
	var nSSL, nHP, nSerrated, nSerratedProx, nProx5, nProx10 int
	for _, l := range rd.Lesions {
		if l.Histology == logbook.Adenocarcinoma {
			rs = append(rs, fmt.Sprintf("lesion %d is an adenocarcinoma", l.LesionNo))
		}
		if l.Histology.IsSSL() {
			nSSL++
		}
		if l.Histology == logbook.HistHyperplastic {
			nHP++
		}
		if l.Histology.IsSerrated() {
			nSerrated++
			if l.Segment != logbook.Rectum {
				nSerratedProx++
				if l.SizeMM >= 5 {
					nProx5++
				}
				if l.SizeMM >= 10 {
					nProx10++
				}
			}
		}
	}
	if nSSL > 10 {
		rs = append(rs, fmt.Sprintf("%d sessile serrated lesions (more than 10)", nSSL))
	}
	if nHP > 20 {
		rs = append(rs, fmt.Sprintf("%d hyperplastic polyps (more than 20)", nHP))
	}
	if nProx5 >= 5 && nProx10 >= 2 {
		rs = append(rs, fmt.Sprintf("serrated polyposis criteria met: %d serrated lesions of 5 mm or more proximal to the rectum, %d of them 10 mm or more", nProx5, nProx10))
	}
	if nSerrated > 20 && nSerratedProx >= 5 {
		rs = append(rs, fmt.Sprintf("serrated polyposis criteria met: %d serrated lesions, %d of them proximal to the rectum", nSerrated, nSerratedProx))
	}
	return rs
}

// candidate is one interval a finding calls for. Its reason is formatted
// only if it wins, since most candidates (the ever-present 10 years, say)
// lose and a full pass suggests an interval for every procedure.
type candidate struct {
	interval logbook.Interval
	format   string
	args     []any
}

// candidates collects the intervals the findings call for.
type candidates []candidate

func (cs *candidates) add(iv logbook.Interval, format string, args ...any) {
	*cs = append(*cs, candidate{iv, format, args})
}

// shortestInterval returns the shortest candidate interval.
func (cs candidates) shortestInterval() logbook.Interval {
	best, bestRank := logbook.Interval(""), 1<<30
	for _, c := range cs {
		if r, _ := IntervalRank(c.interval); r < bestRank {
			best, bestRank = c.interval, r
		}
	}
	return best
}

// shortest returns the shortest candidate interval with the reasons of every
// candidate that calls for it.
func (cs candidates) shortest() (logbook.Interval, []string) {
	best := cs.shortestInterval()
	var reasons []string
	for _, c := range cs {
		if c.interval == best {
			reasons = append(reasons, fmt.Sprintf(c.format, c.args...))
		}
	}
	return best, reasons
}

// plural returns "1 word" or "n words".
func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}

// opticalWord names the class an optical stand-in histology came from.
func opticalWord(h logbook.Histology) string {
	switch h {
	case logbook.TubularAdenoma:
		return "adenoma"
	case logbook.HistSSL:
		return "SSL"
	}
	return "hyperplastic"
}
