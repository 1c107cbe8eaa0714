package stats

import (
	"encoding/json"
	"math"
)

// Kappa is Cohen's kappa for two ratings of the same items (Cohen J, "A
// coefficient of agreement for nominal scales", Educ Psychol Meas
// 1960;20:37–46): κ = (po − pe)/(1 − pe), with po the observed and pe the
// chance agreement from the margins. SE is the large-sample standard error
// of Fleiss JL, Cohen J, Everitt BS, "Large sample standard errors of kappa
// and weighted kappa", Psychol Bull 1969;72:323–327 — the one
// general-purpose statistics libraries report (see kappaSE) — and CI is
// κ ± z·SE with z the 97.5% normal quantile (1.959964), clamped to [−1, 1],
// the range of kappa (clinical-reference §6). Kappa, SE and CI are NaN when
// n is 0 or pe is 1 (every item in one category for both ratings, where
// kappa is undefined).
type Kappa struct {
	Agreements int     `json:"agreements"`
	N          int     `json:"n"`
	Po         float64 `json:"po"`
	Pe         float64 `json:"pe"`
	Kappa      float64 `json:"kappa"`
	SE         float64 `json:"se"`
	CI         CI      `json:"-"`
}

// MarshalJSON writes the kappa with null for every undefined number, since
// JSON has no NaN; the interval is written as ci_low and ci_high.
func (k Kappa) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Agreements int      `json:"agreements"`
		N          int      `json:"n"`
		Po         *float64 `json:"po"`
		Pe         *float64 `json:"pe"`
		Kappa      *float64 `json:"kappa"`
		SE         *float64 `json:"se"`
		CILow      *float64 `json:"ci_low"`
		CIHigh     *float64 `json:"ci_high"`
	}{k.Agreements, k.N, orNil(k.Po), orNil(k.Pe), orNil(k.Kappa), orNil(k.SE), orNil(k.CI.Low), orNil(k.CI.High)})
}

// CohenKappa returns Cohen's kappa for a square table of counts, rows the
// first rating and columns the second, categories in the same order.
func CohenKappa(table [][]int) Kappa {
	k := Kappa{Po: math.NaN(), Pe: math.NaN(), Kappa: math.NaN(), SE: math.NaN(), CI: undefined()}
	rows := make([]float64, len(table)) // counts, then proportions
	cols := make([]float64, len(table))
	for i, row := range table {
		for j, v := range row {
			if j >= len(cols) {
				return k // not square
			}
			k.N += v
			rows[i] += float64(v)
			cols[j] += float64(v)
			if i == j {
				k.Agreements += v
			}
		}
	}
	if k.N == 0 {
		return k
	}
	n := float64(k.N)
	k.Po = float64(k.Agreements) / n
	pe := 0.0
	for i := range rows {
		pe += rows[i] * cols[i]
	}
	k.Pe = pe / (n * n)
	if k.Pe >= 1 {
		return k
	}
	k.Kappa = (k.Po - k.Pe) / (1 - k.Pe)
	for i := range rows {
		rows[i] /= n
		cols[i] /= n
	}
	k.SE = kappaSE(table, rows, cols, n, k.Pe, k.Kappa)
	half := z95 * k.SE
	k.CI = CI{Low: math.Max(-1, k.Kappa-half), High: math.Min(1, k.Kappa+half)}
	return k
}

// kappaSE is the Fleiss–Cohen–Everitt (1969) large-sample standard error of
// kappa for a square table of counts with row and column proportions rows
// and cols, n items, chance agreement pe and kappa kappa. With p_ij the
// cell proportions, p_i. the rows and p_.j the columns:
//
//	A = Σ_i p_ii [1 − (p_i. + p_.i)(1 − κ)]²
//	B = (1 − κ)² Σ_{i≠j} p_ij (p_.i + p_j.)²
//	C = [κ − pe(1 − κ)]²
//	SE = √((A + B − C) / (n (1 − pe)²))
//
// A rounding error that makes A + B − C a little below zero (perfect
// agreement) gives 0.
func kappaSE(table [][]int, rows, cols []float64, n, pe, kappa float64) float64 {
	var a, b float64
	for i, row := range table {
		for j, v := range row {
			p := float64(v) / n
			if i == j {
				d := 1 - (rows[i]+cols[i])*(1-kappa)
				a += p * d * d
			} else {
				s := cols[i] + rows[j]
				b += p * s * s
			}
		}
	}
	b *= (1 - kappa) * (1 - kappa)
	c := kappa - pe*(1-kappa)
	return math.Sqrt(math.Max(0, (a+b-c*c)/(n*(1-pe)*(1-pe))))
}

// orNil returns a pointer to v, or nil when v is NaN (undefined), for JSON.
func orNil(v float64) *float64 {
	if math.IsNaN(v) {
		return nil
	}
	return &v
}
