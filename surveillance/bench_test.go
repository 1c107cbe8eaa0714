package surveillance

import (
	"testing"

	"polypledger/logbook"
)

// benchCase is a typical polyp-bearing procedure: four lesions, one read by
// its optical call.
func benchCase() *logbook.Case {
	return fxCase("BENCH",
		fxLesion(1, hTA, 4, fxCall(logbook.OpticalAdenoma, logbook.HighConfidence), fxImaging(logbook.NBI)),
		fxLesion(2, hHP, 3, fxAt(logbook.Rectum), fxCall(logbook.OpticalHyperplastic, logbook.HighConfidence), fxImaging(logbook.NBI)),
		fxLesion(3, hSSL, 12, fxAt(logbook.Transverse), fxCall(logbook.OpticalSSL, logbook.LowConfidence), fxImaging(logbook.WhiteLight)),
		fxLesion(4, "", 2, fxCall(logbook.OpticalAdenoma, logbook.HighConfidence), fxDiscarded),
	)
}

// BenchmarkSuggest measures one interval suggestion per case.
func BenchmarkSuggest(b *testing.B) {
	c := benchCase()
	b.ReportAllocs()
	for b.Loop() {
		Suggest(USMSTF2020, c)
	}
}
