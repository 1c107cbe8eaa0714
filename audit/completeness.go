package audit

import "polypledger/logbook"

// Completeness counts what the period's records leave out, for the
// report's cover: an audit figure is only as good as the fields behind it.
type Completeness struct {
	Procedures int
	Lesions    int
	// Procedure fields not recorded.
	MissingAge, MissingSex, MissingIndication, MissingExtent int
	// MissingBBPS counts procedures with any Boston segment not scored.
	MissingBBPS int
	// MissingCaecalPhoto counts complete procedures with no photo answer.
	MissingCaecalPhoto int
	// MissingWithdrawal counts complete procedures without a withdrawal
	// time.
	MissingWithdrawal  int
	MissingComfort     int
	MissingAidUse      int
	MissingRecommended int
	// Lesion fields not recorded.
	MissingSize, MissingOpticalClass int
	// PendingLesions are lesions sent to pathology whose histology is still
	// pending (or not yet entered); PendingProcedures the procedures with at
	// least one.
	PendingLesions, PendingProcedures int
}

// add counts one case.
func (s *Completeness) add(c *logbook.Case) {
	p := &c.Procedure
	s.Procedures++
	s.MissingAge += countIf(p.Age == logbook.NotRecorded)
	s.MissingSex += countIf(p.Sex == "" || p.Sex == logbook.SexUnknown)
	s.MissingIndication += countIf(p.Indication == "")
	s.MissingExtent += countIf(p.Extent == "")
	s.MissingBBPS += countIf(!p.BBPSRecorded())
	complete := p.Extent.IsComplete()
	s.MissingCaecalPhoto += countIf(complete && p.CaecalPhoto == logbook.Unrecorded)
	s.MissingWithdrawal += countIf(complete && p.WithdrawalSeconds == logbook.NotRecorded)
	s.MissingComfort += countIf(p.Comfort == logbook.NotRecorded)
	s.MissingAidUse += countIf(p.DetectionAid == logbook.Unrecorded)
	s.MissingRecommended += countIf(p.RecommendedInterval == "")
	pending := false
	for i := range c.Lesions {
		l := &c.Lesions[i]
		s.Lesions++
		s.MissingSize += countIf(l.SizeMM == logbook.NotRecorded)
		s.MissingOpticalClass += countIf(l.OpticalClass == "")
		if l.SentToPathology == logbook.Yes && !l.Histology.IsFinal() {
			s.PendingLesions++
			pending = true
		}
	}
	s.PendingProcedures += countIf(pending)
}
