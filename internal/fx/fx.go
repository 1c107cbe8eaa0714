// Package fx builds literal logbook records for tests: the interval, optical,
// PIVI, eligibility and adherence tests of packages surveillance and audit
// read the same fixtures. Every lesion defaults to: ascending colon, cold
// snare, retrieved and sent to pathology, with the dysplasia its histology
// requires (low for adenomas and SSL with dysplasia). It imports logbook and
// the standard library only.
package fx

import (
	"testing"
	"time"

	"polypledger/logbook"
)

// Shorthands for the histologies of the table tests.
const (
	TA   = logbook.TubularAdenoma
	TVA  = logbook.TubulovillousAdeno
	VA   = logbook.VillousAdenoma
	SSL  = logbook.HistSSL
	SSLD = logbook.HistSSLDysplasia
	TSA  = logbook.HistTSA
	HP   = logbook.HistHyperplastic
	CA   = logbook.Adenocarcinoma
)

// Option changes one field of a lesion being built.
type Option func(*logbook.Lesion)

// Lesion returns lesion no of histology h and size millimetres, with the
// defaults of the package comment changed by opts.
func Lesion(no int, h logbook.Histology, size int, opts ...Option) logbook.Lesion {
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

// At sets the segment.
func At(s logbook.Segment) Option { return func(l *logbook.Lesion) { l.Segment = s } }

// Dys sets the dysplasia.
func Dys(d logbook.Dysplasia) Option { return func(l *logbook.Lesion) { l.Dysplasia = d } }

// Res sets the resection.
func Res(r logbook.Resection) Option { return func(l *logbook.Lesion) { l.Resection = r } }

// Paris sets the Paris class.
func Paris(p logbook.Paris) Option { return func(l *logbook.Lesion) { l.Paris = p } }

// Imaging sets the imaging mode.
func Imaging(i logbook.Imaging) Option { return func(l *logbook.Lesion) { l.Imaging = i } }

// Aid sets the computer-aided call.
func Aid(c logbook.OpticalClass) Option { return func(l *logbook.Lesion) { l.AidClass = c } }

// Call sets the endoscopist's optical call and its confidence.
func Call(c logbook.OpticalClass, conf logbook.Confidence) Option {
	return func(l *logbook.Lesion) { l.OpticalClass, l.Confidence = c, conf }
}

// Discarded makes a lesion resected and not sent to pathology, so that
// there is no histology.
func Discarded(l *logbook.Lesion) {
	l.SentToPathology, l.Histology, l.Dysplasia = logbook.No, "", ""
}

// Awaiting makes a lesion sent to pathology with its result still pending.
func Awaiting(l *logbook.Lesion) { l.Histology, l.Dysplasia = logbook.HistPending, "" }

// NotRetrieved makes a lesion resected but lost, so never sent.
func NotRetrieved(l *logbook.Lesion) {
	l.Retrieved, l.SentToPathology, l.Histology, l.Dysplasia = logbook.No, logbook.No, "", ""
}

// Case returns a complete outpatient screening colonoscopy with Boston
// 2/2/2 holding the lesions given.
func Case(id string, ls ...logbook.Lesion) *logbook.Case {
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

// Tweak changes c's procedure with f and returns c.
func Tweak(c *logbook.Case, f func(p *logbook.Procedure)) *logbook.Case {
	f(&c.Procedure)
	return c
}

// Lesions returns n lesions numbered from first, all alike.
func Lesions(first, n int, h logbook.Histology, size int, opts ...Option) []logbook.Lesion {
	out := make([]logbook.Lesion, n)
	for i := range out {
		out[i] = Lesion(first+i, h, size, opts...)
	}
	return out
}

// Join concatenates lesion lists.
func Join(lists ...[]logbook.Lesion) []logbook.Lesion {
	var out []logbook.Lesion
	for _, l := range lists {
		out = append(out, l...)
	}
	return out
}

// Valid fails the test unless c is a record the program could hold, so
// that no expectation rests on an impossible record.
func Valid(t testing.TB, c *logbook.Case) {
	t.Helper()
	today := time.Date(2026, 12, 31, 0, 0, 0, 0, time.UTC)
	if ps := logbook.ValidateProcedure(c.Procedure, today); len(ps) > 0 {
		t.Fatalf("fixture %s: invalid procedure: %v", c.ID, ps)
	}
	for _, l := range c.Lesions {
		if ps := logbook.ValidateLesion(l, today); len(ps) > 0 {
			t.Fatalf("fixture %s lesion %d: invalid: %v", c.ID, l.LesionNo, ps)
		}
	}
	if ps := logbook.ValidateLesionNumbers(c.Lesions); len(ps) > 0 {
		t.Fatalf("fixture %s: %v", c.ID, ps)
	}
}

// Typical is a typical polyp-bearing procedure for benchmarks: four lesions,
// one read by its optical call.
func Typical() *logbook.Case {
	return Case("BENCH",
		Lesion(1, TA, 4, Call(logbook.OpticalAdenoma, logbook.HighConfidence), Imaging(logbook.NBI)),
		Lesion(2, HP, 3, At(logbook.Rectum), Call(logbook.OpticalHyperplastic, logbook.HighConfidence), Imaging(logbook.NBI)),
		Lesion(3, SSL, 12, At(logbook.Transverse), Call(logbook.OpticalSSL, logbook.LowConfidence), Imaging(logbook.WhiteLight)),
		Lesion(4, "", 2, Call(logbook.OpticalAdenoma, logbook.HighConfidence), Discarded),
	)
}
