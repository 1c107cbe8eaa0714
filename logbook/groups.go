package logbook

// Derived groups of clinical-reference §1 ("Derived groups used below"). Every
// indicator, interval rule and optical-diagnosis figure reads these, so each
// definition lives in exactly one place.

// IsAdenoma reports whether histology counts as an adenoma for detection:
// tubular, tubulovillous, villous adenoma, or adenocarcinoma (counting cancer
// with adenomas is common practice for ADR).
func (h Histology) IsAdenoma() bool {
	switch h {
	case TubularAdenoma, TubulovillousAdeno, VillousAdenoma, Adenocarcinoma:
		return true
	}
	return false
}

// IsAdenomaNotCancer reports the adenomas the surveillance tables count:
// tubular, tubulovillous or villous (an adenocarcinoma takes a procedure
// outside every table).
func (h Histology) IsAdenomaNotCancer() bool {
	return h == TubularAdenoma || h == TubulovillousAdeno || h == VillousAdenoma
}

// IsSSL reports whether histology is a sessile serrated lesion (with or
// without dysplasia); TSA is not included.
func (h Histology) IsSSL() bool { return h == HistSSL || h == HistSSLDysplasia }

// IsSSLOrTSA reports a serrated lesion with neoplastic potential: an SSL
// (with or without dysplasia) or a traditional serrated adenoma — the
// serrated column of the optical-diagnosis class table, and what the
// stricter PIVI 2 reading counts as positive.
func (h Histology) IsSSLOrTSA() bool { return h.IsSSL() || h == HistTSA }

// IsSerrated reports a serrated polyp in the umbrella sense: SSL (with or
// without dysplasia), TSA or hyperplastic polyp.
func (h Histology) IsSerrated() bool { return h.IsSSLOrTSA() || h == HistHyperplastic }

// IsFinal reports whether a pathology result has been recorded (neither
// empty nor pending).
func (h Histology) IsFinal() bool { return h != "" && h != HistPending }

// IsPolypectomy reports whether the resection is a polypectomy (every
// resection but none and biopsy only).
func (r Resection) IsPolypectomy() bool {
	switch r {
	case ColdSnare, HotSnare, ColdForceps, EMREnBloc, EMRPiecemeal, ESD:
		return true
	}
	return false
}

// IsProximal reports whether the segment is proximal to the descending colon
// (caecum to splenic flexure; common practice).
func (s Segment) IsProximal() bool {
	switch s {
	case Caecum, Ascending, HepaticFlexure, Transverse, SplenicFlexure:
		return true
	}
	return false
}

// IsRectosigmoid reports whether the segment is the rectum or sigmoid.
func (s Segment) IsRectosigmoid() bool { return s == Rectum || s == Sigmoid }

// IsComplete reports whether the extent counts as a complete examination
// (caecum, terminal ileum or anastomosis).
func (e Extent) IsComplete() bool {
	return e == ExtentCaecum || e == ExtentTerminalIleum || e == ExtentAnastomosis
}

// IsDiminutive reports a lesion of at most 5 mm (common practice).
func (l Lesion) IsDiminutive() bool { return l.SizeMM >= 1 && l.SizeMM <= 5 }

// HasNoSpecimen reports a lesion that will never have histology: not
// retrieved, not sent to pathology, or left in place (resection none)
// without being sent. Such a lesion is never awaiting histology, whatever
// its histology field says (clinical-reference §4 step 1).
func (l Lesion) HasNoSpecimen() bool {
	return l.Retrieved == No || l.SentToPathology == No || (l.Resection == ResectionNone && l.SentToPathology != Yes)
}

// AwaitsHistology reports a lesion whose histology is still to come: no
// final histology, and a specimen that was sent (or, where sending is not
// recorded, may have been). Every figure and interval that counts lesions
// awaiting histology uses this one rule.
func (l Lesion) AwaitsHistology() bool { return !l.Histology.IsFinal() && !l.HasNoSpecimen() }

// IsLarge reports a lesion of 10 mm or more (common practice).
func (l Lesion) IsLarge() bool { return l.SizeMM >= 10 }

// IsAdvancedAdenoma reports an adenoma ≥10 mm, or tubulovillous/villous, or
// with high-grade dysplasia, or adenocarcinoma.
func (l Lesion) IsAdvancedAdenoma() bool {
	if !l.Histology.IsAdenoma() {
		return false
	}
	return l.SizeMM >= 10 || l.Histology == TubulovillousAdeno || l.Histology == VillousAdenoma ||
		l.Dysplasia == DysplasiaHigh || l.Histology == Adenocarcinoma
}

// BBPSRecorded reports whether all three Boston segments are recorded.
func (p Procedure) BBPSRecorded() bool {
	return p.BBPSRight >= 0 && p.BBPSTransverse >= 0 && p.BBPSLeft >= 0
}

// BBPSTotal returns the Boston total 0–9, or NotRecorded unless all three
// segments are recorded.
func (p Procedure) BBPSTotal() int {
	if !p.BBPSRecorded() {
		return NotRecorded
	}
	return p.BBPSRight + p.BBPSTransverse + p.BBPSLeft
}

// BBPSAdequate reports adequate preparation: every segment ≥2 (Lai 2009;
// Johnson 2014 US Multi-Society Task Force consensus). False when any segment
// is missing.
func (p Procedure) BBPSAdequate() bool {
	return p.BBPSRecorded() && p.BBPSRight >= 2 && p.BBPSTransverse >= 2 && p.BBPSLeft >= 2
}

// AnyBBPSBelow2 reports whether a recorded Boston segment scores below 2 (the
// surveillance exam gate; missing segments pass).
func (p Procedure) AnyBBPSBelow2() bool {
	return (p.BBPSRight >= 0 && p.BBPSRight < 2) || (p.BBPSTransverse >= 0 && p.BBPSTransverse < 2) ||
		(p.BBPSLeft >= 0 && p.BBPSLeft < 2)
}
