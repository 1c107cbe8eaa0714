// Package demo invents a colonoscopy unit — its staff, two years of
// procedures, lesions, optical calls and histology — for trying the program
// and for tests and benchmarks. Everything it makes is invented: the unit,
// the staff names and every patient record. It is deterministic for a seed.
package demo

import (
	"fmt"
	"math"
	"math/rand/v2"
	"time"

	"polypledger/logbook"
)

// UnitName is the invented unit's name.
const UnitName = "Larkfield Endoscopy Unit (invented demo data)"

// Staff member of the invented unit, with the traits the generator draws
// their cases from.
type Staff struct {
	Entry logbook.RosterEntry
	// adr is the chance that an eligible case of theirs holds an adenoma.
	adr float64
	// withdrawalMin is their mean withdrawal time in minutes.
	withdrawalMin float64
	// opticalAccuracy is how often their optical call matches histology.
	opticalAccuracy float64
	// share is their relative share of the unit's lists.
	share float64
}

// Staff returns the invented roster: eight endoscopists whose detection
// rates spread from about 15% to 45%, and two trainees. Names are invented.
func StaffList() []Staff {
	e := func(id, name string, adr, wd, acc, share float64) Staff {
		return Staff{Entry: logbook.RosterEntry{ID: id, Name: name, Role: logbook.RoleEndoscopist}, adr: adr, withdrawalMin: wd, opticalAccuracy: acc, share: share}
	}
	t := func(id, name string) Staff {
		return Staff{Entry: logbook.RosterEntry{ID: id, Name: name, Role: logbook.RoleTrainee}, adr: 0.28, withdrawalMin: 9, opticalAccuracy: 0.75}
	}
	return []Staff{
		e("E01", "Dr Maren Okonkwo-Hale", 0.45, 10.5, 0.93, 1.3),
		e("E02", "Dr Tobias Lindqvist", 0.40, 9.5, 0.91, 1.2),
		e("E03", "Dr Priya Ramanathan", 0.36, 9.0, 0.90, 1.1),
		e("E04", "Dr Colm Ferriter", 0.32, 8.0, 0.88, 1.0),
		e("E05", "Dr Ines Albuquerque", 0.28, 7.5, 0.86, 1.0),
		e("E06", "Dr Hamish Drummond", 0.24, 7.0, 0.84, 0.9),
		e("E07", "Dr Yuki Sorensen", 0.20, 6.5, 0.80, 0.8),
		e("E08", "Dr Bartholomew Quayle", 0.15, 5.5, 0.76, 0.7),
		t("T01", "Dr Ada Nwachukwu"),
		t("T02", "Dr Leo Marchetti"),
	}
}

// Options shape the invented data.
type Options struct {
	Procedures int       // how many procedures (default 4000)
	Seed       uint64    // the same seed gives the same unit
	End        time.Time // last procedure date (default 2026-10-31); the data spans two years before it
	// Key pseudonymises the invented hospital numbers.
	Key []byte
	// Recommend, when set, gives the interval the endoscopist recorded; the
	// generator agrees with it most of the time and sometimes records another.
	Recommend func(c *logbook.Case) logbook.Interval
}

// DefaultEnd is the default last procedure date of the demo unit.
var DefaultEnd = time.Date(2026, 10, 31, 0, 0, 0, 0, time.UTC)

// Generate calls emit with each invented case in date order. The case is
// reused between calls. It stops at the first error emit returns.
func Generate(opt Options, emit func(*logbook.Case) error) error {
	if opt.Procedures <= 0 {
		opt.Procedures = 4000
	}
	if opt.End.IsZero() {
		opt.End = DefaultEnd
	}
	g := &gen{r: rand.New(rand.NewPCG(opt.Seed, opt.Seed^0x9e3779b97f4a7c15)), opt: opt, staff: StaffList()}
	start := opt.End.AddDate(-2, 0, 1)
	days := int(opt.End.Sub(start).Hours()/24) + 1
	var ops []Staff
	total := 0.0
	for _, s := range g.staff {
		if s.Entry.Role == logbook.RoleEndoscopist {
			ops = append(ops, s)
			total += s.share
		}
	}
	g.ops, g.opsTotal = ops, total
	var c logbook.Case
	patients := opt.Procedures * 9 / 10
	if patients < 1 {
		patients = 1
	}
	for i := 0; i < opt.Procedures; i++ {
		day := i * days / opt.Procedures
		date := start.AddDate(0, 0, day)
		c.Procedure = logbook.NewProcedure()
		c.Lesions = c.Lesions[:0]
		g.procedure(&c, i, date, float64(day)/float64(days), 1+g.r.IntN(patients))
		if err := emit(&c); err != nil {
			return err
		}
	}
	return nil
}

type gen struct {
	r        *rand.Rand
	opt      Options
	staff    []Staff
	ops      []Staff
	opsTotal float64
}

func (g *gen) chance(p float64) bool { return g.r.Float64() < p }

func (g *gen) pick(weights ...float64) int {
	t := 0.0
	for _, w := range weights {
		t += w
	}
	x := g.r.Float64() * t
	for i, w := range weights {
		if x < w {
			return i
		}
		x -= w
	}
	return len(weights) - 1
}

func clamp(v, lo, hi int) int {
	if v < lo {
		return lo
	}
	if v > hi {
		return hi
	}
	return v
}

func yn(b bool) logbook.YesNo {
	if b {
		return logbook.Yes
	}
	return logbook.No
}

func (g *gen) operator() Staff {
	x := g.r.Float64() * g.opsTotal
	for _, s := range g.ops {
		if x < s.share {
			return s
		}
		x -= s.share
	}
	return g.ops[len(g.ops)-1]
}

// procedure fills one invented case. progress runs from 0 at the start of
// the two years to 1 at the end.
func (g *gen) procedure(c *logbook.Case, i int, date time.Time, progress float64, patient int) {
	p := &c.Procedure
	op := g.operator()
	who := op // whose skill shapes the findings
	p.ID = fmt.Sprintf("LK%07d", i+1)
	p.PerformedOn = date
	p.OperatorID = op.Entry.ID
	if g.chance(0.14) {
		tr := g.staff[8+g.r.IntN(2)]
		p.TraineeID = tr.Entry.ID
		who = tr
		// Trainees move from hands-on supervision to independence over time.
		switch g.pick(1-progress, 0.5, progress+0.1) {
		case 0:
			p.Supervision = logbook.SupervisedHandsOn
		case 1:
			p.Supervision = logbook.SupervisedObserved
		default:
			p.Supervision = logbook.Independent
		}
		// Learning: unassisted caecal intubation improves from ~70% to ~93%.
		who.adr = 0.22 + 0.12*progress
	}
	key, _ := logbook.Pseudonymise(g.opt.Key, fmt.Sprintf("DEMO%08d", patient))
	p.PatientKey = key
	p.Age = clamp(int(math.Round(g.r.NormFloat64()*11+63)), 18, 95)
	p.Sex = []logbook.Sex{logbook.SexFemale, logbook.SexMale, logbook.SexUnknown}[g.pick(0.49, 0.5, 0.01)]
	p.Indication = logbook.Indications[g.pick(0.34, 0.2, 0.2, 0.23, 0.03)]
	p.Setting = logbook.Settings[g.pick(0.92, 0.08)]
	p.Exclusion = logbook.Exclusions[g.pick(0.93, 0.04, 0.01, 0.02)]

	complete := g.chance(0.95)
	if p.TraineeID != "" {
		reached := g.chance(0.70 + 0.23*progress)
		p.TraineeReachedCaecum = yn(reached)
		if !reached {
			complete = g.chance(0.93) // the trainer usually completes it
		}
		if !complete {
			p.TraineeReachedCaecum = logbook.No
		}
	}
	bbps := func() int {
		return []int{0, 1, 2, 3}[g.pick(0.01, 0.04, 0.35, 0.6)]
	}
	if g.chance(0.97) {
		p.BBPSRight, p.BBPSTransverse, p.BBPSLeft = bbps(), bbps(), bbps()
	}
	if complete {
		p.Extent = []logbook.Extent{logbook.ExtentCaecum, logbook.ExtentTerminalIleum, logbook.ExtentAnastomosis}[g.pick(0.72, 0.25, 0.03)]
		p.CaecalPhoto = yn(g.chance(0.9))
	} else {
		p.Extent = logbook.ExtentIncomplete
		p.IncompleteReason = logbook.IncompleteReasons[g.pick(0.35, 0.1, 0.05, 0.2, 0.25, 0.05)]
		p.CaecalPhoto = logbook.No
	}
	if g.chance(0.95) {
		p.WithdrawalSeconds = clamp(int(math.Round((who.withdrawalMin+g.r.NormFloat64()*2)*60)), 90, 2400)
	}
	p.Retroversion = []logbook.YesNo{logbook.Yes, logbook.No, logbook.NotApplicable, logbook.Unrecorded}[g.pick(0.88, 0.08, 0.01, 0.03)]
	if g.chance(0.05) {
		p.Propofol = logbook.Yes
	} else {
		p.Propofol = logbook.No
		older := p.Age >= 70
		mz := []float64{1, 2, 2.5, 3, 5}[g.pick(0.25, 0.35, 0.15, 0.15, 0.1)]
		if older {
			mz = []float64{1, 1.5, 2, 3}[g.pick(0.35, 0.25, 0.3, 0.1)]
		}
		if g.chance(0.9) {
			p.MidazolamMg = mz
		}
		if g.chance(0.8) {
			p.FentanylUg = []float64{25, 50, 75, 100}[g.pick(0.2, 0.5, 0.2, 0.1)]
			if older {
				p.FentanylUg = []float64{25, 50}[g.pick(0.5, 0.5)]
			}
		} else if g.chance(0.5) {
			p.PethidineMg = []float64{25, 50}[g.pick(0.6, 0.4)]
		}
	}
	if g.chance(0.92) {
		p.Comfort = []int{1, 2, 3, 4, 5}[g.pick(0.35, 0.35, 0.2, 0.08, 0.02)]
	}
	// Computer-aided detection arrives in the second year.
	aid := progress > 0.5 && g.chance(0.65)
	p.DetectionAid = yn(aid)
	p.AdverseEvent = logbook.AdverseNone

	g.lesions(c, who, aid, date)

	polypectomy := false
	for _, l := range c.Lesions {
		if l.Resection.IsPolypectomy() {
			polypectomy = true
		}
	}
	if g.chance(1.0 / 1500) {
		p.AdverseEvent = logbook.Perforation
	} else if polypectomy && g.chance(1.0/150) {
		p.AdverseEvent = logbook.BleedingTreated
	}
	if g.opt.Recommend != nil {
		rec := g.opt.Recommend(c)
		if g.chance(0.12) {
			rec = []logbook.Interval{logbook.Interval3y, logbook.Interval5to10y, logbook.Interval10y, logbook.Interval1y}[g.r.IntN(4)]
		}
		if g.chance(0.1) {
			rec = ""
		}
		p.RecommendedInterval = rec
	}
}

var segmentWeights = []float64{0.12, 0.16, 0.06, 0.18, 0.06, 0.1, 0.2, 0.12}

func (g *gen) segment() logbook.Segment { return logbook.Segments[g.pick(segmentWeights...)] }

func (g *gen) size() int {
	switch g.pick(0.68, 0.21, 0.08, 0.03) {
	case 0:
		return 1 + g.r.IntN(5)
	case 1:
		return 6 + g.r.IntN(4)
	case 2:
		return 10 + g.r.IntN(10)
	}
	return 20 + g.r.IntN(25)
}

// lesions invents the findings of a case from the endoscopist's detection
// rate, with a modest gain when computer-aided detection is used.
func (g *gen) lesions(c *logbook.Case, who Staff, aid bool, date time.Time) {
	p := &c.Procedure
	rate := who.adr
	if aid {
		rate += 0.06
	}
	if p.Age < 50 {
		rate *= 0.6
	} else if p.Age >= 70 {
		rate *= 1.2
	}
	if p.Indication == logbook.StoolTestPositive {
		rate *= 1.4
	}
	var truth []logbook.Histology
	if g.chance(rate) {
		n := 1
		for n < 12 && g.chance(0.4) {
			n++
		}
		for k := 0; k < n; k++ {
			truth = append(truth, []logbook.Histology{logbook.TubularAdenoma, logbook.TubulovillousAdeno, logbook.VillousAdenoma, logbook.Adenocarcinoma}[g.pick(0.9, 0.08, 0.01, 0.004)])
		}
	}
	if g.chance(0.06 + who.adr/10) {
		truth = append(truth, []logbook.Histology{logbook.HistSSL, logbook.HistSSLDysplasia, logbook.HistTSA}[g.pick(0.85, 0.08, 0.07)])
	}
	for k := 0; k < 3 && g.chance(0.3); k++ {
		truth = append(truth, logbook.HistHyperplastic)
	}
	if g.chance(0.03) {
		truth = append(truth, []logbook.Histology{logbook.HistNormal, logbook.HistInflammatory, logbook.HistOther}[g.pick(0.5, 0.4, 0.1)])
	}
	recent := DefaultEnd.Sub(date) < 21*24*time.Hour || (!g.opt.End.IsZero() && g.opt.End.Sub(date) < 21*24*time.Hour)
	for k, h := range truth {
		l := logbook.NewLesion()
		l.ProcedureID = p.ID
		l.LesionNo = k + 1
		l.Segment = g.segment()
		if h == logbook.HistHyperplastic && g.chance(0.6) {
			l.Segment = []logbook.Segment{logbook.Rectum, logbook.Sigmoid}[g.r.IntN(2)]
		}
		l.SizeMM = g.size()
		if h == logbook.Adenocarcinoma {
			l.SizeMM = 15 + g.r.IntN(30)
		}
		if h == logbook.HistHyperplastic && l.SizeMM > 9 && g.chance(0.8) {
			l.SizeMM = 2 + g.r.IntN(4)
		}
		l.Paris = logbook.ParisClasses[g.pick(0.08, 0.15, 0.5, 0.2, 0.04, 0.02, 0.01)]
		l.Imaging = logbook.ImagingModes[g.pick(0.3, 0.6, 0.07, 0.03)]
		g.opticalCall(&l, h, who.opticalAccuracy, aid)
		switch {
		case l.SizeMM >= 20:
			l.Resection = []logbook.Resection{logbook.EMRPiecemeal, logbook.EMREnBloc, logbook.ESD}[g.pick(0.6, 0.3, 0.1)]
		case l.SizeMM >= 10:
			l.Resection = []logbook.Resection{logbook.HotSnare, logbook.EMREnBloc, logbook.ColdSnare}[g.pick(0.4, 0.3, 0.3)]
		case l.SizeMM <= 3:
			l.Resection = []logbook.Resection{logbook.ColdForceps, logbook.ColdSnare}[g.pick(0.5, 0.5)]
		default:
			l.Resection = []logbook.Resection{logbook.ColdSnare, logbook.HotSnare}[g.pick(0.9, 0.1)]
		}
		if h == logbook.Adenocarcinoma && g.chance(0.5) {
			l.Resection = logbook.BiopsyOnly
		}
		left := false
		if h == logbook.HistHyperplastic && l.IsDiminutive() && l.Segment.IsRectosigmoid() && l.Confidence == logbook.HighConfidence && g.chance(0.15) {
			l.Resection = logbook.ResectionNone // diagnosed and left in place
			left = true
		}
		if l.SizeMM >= 20 || l.OpticalClass == logbook.OpticalDeepInvasive {
			if l.Segment != logbook.Rectum && l.Segment != logbook.Caecum {
				l.Tattoo = yn(g.chance(0.75))
			}
		}
		if left {
			l.Retrieved, l.SentToPathology = logbook.No, logbook.No
		} else {
			l.Retrieved = yn(g.chance(0.95))
			l.SentToPathology = logbook.No
			if l.Retrieved == logbook.Yes {
				l.SentToPathology = logbook.Yes
			}
		}
		if l.SentToPathology == logbook.Yes {
			if recent || g.chance(0.01) {
				l.Histology = logbook.HistPending
			} else {
				l.Histology = h
				l.ReportedOn = date.AddDate(0, 0, 7+g.r.IntN(14))
				if l.ReportedOn.After(g.opt.End) {
					l.ReportedOn = g.opt.End
				}
				l.Dysplasia = g.dysplasia(h, l.SizeMM)
			}
		}
		c.Lesions = append(c.Lesions, l)
	}
}

func (g *gen) dysplasia(h logbook.Histology, size int) logbook.Dysplasia {
	switch h {
	case logbook.TubularAdenoma, logbook.TubulovillousAdeno, logbook.VillousAdenoma, logbook.HistSSLDysplasia:
		high := 0.01
		if size >= 10 {
			high = 0.08
		}
		if g.chance(high) {
			return logbook.DysplasiaHigh
		}
		return logbook.DysplasiaLow
	case logbook.HistHyperplastic, logbook.HistSSL, logbook.HistNormal, logbook.HistInflammatory:
		return logbook.DysplasiaNone
	case logbook.HistTSA:
		return logbook.DysplasiaLow
	}
	return ""
}

// rightCall is the optical class that matches each histology.
var rightCall = map[logbook.Histology]logbook.OpticalClass{
	logbook.TubularAdenoma: logbook.OpticalAdenoma, logbook.TubulovillousAdeno: logbook.OpticalAdenoma,
	logbook.VillousAdenoma: logbook.OpticalAdenoma, logbook.Adenocarcinoma: logbook.OpticalDeepInvasive,
	logbook.HistSSL: logbook.OpticalSSL, logbook.HistSSLDysplasia: logbook.OpticalSSL, logbook.HistTSA: logbook.OpticalAdenoma,
	logbook.HistHyperplastic: logbook.OpticalHyperplastic, logbook.HistNormal: logbook.OpticalHyperplastic,
	logbook.HistInflammatory: logbook.OpticalHyperplastic, logbook.HistOther: logbook.OpticalUncertain,
}

// opticalCall invents the endoscopist's real-time call and, when aid is in
// use, the computer-aided class.
func (g *gen) opticalCall(l *logbook.Lesion, h logbook.Histology, accuracy float64, aid bool) {
	right := rightCall
	wrong := func(c logbook.OpticalClass) logbook.OpticalClass {
		switch c {
		case logbook.OpticalAdenoma, logbook.OpticalDeepInvasive:
			return []logbook.OpticalClass{logbook.OpticalHyperplastic, logbook.OpticalSSL}[g.pick(0.8, 0.2)]
		}
		return logbook.OpticalAdenoma
	}
	if g.chance(0.06) {
		l.OpticalClass, l.Confidence = logbook.OpticalUncertain, logbook.LowConfidence
	} else {
		correct := g.chance(accuracy)
		l.OpticalClass = right[h]
		if !correct {
			l.OpticalClass = wrong(l.OpticalClass)
		}
		if l.OpticalClass == logbook.OpticalUncertain {
			l.Confidence = logbook.LowConfidence
		} else if correct && g.chance(0.8) || !correct && g.chance(0.35) {
			l.Confidence = logbook.HighConfidence
		} else {
			l.Confidence = logbook.LowConfidence
		}
	}
	if aid && g.chance(0.9) {
		l.AidClass = right[h]
		if !g.chance(0.88) {
			l.AidClass = wrong(l.AidClass)
		}
	}
}
