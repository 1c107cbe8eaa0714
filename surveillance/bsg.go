package surveillance

import "polypledger/logbook"

// bsgPremalignant reports a premalignant polyp in the BSG 2020 sense: an
// adenoma or serrated polyp, except a diminutive rectal hyperplastic polyp.
func bsgPremalignant(l ReadLesion) bool {
	if l.Histology == logbook.HistHyperplastic && l.Segment == logbook.Rectum && l.SizeMM >= 1 && l.SizeMM <= 5 {
		return false
	}
	return l.Histology.IsAdenomaNotCancer() || l.Histology.IsSerrated()
}

// bsgAdvanced reports an advanced polyp in the BSG 2020 sense: an adenoma of
// 10 mm or more or with high-grade dysplasia, or a serrated polyp of 10 mm
// or more or with any dysplasia.
func bsgAdvanced(l ReadLesion) bool {
	if l.Histology.IsAdenomaNotCancer() {
		return l.SizeMM >= 10 || l.Dysplasia == logbook.DysplasiaHigh
	}
	return l.Histology.IsSerrated() && (l.SizeMM >= 10 || serratedDysplasia(l))
}

// bsgCandidates applies the BSG 2020 table (Rutter 2020;
// clinical-reference §4): one surveillance colonoscopy at 3 years for ≥2
// premalignant polyps including ≥1 advanced, or ≥5 premalignant polyps; a
// site check at 2–6 months after piecemeal removal of a non-pedunculated
// polyp of 20 mm or more (piecemeal stands for "not R0", which is not
// recorded), and a one-off check at 3 years after its en-bloc removal;
// otherwise back to screening. "Non-pedunculated" is any Paris class but
// 0-Ip, including a Paris class not recorded.
func bsgCandidates(ls []ReadLesion) candidates {
	var cs candidates
	var nP, nAdv int
	for _, l := range ls {
		if !bsgPremalignant(l) {
			continue
		}
		nP++
		if bsgAdvanced(l) {
			nAdv++
		}
		if l.SizeMM >= 20 && l.Paris != logbook.Paris0Ip && l.Resection.IsPolypectomy() {
			if l.Resection == logbook.EMRPiecemeal {
				cs.add(logbook.Interval2to6m, "lesion %d: non-pedunculated polyp of %d mm removed piecemeal (site check)", l.LesionNo, l.SizeMM)
			} else {
				cs.add(logbook.Interval3y, "lesion %d: non-pedunculated polyp of %d mm removed en bloc (one-off check at 3 years)", l.LesionNo, l.SizeMM)
			}
		}
	}
	switch {
	case nP >= 5:
		cs.add(logbook.Interval3y, "%d premalignant polyps (5 or more)", nP)
	case nP >= 2 && nAdv >= 1:
		cs.add(logbook.Interval3y, "%d premalignant polyps including %d advanced", nP, nAdv)
	}
	// Back to screening when no finding calls for surveillance.
	switch {
	case len(cs) > 0:
	case nP > 0:
		cs.add(logbook.IntervalScreening, "not high risk: %s, %d of them advanced", plural(nP, "premalignant polyp"), nAdv)
	default:
		cs.add(logbook.IntervalScreening, "no premalignant polyp")
	}
	return cs
}
