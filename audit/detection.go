package audit

import (
	"fmt"
	"math"

	"polypledger/logbook"
	"polypledger/stats"
)

// Sedation drugs and age bands, in the order of the sedation ids.
const (
	drugMidazolam = iota
	drugFentanyl
	drugPethidine
	nDrugs
)

const (
	bandUnder70 = iota
	band70Plus
	nBands
)

// sedationID names the median indicator of a drug and age band.
func sedationID(drug, band int) string {
	ids := [nDrugs][nBands]string{
		{"sedation_midazolam_median_under70", "sedation_midazolam_median_70plus"},
		{"sedation_fentanyl_median_under70", "sedation_fentanyl_median_70plus"},
		{"sedation_pethidine_median_under70", "sedation_pethidine_median_70plus"},
	}
	return ids[drug][band]
}

// caseFacts is what the indicators need to know about one case, read once
// per case and then counted into the unit's and the operator's totals. It
// lives on the stack: nothing of the case is kept.
type caseFacts struct {
	eligible, stool bool // detection-eligible; stool-test-positive population
	sex             logbook.Sex
	aid             logbook.YesNo

	adenoma, ssl, polypectomy, advanced, proxSerrated bool // ≥1 such lesion
	awaiting                                          bool // ≥1 lesion awaiting histology (logbook.Lesion.AwaitsHistology)
	negative                                          bool // no polypectomy and no biopsy
	adenomas                                          int

	complete, cirAdjusted, photo                 bool // cirAdjusted: stays in the adjusted denominator
	intubated                                    bool // counts in the cir numerators: complete, photographed where the profile asks
	outpatient, inpatient                        bool
	bbpsRecorded, bbpsAdequate, bbpsTotal6       bool
	timed                                        bool
	withdrawalSec                                int
	retroCounted, retroDone                      bool
	polypectomies, retrieved                     int // lesion level
	tattooDue, tattooDone, coldSmall, coldSnared int // lesion level
	comfortRecorded, discomfort                  bool
	perforation, bleeding                        bool
	band                                         int // age band for sedation, −1 when age is unknown
	doses                                        [nDrugs]float64
}

// read fills f from the case under the profile's population rules.
func (f *caseFacts) read(p *Profile, c *logbook.Case) {
	pr := &c.Procedure
	f.eligible = p.Detection.Includes(pr)
	f.stool = p.StoolTest.Includes(pr)
	f.sex = pr.Sex
	f.aid = pr.DetectionAid

	f.negative = true
	for i := range c.Lesions {
		l := &c.Lesions[i]
		h := l.Histology
		if h.IsAdenoma() {
			f.adenoma = true
			f.adenomas++
		}
		if h.IsSSL() {
			f.ssl = true
		}
		if l.IsAdvancedAdenoma() {
			f.advanced = true
		}
		if l.Segment.IsProximal() && (h.IsSSLOrTSA() || (h == logbook.HistHyperplastic && l.SizeMM >= 10)) {
			f.proxSerrated = true
		}
		if l.AwaitsHistology() {
			f.awaiting = true
		}
		poly := l.Resection.IsPolypectomy()
		if poly || l.Resection == logbook.BiopsyOnly {
			f.negative = false
		}
		if poly {
			f.polypectomy = true
			f.polypectomies++
			if l.Retrieved == logbook.Yes {
				f.retrieved++
			}
			if l.SizeMM >= 3 && l.SizeMM <= 9 {
				f.coldSmall++
				if l.Resection == logbook.ColdSnare {
					f.coldSnared++
				}
			}
		}
		if (l.SizeMM >= 20 || l.OpticalClass == logbook.OpticalDeepInvasive) && l.Segment != logbook.Rectum && l.Segment != logbook.Caecum {
			f.tattooDue++
			if l.Tattoo == logbook.Yes {
				f.tattooDone++
			}
		}
	}

	f.complete = pr.Extent.IsComplete()
	switch pr.IncompleteReason {
	case logbook.ReasonObstruction, logbook.ReasonPoorPrep, logbook.ReasonSevereColitis:
		f.cirAdjusted = pr.Extent != logbook.ExtentIncomplete
	default:
		f.cirAdjusted = true
	}
	f.photo = pr.CaecalPhoto == logbook.Yes
	f.intubated = f.complete && (f.photo || !p.CIRRequiresPhoto)
	f.outpatient = pr.Setting == logbook.Outpatient
	f.inpatient = pr.Setting == logbook.Inpatient
	f.bbpsRecorded = pr.BBPSRecorded()
	f.bbpsAdequate = pr.BBPSAdequate()
	f.bbpsTotal6 = f.bbpsRecorded && pr.BBPSTotal() >= 6
	f.timed = pr.WithdrawalSeconds != logbook.NotRecorded
	f.withdrawalSec = pr.WithdrawalSeconds
	f.retroCounted = pr.Retroversion != logbook.NotApplicable
	f.retroDone = pr.Retroversion == logbook.Yes
	f.comfortRecorded = pr.Comfort != logbook.NotRecorded
	f.discomfort = pr.Comfort >= 4
	f.perforation = pr.AdverseEvent == logbook.Perforation
	f.bleeding = pr.AdverseEvent == logbook.BleedingTreated
	switch {
	case pr.Age == logbook.NotRecorded:
		f.band = -1
	case pr.Age < 70:
		f.band = bandUnder70
	default:
		f.band = band70Plus
	}
	f.doses = [nDrugs]float64{pr.MidazolamMg, pr.FentanylUg, pr.PethidineMg}
}

// detectionCount is a detection rate's running total: procedures in the
// group, those with ≥1 adenoma, and those still awaiting histology.
type detectionCount struct{ n, k, awaiting int }

func (d *detectionCount) add(hit, awaiting bool) {
	d.n++
	if hit {
		d.k++
	}
	if awaiting {
		d.awaiting++
	}
}

// tally is a proportion's running count: the cases in its denominator
// and, of them, those in its numerator.
type tally struct{ n, k int }

// add counts a case that is in the denominator when in, and in the
// numerator as well when hit.
func (t *tally) add(in, hit bool) {
	if in {
		t.n++
		t.k += countIf(hit)
	}
}

// counts is the running totals of one population (the unit or one
// operator). Every field is a plain number so that adding a case allocates
// nothing; only the sedation medians keep values, as dose → count.
type counts struct {
	adr, male, female, stool, withAid, withoutAid detectionCount
	ssl, pdr, aadr, adenomas, proxSerrated        int // over the detection-eligible (adr.n)

	procs, complete, intubated int // complete: the caecal_photo denominator; intubated: the cir numerator
	cirAdjusted, prep, total6  tally
	photo, prepRecorded        int

	wdCandidates, wdN, wd6 int // negative eligible complete; of them timed; of those ≥6 min
	wdSum, wdSumSq         int64
	retro                  tally
	polyps, retrieved      int
	tattooDue, tattooDone  int
	coldSmall, coldSnared  int
	comfort                tally // recorded; of them moderate or severe discomfort
	perforation            int
	bleeding               tally // procedures with a polypectomy; of them bleeding
	sedation               [nDrugs][nBands]doseCounts
	sedationN              [nDrugs][nBands]int
	sedationSum            [nDrugs][nBands]float64
}

// add counts one case's facts.
func (s *counts) add(f *caseFacts) {
	if f.eligible {
		s.adr.add(f.adenoma, f.awaiting)
		switch f.sex {
		case logbook.SexMale:
			s.male.add(f.adenoma, f.awaiting)
		case logbook.SexFemale:
			s.female.add(f.adenoma, f.awaiting)
		}
		switch f.aid {
		case logbook.Yes:
			s.withAid.add(f.adenoma, f.awaiting)
		case logbook.No:
			s.withoutAid.add(f.adenoma, f.awaiting)
		}
		s.ssl += countIf(f.ssl)
		s.pdr += countIf(f.polypectomy)
		s.aadr += countIf(f.advanced)
		s.adenomas += f.adenomas
		s.proxSerrated += countIf(f.proxSerrated)
		if f.complete && f.negative {
			s.wdCandidates++
			if f.timed {
				s.wdN++
				sec := int64(f.withdrawalSec)
				s.wdSum += sec
				s.wdSumSq += sec * sec
				s.wd6 += countIf(f.withdrawalSec >= 360)
			}
		}
	}
	if f.stool {
		s.stool.add(f.adenoma, f.awaiting)
	}
	s.procs++
	s.complete += countIf(f.complete)
	s.intubated += countIf(f.intubated)
	s.cirAdjusted.add(f.cirAdjusted, f.intubated)
	if f.complete {
		s.photo += countIf(f.photo)
	}
	s.prepRecorded += countIf(f.bbpsRecorded)
	s.prep.add(f.outpatient && f.bbpsRecorded, f.bbpsAdequate)
	s.total6.add(!f.inpatient && f.bbpsRecorded, f.bbpsTotal6)
	s.retro.add(f.retroCounted, f.retroDone)
	s.polyps += f.polypectomies
	s.retrieved += f.retrieved
	s.tattooDue += f.tattooDue
	s.tattooDone += f.tattooDone
	s.coldSmall += f.coldSmall
	s.coldSnared += f.coldSnared
	s.comfort.add(f.comfortRecorded, f.discomfort)
	s.perforation += countIf(f.perforation)
	s.bleeding.add(f.polypectomy, f.bleeding)
	if f.band >= 0 {
		for d, v := range f.doses {
			if v == logbook.NotRecorded {
				continue
			}
			s.sedation[d][f.band].add(v, maxDose[d])
			s.sedationN[d][f.band]++
			s.sedationSum[d][f.band] += v
		}
	}
}

// maxDose is the largest dose validation accepts for each drug, which sizes
// the dose counts.
var maxDose = [nDrugs]float64{logbook.MaxMidazolamMg, logbook.MaxFentanylUg, logbook.MaxPethidineMg}

// doseCounts counts the doses of one drug in one age band for a median
// without keeping a value per case: doses in whole or half units up to the
// drug's maximum are counted in a slice indexed by twice the dose (made on
// first use), any other value in a map. Adding a dose allocates nothing
// after the first.
type doseCounts struct {
	halves []int32
	other  map[float64]int
}

func (d *doseCounts) add(v, max float64) {
	if h := v * 2; h == math.Trunc(h) && v <= max {
		if d.halves == nil {
			d.halves = make([]int32, int(2*max)+1)
		}
		d.halves[int(h)]++
		return
	}
	if d.other == nil {
		d.other = map[float64]int{}
	}
	d.other[v]++
}

// all returns every counted dose as value → count.
func (d *doseCounts) all() map[float64]int {
	m := make(map[float64]int, len(d.other)+8)
	for v, k := range d.other {
		m[v] += k
	}
	for i, k := range d.halves {
		if k > 0 {
			m[float64(i)/2] += int(k)
		}
	}
	return m
}

// countIf is 1 when b holds, else 0.
func countIf(b bool) int {
	if b {
		return 1
	}
	return 0
}

// judged is an indicator judged against the profile's target for its id.
func judged(ind Indicator, p *Profile) Indicator {
	ind.Judge(p.Target(ind.ID), p.MinCases)
	return ind
}

// detectionRate builds a detection indicator from its running total.
func detectionRate(id string, d detectionCount, p *Profile) Indicator {
	ind := judged(Proportion(id, d.k, d.n), p)
	ind.AwaitingHistology = d.awaiting
	return ind
}

// indicators returns the population's figures, the detection indicators
// first and the detection-aid comparison last (TestEveryIndicatorUnderEveryProfile
// gives the order). per is
// the period (for volume); isUnit says the population is the whole unit,
// whose volume is only reported.
//
// Choices where clinical-reference §2 is silent, so that two readings agree:
//   - adr_with_aid / adr_without_aid: detection-eligible procedures with
//     detection_aid yes / no; unrecorded use is in neither group.
//   - adr_aid_difference: numerator and denominator are the two groups'
//     pooled counts, value with − without, Newcombe hybrid interval, never
//     judged.
//   - withdrawal_timed: timed / detection-eligible complete procedures with
//     no polypectomy and no biopsy (the population of withdrawal_negative
//     before the timing condition).
//   - withdrawal_6min_share: withdrawal ≥360 s / withdrawal_negative's
//     procedures.
//   - prep_adequate_total6: procedures not recorded as inpatient with all
//     three segments recorded; numerator Boston total ≥6.
//   - cir, cir_adjusted: the numerator is complete procedures, and only
//     those with caecal_photo yes when the profile's cir_requires_photo is
//     set (clinical-reference §2); such a figure carries CIRPhotoNote.
//   - cold_snare_small: lesion level, polypectomies of lesions 3–9 mm.
//   - tattoo_large: lesion level, every lesion ≥20 mm or called
//     deep_invasive outside rectum and caecum, whatever its resection.
//   - sedation medians: procedures with the dose recorded (a recorded 0
//     counts) in the age band; an even count takes the mean of the two middle
//     values; numerator is the sum of the doses.
//   - volume: procedures in the period × 365 ÷ days in the period; judged
//     only per operator and over a full year (Period.FullYear), never
//     too_few (the case-count gate does not apply to a count of
//     procedures, and its denominator is days).
//   - AwaitingHistology is set on the indicators that read histology (the
//     ADR family, ssldr, aadr, apc, proximal_sdr), not on pdr.
func (s *counts) indicators(p *Profile, per Period, isUnit bool) []Indicator {
	out := make([]Indicator, 0, 36)
	el := s.adr
	withEligible := func(id string, k int) Indicator {
		ind := judged(Proportion(id, k, el.n), p)
		ind.AwaitingHistology = el.awaiting
		return ind
	}
	out = append(out,
		detectionRate("adr", s.adr, p),
		detectionRate("adr_male", s.male, p),
		detectionRate("adr_female", s.female, p),
		detectionRate("adr_stool_test_positive", s.stool, p),
		withEligible("ssldr", s.ssl),
		judged(Proportion("pdr", s.pdr, el.n), p),
		withEligible("aadr", s.aadr),
		s.apc(p),
		withEligible("proximal_sdr", s.proxSerrated),
		cirNoted(judged(Proportion("cir", s.intubated, s.procs), p), p),
		cirNoted(judged(Proportion("cir_adjusted", s.cirAdjusted.k, s.cirAdjusted.n), p), p),
		judged(Proportion("caecal_photo", s.photo, s.complete), p),
		judged(Proportion("prep_adequate", s.prep.k, s.prep.n), p),
		judged(Proportion("prep_recorded", s.prepRecorded, s.procs), p),
		judged(Proportion("prep_adequate_total6", s.total6.k, s.total6.n), p),
		s.withdrawal(p),
		judged(Proportion("withdrawal_timed", s.wdN, s.wdCandidates), p),
		judged(Proportion("withdrawal_6min_share", s.wd6, s.wdN), p),
		judged(Proportion("retroversion", s.retro.k, s.retro.n), p),
		judged(Proportion("retrieval", s.retrieved, s.polyps), p),
		judged(Proportion("tattoo_large", s.tattooDone, s.tattooDue), p),
		judged(Proportion("cold_snare_small", s.coldSnared, s.coldSmall), p),
		judged(Proportion("comfort_discomfort", s.comfort.k, s.comfort.n), p),
		judged(Proportion("comfort_recorded", s.comfort.n, s.procs), p),
		judged(ExactProportion("perforation", s.perforation, s.procs), p),
		judged(ExactProportion("bleeding", s.bleeding.k, s.bleeding.n), p),
	)
	for d := range nDrugs {
		for b := range nBands {
			out = append(out, s.median(d, b, p))
		}
	}
	out = append(out, s.volume(p, per, isUnit))
	out = append(out,
		detectionRate("adr_with_aid", s.withAid, p),
		detectionRate("adr_without_aid", s.withoutAid, p),
		aidDifference(s.withAid, s.withoutAid, p),
	)
	return out
}

// CIRPhotoNote is printed beside the caecal intubation rates of a profile
// that counts only photo-documented complete procedures, since the same
// records give a higher rate under the other standards.
const CIRPhotoNote = "only photo-documented complete procedures count, as this standard defines the rate"

// cirNoted adds CIRPhotoNote to a caecal intubation rate when the profile
// asks for photo documentation.
func cirNoted(ind Indicator, p *Profile) Indicator {
	if p.CIRRequiresPhoto {
		ind.Note = CIRPhotoNote
	}
	return ind
}

// apc is adenomas per detection-eligible procedure with the exact Poisson
// interval of the adenoma count divided by the number of procedures.
func (s *counts) apc(p *Profile) Indicator {
	ind := newIndicator("apc", float64(s.adenomas), s.adr.n)
	if s.adr.n > 0 {
		n := float64(s.adr.n)
		ci := stats.PoissonExact(s.adenomas, 0.95)
		ind.Value, ind.CILow, ind.CIHigh = ptr(float64(s.adenomas)/n), ptr(ci.Low/n), ptr(ci.High/n)
	}
	ind.Judge(p.Target(ind.ID), p.MinCases)
	ind.AwaitingHistology = s.adr.awaiting
	return ind
}

// withdrawal is the mean withdrawal in minutes of negative, complete, timed,
// detection-eligible procedures: numerator the sum of minutes, denominator
// their count, Student t interval.
func (s *counts) withdrawal(p *Profile) Indicator {
	ind := newIndicator("withdrawal_negative", float64(s.wdSum)/60, s.wdN)
	if s.wdN > 0 {
		mean, ci := stats.MeanT(float64(s.wdSum)/60, float64(s.wdSumSq)/3600, s.wdN)
		ind.Value, ind.CILow, ind.CIHigh = ptr(mean), ptr(ci.Low), ptr(ci.High)
	}
	ind.Judge(p.Target(ind.ID), p.MinCases)
	return ind
}

// median is a sedation dose median for one drug and age band.
func (s *counts) median(drug, band int, p *Profile) Indicator {
	n := s.sedationN[drug][band]
	ind := newIndicator(sedationID(drug, band), s.sedationSum[drug][band], n)
	if n > 0 {
		ind.Value = ptr(stats.MedianOfCounts(s.sedation[drug][band].all(), n))
	}
	ind.Judge(p.Target(ind.ID), p.MinCases)
	return ind
}

// volume is procedures per 365 days over the period: numerator the
// procedures, denominator the days. It is judged against the profile's
// target only for an operator over a full year, and never held back as
// too_few: the case-count gate is for rates and must not read days
// (clinical-reference §2). Otherwise it is reported, with a note saying why
// when the profile has a target.
func (s *counts) volume(p *Profile, per Period, isUnit bool) Indicator {
	days := per.Days()
	ind := newIndicator("volume", float64(s.procs), days)
	if days > 0 {
		ind.Value = ptr(float64(s.procs) * 365 / float64(days))
	}
	t := p.Target(ind.ID)
	switch {
	case t == nil:
		ind.Judge(nil, 0)
	case isUnit:
		ind.Judge(nil, 0)
		ind.Note = VolumeUnitNote
	case !per.FullYear():
		ind.Judge(nil, 0)
		ask := ind
		ask.Judge(t, 0)
		ind.Note = fmt.Sprintf(volumeShortNote, FormatTarget(ask))
	default:
		ind.Judge(t, 0)
	}
	return ind
}

// Notes beside a volume that is not judged.
const (
	VolumeUnitNote  = "judged per endoscopist, not for the unit"
	volumeShortNote = "volume is judged over a year or more (target %s); this period is shorter"
)
