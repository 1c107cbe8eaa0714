package surveillance

import "polypledger/logbook"

// usmstfCandidates applies the US Multi-Society Task Force 2020 table (Gupta
// 2020; clinical-reference §4 steps 3 and 4) to lesions already read and
// already past the outside rules.
func usmstfCandidates(ls []ReadLesion) candidates {
	var cs candidates
	var nA, nS, nHP int
	for _, l := range ls {
		switch {
		case l.Histology.IsAdenomaNotCancer():
			nA++
			if l.SizeMM >= 20 && l.Resection == logbook.EMRPiecemeal {
				cs.add(logbook.Interval6m, "lesion %d: adenoma of %d mm removed piecemeal", l.LesionNo, l.SizeMM)
			}
			if l.SizeMM >= 10 {
				cs.add(logbook.Interval3y, "lesion %d: adenoma of %d mm (10 mm or more)", l.LesionNo, l.SizeMM)
			}
			if l.Histology != logbook.TubularAdenoma {
				cs.add(logbook.Interval3y, "lesion %d: %s", l.LesionNo, l.Histology.Words())
			}
			if l.Dysplasia == logbook.DysplasiaHigh {
				cs.add(logbook.Interval3y, "lesion %d: adenoma with high-grade dysplasia", l.LesionNo)
			}
		case l.Histology.IsSSL():
			nS++
			if l.SizeMM >= 20 && l.Resection == logbook.EMRPiecemeal {
				cs.add(logbook.Interval6m, "lesion %d: sessile serrated lesion of %d mm removed piecemeal", l.LesionNo, l.SizeMM)
			}
			if l.SizeMM >= 10 {
				cs.add(logbook.Interval3y, "lesion %d: sessile serrated lesion of %d mm (10 mm or more)", l.LesionNo, l.SizeMM)
			}
			if l.Histology == logbook.HistSSLDysplasia {
				cs.add(logbook.Interval3y, "lesion %d: sessile serrated lesion with dysplasia", l.LesionNo)
			}
		case l.Histology == logbook.HistTSA:
			// USMSTF 2020 manages a TSA like an SSL, so its piecemeal
			// removal at 20 mm or more calls for the 6-month check too
			// (clinical-reference §4 step 4 — from memory, not verified).
			if l.SizeMM >= 20 && l.Resection == logbook.EMRPiecemeal {
				cs.add(logbook.Interval6m, "lesion %d: traditional serrated adenoma of %d mm removed piecemeal", l.LesionNo, l.SizeMM)
			}
			cs.add(logbook.Interval3y, "lesion %d: traditional serrated adenoma", l.LesionNo)
		case l.Histology == logbook.HistHyperplastic:
			if l.SizeMM >= 10 {
				cs.add(logbook.Interval3to5y, "lesion %d: hyperplastic polyp of %d mm (10 mm or more)", l.LesionNo, l.SizeMM)
			} else {
				nHP++
			}
		}
	}
	switch {
	case nA > 10:
		cs.add(logbook.Interval1y, "%d adenomas (more than 10)", nA)
	case nA >= 5:
		cs.add(logbook.Interval3y, "%d adenomas (5 to 10)", nA)
	case nA >= 3:
		cs.add(logbook.Interval3to5y, "%d adenomas (3 or 4)", nA)
	case nA >= 1:
		cs.add(logbook.Interval7to10y, "%s (1 or 2)", plural(nA, "adenoma"))
	}
	switch {
	case nS >= 5: // more than 10 has already gone outside
		cs.add(logbook.Interval3y, "%d sessile serrated lesions (5 to 10)", nS)
	case nS >= 3:
		cs.add(logbook.Interval3to5y, "%d sessile serrated lesions (3 or 4)", nS)
	case nS >= 1:
		cs.add(logbook.Interval5to10y, "%s (1 or 2)", plural(nS, "sessile serrated lesion"))
	}
	// The 10-year row applies when no finding calls for an earlier
	// examination (every other candidate is shorter).
	switch {
	case len(cs) > 0:
	case nHP > 0:
		cs.add(logbook.Interval10y, "only hyperplastic polyps under 10 mm (%d)", nHP)
	default:
		cs.add(logbook.Interval10y, "no adenoma or serrated lesion")
	}
	return cs
}
