package audit

import (
	"encoding/json"
	"math"
	"slices"
	"sort"
	"strings"
	"testing"

	"polypledger/logbook"
)

// Each population below is counted by hand in its comment, following
// clinical-reference §2 ("Counting rules" and the indicator definitions).
// Unless a case says otherwise it is mkCase's eligible screening procedure.
func TestIndicatorCounts(t *testing.T) {
	adenoma := mkLesion()
	hyper := mkLesion(histology(logbook.HistHyperplastic))
	// Six procedures of every kind, complete ones with and without a photo.
	photoMix := []logbook.Case{
		mkCase(), mkCase(eExtent(logbook.ExtentTerminalIleum), ePhoto(logbook.No)),
		mkCase(eExtent(logbook.ExtentAnastomosis), ePhoto(logbook.Unrecorded)),
		mkCase(eAge(30), eInd(logbook.Diagnostic), eExcl(logbook.IBD)),
		mkCase(eIncomplete(logbook.ReasonPoorPrep)), mkCase(eIncomplete(logbook.ReasonLooping)),
	}
	tests := []struct {
		name     string
		profile  string
		cases    []logbook.Case
		id       string
		num, den float64
	}{
		{
			// Eligible: 2 with adenoma, hyperplastic only, no lesion, cancer,
			// pending = 6; with adenoma: 2 + cancer = 3. Age 44, therapeutic
			// and IBD leave the denominator.
			name: "adr", profile: "asge-acg-2024", id: "adr", num: 3, den: 6,
			cases: concat(repeat(2, mkCase(withLesions(adenoma))), []logbook.Case{
				mkCase(withLesions(hyper)),
				mkCase(),
				mkCase(withLesions(mkLesion(histology(logbook.Adenocarcinoma)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistPending)))),
				mkCase(eAge(44), withLesions(adenoma)),
				mkCase(eInd(logbook.Therapeutic), withLesions(adenoma)),
				mkCase(eExcl(logbook.IBD), withLesions(adenoma)),
			}),
		},
		{
			// Men: adenoma, none → 1/2. Sex X with adenoma is in neither.
			name: "adr_male", profile: "asge-acg-2024", id: "adr_male", num: 1, den: 2,
			cases: []logbook.Case{
				mkCase(withLesions(adenoma)), mkCase(),
				mkCase(eSex(logbook.SexFemale), withLesions(adenoma)), mkCase(eSex(logbook.SexFemale)), mkCase(eSex(logbook.SexFemale)),
				mkCase(eSex(logbook.SexOther), withLesions(adenoma)),
			},
		},
		{
			// Women: adenoma, none, none → 1/3.
			name: "adr_female", profile: "asge-acg-2024", id: "adr_female", num: 1, den: 3,
			cases: []logbook.Case{
				mkCase(withLesions(adenoma)), mkCase(),
				mkCase(eSex(logbook.SexFemale), withLesions(adenoma)), mkCase(eSex(logbook.SexFemale)), mkCase(eSex(logbook.SexFemale)),
				mkCase(eSex(logbook.SexOther), withLesions(adenoma)),
			},
		},
		{
			// Stool test positive, age ≥45, exclusion none: age 50 adenoma, age
			// 45 none → 1/2. Age 44, known neoplasm and the screening case are
			// not in this population.
			name: "adr_stool_test_positive", profile: "asge-acg-2024", id: "adr_stool_test_positive", num: 1, den: 2,
			cases: []logbook.Case{
				mkCase(eInd(logbook.StoolTestPositive), eAge(50), withLesions(adenoma)),
				mkCase(eInd(logbook.StoolTestPositive), eAge(45)),
				mkCase(eInd(logbook.StoolTestPositive), eAge(44), withLesions(adenoma)),
				mkCase(eInd(logbook.StoolTestPositive), eExcl(logbook.KnownNeoplasm), withLesions(adenoma)),
				mkCase(withLesions(adenoma)),
			},
		},
		{
			// Under ASGE/ACG positive stool tests are measured apart: the
			// screening case alone is in the ADR → 1/1.
			name: "adr leaves out stool tests under asge", profile: "asge-acg-2024", id: "adr", num: 1, den: 1,
			cases: []logbook.Case{
				mkCase(eInd(logbook.StoolTestPositive), eAge(50), withLesions(adenoma)),
				mkCase(withLesions(adenoma)),
			},
		},
		{
			// SSL, SSL with dysplasia count; TSA, hyperplastic, none do not → 2/5.
			name: "ssldr", profile: "asge-acg-2024", id: "ssldr", num: 2, den: 5,
			cases: []logbook.Case{
				mkCase(withLesions(mkLesion(histology(logbook.HistSSL)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistSSLDysplasia)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistTSA)))),
				mkCase(withLesions(hyper)),
				mkCase(),
			},
		},
		{
			// Polypectomy: cold snare of a hyperplastic polyp yes; biopsy only,
			// resection none and no lesion no → 1/4.
			name: "pdr", profile: "asge-acg-2024", id: "pdr", num: 1, den: 4,
			cases: []logbook.Case{
				mkCase(withLesions(hyper)),
				mkCase(withLesions(mkLesion(lRes(logbook.BiopsyOnly)))),
				mkCase(withLesions(mkLesion(lRes(logbook.ResectionNone), lNotSent))),
				mkCase(),
			},
		},
		{
			// Advanced: 10 mm, tubulovillous, high grade, cancer yes; 4 mm low
			// grade and a 15 mm SSL no → 4/6.
			name: "aadr", profile: "asge-acg-2024", id: "aadr", num: 4, den: 6,
			cases: []logbook.Case{
				mkCase(withLesions(adenoma)),
				mkCase(withLesions(mkLesion(lSize(10)))),
				mkCase(withLesions(mkLesion(histology(logbook.TubulovillousAdeno), lSize(5)))),
				mkCase(withLesions(mkLesion(lHigh))),
				mkCase(withLesions(mkLesion(histology(logbook.Adenocarcinoma), lSize(3)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistSSL), lSize(15)))),
			},
		},
		{
			// 3 + 1 + 0 adenomas over 3 eligible procedures.
			name: "apc", profile: "asge-acg-2024", id: "apc", num: 4, den: 3,
			cases: []logbook.Case{
				mkCase(withLesions(adenoma, adenoma, adenoma)),
				mkCase(withLesions(adenoma, hyper)),
				mkCase(),
			},
		},
		{
			// Proximal serrated: SSL ascending, TSA transverse, hyperplastic
			// 12 mm caecum, SSL splenic flexure yes; hyperplastic 8 mm
			// ascending, SSL sigmoid, SSL descending no → 4/7.
			name: "proximal_sdr", profile: "asge-acg-2024", id: "proximal_sdr", num: 4, den: 7,
			cases: []logbook.Case{
				mkCase(withLesions(mkLesion(histology(logbook.HistSSL), lSeg(logbook.Ascending)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistTSA), lSeg(logbook.Transverse)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistHyperplastic), lSize(12), lSeg(logbook.Caecum)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistSSL), lSeg(logbook.SplenicFlexure)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistHyperplastic), lSize(8), lSeg(logbook.Ascending)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistSSL), lSeg(logbook.Sigmoid)))),
				mkCase(withLesions(mkLesion(histology(logbook.HistSSL), lSeg(logbook.Descending)))),
			},
		},
		{
			// Every procedure, whatever age, indication or exclusion: caecum,
			// ileum, anastomosis, age-30 IBD caecum complete; poor prep and
			// looping incomplete → 4/6.
			name: "cir", profile: "asge-acg-2024", id: "cir", num: 4, den: 6,
			cases: []logbook.Case{
				mkCase(), mkCase(eExtent(logbook.ExtentTerminalIleum)), mkCase(eExtent(logbook.ExtentAnastomosis)),
				mkCase(eAge(30), eInd(logbook.Diagnostic), eExcl(logbook.IBD)),
				mkCase(eIncomplete(logbook.ReasonPoorPrep)), mkCase(eIncomplete(logbook.ReasonLooping)),
			},
		},
		{
			// Obstruction, poor prep, severe colitis leave; looping and
			// discomfort stay; 3 complete → 3/5.
			name: "cir_adjusted", profile: "asge-acg-2024", id: "cir_adjusted", num: 3, den: 5,
			cases: concat(repeat(3, mkCase()), []logbook.Case{
				mkCase(eIncomplete(logbook.ReasonObstruction)), mkCase(eIncomplete(logbook.ReasonPoorPrep)),
				mkCase(eIncomplete(logbook.ReasonSevereColitis)), mkCase(eIncomplete(logbook.ReasonLooping)),
				mkCase(eIncomplete(logbook.ReasonDiscomfort)),
			}),
		},
		{
			// BSG/JAG 2016 counts "unadjusted caecal intubation with photo
			// documentation" (Rees 2016; clinical-reference §2, the profile's
			// cir_requires_photo): four complete, of which the ileum and
			// anastomosis ones have no photo → 2/6.
			name: "cir photo-documented under bsg-jag-2016", profile: "bsg-jag-2016", id: "cir", num: 2, den: 6,
			cases: photoMix,
		},
		{
			// The same records under asge-acg-2024, which measures photo
			// documentation apart (Rex 2024): 4/6.
			name: "cir without the photo rule", profile: "asge-acg-2024", id: "cir", num: 4, den: 6,
			cases: photoMix,
		},
		{
			// cir_adjusted under bsg-jag-2016 takes the same photo rule
			// (clinical-reference §2): 3 complete, 1 of them without a photo,
			// looping stays, obstruction leaves → 2/4.
			name: "cir_adjusted photo-documented under bsg-jag-2016", profile: "bsg-jag-2016", id: "cir_adjusted", num: 2, den: 4,
			cases: []logbook.Case{
				mkCase(), mkCase(), mkCase(ePhoto(logbook.No)),
				mkCase(eIncomplete(logbook.ReasonObstruction)), mkCase(eIncomplete(logbook.ReasonLooping)),
			},
		},
		{
			// Complete procedures: photo yes ×2, no, unrecorded → 2/4; the
			// incomplete one is not counted.
			name: "caecal_photo", profile: "asge-acg-2024", id: "caecal_photo", num: 2, den: 4,
			cases: []logbook.Case{
				mkCase(), mkCase(), mkCase(ePhoto(logbook.No)), mkCase(ePhoto(logbook.Unrecorded)),
				mkCase(eIncomplete(logbook.ReasonLooping)),
			},
		},
		{
			// Outpatients with all three segments: 2/2/2 adequate, 3/3/1 not
			// → 1/2. A missing segment, an inpatient and an unrecorded setting
			// are not counted.
			name: "prep_adequate", profile: "asge-acg-2024", id: "prep_adequate", num: 1, den: 2,
			cases: []logbook.Case{
				mkCase(eBBPS(2, 2, 2)), mkCase(eBBPS(3, 3, 1)), mkCase(eBBPS(2, 2, logbook.NotRecorded)),
				mkCase(eBBPS(3, 3, 3), eSetting(logbook.Inpatient)), mkCase(eBBPS(3, 3, 3), eSetting("")),
			},
		},
		{
			// The same five: all three segments recorded in 4 → 4/5.
			name: "prep_recorded", profile: "asge-acg-2024", id: "prep_recorded", num: 4, den: 5,
			cases: []logbook.Case{
				mkCase(eBBPS(2, 2, 2)), mkCase(eBBPS(3, 3, 1)), mkCase(eBBPS(2, 2, logbook.NotRecorded)),
				mkCase(eBBPS(3, 3, 3), eSetting(logbook.Inpatient)), mkCase(eBBPS(3, 3, 3), eSetting("")),
			},
		},
		{
			// ESGE total ≥6, inpatients out: 2/2/2 (6), 3/3/1 (7), unrecorded
			// setting 3/3/0 (6) yes; 1/2/2 (5) no → 3/4.
			name: "prep_adequate_total6", profile: "esge-2017", id: "prep_adequate_total6", num: 3, den: 4,
			cases: []logbook.Case{
				mkCase(eBBPS(2, 2, 2)), mkCase(eBBPS(3, 3, 1)), mkCase(eBBPS(1, 2, 2)),
				mkCase(eBBPS(3, 3, 3), eSetting(logbook.Inpatient)), mkCase(eBBPS(3, 3, 0), eSetting("")),
				mkCase(eBBPS(2, 2, logbook.NotRecorded)),
			},
		},
		{
			// Eligible, complete, timed, no polypectomy or biopsy: 360, 480,
			// 600 s and 300 s with a lesion left in place → 29 minutes over 4.
			// Out: cold snare, biopsy, incomplete, untimed, age 40.
			name: "withdrawal_negative", profile: "asge-acg-2024", id: "withdrawal_negative", num: 29, den: 4,
			cases: withdrawalCases(),
		},
		{
			// The same population before timing: 4 timed of 5.
			name: "withdrawal_timed", profile: "asge-acg-2024", id: "withdrawal_timed", num: 4, den: 5,
			cases: withdrawalCases(),
		},
		{
			// 360, 480, 600 reach 6 minutes, 300 does not → 3/4.
			name: "withdrawal_6min_share", profile: "asge-acg-2024", id: "withdrawal_6min_share", num: 3, den: 4,
			cases: withdrawalCases(),
		},
		{
			// Yes, yes, no, unrecorded (counts as not done); not applicable
			// out → 2/4.
			name: "retroversion", profile: "asge-acg-2024", id: "retroversion", num: 2, den: 4,
			cases: []logbook.Case{
				mkCase(eRetro(logbook.Yes)), mkCase(eRetro(logbook.Yes)), mkCase(eRetro(logbook.No)),
				mkCase(), mkCase(eRetro(logbook.NotApplicable)),
			},
		},
		{
			// Lesions: cold snare retrieved, cold snare not retrieved, hot
			// snare retrieved → 2/3 polypectomies; biopsy and resection none
			// are not polypectomies.
			name: "retrieval", profile: "asge-acg-2024", id: "retrieval", num: 2, den: 3,
			cases: []logbook.Case{
				mkCase(withLesions(adenoma, mkLesion(lNotSent))),
				mkCase(withLesions(mkLesion(lRes(logbook.BiopsyOnly)))),
				mkCase(withLesions(mkLesion(lRes(logbook.HotSnare)), mkLesion(lRes(logbook.ResectionNone), lNotSent))),
			},
		},
		{
			// Due a tattoo: 25 mm transverse (done), 20 mm sigmoid (not), 8 mm
			// called deep invasive in the descending colon (done) → 2/3. Rectum,
			// caecum and a 15 mm lesion are not due.
			name: "tattoo_large", profile: "bsg-jag-2016", id: "tattoo_large", num: 2, den: 3,
			cases: []logbook.Case{
				mkCase(withLesions(
					mkLesion(lSize(25), lSeg(logbook.Transverse), lTattoo(logbook.Yes)),
					mkLesion(lSize(20)),
					mkLesion(lSize(30), lSeg(logbook.Rectum)),
				)),
				mkCase(withLesions(
					mkLesion(lSize(22), lSeg(logbook.Caecum)),
					mkLesion(lSize(8), lSeg(logbook.Descending), lOptical(logbook.OpticalDeepInvasive), lTattoo(logbook.Yes)),
					mkLesion(lSize(15), lSeg(logbook.Ascending)),
				)),
			},
		},
		{
			// Polypectomies of 3–9 mm: 3 mm cold snare, 6 mm cold snare yes;
			// 9 mm hot snare, 5 mm cold forceps no → 2/4. 2 mm, 10 mm and a
			// biopsy are outside the definition.
			name: "cold_snare_small", profile: "esge-2017", id: "cold_snare_small", num: 2, den: 4,
			cases: []logbook.Case{
				mkCase(withLesions(mkLesion(lSize(3)), mkLesion(lSize(9), lRes(logbook.HotSnare)), mkLesion(lSize(6)))),
				mkCase(withLesions(mkLesion(lSize(2), lRes(logbook.ColdForceps)), mkLesion(lSize(10)),
					mkLesion(lSize(5), lRes(logbook.ColdForceps)), mkLesion(lSize(5), lRes(logbook.BiopsyOnly)))),
			},
		},
		{
			// Comfort 4 and 5 of 5 recorded → 2/5.
			name: "comfort_discomfort", profile: "bsg-jag-2016", id: "comfort_discomfort", num: 2, den: 5,
			cases: comfortCases(),
		},
		{
			// 5 recorded of 6 procedures.
			name: "comfort_recorded", profile: "esge-2017", id: "comfort_recorded", num: 5, den: 6,
			cases: comfortCases(),
		},
		{
			// One perforation in 3 procedures.
			name: "perforation", profile: "asge-acg-2024", id: "perforation", num: 1, den: 3,
			cases: []logbook.Case{mkCase(eAdverse(logbook.Perforation)), mkCase(), mkCase(eAdverse(""))},
		},
		{
			// Procedures with a polypectomy: bleeding, none, perforation → 1/3;
			// the bleed without a polypectomy is not counted.
			name: "bleeding", profile: "asge-acg-2024", id: "bleeding", num: 1, den: 3,
			cases: []logbook.Case{
				mkCase(withLesions(adenoma), eAdverse(logbook.BleedingTreated)),
				mkCase(withLesions(adenoma)),
				mkCase(eAdverse(logbook.BleedingTreated)),
				mkCase(withLesions(adenoma), eAdverse(logbook.Perforation)),
			},
		},
		{
			// Eligible with aid: adenoma, none → 1/2.
			name: "adr_with_aid", profile: "asge-acg-2024", id: "adr_with_aid", num: 1, den: 2,
			cases: aidCases(),
		},
		{
			// Eligible without aid: adenoma → 1/1; unrecorded use is in neither.
			name: "adr_without_aid", profile: "asge-acg-2024", id: "adr_without_aid", num: 1, den: 1,
			cases: aidCases(),
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r := unitResult(shipped(t, tc.profile), tc.cases)
			for _, inds := range [][]Indicator{r.Unit.Indicators, r.Operators[0].Indicators} {
				ind := mustFind(t, inds, tc.id)
				if ind.Numerator != tc.num || float64(ind.Denominator) != tc.den {
					t.Fatalf("%s = %v/%d, want %v/%v", tc.id, ind.Numerator, ind.Denominator, tc.num, tc.den)
				}
				if ind.Value == nil || !near(*ind.Value, tc.num/tc.den, 1e-12) {
					t.Errorf("%s value = %v, want %v", tc.id, ind.Value, tc.num/tc.den)
				}
			}
		})
	}
}

// TestCIRPhotoNote checks that a caecal intubation rate counted with the
// photo rule says so beside the figure, and only then (clinical-reference §2:
// bsg-jag-2016 yes, Rees 2016; asge-acg-2024 and esge-2017 no).
func TestCIRPhotoNote(t *testing.T) {
	for _, tc := range []struct {
		profile string
		noted   bool
	}{{"asge-acg-2024", false}, {"bsg-jag-2016", true}, {"esge-2017", false}} {
		r := unitResult(shipped(t, tc.profile), []logbook.Case{mkCase()})
		for _, id := range []string{"cir", "cir_adjusted"} {
			if got := mustFind(t, r.Unit.Indicators, id).Note != ""; got != tc.noted {
				t.Errorf("%s %s: note %v, want %v", tc.profile, id, got, tc.noted)
			}
		}
		if n := mustFind(t, r.Unit.Indicators, "caecal_photo").Note; n != "" {
			t.Errorf("%s caecal_photo: note %q", tc.profile, n)
		}
	}
}

func withdrawalCases() []logbook.Case {
	return []logbook.Case{
		mkCase(eWithdrawal(360)), mkCase(eWithdrawal(480)), mkCase(eWithdrawal(600)),
		mkCase(eWithdrawal(300), withLesions(mkLesion(lRes(logbook.ResectionNone), lNotSent, histology(logbook.HistHyperplastic), lNotSent))),
		mkCase(eWithdrawal(900), withLesions(mkLesion())),
		mkCase(eWithdrawal(900), withLesions(mkLesion(lRes(logbook.BiopsyOnly)))),
		mkCase(eWithdrawal(900), eIncomplete(logbook.ReasonLooping)),
		mkCase(),
		mkCase(eWithdrawal(900), eAge(40)),
	}
}

func comfortCases() []logbook.Case {
	return []logbook.Case{mkCase(eComfort(1)), mkCase(eComfort(2)), mkCase(eComfort(3)), mkCase(eComfort(4)), mkCase(eComfort(5)), mkCase()}
}

func aidCases() []logbook.Case {
	return []logbook.Case{
		mkCase(eAid(logbook.Yes), withLesions(mkLesion())), mkCase(eAid(logbook.Yes)),
		mkCase(eAid(logbook.No), withLesions(mkLesion())),
		mkCase(withLesions(mkLesion())),
		mkCase(eAid(logbook.Yes), eAge(30), withLesions(mkLesion())),
	}
}

// profileIDs are the ids a profile's indicators come out as, in the order
// of the metrics JSON (clinical-reference §2).
var profileIDs = []string{
	"adr", "adr_male", "adr_female", "adr_stool_test_positive", "ssldr", "pdr", "aadr", "apc",
	"proximal_sdr", "cir", "cir_adjusted", "caecal_photo", "prep_adequate", "prep_recorded",
	"prep_adequate_total6", "withdrawal_negative", "withdrawal_timed", "withdrawal_6min_share",
	"retroversion", "retrieval", "tattoo_large", "cold_snare_small", "comfort_discomfort",
	"comfort_recorded", "perforation", "bleeding",
	"sedation_midazolam_median_under70", "sedation_midazolam_median_70plus",
	"sedation_fentanyl_median_under70", "sedation_fentanyl_median_70plus",
	"sedation_pethidine_median_under70", "sedation_pethidine_median_70plus",
	"volume", "adr_with_aid", "adr_without_aid", "adr_aid_difference",
}

func TestEveryIndicatorUnderEveryProfile(t *testing.T) {
	// clinical-reference §2: every id is computed under every profile, in the
	// order of profileIDs, for the unit and each operator.
	for _, id := range []string{"asge-acg-2024", "bsg-jag-2016", "esge-2017"} {
		r := unitResult(shipped(t, id), []logbook.Case{mkCase(), mkCase(eOp("E02"))})
		for _, inds := range [][]Indicator{r.Unit.Indicators, r.Operators[0].Indicators, r.Operators[1].Indicators} {
			got := make([]string, len(inds))
			for i, ind := range inds {
				got[i] = ind.ID
			}
			if !slices.Equal(got, profileIDs) {
				t.Errorf("%s: ids %v, want %v", id, got, profileIDs)
			}
		}
	}
}

func TestDetectionRules(t *testing.T) {
	// clinical-reference §2. ASGE/ACG 2024: age ≥45; screening, surveillance,
	// diagnostic; exclusion none. BSG/JAG 2016: any age, all indications,
	// exclusion none. ESGE 2017: age ≥50, any indication but therapeutic,
	// exclusion none — not verified against the text here; value as given in
	// the project's clinical reference ("from memory — verify").
	tests := []struct {
		profile  string
		name     string
		edit     func(*logbook.Case)
		eligible bool
	}{
		{"asge-acg-2024", "age 45", eAge(45), true},
		{"asge-acg-2024", "age 44", eAge(44), false},
		{"asge-acg-2024", "surveillance", eInd(logbook.Surveillance), true},
		{"asge-acg-2024", "diagnostic", eInd(logbook.Diagnostic), true},
		{"asge-acg-2024", "stool test positive", eInd(logbook.StoolTestPositive), false},
		{"asge-acg-2024", "therapeutic", eInd(logbook.Therapeutic), false},
		{"asge-acg-2024", "ibd", eExcl(logbook.IBD), false},
		{"asge-acg-2024", "hereditary syndrome", eExcl(logbook.HereditarySyndrome), false},
		{"asge-acg-2024", "known neoplasm", eExcl(logbook.KnownNeoplasm), false},
		{"asge-acg-2024", "exclusion not recorded", eExcl(""), false},
		{"bsg-jag-2016", "age 18", eAge(18), true},
		{"bsg-jag-2016", "therapeutic", eInd(logbook.Therapeutic), true},
		{"bsg-jag-2016", "stool test positive", eInd(logbook.StoolTestPositive), true},
		{"bsg-jag-2016", "ibd", eExcl(logbook.IBD), false},
		{"esge-2017", "age 49", eAge(49), false},
		{"esge-2017", "age 50", eAge(50), true},
		{"esge-2017", "therapeutic", eInd(logbook.Therapeutic), false},
		{"esge-2017", "stool test positive", eInd(logbook.StoolTestPositive), true},
		{"esge-2017", "known neoplasm", eExcl(logbook.KnownNeoplasm), false},
	}
	for _, tc := range tests {
		t.Run(tc.profile+"/"+tc.name, func(t *testing.T) {
			r := unitResult(shipped(t, tc.profile), []logbook.Case{mkCase(tc.edit, withLesions(mkLesion()))})
			want := 0
			if tc.eligible {
				want = 1
			}
			for _, id := range []string{"adr", "pdr", "aadr", "apc", "ssldr", "proximal_sdr"} {
				if got := mustFind(t, r.Unit.Indicators, id).Denominator; got != want {
					t.Errorf("%s denominator = %d, want %d", id, got, want)
				}
			}
			// cir counts every procedure whatever the eligibility.
			if got := mustFind(t, r.Unit.Indicators, "cir").Denominator; got != 1 {
				t.Errorf("cir denominator = %d, want 1", got)
			}
		})
	}
}

func TestPendingHistology(t *testing.T) {
	// clinical-reference §2: pending counts as not an adenoma but stays in the
	// denominator; AwaitingHistology counts eligible procedures with a lesion
	// pending, or sent with no result. Cases: adenoma; pending only; sent with
	// no result; discarded unsent (not awaiting); adenoma plus pending.
	// adr = 2/5, awaiting = 3.
	cases := []logbook.Case{
		mkCase(withLesions(mkLesion())),
		mkCase(withLesions(mkLesion(histology(logbook.HistPending)))),
		mkCase(withLesions(mkLesion(histology("")))),
		mkCase(withLesions(mkLesion(lNotSent))),
		mkCase(withLesions(mkLesion(), mkLesion(histology(logbook.HistPending)))),
		mkCase(eAge(40), withLesions(mkLesion(histology(logbook.HistPending)))), // not eligible
	}
	r := unitResult(shipped(t, "asge-acg-2024"), cases)
	adr := mustFind(t, r.Unit.Indicators, "adr")
	if adr.Numerator != 2 || adr.Denominator != 5 || adr.AwaitingHistology != 3 {
		t.Errorf("adr = %v/%d awaiting %d, want 2/5 awaiting 3", adr.Numerator, adr.Denominator, adr.AwaitingHistology)
	}
	for _, id := range []string{"ssldr", "aadr", "apc", "proximal_sdr", "adr_male"} {
		if got := mustFind(t, r.Unit.Indicators, id).AwaitingHistology; got != 3 {
			t.Errorf("%s awaiting = %d, want 3", id, got)
		}
	}
	if got := mustFind(t, r.Unit.Indicators, "pdr").AwaitingHistology; got != 0 {
		t.Errorf("pdr awaiting = %d, want 0 (does not read histology)", got)
	}
}

func TestPeriodInclusive(t *testing.T) {
	// clinical-reference §2: performed_on from the first to the last day,
	// both included. 2026-01-01 and 2026-03-31 are in; the days either side
	// are out → cir denominator 2.
	opt := MetricsOptions{From: mkDate(t, "2026-01-01"), To: mkDate(t, "2026-03-31")}
	m := NewMetrics(shipped(t, "asge-acg-2024"), opt)
	for _, d := range []string{"2025-12-31", "2026-01-01", "2026-03-31", "2026-04-01"} {
		c := mkCase(eOn(t, d))
		m.Add(&c)
	}
	r := m.Result()
	if got := mustFind(t, r.Unit.Indicators, "cir").Denominator; got != 2 {
		t.Errorf("cir denominator = %d, want 2", got)
	}
	if r.From != "2026-01-01" || r.To != "2026-03-31" {
		t.Errorf("period = %s to %s", r.From, r.To)
	}
}

func TestStatus(t *testing.T) {
	// Verdict rules of clinical-reference §2: meets at or past the target (≥
	// a minimum, ≤ a maximum; strictly past it where the source says
	// "below"), below otherwise, too_few under min_cases (30), reported with
	// no target.
	withAdenomas := func(k, n int) []logbook.Case {
		return concat(repeat(k, mkCase(withLesions(mkLesion()))), repeat(n-k, mkCase()))
	}
	withDiscomfort := func(k, n int) []logbook.Case {
		return concat(repeat(k, mkCase(eComfort(5))), repeat(n-k, mkCase(eComfort(1))))
	}
	tests := []struct {
		name    string
		profile string
		cases   []logbook.Case
		id      string
		want    Status
	}{
		// ASGE/ACG 2024 ADR ≥35% (Rex 2024).
		{"adr 14/40 = 35% meets", "asge-acg-2024", withAdenomas(14, 40), "adr", Meets},
		{"adr 13/40 below", "asge-acg-2024", withAdenomas(13, 40), "adr", Below},
		{"adr 29/29 too few", "asge-acg-2024", withAdenomas(29, 29), "adr", TooFew},
		{"adr 11/30 judged at 30", "asge-acg-2024", withAdenomas(11, 30), "adr", Meets},
		// ASGE/ACG 2024 ADR in men ≥40% (from memory of the 2024 text in the
		// clinical reference — not verified here); mkCase is male.
		{"adr_male 16/40 = 40% meets", "asge-acg-2024", withAdenomas(16, 40), "adr_male", Meets},
		{"adr_male 15/40 below", "asge-acg-2024", withAdenomas(15, 40), "adr_male", Below},
		{"adr_female has no cases", "asge-acg-2024", withAdenomas(16, 40), "adr_female", TooFew},
		// JAG discomfort "below 10%" (Siau 2023), a strict maximum: exactly
		// at the limit does not meet it.
		{"discomfort 3/30 = 10% exactly is below", "bsg-jag-2016", withDiscomfort(3, 30), "comfort_discomfort", Below},
		{"discomfort 2/30 meets", "bsg-jag-2016", withDiscomfort(2, 30), "comfort_discomfort", Meets},
		{"discomfort 4/30 below", "bsg-jag-2016", withDiscomfort(4, 30), "comfort_discomfort", Below},
		{"discomfort under asge reported", "asge-acg-2024", withDiscomfort(4, 30), "comfort_discomfort", Reported},
		{"empty denominator with target is too few", "asge-acg-2024", withAdenomas(0, 3), "prep_adequate", TooFew},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ind := mustFind(t, unitResult(shipped(t, tc.profile), tc.cases).Unit.Indicators, tc.id)
			if ind.Status != tc.want {
				t.Errorf("status = %s, want %s (%v/%d)", ind.Status, tc.want, ind.Numerator, ind.Denominator)
			}
			if (tc.want == Reported) != (ind.Target == nil) {
				t.Errorf("target = %v with status %s", ind.Target, ind.Status)
			}
		})
	}
	// The maximum is flagged on the indicator.
	ind := mustFind(t, unitResult(shipped(t, "bsg-jag-2016"), withDiscomfort(1, 30)).Unit.Indicators, "comfort_discomfort")
	if !ind.Maximum || !ind.Strict || ind.Target == nil || *ind.Target != 0.10 {
		t.Errorf("discomfort target = %v maximum %v strict %v, want <0.10", ind.Target, ind.Maximum, ind.Strict)
	}
	if got := FormatTarget(ind); got != "< 10.0%" {
		t.Errorf("strict maximum printed %q, want \"< 10.0%%\"", got)
	}
}

// TestJudgeStrict checks every comparison a target can ask for at, just
// past and just short of the limit (clinical-reference §2, "Verdict": a
// strict maximum such as discomfort below 10% (Siau 2023), perforation below
// 1 per 1000 and bleeding below 1 per 100 (Rees 2016, screening table) is not
// met exactly at the limit; a plain minimum or maximum is).
func TestJudgeStrict(t *testing.T) {
	v := func(x float64) *float64 { return &x }
	tests := []struct {
		name   string
		t      Target
		k, n   int
		want   Status
		sign   string
		strict bool
	}{
		{"minimum reached", Target{Minimum: v(0.35)}, 14, 40, Meets, "≥", false},
		{"minimum missed", Target{Minimum: v(0.35)}, 13, 40, Below, "≥", false},
		{"strict minimum at the limit", Target{Minimum: v(0.35), Strict: true}, 14, 40, Below, ">", true},
		{"strict minimum passed", Target{Minimum: v(0.35), Strict: true}, 15, 40, Meets, ">", true},
		{"maximum at the limit", Target{Maximum: v(0.10)}, 3, 30, Meets, "≤", false},
		{"maximum passed", Target{Maximum: v(0.10)}, 4, 30, Below, "≤", false},
		{"discomfort below 10%: exactly 10%", Target{Maximum: v(0.10), Strict: true}, 3, 30, Below, "<", true},
		{"discomfort below 10%: under", Target{Maximum: v(0.10), Strict: true}, 29, 300, Meets, "<", true},
		{"perforation below 1/1000: exactly 1/1000", Target{Maximum: v(0.001), Strict: true}, 1, 1000, Below, "<", true},
		{"bleeding below 1/100: exactly 1/100", Target{Maximum: v(0.01), Strict: true}, 1, 100, Below, "<", true},
		{"strict but too few", Target{Maximum: v(0.10), Strict: true}, 0, 29, TooFew, "<", true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ind := Proportion("x", tc.k, tc.n)
			// A stale flag from an earlier judgement must not survive.
			ind.Maximum, ind.Strict = true, true
			ind.Judge(&tc.t, 30)
			if ind.Status != tc.want || ind.Strict != tc.strict {
				t.Errorf("%d/%d: status %s strict %v, want %s strict %v", tc.k, tc.n, ind.Status, ind.Strict, tc.want, tc.strict)
			}
			if got := TargetSign(ind.Maximum, ind.Strict); got != tc.sign {
				t.Errorf("sign %q, want %q", got, tc.sign)
			}
		})
	}
	ind := Proportion("x", 1, 2)
	ind.Judge(nil, 0)
	if ind.Status != Reported || ind.Strict || ind.Maximum {
		t.Errorf("no target: %+v", ind)
	}
}

func TestWithdrawalMean(t *testing.T) {
	// Minutes 6, 8, 10, 5: sum 29, mean 7.25, sample variance
	// (225 − 29²/4)/3 = 4.91667, se = √(4.91667/4) = 1.10868; t(3, 0.975) =
	// 3.182446 (Student t table) → 3.7216 to 10.7784.
	ind := mustFind(t, unitResult(shipped(t, "asge-acg-2024"), withdrawalCases()).Unit.Indicators, "withdrawal_negative")
	if ind.Kind != KindMean || *ind.Value != 7.25 {
		t.Fatalf("withdrawal = %+v", ind)
	}
	if !near(*ind.CILow, 3.7216, 1e-4) || !near(*ind.CIHigh, 10.7784, 1e-4) {
		t.Errorf("interval %.4f–%.4f, want 3.7216–10.7784", *ind.CILow, *ind.CIHigh)
	}
	// 4 < 30 cases: not judged against the 8-minute target.
	if ind.Status != TooFew || *ind.Target != 8 {
		t.Errorf("status %s target %v", ind.Status, *ind.Target)
	}
}

func TestAPCInterval(t *testing.T) {
	// 4 adenomas in 3 procedures: exact Poisson limits for a count of 4 are
	// 1.0899 and 10.2416 (Garwood 1936; standard tables), divided by 3.
	cases := []logbook.Case{
		mkCase(withLesions(mkLesion(), mkLesion(), mkLesion())),
		mkCase(withLesions(mkLesion())),
		mkCase(),
	}
	ind := mustFind(t, unitResult(shipped(t, "asge-acg-2024"), cases).Unit.Indicators, "apc")
	if ind.Kind != KindRatio || !near(*ind.CILow, 1.0899/3, 1e-4) || !near(*ind.CIHigh, 10.2416/3, 1e-4) {
		t.Errorf("apc = %v [%v, %v] kind %q", *ind.Value, *ind.CILow, *ind.CIHigh, ind.Kind)
	}
}

func TestRareEventsExact(t *testing.T) {
	// Perforation and bleeding use the Clopper–Pearson interval: 0 of 20 has
	// upper limit 1 − 0.025^(1/20) (the exact formula), printed per 1000 and
	// per 100.
	cases := repeat(20, mkCase(withLesions(mkLesion())))
	r := unitResult(shipped(t, "asge-acg-2024"), cases)
	for _, tc := range []struct {
		id    string
		scale int
	}{{"perforation", 1000}, {"bleeding", 100}} {
		ind := mustFind(t, r.Unit.Indicators, tc.id)
		if ind.Scale != tc.scale || *ind.Value != 0 || *ind.CILow != 0 || !near(*ind.CIHigh, 1-math.Pow(0.025, 1.0/20), 1e-9) {
			t.Errorf("%s = %+v", tc.id, ind)
		}
	}
}

func TestSedationMedians(t *testing.T) {
	// Midazolam under 70: 0, 2, 3, 5 (age 69 is under 70) → median (2+3)/2 =
	// 2.5, numerator the sum 10; 70 or over: 1, 2, 2 → 2. Unrecorded doses
	// are not counted. Fentanyl under 70: 100 only.
	nr := float64(logbook.NotRecorded)
	cases := []logbook.Case{
		mkCase(eDoses(0, nr, nr)), mkCase(eDoses(5, nr, nr)), mkCase(eDoses(3, 100, nr), eAge(69)), mkCase(eDoses(2, nr, nr)),
		mkCase(eDoses(nr, nr, nr)),
		mkCase(eDoses(2, nr, nr), eAge(70)), mkCase(eDoses(1, nr, nr), eAge(85)), mkCase(eDoses(2, nr, nr), eAge(75)),
	}
	r := unitResult(shipped(t, "bsg-jag-2016"), cases)
	tests := []struct {
		id       string
		num      float64
		den      int
		median   float64
		maxTarge float64 // Rees 2016: midazolam ≤5 mg under 70, ≤2 mg at 70+, fentanyl ≤100 µg under 70
	}{
		{"sedation_midazolam_median_under70", 10, 4, 2.5, 5},
		{"sedation_midazolam_median_70plus", 5, 3, 2, 2},
		{"sedation_fentanyl_median_under70", 100, 1, 100, 100},
	}
	for _, tc := range tests {
		ind := mustFind(t, r.Unit.Indicators, tc.id)
		if ind.Kind != KindMedian || ind.Numerator != tc.num || ind.Denominator != tc.den || *ind.Value != tc.median {
			t.Errorf("%s = %v/%d median %v", tc.id, ind.Numerator, ind.Denominator, ind.Value)
		}
		if !ind.Maximum || *ind.Target != tc.maxTarge || ind.CILow != nil {
			t.Errorf("%s target %v maximum %v", tc.id, ind.Target, ind.Maximum)
		}
	}
	if ind := mustFind(t, r.Unit.Indicators, "sedation_pethidine_median_under70"); ind.Value != nil || ind.Denominator != 0 {
		t.Errorf("pethidine = %+v, want empty", ind)
	}
}

// TestVolume checks procedure volume: procedures × 365 / days in the
// period (both ends included), judged against the BSG/JAG 100 per
// endoscopist per year (Rees 2016) only for an operator over a period of a
// year or more, reported with a note otherwise, and never "too few": the
// case-count gate does not apply to a count of procedures (clinical-reference
// §2, volume).
func TestVolume(t *testing.T) {
	tests := []struct {
		name     string
		from, to string
		days     int
		e01, e02 int // procedures per operator
		s01, s02 Status
		note     string // in both operators' notes, "" for none
	}{
		// A quarter, 90 days: 30 → 121.7 and 20 → 81.1 per year, neither judged.
		{"quarter", "2026-01-01", "2026-03-31", 90, 30, 20, Reported, Reported, "volume is judged over a year or more"},
		// One day short of a year (364 days): still not judged.
		{"a day short of a year", "2026-01-02", "2026-12-31", 364, 100, 20, Reported, Reported, "this period is shorter"},
		// A calendar year: 100 meets the minimum exactly; 99 is below.
		{"calendar year", "2026-01-01", "2026-12-31", 365, 100, 99, Meets, Below, ""},
		// From 29 February, a year ends on 28 February (366 days).
		{"leap year", "2024-02-29", "2025-02-28", 366, 101, 99, Meets, Below, ""},
		// 5 procedures in a year are below 100, not too few to judge: the
		// minimum of 30 cases is for rates, and volume's denominator is days.
		{"five in a year is below, not too few", "2026-01-01", "2026-12-31", 365, 5, 150, Below, Meets, ""},
		// Two years: 200 over 730 days is 100 per year.
		{"two years", "2025-01-01", "2026-12-31", 730, 200, 150, Meets, Below, ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := NewMetrics(shipped(t, "bsg-jag-2016"), MetricsOptions{From: mkDate(t, tc.from), To: mkDate(t, tc.to)})
			for i := range tc.e01 + tc.e02 {
				op := "E01"
				if i >= tc.e01 {
					op = "E02"
				}
				c := mkCase(eOp(op), eOn(t, tc.to))
				m.Add(&c)
			}
			r := m.Result()
			unit := mustFind(t, r.Unit.Indicators, "volume")
			if unit.Status != Reported || unit.Target != nil || !strings.Contains(unit.Note, "per endoscopist") {
				t.Errorf("unit volume %s target %v note %q: want reported with the per-endoscopist note", unit.Status, unit.Target, unit.Note)
			}
			for i, want := range []struct {
				n int
				s Status
			}{{tc.e01, tc.s01}, {tc.e02, tc.s02}} {
				ind := mustFind(t, r.Operators[i].Indicators, "volume")
				if ind.Numerator != float64(want.n) || ind.Denominator != tc.days || !near(*ind.Value, float64(want.n)*365/float64(tc.days), 1e-9) {
					t.Errorf("%s volume = %v/%d = %v, want %d/%d", r.Operators[i].OperatorID, ind.Numerator, ind.Denominator, *ind.Value, want.n, tc.days)
				}
				if ind.Status != want.s {
					t.Errorf("%s volume status %s, want %s", r.Operators[i].OperatorID, ind.Status, want.s)
				}
				if (tc.note == "") != (ind.Note == "") || !strings.Contains(ind.Note, tc.note) {
					t.Errorf("%s volume note %q, want one with %q", r.Operators[i].OperatorID, ind.Note, tc.note)
				}
				if tc.note != "" && !strings.Contains(ind.Note, "≥ 100 per year") {
					t.Errorf("note %q does not name the target", ind.Note)
				}
			}
		})
	}
	// Without a volume target (asge-acg-2024) nothing needs explaining.
	c := mkCase()
	ind := mustFind(t, unitResult(shipped(t, "asge-acg-2024"), []logbook.Case{c}).Operators[0].Indicators, "volume")
	if ind.Status != Reported || ind.Note != "" {
		t.Errorf("volume without a target: %s, note %q", ind.Status, ind.Note)
	}
}

// TestPeriodFullYear checks how "a year" is decided for volume: the last day
// on or after the first day plus one year less one day (common practice:
// a calendar year counted from the first day).
func TestPeriodFullYear(t *testing.T) {
	tests := []struct {
		from, to string
		days     int
		year     bool
	}{
		{"2026-01-01", "2026-12-31", 365, true},
		{"2026-01-02", "2026-12-31", 364, false},
		{"2026-07-01", "2027-06-30", 365, true},
		{"2024-01-01", "2024-12-30", 365, false}, // a leap year needs 366 days
		{"2024-01-01", "2024-12-31", 366, true},
		{"2024-02-29", "2025-02-28", 366, true},
		{"2026-01-01", "2026-03-31", 90, false},
		{"2026-01-01", "2028-01-01", 731, true},
	}
	for _, tc := range tests {
		p := Period{From: mkDate(t, tc.from), To: mkDate(t, tc.to)}
		if p.Days() != tc.days || p.FullYear() != tc.year {
			t.Errorf("%s to %s: %d days, year %v; want %d, %v", tc.from, tc.to, p.Days(), p.FullYear(), tc.days, tc.year)
		}
	}
	if (Period{}).FullYear() || (Period{}).Days() != 0 {
		t.Error("an unknown period is no year")
	}
}

func TestAidDifference(t *testing.T) {
	// 56/70 with aid and 48/80 without: difference 0.2000, Newcombe hybrid
	// interval 0.0524 to 0.3339 (Newcombe RG, Stat Med 1998;17:873–890,
	// method 10, the paper's first example).
	cases := concat(
		repeat(56, mkCase(eAid(logbook.Yes), withLesions(mkLesion()))), repeat(14, mkCase(eAid(logbook.Yes))),
		repeat(48, mkCase(eAid(logbook.No), withLesions(mkLesion()))), repeat(32, mkCase(eAid(logbook.No))),
	)
	r := unitResult(shipped(t, "asge-acg-2024"), cases)
	ind := mustFind(t, r.Unit.Indicators, "adr_aid_difference")
	if ind.Kind != KindDifference || ind.Status != Reported || !near(*ind.Value, 0.2, 1e-12) ||
		!near(*ind.CILow, 0.0524, 5e-5) || !near(*ind.CIHigh, 0.3339, 5e-5) {
		t.Errorf("difference = %+v", ind)
	}
	cmp := AidComparisons(r)
	if len(cmp) != 2 || cmp[0].OperatorID != "" || cmp[1].OperatorID != "E01" ||
		cmp[0].With.Denominator != 70 || cmp[0].Without.Denominator != 80 || cmp[0].Difference.ID != "adr_aid_difference" {
		t.Errorf("comparisons = %+v", cmp)
	}
	// Without one of the groups there is no difference.
	one := mustFind(t, unitResult(shipped(t, "asge-acg-2024"), cases[:70]).Unit.Indicators, "adr_aid_difference")
	if one.Value != nil || one.CILow != nil {
		t.Errorf("one-sided difference = %+v, want nil value", one)
	}
}

func TestOperatorsAndCredit(t *testing.T) {
	// Credit goes to operator_id, trainee cases included; operators sorted by
	// id; each operator's counts add up to the unit's.
	cases := []logbook.Case{
		mkCase(eOp("E02")), mkCase(eOp("E01"), withLesions(mkLesion())),
		mkCase(eOp("E02"), func(c *logbook.Case) { c.TraineeID, c.Supervision = "T1", logbook.Independent }),
	}
	r := unitResult(shipped(t, "asge-acg-2024"), cases)
	if len(r.Operators) != 2 || r.Operators[0].OperatorID != "E01" || r.Operators[1].OperatorID != "E02" {
		t.Fatalf("operators = %+v", r.Operators)
	}
	if d := mustFind(t, r.Operators[1].Indicators, "cir").Denominator; d != 2 {
		t.Errorf("E02 cir denominator %d, want 2", d)
	}
	if d := mustFind(t, r.Unit.Indicators, "cir").Denominator; d != 3 {
		t.Errorf("unit cir denominator %d, want 3", d)
	}
}

// countingAccumulator is a stand-in for another part's figures: it counts
// the cases it sees.
type countingAccumulator struct{ n int }

func (a *countingAccumulator) Add(*logbook.Case) { a.n++ }
func (a *countingAccumulator) Indicators() []Indicator {
	return []Indicator{{ID: "test_cases", Numerator: float64(a.n), Status: Reported}}
}

func TestExtraAccumulators(t *testing.T) {
	// One accumulator per population; its figures follow ours.
	made := 0
	opt := MetricsOptions{Extra: []AccumulatorFactory{func() Accumulator { made++; return &countingAccumulator{} }}}
	m := NewMetrics(shipped(t, "asge-acg-2024"), opt)
	for _, c := range []logbook.Case{mkCase(), mkCase(eOp("E02")), mkCase(eOp("E02"))} {
		m.Add(&c)
	}
	r := m.Result()
	if made != 3 {
		t.Errorf("factory called %d times, want 3 (unit and two operators)", made)
	}
	for _, tc := range []struct {
		inds []Indicator
		want float64
	}{{r.Unit.Indicators, 3}, {r.Operators[0].Indicators, 1}, {r.Operators[1].Indicators, 2}} {
		last := tc.inds[len(tc.inds)-1]
		if last.ID != "test_cases" || last.Numerator != tc.want || len(tc.inds) != len(profileIDs)+1 {
			t.Errorf("last indicator %+v of %d, want test_cases %v", last, len(tc.inds), tc.want)
		}
	}
}

func TestResultJSONShape(t *testing.T) {
	// architecture.md, `metrics --format json`.
	opt := MetricsOptions{From: mkDate(t, "2026-01-01"), To: mkDate(t, "2026-06-30")}
	m := NewMetrics(shipped(t, "asge-acg-2024"), opt)
	c := mkCase()
	m.Add(&c)
	data, err := json.Marshal(m.Result())
	if err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	if got := sortedKeys(doc); !slices.Equal(got, []string{"from", "operators", "standard", "to", "unit"}) {
		t.Errorf("top-level keys %v", got)
	}
	if doc["from"] != "2026-01-01" || doc["to"] != "2026-06-30" || doc["standard"] != "asge-acg-2024" {
		t.Errorf("header %v %v %v", doc["from"], doc["to"], doc["standard"])
	}
	unit := doc["unit"].(map[string]any)
	if got := sortedKeys(unit); !slices.Equal(got, []string{"indicators"}) {
		t.Errorf("unit keys %v", got)
	}
	ops := doc["operators"].([]any)
	op := ops[0].(map[string]any)
	if got := sortedKeys(op); !slices.Equal(got, []string{"indicators", "operator_id"}) || op["operator_id"] != "E01" {
		t.Errorf("operator %v", got)
	}
	byID := map[string]map[string]any{}
	for _, x := range unit["indicators"].([]any) {
		ind := x.(map[string]any)
		byID[ind["id"].(string)] = ind
	}
	// adr 0/1: every contract key present; target 0.35.
	adr := byID["adr"]
	for _, k := range []string{"id", "numerator", "denominator", "value", "ci_low", "ci_high", "target", "status"} {
		if _, ok := adr[k]; !ok {
			t.Errorf("adr lacks %q", k)
		}
	}
	if adr["target"] != 0.35 || adr["status"] != "too_few" || adr["value"] != 0.0 {
		t.Errorf("adr = %v", adr)
	}
	// retrieval has no polypectomies: value and interval null, and no target
	// under this profile.
	ret := byID["retrieval"]
	for _, k := range []string{"value", "ci_low", "ci_high", "target"} {
		if v, ok := ret[k]; !ok || v != nil {
			t.Errorf("retrieval %s = %v (present %v), want null", k, v, ok)
		}
	}
	if ret["status"] != "reported" || ret["denominator"] != 0.0 {
		t.Errorf("retrieval = %v", ret)
	}
	// An empty pass still gives a list of operators, not null.
	empty, _ := json.Marshal(NewMetrics(shipped(t, "asge-acg-2024"), opt).Result())
	var e map[string]any
	if err := json.Unmarshal(empty, &e); err != nil {
		t.Fatal(err)
	}
	if list, ok := e["operators"].([]any); !ok || len(list) != 0 {
		t.Errorf("empty operators = %v", e["operators"])
	}
}

func sortedKeys(m map[string]any) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

func TestAddAllocatesNothing(t *testing.T) {
	// The common path of Add (operator already seen, doses already seen)
	// allocates nothing.
	m := NewMetrics(shipped(t, "bsg-jag-2016"), MetricsOptions{})
	c := mkCase(eDoses(2, 50, float64(logbook.NotRecorded)), eBBPS(2, 3, 2), eWithdrawal(420), eComfort(2),
		withLesions(mkLesion(), mkLesion(histology(logbook.HistSSL), lSeg(logbook.Ascending)), mkLesion(lSize(22), lSeg(logbook.Transverse))))
	m.Add(&c)
	if allocs := testing.AllocsPerRun(200, func() { m.Add(&c) }); allocs != 0 {
		t.Errorf("Add allocates %v times per case, want 0", allocs)
	}
}
