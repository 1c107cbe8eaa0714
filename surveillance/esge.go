package surveillance

import "polypledger/logbook"

// serratedDysplasia reports a serrated polyp "with dysplasia" for the ESGE
// and BSG tables: an SSL with dysplasia, any TSA whatever its dysplasia
// field says (TSAs are regarded as dysplastic lesions; clinical-reference §4,
// the conservative reading — from memory, not verified against the
// guideline texts), or any other serrated lesion whose recorded dysplasia is
// low or high.
func serratedDysplasia(l ReadLesion) bool {
	return l.Histology == logbook.HistSSLDysplasia || l.Histology == logbook.HistTSA ||
		(l.Histology.IsSerrated() && (l.Dysplasia == logbook.DysplasiaLow || l.Dysplasia == logbook.DysplasiaHigh))
}

// esgeCandidates applies the ESGE 2020 table (Hassan 2020;
// clinical-reference §4): an early check at 3–6 months after piecemeal
// removal of a polyp of 20 mm or more; 3 years for an adenoma of 10 mm or
// more or with high-grade dysplasia, 5 or more adenomas, or a serrated polyp
// (SSL, TSA or hyperplastic) of 10 mm or more or with dysplasia (every TSA:
// see serratedDysplasia); otherwise back to screening. Villous histology
// alone does not raise the risk here.
func esgeCandidates(ls []ReadLesion) candidates {
	var cs candidates
	var nA, nSer int
	for _, l := range ls {
		adenoma, serrated := l.Histology.IsAdenomaNotCancer(), l.Histology.IsSerrated()
		if !adenoma && !serrated {
			continue
		}
		if l.SizeMM >= 20 && l.Resection == logbook.EMRPiecemeal {
			cs.add(logbook.Interval3to6m, "lesion %d: %s of %d mm removed piecemeal (early check of the site)", l.LesionNo, l.Histology.Words(), l.SizeMM)
		}
		if adenoma {
			nA++
			if l.SizeMM >= 10 {
				cs.add(logbook.Interval3y, "lesion %d: adenoma of %d mm (10 mm or more)", l.LesionNo, l.SizeMM)
			}
			if l.Dysplasia == logbook.DysplasiaHigh {
				cs.add(logbook.Interval3y, "lesion %d: adenoma with high-grade dysplasia", l.LesionNo)
			}
			continue
		}
		nSer++
		if l.SizeMM >= 10 {
			cs.add(logbook.Interval3y, "lesion %d: %s of %d mm (serrated polyp of 10 mm or more)", l.LesionNo, l.Histology.Words(), l.SizeMM)
		}
		if serratedDysplasia(l) {
			cs.add(logbook.Interval3y, "lesion %d: serrated polyp with dysplasia (%s)", l.LesionNo, l.Histology.Words())
		}
	}
	if nA >= 5 {
		cs.add(logbook.Interval3y, "%d adenomas (5 or more)", nA)
	}
	// Back to screening when no finding calls for surveillance.
	switch {
	case len(cs) > 0:
	case nA > 0 || nSer > 0:
		cs.add(logbook.IntervalScreening, "low-risk findings only: %s and %s, all under 10 mm, no high-grade dysplasia in an adenoma and no dysplasia in a serrated polyp", plural(nA, "adenoma"), plural(nSer, "serrated polyp"))
	default:
		cs.add(logbook.IntervalScreening, "no adenoma or serrated polyp")
	}
	return cs
}
