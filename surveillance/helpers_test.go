package surveillance

import (
	"time"

	"polypledger/logbook"
)

// Builders for literal test records shared by the interval, optical, PIVI,
// eligibility and adherence tests. Every lesion defaults to: ascending colon,
// cold snare, retrieved and sent to pathology, with the dysplasia its
// histology requires (low for adenomas and SSL with dysplasia).

type lesionOpt func(*logbook.Lesion)

func fxLesion(no int, h logbook.Histology, size int, opts ...lesionOpt) logbook.Lesion {
	l := logbook.NewLesion()
	l.LesionNo, l.Segment, l.SizeMM = no, logbook.Ascending, size
	l.Resection, l.Retrieved, l.SentToPathology = logbook.ColdSnare, logbook.Yes, logbook.Yes
	l.Histology = h
	switch h {
	case logbook.TubularAdenoma, logbook.TubulovillousAdeno, logbook.VillousAdenoma, logbook.HistSSLDysplasia:
		l.Dysplasia = logbook.DysplasiaLow
	case logbook.HistHyperplastic, logbook.HistSSL, logbook.HistNormal, logbook.HistInflammatory:
		l.Dysplasia = logbook.DysplasiaNone
	}
	for _, o := range opts {
		o(&l)
	}
	return l
}

func fxAt(s logbook.Segment) lesionOpt       { return func(l *logbook.Lesion) { l.Segment = s } }
func fxDys(d logbook.Dysplasia) lesionOpt    { return func(l *logbook.Lesion) { l.Dysplasia = d } }
func fxRes(r logbook.Resection) lesionOpt    { return func(l *logbook.Lesion) { l.Resection = r } }
func fxParis(p logbook.Paris) lesionOpt      { return func(l *logbook.Lesion) { l.Paris = p } }
func fxImaging(i logbook.Imaging) lesionOpt  { return func(l *logbook.Lesion) { l.Imaging = i } }
func fxAid(c logbook.OpticalClass) lesionOpt { return func(l *logbook.Lesion) { l.AidClass = c } }

// called sets the endoscopist's optical call.
func fxCall(c logbook.OpticalClass, conf logbook.Confidence) lesionOpt {
	return func(l *logbook.Lesion) { l.OpticalClass, l.Confidence = c, conf }
}

// fxDiscarded: resected and not sent to pathology, so there is no histology.
func fxDiscarded(l *logbook.Lesion) {
	l.SentToPathology, l.Histology, l.Dysplasia = logbook.No, "", ""
}

// fxAwaiting: sent to pathology, result still pending.
func fxAwaiting(l *logbook.Lesion) { l.Histology, l.Dysplasia = logbook.HistPending, "" }

// fxCase returns a complete outpatient screening colonoscopy with Boston
// 2/2/2 holding the lesions given.
func fxCase(id string, ls ...logbook.Lesion) *logbook.Case {
	p := logbook.NewProcedure()
	p.ID, p.PerformedOn, p.OperatorID = id, time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC), "E01"
	p.PatientKey = "5f2c0d9e8b7a6f5e4d3c2b1a09f8e7d6c5b4a39281706f5e4d3c2b1a09f8e7d6"
	p.Age, p.Sex, p.Indication, p.Setting = 60, logbook.SexFemale, logbook.Screening, logbook.Outpatient
	p.Exclusion, p.Extent = logbook.ExclusionNone, logbook.ExtentCaecum
	p.BBPSRight, p.BBPSTransverse, p.BBPSLeft = 2, 2, 2
	for i := range ls {
		ls[i].ProcedureID = id
	}
	return &logbook.Case{Procedure: p, Lesions: ls}
}

// tweak changes c's procedure and returns c.
func fxTweak(c *logbook.Case, f func(p *logbook.Procedure)) *logbook.Case {
	f(&c.Procedure)
	return c
}

// lesions returns n lesions numbered from first, all alike.
func fxLesions(first, n int, h logbook.Histology, size int, opts ...lesionOpt) []logbook.Lesion {
	out := make([]logbook.Lesion, n)
	for i := range out {
		out[i] = fxLesion(first+i, h, size, opts...)
	}
	return out
}

// join concatenates lesion lists.
func fxJoin(lists ...[]logbook.Lesion) []logbook.Lesion {
	var out []logbook.Lesion
	for _, l := range lists {
		out = append(out, l...)
	}
	return out
}
